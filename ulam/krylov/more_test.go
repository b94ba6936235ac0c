package krylov

import (
	"errors"
	"math"
	"math/cmplx"
	"runtime"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
	"gonum.org/v1/gonum/mat"
)

// TestExactLeading checks leading eigenvalues known in closed form.
func TestExactLeading(t *testing.T) {
	const tol = 1e-12
	cases := []struct {
		name string
		op   Operator
		want float64
		// source of the value, and why the tolerance holds
	}{
		// Ulam matrix of the open full-branch piecewise-linear map with
		// slopes 4 and 2 and branch points on cell edges: the mass-transport
		// matrix maps the constant vector to (1/4 + 1/2) times itself, and
		// a positive eigenvector of a nonnegative matrix belongs to its
		// spectral radius, so λ_0 = Σ_b 1/|Λ_b| = 3/4 (standard result,
		// derivable in a few lines: common practice, no source).
		{"open linear map 3000 cells, transport", openLinearUlam(3000).transpose(), 0.75},
		{"open linear map 3000 cells", openLinearUlam(3000), 0.75},
		// With 4096 = 2^12 cells the matrix is nilpotent but for λ_0, so
		// the Krylov space becomes invariant within 13 steps and the
		// expansion continues from a direction of rounding size.
		{"open linear map 4096 cells, transport", openLinearUlam(4096).transpose(), 0.75},
		// A column-stochastic matrix has 1ᵀA = 1ᵀ, and 1 is its spectral
		// radius (common practice, no source).
		{"stochastic 2000", stochastic(2000, 3, 11), 1},
		// The doubling map x ↦ 2x mod 1 preserves Lebesgue measure, so its
		// Ulam matrix has λ_0 = 1 with a constant eigenvector (common
		// practice, no source).
		{"doubling 1e5 cells", doublingUlam(100_000), 1},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			res, err := Eigs(tc.op, &Settings{Vectors: true, Tol: tol})
			if err != nil {
				t.Fatalf("Eigs: %v", err)
			}
			// λ_0 is a simple Perron root with nonnegative left and right
			// vectors; for these matrices their condition number is
			// O(1)–O(10), so the error is below 100·Tol·‖A‖.
			got := res.Values[0]
			if imag(got) != 0 || !scalar.EqualWithinAbsOrRel(real(got), tc.want, 100*tol*res.Norm, 0) {
				t.Errorf("λ_0 = %v, want %v", got, tc.want)
			}
			if res.Residuals[0] > tol+1e-13 {
				t.Errorf("relative residual %.3g, want ≤ %.3g", res.Residuals[0], tol)
			}
			for i, x := range res.Vectors[0] {
				if x < -1e-10 {
					t.Fatalf("Perron vector has negative entry %d: %v", i, x)
				}
			}
			t.Logf("stats %+v", res.Stats)
		})
	}
}

// TestLeading checks the left/right pair: ⟨u, v⟩ = 1, small residuals,
// the left vector of a column-stochastic matrix (all ones, common
// practice, no source), and the first-order perturbation formula against
// a central difference of gonum's mat.Eigen (the reference library).
func TestLeading(t *testing.T) {
	const tol = 1e-12
	t.Run("stochastic left vector is constant", func(t *testing.T) {
		a := stochastic(500, 4, 12)
		pair, err := Leading(a, a.transpose(), &Settings{Tol: tol})
		if err != nil {
			t.Fatal(err)
		}
		// The two-sided Rayleigh quotient has error of order of the
		// product of the two residuals; 10·Tol is generous.
		if !scalar.EqualWithinAbsOrRel(pair.Value, 1, 10*tol, 0) {
			t.Errorf("λ_0 = %v, want 1", pair.Value)
		}
		if uv := Dot(pair.Left, pair.Right); !scalar.EqualWithinAbsOrRel(uv, 1, 1e-14, 0) {
			t.Errorf("⟨u, v⟩ = %v, want 1", uv)
		}
		// u is a multiple of 1: entries agree to the eigenvector error,
		// residual over the spectral gap (|λ_1| ≲ 0.7 here), times √n
		// for the normalisation; 1e-9 relative covers 1e-12·√500/0.3.
		for i, x := range pair.Left {
			if !scalar.EqualWithinAbsOrRel(x, pair.Left[0], 0, 1e-9) {
				t.Fatalf("u[%d] = %v, u[0] = %v: left vector not constant", i, x, pair.Left[0])
			}
		}
		if pair.RightResidual > tol || pair.LeftResidual > tol {
			t.Errorf("residuals %.3g %.3g, want ≤ %.3g", pair.RightResidual, pair.LeftResidual, tol)
		}
	})
	t.Run("derivative against dense central difference", func(t *testing.T) {
		a := stochastic(300, 3, 13)
		e := randomSparse(300, 2, 14)
		for i := range e.val {
			e.val[i] = math.Abs(e.val[i]) * 0.01
		}
		pair, err := Leading(a, a.transpose(), &Settings{Tol: tol})
		if err != nil {
			t.Fatal(err)
		}
		ev := make([]float64, e.n)
		e.Apply(ev, pair.Right)
		derivative := Dot(pair.Left, ev)
		// λ_0(β) of A + βE by mat.Eigen at β = ±h: the central difference
		// has truncation error h²|λ'''|/6 (≈ 1e-10 for h = 1e-5 and
		// derivatives of order ‖E‖³/gap² ≲ 1) and rounding error
		// ε·‖A‖/h ≈ 1e-11; 1e-8 relative bounds both.
		const h = 1e-5
		leadingAt := func(beta float64) float64 {
			var m mat.Dense
			ed := e.dense()
			ed.Scale(beta, ed)
			m.Add(a.dense(), ed)
			var eig mat.Eigen
			if !eig.Factorize(&m, mat.EigenNone) {
				t.Fatal("mat.Eigen failed")
			}
			best := complex(0, 0)
			for _, v := range eig.Values(nil) {
				if cmplx.Abs(v) > cmplx.Abs(best) {
					best = v
				}
			}
			return real(best)
		}
		want := (leadingAt(h) - leadingAt(-h)) / (2 * h)
		if !scalar.EqualWithinAbsOrRel(derivative, want, 0, 1e-8) {
			t.Errorf("⟨u, E v⟩ = %.12g, central difference %.12g", derivative, want)
		}
		if !scalar.EqualWithinAbsOrRel(pair.Value, leadingAt(0), 10*tol, 0) {
			t.Errorf("λ_0 = %.15g, mat.Eigen %.15g", pair.Value, leadingAt(0))
		}
	})
	t.Run("periodic chain is rejected or consistent", func(t *testing.T) {
		// A 2-periodic stochastic matrix has eigenvalues ±1 of equal
		// modulus; the pair is not isolated.
		n := 200
		var es []entry
		for j := range n {
			es = append(es, entry{(j + 1) % n, j, 1})
		}
		a := newCSR(n, es)
		pair, err := Leading(a, a.transpose(), &Settings{MaxRestarts: 5})
		if err == nil && math.Abs(pair.Value) != 1 {
			t.Errorf("no error and λ_0 = %v", pair.Value)
		}
	})
}

// TestNotConverged checks the restart limit: a status, the residuals
// reached, an error matching ErrNotConverged, no panic.
func TestNotConverged(t *testing.T) {
	a := clusteredRotations(400, 8, 1e-3, 6)
	res, err := Eigs(a, &Settings{Wanted: 6, MaxRestarts: 1, Tol: 1e-14})
	if !errors.Is(err, ErrNotConverged) {
		t.Fatalf("error %v, want ErrNotConverged", err)
	}
	var nc *NotConvergedError
	if !errors.As(err, &nc) || len(nc.Residuals) != len(res.Values) {
		t.Fatalf("error %v does not carry the residuals", err)
	}
	if !strings.Contains(err.Error(), "residuals") {
		t.Errorf("message %q does not give the residuals", err)
	}
	if res.Status != IterationLimit || res.Stats.Restarts != 1 {
		t.Errorf("status %v after %d restarts", res.Status, res.Stats.Restarts)
	}
	worst := 0.0
	for _, r := range res.Residuals {
		if math.IsNaN(r) {
			t.Fatal("NaN residual")
		}
		worst = max(worst, r)
	}
	if worst <= 1e-14 {
		t.Errorf("largest residual %.3g already below the tolerance", worst)
	}
}

// TestDeterminism runs the same solve with GOMAXPROCS 1 and 2 (on a vector
// long enough for the parallel kernels) and compares the bytes.
func TestDeterminism(t *testing.T) {
	a := perturbedDoublingUlam(60_000, 0.1)
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	var results []Result
	for _, procs := range []int{1, 2, 3} {
		runtime.GOMAXPROCS(procs)
		res, err := Eigs(a, &Settings{Wanted: 3, Vectors: true, MaxRestarts: 40})
		if err != nil && !errors.Is(err, ErrNotConverged) {
			t.Fatal(err)
		}
		results = append(results, res)
	}
	for p := 1; p < len(results); p++ {
		x, y := results[0], results[p]
		if len(x.Values) != len(y.Values) || x.Stats != y.Stats {
			t.Fatalf("run %d differs: %+v vs %+v", p, x.Stats, y.Stats)
		}
		for i := range x.Values {
			if math.Float64bits(real(x.Values[i])) != math.Float64bits(real(y.Values[i])) ||
				math.Float64bits(imag(x.Values[i])) != math.Float64bits(imag(y.Values[i])) ||
				math.Float64bits(x.Residuals[i]) != math.Float64bits(y.Residuals[i]) {
				t.Errorf("value %d: %v vs %v", i, x.Values[i], y.Values[i])
			}
			for j := range x.Vectors[i] {
				if math.Float64bits(x.Vectors[i][j]) != math.Float64bits(y.Vectors[i][j]) {
					t.Fatalf("vector %d entry %d differs", i, j)
				}
			}
		}
	}
}

// TestDense checks the dense path (small n, or asked for) against the
// Krylov path on the same matrix, and its residuals.
func TestDense(t *testing.T) {
	a := randomSparse(200, 6, 21)
	krylov, err := Eigs(a, &Settings{Wanted: 4, Tol: 1e-13, Vectors: true})
	if err != nil {
		t.Fatal(err)
	}
	dense, err := Eigs(a, &Settings{Wanted: 4, Dense: true, Vectors: true})
	if err != nil {
		t.Fatal(err)
	}
	if len(dense.Values) != len(krylov.Values) {
		t.Fatalf("dense gives %d values, Krylov %d", len(dense.Values), len(krylov.Values))
	}
	for i := range dense.Values {
		// Both are backward stable to about 1e-13·‖A‖ and the leading
		// eigenvalues of this matrix are well conditioned.
		if cmplx.Abs(dense.Values[i]-krylov.Values[i]) > 1e-10*cmplx.Abs(dense.Values[i]) {
			t.Errorf("value %d: dense %v, Krylov %v", i, dense.Values[i], krylov.Values[i])
		}
		if r := explicitResidual(a, &dense, i); r > 1e-12*dense.Norm {
			t.Errorf("dense value %d: residual %.3g", i, r)
		}
	}
	small := randomSparse(30, 4, 22)
	res, err := Eigs(small, nil)
	if err != nil || res.Stats.MatVecs < 30 || len(res.Values) < 1 {
		t.Errorf("small problem: %v, %+v", err, res)
	}
}

// TestSettingsErrors checks that invalid settings are errors, not panics.
func TestSettingsErrors(t *testing.T) {
	a := randomSparse(100, 3, 1)
	for _, s := range []Settings{
		{Wanted: -1},
		{Wanted: 101},
		{Tol: -1},
		{Tol: math.NaN()},
		{MaxRestarts: -2},
		{Norm: -1},
		{SubspaceSize: -1},
		{MaxSubspaceSize: -1},
		{Wanted: 10, SubspaceSize: 11},
		{Start: make([]float64, 100)},
	} {
		if _, err := Eigs(a, &s); err == nil || !strings.HasPrefix(err.Error(), "krylov: ") {
			t.Errorf("settings %+v: error %v", s, err)
		}
	}
	defer func() {
		if recover() == nil {
			t.Error("no panic for a start vector of wrong length")
		}
	}()
	Eigs(a, &Settings{Start: make([]float64, 3)})
}

// diagonal is the operator x ↦ d ⊙ x.
type diagonal []float64

func (d diagonal) Dim() int { return len(d) }
func (d diagonal) Apply(dst, x []float64) {
	for i := range d {
		dst[i] = d[i] * x[i]
	}
}

// TestInvariantSubspace checks the expansion when the Krylov space becomes
// invariant: the zero operator (every A v vanishes: a breakdown at each
// step) and a diagonal operator with eigenvalues 1 (multiplicity 167) and
// 1/2: a single Krylov sequence sees one copy of each, and only the fresh
// directions after the breakdowns reveal that 1 is multiple (exact values:
// the diagonal; common practice, no source).
func TestInvariantSubspace(t *testing.T) {
	// SubspaceSize set: the Krylov expansion itself, without power steps.
	res, err := Eigs(make(diagonal, 100), &Settings{Vectors: true, SubspaceSize: 20})
	if err != nil {
		t.Fatal(err)
	}
	if res.Values[0] != 0 || res.Stats.Breakdowns == 0 {
		t.Errorf("zero operator: value %v, %d breakdowns", res.Values[0], res.Stats.Breakdowns)
	}
	// The power steps see A x = 0 at once: residual 0.
	res, err = Eigs(make(diagonal, 100), &Settings{Vectors: true})
	if err != nil || res.Values[0] != 0 || res.Stats.PowerSteps != 1 {
		t.Errorf("zero operator, power steps: value %v, error %v, stats %+v", res.Values[0], err, res.Stats)
	}
	d := make(diagonal, 500)
	for i := range d {
		d[i] = 0.5
		if i%3 == 0 {
			d[i] = 1
		}
	}
	const tol = 1e-12
	res, err = Eigs(d, &Settings{Wanted: 2, Tol: tol, Vectors: true})
	if err != nil {
		t.Fatal(err)
	}
	// A diagonal matrix is normal (condition number 1): the eigenvalue
	// error is at most the residual, Tol·‖A‖ = 1e-12.
	for i, want := range []float64{1, 1} {
		if !scalar.EqualWithinAbsOrRel(real(res.Values[i]), want, tol, 0) || imag(res.Values[i]) != 0 {
			t.Errorf("value %d = %v, want %v", i, res.Values[i], want)
		}
	}
	if res.Stats.Breakdowns == 0 {
		t.Error("no breakdown counted")
	}
}
