package krylov

import (
	"math"
	"math/cmplx"
	"runtime"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestSmallSubspace is the regression test of a small subspace settling on
// an eigenvalue that is not the largest: on these random matrices, whose
// largest moduli crowd together (the circular law of random matrices,
// common practice, no source), a fixed subspace of 4 to 8 vectors
// converged to a value 0.2 % to 3 % below the spectral radius. With the
// subspace growing while convergence is slow (the default) the leading
// value must agree with gonum's mat.Eigen, the reference library. The
// tolerance is that of TestEigsAgainstDense: residual Tol·‖A‖ times the
// condition number, which the check below bounds for each case.
func TestSmallSubspace(t *testing.T) {
	const tol = 1e-13
	cases := []struct {
		name     string
		a        *csr
		subspace int
	}{
		{"random n=100 m=6", randomSparse(100, 3, 5), 6},
		{"random n=400 m=6", randomSparse(400, 5, 1), 6},
		{"random n=400 m=4", randomSparse(400, 5, 2), 4},
		{"random n=300 m=5", randomSparse(300, 4, 3), 5},
		{"circle n=200 m=6", clusteredRotations(200, 4, 1e-3, 8), 6},
		{"circle n=400 m=8", clusteredRotations(400, 8, 1e-3, 6), 8},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			res, err := Eigs(tc.a, &Settings{SubspaceSize: tc.subspace, Tol: tol})
			if err != nil {
				t.Fatalf("Eigs: %v (stats %+v)", err, res.Stats)
			}
			want, cond := denseSpectrum(t, tc.a.dense())
			// The leading value, or the first of a leading pair.
			got := res.Values[0]
			best := 0
			for j := range min(4, len(want)) {
				if cmplx.Abs(want[j]-got) < cmplx.Abs(want[best]-got) {
					best = j
				}
			}
			if cmplx.Abs(want[best]) < cmplx.Abs(want[0])*(1-1e-12) {
				t.Fatalf("λ = %v of modulus %.10g, but mat.Eigen has %v of modulus %.10g",
					got, cmplx.Abs(got), want[0], cmplx.Abs(want[0]))
			}
			scaleTol := 1e-10 * cmplx.Abs(want[best])
			if bound := 10 * cond[best] * (tol + float64(tc.a.n)*0x1p-52) * res.Norm; bound > scaleTol {
				t.Fatalf("condition number %.3g too large for a 1e-10 check", cond[best])
			}
			if !scalar.EqualWithinAbsOrRel(real(got), real(want[best]), scaleTol, 0) ||
				!scalar.EqualWithinAbsOrRel(imag(got), imag(want[best]), scaleTol, 0) {
				t.Errorf("λ = %v, mat.Eigen gives %v", got, want[best])
			}
			if res.Stats.Subspace <= tc.subspace {
				t.Logf("converged without growing the subspace (%+v)", res.Stats)
			}
			t.Logf("stats %+v", res.Stats)
		})
	}
	// A fixed subspace (MaxSubspaceSize = SubspaceSize) does not grow.
	res, _ := Eigs(randomSparse(400, 5, 1), &Settings{SubspaceSize: 6, MaxSubspaceSize: 6, MaxRestarts: 30})
	if res.Stats.Subspace != 6 {
		t.Errorf("fixed subspace grew to %d", res.Stats.Subspace)
	}
}

// TestDeterminismPower checks that the power steps of the leading-value
// path, like the Krylov–Schur kernels, give the same bytes whatever
// GOMAXPROCS is, and that they agree with Krylov–Schur alone on the
// leading value of the same matrix (λ_0 = 1: the circle map preserves
// Lebesgue measure, so the mass-transport matrix has the constant vector as
// eigenvector; common practice, no source; both stop at residual
// 1e-12·‖A‖ and the Perron value is well conditioned, hence 1e-10).
func TestDeterminismPower(t *testing.T) {
	a := perturbedDoublingUlam(60_000, 0.1)
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	var results []Result
	for _, procs := range []int{1, 2, 3} {
		runtime.GOMAXPROCS(procs)
		res, err := Eigs(a, &Settings{Vectors: true})
		if err != nil {
			t.Fatal(err)
		}
		if res.Stats.PowerSteps == 0 || res.Stats.Restarts != 0 {
			t.Fatalf("expected the power path alone: %+v", res.Stats)
		}
		results = append(results, res)
	}
	for p := 1; p < len(results); p++ {
		x, y := results[0], results[p]
		if x.Stats != y.Stats || math.Float64bits(real(x.Values[0])) != math.Float64bits(real(y.Values[0])) {
			t.Fatalf("run %d differs: %v %+v vs %v %+v", p, x.Values[0], x.Stats, y.Values[0], y.Stats)
		}
		for j := range x.Vectors[0] {
			if math.Float64bits(x.Vectors[0][j]) != math.Float64bits(y.Vectors[0][j]) {
				t.Fatalf("vector entry %d differs", j)
			}
		}
	}
	ks, err := Eigs(a, &Settings{SubspaceSize: 20})
	if err != nil {
		t.Fatal(err)
	}
	for _, got := range []complex128{results[0].Values[0], ks.Values[0]} {
		if imag(got) != 0 || !scalar.EqualWithinAbsOrRel(real(got), 1, 1e-10, 0) {
			t.Errorf("λ_0 = %v, want 1", got)
		}
	}
}
