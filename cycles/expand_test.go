package cycles

import (
	"context"
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"slices"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"crosspec/dynsys"
)

func mustExpand(t *testing.T, cycles []Cycle, s *Settings) *Expansion {
	t.Helper()
	e, err := NewExpansion(cycles, s)
	if err != nil {
		t.Fatal(err)
	}
	return e
}

func TestDoublingEigenvalues(t *testing.T) {
	// Eigenvalues 2^(−k): P. Gaspard, Chaos, Scattering and Statistical
	// Mechanics, Cambridge UP, 1998 (from memory).
	//
	// Reachable accuracy, derived: det(1 − zL) = Π_k (1 − z/2^k) has
	// coefficients ≈ 3.46·2^{−n(n−1)/2} that arise from O(1) traces, so each
	// carries a round-off error ≈ ε; at z_k = 2^k that moves F by ≈ ε·2^{kN}
	// at length N, while truncation leaves ≈ 3.46·2^{k(N+1) − N(N+1)/2}.
	// Balancing the two, λ_0 and λ_1 reach 1e-10 by N ≈ 10, λ_2 ≈ 1e-10,
	// while λ_3, λ_4, λ_5 stop near 1e-8, 1e-6 and 1e-4. So λ_0, λ_1 are
	// checked to 1e-10, and for every k the exact value must lie within
	// the reported Error and the estimate must stop at the round-off floor
	// (before length 12) rather than report a polluted value.
	e := mustExpand(t, doublingCycles(12), nil)
	est := e.EigenvalueEstimates(6)
	for k, ev := range est {
		want := math.Ldexp(1, -k)
		got := cmplx.Abs(ev.Value - complex(want, 0))
		if k <= 1 && got > 1e-10 {
			t.Errorf("λ_%d = %v, want %g to 1e-10", k, ev.Value, want)
		}
		if got > ev.Error {
			t.Errorf("λ_%d = %v: error %.3g exceeds the reported %.3g", k, ev.Value, got, ev.Error)
		}
		if ev.Status != AtFloor || ev.Len >= 12 {
			t.Errorf("λ_%d: status %v at length %d, want the round-off floor before 12", k, ev.Status, ev.Len)
		}
		if ev.Floor <= 0 || ev.Error < ev.Floor {
			t.Errorf("λ_%d: floor %g, error %g", k, ev.Floor, ev.Error)
		}
	}
	if d := e.Diagnostics(); d.Stalled || d.FloorLen == 0 {
		t.Errorf("diagnostics %+v: want no stall and the coefficient floor reached", d)
	}
}

func TestLinearRepeller(t *testing.T) {
	// Full-branch piecewise-linear map: λ_k = Σ_b 1/(|Λ_b| Λ_b^k), escape
	// rate −ln(1/|Λ_0| + 1/|Λ_1|): standard result, derivable in a few
	// lines (common practice, no source).
	for _, slopes := range [][]float64{{3, -5}, {4, 6}} {
		cycles := linearCycles(slopes, 12)
		lambda := func(k int) float64 {
			var s float64
			for _, b := range slopes {
				s += 1 / (math.Abs(b) * math.Pow(b, float64(k)))
			}
			return s
		}
		gamma := -math.Log(lambda(0))

		// The zeta function is 1 − z λ_0 exactly (curvatures cancel by
		// unique factorization of words), so order 1 gives γ to round-off:
		// one logarithm and a sum of two terms, a few ulps.
		ez := mustExpand(t, cycles, &Settings{Function: DynamicalZeta})
		r, err := ez.Quantity(dynsys.EscapeRate)
		if err != nil {
			t.Fatal(err)
		}
		if v := r.Orders[0].Value; !scalar.EqualWithinAbsOrRel(v, gamma, 4e-16, 4e-16) {
			t.Errorf("slopes %v: zeta escape rate at length 1 = %.17g, want %.17g", slopes, v, gamma)
		}
		for _, o := range r.Orders {
			if !scalar.EqualWithinAbsOrRel(o.Value, gamma, 0, 4*o.Floor+4e-16) {
				t.Errorf("slopes %v: zeta escape rate at length %d = %.17g, want %.17g", slopes, o.MaxLen, o.Value, gamma)
			}
		}

		// The determinant's zeros: every estimate within its reported
		// error; the error bars of λ_0, λ_1 are at most 1e-9 (the floor
		// grows like |z_k|^N, and z_1 ≈ 14 or 48).
		ed := mustExpand(t, cycles, nil)
		for k, ev := range ed.EigenvalueEstimates(5) {
			want := lambda(k)
			got := cmplx.Abs(ev.Value - complex(want, 0))
			if got > ev.Error {
				t.Errorf("slopes %v: λ_%d = %v, want %g: error %.3g exceeds the reported %.3g", slopes, k, ev.Value, want, got, ev.Error)
			}
			if k <= 1 && ev.Error > 1e-9 {
				t.Errorf("slopes %v: λ_%d reported error %g", slopes, k, ev.Error)
			}
		}
		rd, err := ed.Quantity(dynsys.EscapeRate)
		if err != nil {
			t.Fatal(err)
		}
		if !scalar.EqualWithinAbsOrRel(rd.Estimate.Value, gamma, rd.Estimate.Error, 0) {
			t.Errorf("slopes %v: determinant escape rate %+v, want %.17g", slopes, rd.Estimate, gamma)
		}
	}
}

func TestCantorDimension(t *testing.T) {
	// Middle-thirds Cantor repeller: dimension ln 2/ln 3,
	// F. Hausdorff, Math. Ann. 79 (1919) 157–179. The tolerance 1e-12 is
	// the issue's; the floors reported are ≈ 1e-15 (ε times traces of
	// order one at z = 1), so the estimate must also lie within its Error.
	const want = 0.6309297535714574
	for _, fn := range []Function{SpectralDeterminant, DynamicalZeta, FactorizedDeterminant} {
		e := mustExpand(t, linearCycles([]float64{3, 3}, 12), &Settings{Function: fn})
		r, err := e.Quantity(dynsys.Dimension)
		if err != nil {
			t.Fatal(err)
		}
		est := r.Estimate
		if !scalar.EqualWithinAbsOrRel(est.Value, want, 1e-12, 0) || math.Abs(est.Value-want) > est.Error {
			t.Errorf("%v: dimension %+v, want %.16g", fn, est, want)
		}
		if est.Status != AtFloor {
			t.Errorf("%v: status %v, want at-floor", fn, est.Status)
		}
	}
}

func TestLogisticFixedPoints(t *testing.T) {
	// Fixed points x = 0 with Λ = A and x = 1 − 1/A with Λ = 2 − A:
	// elementary algebra (common practice, no source). The inverse
	// branches are evaluated to a few ulps.
	const a = 6.0
	for _, c := range logisticCycles(a, 1) {
		var x, lambda float64
		switch c.Itinerary {
		case "0":
			x, lambda = 0, a
		case "1":
			x, lambda = 1-1/a, 2-a
		}
		if !scalar.EqualWithinAbsOrRel(c.Point[0], x, 1e-15, 1e-15) || !scalar.EqualWithinAbsOrRel(c.Multipliers[0], lambda, 1e-14, 1e-14) {
			t.Errorf("fixed point %q: x=%.17g Λ=%.17g, want %.17g, %.17g", c.Itinerary, c.Point[0], c.Multipliers[0], x, lambda)
		}
	}
}

func TestLogisticEscapeRate(t *testing.T) {
	// Cycle expansions of smooth hyperbolic maps converge faster than
	// exponentially (common practice, no source): each change of the
	// escape rate at least 10× smaller than the previous from N = 4 on,
	// until the round-off floor, and a last change below 1e-12.
	for _, fn := range []Function{SpectralDeterminant, DynamicalZeta} {
		e := mustExpand(t, logisticCycles(6, 14), &Settings{Function: fn})
		r, err := e.Quantity(dynsys.EscapeRate)
		if err != nil {
			t.Fatal(err)
		}
		prev := math.Inf(1)
		smallest := math.Inf(1)
		for i := 4; i < len(r.Orders); i++ {
			cur, last := r.Orders[i], r.Orders[i-1]
			change := math.Abs(cur.Value - last.Value)
			if change <= math.Max(cur.Floor, last.Floor) {
				break
			}
			if change > prev/10 {
				t.Errorf("%v: change %g at length %d, previous %g", fn, change, cur.MaxLen, prev)
			}
			prev = change
			smallest = min(smallest, change)
		}
		if smallest >= 1e-12 && prev >= 1e-12 {
			// Reaching the floor directly also counts: the floor is ≈ 1e-15.
			if r.Estimate.Status != AtFloor || r.Estimate.Error >= 1e-12 {
				t.Errorf("%v: smallest change %g, estimate %+v", fn, smallest, r.Estimate)
			}
		}
		if r.Estimate.Status != AtFloor || r.Estimate.Error >= 1e-12 {
			t.Errorf("%v: estimate %+v, want the floor below 1e-12", fn, r.Estimate)
		}
		if fn == SpectralDeterminant && r.Diagnostics.Stalled {
			t.Errorf("complete cycle set flagged: %+v", r.Diagnostics)
		}
	}
}

func TestDoublingAverages(t *testing.T) {
	// Lyapunov exponent ln 2 at every length (A_p = n_p ln 2 for every
	// cycle, so ∂_βF = ln 2 · z∂_zF exactly): common practice, no source;
	// to round-off, i.e. within the floor each length reports.
	e := mustExpand(t, doublingCycles(12), nil)
	r, err := e.Quantity(dynsys.Lyapunov)
	if err != nil {
		t.Fatal(err)
	}
	for _, o := range r.Orders {
		if math.IsNaN(o.Value) {
			continue // no real leading zero at this length
		}
		if math.Abs(o.Value-math.Ln2) > o.Floor {
			t.Errorf("length %d: Lyapunov %.17g, want ln 2 within %g", o.MaxLen, o.Value, o.Floor)
		}
	}
	// ⟨x⟩ = 1/2: the invariant measure of the doubling map is Lebesgue
	// (common practice, no source).
	m, err := e.Quantity(dynsys.Mean)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(m.Estimate.Value-0.5) > m.Estimate.Error {
		t.Errorf("mean %+v, want 0.5", m.Estimate)
	}
	// Decay rate −ln|λ_1/λ_0| = ln 2.
	d, err := e.Quantity(dynsys.DecayRate)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(d.Estimate.Value-math.Ln2) > d.Estimate.Error || d.Estimate.Error > 1e-9 {
		t.Errorf("decay rate %+v, want ln 2", d.Estimate)
	}
}

func TestMissingCycleFlagged(t *testing.T) {
	// A missing cycle divides the determinant by Π_k (1 − t_p/Λ_p^k): the
	// coefficients then decay only geometrically (common practice, no
	// source). Complete sets must not be flagged.
	drop := func(c []Cycle, itinerary string) []Cycle {
		return slices.DeleteFunc(c, func(x Cycle) bool { return x.Itinerary == itinerary })
	}
	cases := []struct {
		name    string
		cycles  []Cycle
		flagged bool
	}{
		{"logistic", logisticCycles(6, 14), false},
		{"logistic without 0011", drop(logisticCycles(6, 14), "0011"), true},
		{"logistic without 01", drop(logisticCycles(6, 14), "01"), true},
		{"doubling", doublingCycles(12), false},
		{"doubling without 011", drop(doublingCycles(12), "011"), true},
		{"linear", linearCycles([]float64{3, -5}, 12), false},
		{"linear without 001", drop(linearCycles([]float64{3, -5}, 12), "001"), true},
	}
	for _, c := range cases {
		e := mustExpand(t, c.cycles, nil)
		r, err := e.Quantity(dynsys.EscapeRate)
		if err != nil {
			t.Fatal(err)
		}
		if (r.Estimate.Status == Stalled) != c.flagged {
			t.Errorf("%s: escape rate %+v, diagnostics %+v: want stalled=%v", c.name, r.Estimate, r.Diagnostics, c.flagged)
		}
		if !c.flagged && r.Diagnostics.Stalled {
			t.Errorf("%s: complete set, coefficients flagged: %+v", c.name, r.Diagnostics)
		}
	}
}

// productDeterminant multiplies out Π_p Π_{k=0}^{K} (1 − t_p/Λ_p^k)
// truncated at degree maxLen, for 1D cycles at β = 0, independently of the
// package code. K is where |Λ|^{−K} drops below 1e-30 for the smallest
// multiplier, far below any coefficient the test compares.
func productDeterminant(cycles []Cycle, maxLen int) (coef, magnitude []float64) {
	coef = make([]float64, maxLen+1)
	magnitude = make([]float64, maxLen+1)
	coef[0], magnitude[0] = 1, 1
	for _, c := range cycles {
		if c.Len > maxLen {
			continue
		}
		l := c.Multipliers[0]
		for k := 0; math.Pow(math.Abs(l), -float64(k)) > 1e-30; k++ {
			t := 1 / (math.Abs(l) * math.Pow(l, float64(k)))
			for n := maxLen; n >= c.Len; n-- {
				coef[n] -= t * coef[n-c.Len]
				magnitude[n] += math.Abs(t) * magnitude[n-c.Len]
			}
		}
	}
	return coef, magnitude
}

func TestNewtonEqualsProduct(t *testing.T) {
	// exp(−Σ_p Σ_r z^{n_p r}/(r|1 − Λ_p^r|)) = Π_p Π_k (1 − t_p/Λ_p^k) for
	// 1D maps (geometric series of 1/(1 − Λ^{−r}); common practice, no
	// source). The tolerance is n + 1 times the two round-off floors (each
	// floor estimates one rounding per term; the n steps of the recursion
	// and the weights accumulate).
	const maxLen = 7
	for name, cycles := range map[string][]Cycle{
		"logistic": logisticCycles(6, maxLen),
		"linear":   linearCycles([]float64{3, -5}, maxLen),
		"doubling": doublingCycles(maxLen),
	} {
		e := mustExpand(t, cycles, nil)
		got, floors := e.Coefficients(), e.CoefficientFloors()
		want, magnitude := productDeterminant(cycles, maxLen)
		for n := 0; n <= maxLen; n++ {
			tol := float64(n+1) * (floors[n] + epsilon*magnitude[n])
			if math.Abs(got[n]-want[n]) > tol {
				t.Errorf("%s: c_%d = %.17g, product %.17g (tolerance %g)", name, n, got[n], want[n], tol)
			}
		}
	}
}

func TestDeterminantIsProductOfZetas(t *testing.T) {
	// det(1 − zL) = Π_{k≥0} 1/ζ_k for 1D maps (derived in ZetaCoefficients;
	// common practice, no source); the negative multiplier of the linear
	// map checks the sign of Λ_p^k. Same tolerance as above.
	const maxLen = 8
	for name, cycles := range map[string][]Cycle{
		"logistic": logisticCycles(6, maxLen),
		"linear":   linearCycles([]float64{3, -5}, maxLen),
	} {
		e := mustExpand(t, cycles, nil)
		got, floors := e.Coefficients(), e.CoefficientFloors()
		prod := make([]float64, maxLen+1)
		prod[0] = 1
		// |Λ| ≥ 3 here, so 1/ζ_k differs from 1 by at most 3^{−k}: k ≤ 70
		// leaves terms below 1e-33.
		for k := 0; k <= 70; k++ {
			zk, err := e.ZetaCoefficients(k)
			if err != nil {
				t.Fatal(err)
			}
			next := make([]float64, maxLen+1)
			for i, a := range prod {
				for j := 0; i+j <= maxLen; j++ {
					next[i+j] += a * zk[j]
				}
			}
			prod = next
		}
		_, magnitude := productDeterminant(cycles, maxLen)
		for n := 0; n <= maxLen; n++ {
			tol := float64(n+1) * (floors[n] + epsilon*magnitude[n])
			if math.Abs(got[n]-prod[n]) > tol {
				t.Errorf("%s: c_%d = %.17g, Π 1/ζ_k %.17g (tolerance %g)", name, n, got[n], prod[n], tol)
			}
		}
	}
}

func TestMeanIsPressureSlope(t *testing.T) {
	// The cycle averaging formula gives dP/dβ (common practice, no
	// source): compare with a central difference of the pressure, whose
	// error is h²/6·P''' + ε/h ≈ 1e-10 at h = 1e-5 for P''' of order one.
	const h = 1e-5
	cycles := logisticCycles(6, 12)
	for _, beta := range []float64{0, 0.7} {
		e := mustExpand(t, cycles, &Settings{Beta: beta})
		m, err := e.Quantity(dynsys.Mean)
		if err != nil {
			t.Fatal(err)
		}
		pressure := func(b float64) float64 {
			r, err := mustExpand(t, cycles, &Settings{Beta: b}).Quantity(dynsys.Pressure)
			if err != nil {
				t.Fatal(err)
			}
			return r.Estimate.Value
		}
		slope := (pressure(beta+h) - pressure(beta-h)) / (2 * h)
		if math.Abs(m.Estimate.Value-slope) > 1e-9 {
			t.Errorf("β=%g: mean %.15g, pressure slope %.15g", beta, m.Estimate.Value, slope)
		}
	}
}

func TestExpandDeterministic(t *testing.T) {
	// Same cycles in another order give identical results.
	cycles := logisticCycles(6, 10)
	shuffled := slices.Clone(cycles)
	rand.New(rand.NewPCG(1, 2)).Shuffle(len(shuffled), func(i, j int) { shuffled[i], shuffled[j] = shuffled[j], shuffled[i] })
	a := mustExpand(t, cycles, nil)
	b := mustExpand(t, shuffled, nil)
	if !slices.Equal(a.Coefficients(), b.Coefficients()) {
		t.Errorf("coefficients depend on the input order")
	}
	for i, o := range a.Orders() {
		if !slices.Equal(o.Eigenvalues, b.Orders()[i].Eigenvalues) {
			t.Errorf("length %d: eigenvalues depend on the input order", o.MaxLen)
		}
	}
}

func TestErrors(t *testing.T) {
	if _, err := NewExpansion(nil, nil); !errors.Is(err, ErrNoCycles) {
		t.Errorf("empty set: %v", err)
	}
	marginal := []Cycle{{Itinerary: "0", Len: 1, Multipliers: []float64{1}}}
	if _, err := NewExpansion(marginal, nil); !errors.Is(err, ErrMarginal) {
		t.Errorf("marginal cycle: %v", err)
	}
	mixed := []Cycle{{Len: 1, Multipliers: []float64{3}}, {Len: 2, Multipliers: []float64{3, 0.1}}}
	if _, err := NewExpansion(mixed, nil); err == nil {
		t.Errorf("mixed dimensions accepted")
	}
	planar := []Cycle{{Len: 1, Multipliers: []float64{3, 0.1}}}
	e := mustExpand(t, planar, nil)
	if _, err := e.Quantity(dynsys.Dimension); !errors.Is(err, ErrNotOneDimensional) {
		t.Errorf("dimension in 2D: %v", err)
	}
	if _, err := e.ZetaCoefficients(1); !errors.Is(err, ErrNotOneDimensional) {
		t.Errorf("1/ζ_1 in 2D: %v", err)
	}
	if _, err := e.Quantity("entropy"); err == nil {
		t.Errorf("unknown quantity accepted")
	}
}

// TestStallCheckTwoDimensional: for maps with d ≥ 2 the coefficient check
// asks only for a decreasing envelope (see Diagnostics). The horseshoe
// x' = 10 − x² − y, y' = x has a complete two-symbol set of cycles (the
// search's counts equal the necklace numbers, checked in the search
// tests; R. L. Devaney and Z. Nitecki, Commun. Math. Phys. 67 (1979)
// 137–146, from memory), whose coefficients fall from 1.7e-4 at length 4
// to below 1e-15 at 12 with fluctuations: not flagged. The Hénon map
// (1.4, 0.3) is not hyperbolic and its coefficients do not decay (common
// practice, no source): flagged.
func TestStallCheckTwoDimensional(t *testing.T) {
	for _, c := range []struct {
		name    string
		maxLen  int
		flagged bool
	}{{"horseshoe", 12, false}, {"henon", 12, true}} {
		sys, err := dynsys.Lookup(c.name, nil)
		if err != nil {
			t.Fatal(err)
		}
		res, err := Search(context.Background(), sys, &SearchSettings{MaxLen: c.maxLen})
		if err != nil {
			t.Fatal(err)
		}
		e := mustExpand(t, res.Cycles, &Settings{MaxLen: c.maxLen})
		if d := e.Diagnostics(); d.Stalled != c.flagged || !d.Checked {
			t.Errorf("%s: diagnostics %+v, want stalled = %v (coefficients %.2g)", c.name, d, c.flagged, e.Coefficients())
		}
	}
}
