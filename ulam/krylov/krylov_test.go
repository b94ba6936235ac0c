package krylov

import (
	"math"
	"math/cmplx"
	"sort"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"
)

// denseSpectrum returns the eigenvalues of a by gonum's mat.Eigen, sorted
// by decreasing modulus, with the condition number ‖u‖‖v‖/|uᴴv| of each
// from its left and right eigenvectors.
func denseSpectrum(t *testing.T, a *mat.Dense) (values []complex128, condition []float64) {
	t.Helper()
	var eig mat.Eigen
	if !eig.Factorize(a, mat.EigenBoth) {
		t.Fatal("mat.Eigen failed")
	}
	values = eig.Values(nil)
	var left, right mat.CDense
	eig.LeftVectorsTo(&left)
	eig.VectorsTo(&right)
	n := len(values)
	condition = make([]float64, n)
	for i := range n {
		var uu, vv float64
		var uv complex128
		for r := range n {
			u, v := left.At(r, i), right.At(r, i)
			uu += real(u)*real(u) + imag(u)*imag(u)
			vv += real(v)*real(v) + imag(v)*imag(v)
			uv += cmplx.Conj(u) * v
		}
		condition[i] = math.Sqrt(uu*vv) / cmplx.Abs(uv)
	}
	order := make([]int, n)
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(x, y int) bool { return cmplx.Abs(values[order[x]]) > cmplx.Abs(values[order[y]]) })
	sortedValues := make([]complex128, n)
	sortedCondition := make([]float64, n)
	for i, o := range order {
		sortedValues[i], sortedCondition[i] = values[o], condition[o]
	}
	return sortedValues, sortedCondition
}

// explicitResidual returns ‖A x − λ x‖/‖x‖ for the i-th eigenpair of r,
// computed with the test's own CSR product.
func explicitResidual(a *csr, r *Result, i int) float64 {
	x := r.VectorTo(nil, i)
	re := make([]float64, a.n)
	im := make([]float64, a.n)
	for j, z := range x {
		re[j], im[j] = real(z), imag(z)
	}
	are := make([]float64, a.n)
	aim := make([]float64, a.n)
	a.Apply(are, re)
	a.Apply(aim, im)
	var num, den float64
	for j := range x {
		d := complex(are[j], aim[j]) - r.Values[i]*x[j]
		num += real(d)*real(d) + imag(d)*imag(d)
		den += real(x[j])*real(x[j]) + imag(x[j])*imag(x[j])
	}
	return math.Sqrt(num / den)
}

// TestEigsAgainstDense compares the largest-modulus eigenvalues with gonum's
// mat.Eigen, the reference library (REFERENCES.md: any sparse nonsymmetric
// matrix of modest size — gonum's mat.Eigen as the reference library).
//
// Tolerance: a Ritz pair is accepted at residual ‖Ax − λx‖ ≤ Tol·‖A‖, and a
// residual ρ moves a simple eigenvalue by at most about κ·ρ, κ its
// condition number; the dense QR algorithm is backward stable, with error
// about κ·n·ε·‖A‖. The test asserts agreement to 1e-10 relative, and
// first checks that the bound 10·κ·(Tol + n·ε)·‖A‖ of each compared value
// is below that, so that the check is meaningful for the case.
func TestEigsAgainstDense(t *testing.T) {
	const tol = 1e-13
	cases := []struct {
		name string
		a    *csr
		k    int
	}{
		{"random n=400 k=1", randomSparse(400, 5, 1), 1},
		{"random n=400 k=6", randomSparse(400, 5, 2), 6},
		{"random n=300 k=10", randomSparse(300, 4, 3), 10},
		{"random n=200 k=6", randomSparse(200, 8, 4), 6},
		{"random n=100 k=10", randomSparse(100, 3, 5), 10},
		{"circle n=400 k=6", clusteredRotations(400, 8, 1e-3, 6), 6},
		{"circle n=300 k=10", clusteredRotations(300, 8, 1e-3, 7), 10},
		{"circle n=200 k=1", clusteredRotations(200, 4, 1e-3, 8), 1},
		{"stochastic n=400 k=6", stochastic(400, 3, 9), 6},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			res, err := Eigs(tc.a, &Settings{Wanted: tc.k, Tol: tol, Vectors: true})
			if err != nil {
				t.Fatalf("Eigs: %v (stats %+v)", err, res.Stats)
			}
			if res.Status != Converged {
				t.Fatalf("status %v", res.Status)
			}
			checkAgainstDense(t, tc.a, &res, tc.k, tol)
			for i := range res.Values {
				// The explicit residual of the returned vector: the
				// accepted Ritz residual Tol·‖A‖ plus rounding of the
				// basis, a few m·ε·‖A‖.
				if r := explicitResidual(tc.a, &res, i); r > (tol+1000*0x1p-52)*res.Norm {
					t.Errorf("value %d: ‖Ax − λx‖ = %.3g, want ≤ %.3g", i, r, (tol+1000*0x1p-52)*res.Norm)
				}
			}
			t.Logf("%d values, stats %+v, residuals %.2g", len(res.Values), res.Stats, res.Residuals)
		})
	}
}

// checkAgainstDense checks the k (or k+1, a pair kept whole) values of res
// against gonum's mat.Eigen on a: each matches a dense value among the
// leading ones to 1e-10 relative, where the first-order bound
// 10 κ (tol + n ε)‖A‖ on the error (κ the condition number, tol the
// residual tolerance, n ε the rounding of the dense QR algorithm) is below
// it, and the values are sorted by modulus with each conjugate pair
// together.
func checkAgainstDense(t *testing.T, a *csr, res *Result, k int, tol float64) {
	t.Helper()
	if len(res.Values) < k || len(res.Values) > k+1 {
		t.Fatalf("got %d values, want %d or %d", len(res.Values), k, k+1)
	}
	want, cond := denseSpectrum(t, a.dense())
	n := float64(a.n)
	used := make([]bool, len(want))
	for i, got := range res.Values {
		// The nearest unused dense value among the leading ones: equal
		// moduli may come in a different order.
		best := -1
		for j := range min(len(want), len(res.Values)+2) {
			if !used[j] && (best < 0 || cmplx.Abs(want[j]-got) < cmplx.Abs(want[best]-got)) {
				best = j
			}
		}
		used[best] = true
		if best >= len(res.Values) && cmplx.Abs(want[best]) < cmplx.Abs(want[len(res.Values)-1]) {
			t.Errorf("value %d = %v is not among the %d of largest modulus", i, got, len(res.Values))
		}
		scaleTol := 1e-10 * cmplx.Abs(want[best])
		if bound := 10 * cond[best] * (tol + n*0x1p-52) * res.Norm; bound > scaleTol {
			t.Fatalf("value %d: condition number %.3g too large for a 1e-10 check (bound %.3g)", i, cond[best], bound)
		}
		if !scalar.EqualWithinAbsOrRel(real(got), real(want[best]), scaleTol, 0) ||
			!scalar.EqualWithinAbsOrRel(imag(got), imag(want[best]), scaleTol, 0) {
			t.Errorf("value %d = %v, mat.Eigen gives %v (difference %.3g)", i, got, want[best], cmplx.Abs(got-want[best]))
		}
	}
	for i := 1; i < len(res.Values); i++ {
		if cmplx.Abs(res.Values[i]) > cmplx.Abs(res.Values[i-1]) {
			t.Errorf("values not sorted by modulus: %v", res.Values)
		}
		if imag(res.Values[i]) < 0 && res.Values[i] != cmplx.Conj(res.Values[i-1]) {
			t.Errorf("value %d = %v does not follow its conjugate", i, res.Values[i])
		}
	}
}
