package cycles

import (
	"errors"
	"math"
	"math/cmplx"
	"slices"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"crosspec/dynsys"
)

func TestFactorizedDoubling(t *testing.T) {
	// Eigenvalues 2^(−k): P. Gaspard, Chaos, Scattering and Statistical
	// Mechanics, Cambridge UP, 1998 (from memory).
	//
	// Reachable accuracy, derived (see the package documentation): each
	// factor is 1/ζ_k = 1 − z/2^k exactly, and the round-off of its
	// order-n coefficient is ε·2^{−nk}/2 times the roundings of a
	// product (at most about 11 per factor for k ≤ 11, n factors), so at
	// z_k = 2^k every order adds at most ≈ 6nε to F and the relative
	// floor of λ_k after N = 12 orders is ≈ 6ε·Σn/|z F'| ≈ 500ε ≈ 6e-14.
	// Here every weight 2^{−n(k+1)} and every product is a power of two, so
	// the coefficients are exact and so are the zeros. The 1e-10
	// is checked for λ_0…λ_5; for all twelve, the value must lie within
	// its reported Error and within the derived 1e-12 relative, the floor
	// must be positive and below it, and the status AtFloor at the length
	// where the factor enters (k + 1), since every later length repeats
	// the value.
	const maxLen = 12
	cycles := doublingCycles(maxLen)
	e := mustExpand(t, cycles, &Settings{Function: FactorizedDeterminant, Eigs: maxLen})
	if e.Factors() != maxLen {
		t.Errorf("%d factors, want %d", e.Factors(), maxLen)
	}
	for k, ev := range e.EigenvalueEstimates(maxLen) {
		want := math.Ldexp(1, -k)
		got := cmplx.Abs(ev.Value - complex(want, 0))
		if k < 6 && got > 1e-10 {
			t.Errorf("λ_%d = %v, want %g to 1e-10", k, ev.Value, want)
		}
		if got > ev.Error || got > 1e-12*want {
			t.Errorf("λ_%d = %v: error %.3g exceeds the reported %.3g", k, ev.Value, got, ev.Error)
		}
		if ev.Floor <= 0 || ev.Floor > 1e-12*want || ev.Error < ev.Floor {
			t.Errorf("λ_%d: floor %g, error %g", k, ev.Floor, ev.Error)
		}
		// λ_11 enters at the last length only: one value, no error
		// estimate.
		wantStatus := AtFloor
		if k == maxLen-1 {
			wantStatus = TooShort
		}
		if ev.Status != wantStatus || ev.Len != k+1 {
			t.Errorf("λ_%d: status %v at length %d, want %v at %d", k, ev.Status, ev.Len, wantStatus, k+1)
		}
	}
	// The Newton determinant of the same cycles cannot do this: its λ_5
	// stops near 1e-4 (TestDoublingEigenvalues). Side by side, the
	// comparison reports the two; they must agree within their errors.
	c, err := CompareSpectra(cycles, &Settings{Eigs: 6})
	if err != nil {
		t.Fatal(err)
	}
	for k, d := range c.Discrepancy {
		if !(d <= 1) {
			t.Errorf("λ_%d: Newton %+v, factorized %+v, discrepancy %g", k, c.Newton.Eigenvalues[k], c.Factorized.Eigenvalues[k], d)
		}
	}
	if newton, factorized := c.Newton.Eigenvalues[5].Error, c.Factorized.Eigenvalues[5].Error; factorized > 1e-12 || newton < 1e-8 {
		t.Errorf("λ_5 errors: Newton %g, factorized %g", newton, factorized)
	}
}

func TestFactorizedLinearRepeller(t *testing.T) {
	// λ_k = Σ_b 1/(|Λ_b| Λ_b^k): standard result, derivable in a few lines
	// (common practice, no source). Each factor is exactly linear,
	// 1/ζ_k = 1 − z λ_k (the curvature terms of Π_p (1 − t_p/Λ_p^k) cancel
	// by unique factorization of words), so the factorized determinant
	// gives λ_k at length k + 1 to a few roundings of the sum of two
	// weights, ≈ 1e-16 relative; its higher coefficients are round-off and
	// dropped. The 1e-12 is checked for the first 5 k, and each
	// value must lie within its reported Error.
	for _, slopes := range [][]float64{{3, -5}, {4, 6}} {
		lambda := func(k int) float64 {
			var s float64
			for _, b := range slopes {
				s += 1 / (math.Abs(b) * math.Pow(b, float64(k)))
			}
			return s
		}
		e := mustExpand(t, linearCycles(slopes, 12), &Settings{Function: FactorizedDeterminant})
		for k, ev := range e.EigenvalueEstimates(5) {
			want := lambda(k)
			got := cmplx.Abs(ev.Value - complex(want, 0))
			if got > 1e-12 || got > ev.Error {
				t.Errorf("slopes %v: λ_%d = %v, want %.17g (error %.3g, reported %.3g)", slopes, k, ev.Value, want, got, ev.Error)
			}
			if ev.Status != AtFloor {
				t.Errorf("slopes %v: λ_%d status %v", slopes, k, ev.Status)
			}
		}
		// The escape rate comes from 1/ζ_0, exact at length 1 (a
		// logarithm and a sum of two terms: a few ulps).
		r, err := e.Quantity(dynsys.EscapeRate)
		if err != nil {
			t.Fatal(err)
		}
		if v, want := r.Orders[0].Value, -math.Log(lambda(0)); !scalar.EqualWithinAbsOrRel(v, want, 4e-16, 4e-16) {
			t.Errorf("slopes %v: escape rate at length 1 = %.17g, want %.17g", slopes, v, want)
		}
	}
}

func TestFactorizedLogistic(t *testing.T) {
	// Two expansions of the same determinant must agree (common practice,
	// no source): at N = 8, 9, 10 the estimates of the Newton and
	// factorized determinants, each with its own reported Error (the
	// change between lengths and the round-off floor), may differ by no
	// more than the sum of the two. λ_0 and λ_1 must be present in both.
	//
	// λ_1 of this map is the second zero of 1/ζ_0, not a zero of 1/ζ_1,
	// so the factorized form gives it no better than the Newton
	// recursion: its floor grows like ε(λ_0/|λ_1|)ᴺ ≈ ε·15ᴺ and its
	// series converges like (|z_1|/R_0)ᴺ ≈ 0.47ᴺ. λ_2 ≈ −0.006 lies
	// beyond the circle of convergence of 1/ζ_0 (its first pole, at
	// |λ| ≈ 0.014, is an eigenvalue of L_1 that L lacks), so the
	// factorized form must leave it out (no value) rather than report a
	// zero of a factor that a pole cancels.
	all := logisticCycles(6, 10)
	for _, n := range []int{8, 9, 10} {
		c, err := CompareSpectra(all, &Settings{MaxLen: n, Eigs: 3})
		if err != nil {
			t.Fatal(err)
		}
		for k, d := range c.Discrepancy {
			nv, fv := c.Newton.Eigenvalues[k], c.Factorized.Eigenvalues[k]
			if k <= 1 && (cmplx.IsNaN(nv.Value) || cmplx.IsNaN(fv.Value)) {
				t.Errorf("N=%d: λ_%d missing: Newton %+v, factorized %+v", n, k, nv, fv)
				continue
			}
			if cmplx.IsNaN(fv.Value) {
				continue
			}
			if !(d <= 1) {
				t.Errorf("N=%d: λ_%d Newton %+v, factorized %+v: discrepancy %g", n, k, nv, fv, d)
			}
		}
		if v := c.Factorized.Eigenvalues[2]; !cmplx.IsNaN(v.Value) {
			t.Errorf("N=%d: factorized λ_2 = %+v, want none", n, v)
		}
	}
}

func TestFactorizedQuantities(t *testing.T) {
	// The quantities that differentiate the expanded function come from
	// 1/ζ_0: they must equal those of DynamicalZeta bit for bit, and the
	// Lyapunov exponent of the doubling map is ln 2 at every length
	// (A_p = n_p ln 2; common practice, no source).
	for name, cycles := range map[string][]Cycle{
		"logistic": logisticCycles(6, 10),
		"doubling": doublingCycles(10),
	} {
		zeta := mustExpand(t, cycles, &Settings{Function: DynamicalZeta})
		fact := mustExpand(t, cycles, &Settings{Function: FactorizedDeterminant})
		for _, q := range []dynsys.Quantity{dynsys.EscapeRate, dynsys.Mean, dynsys.Lyapunov, dynsys.Dimension} {
			rz, err := zeta.Quantity(q)
			if err != nil {
				t.Fatal(err)
			}
			rf, err := fact.Quantity(q)
			if err != nil {
				t.Fatal(err)
			}
			for i := range rz.Orders {
				a, b := rz.Orders[i].Value, rf.Orders[i].Value
				if a != b && !(math.IsNaN(a) && math.IsNaN(b)) {
					t.Errorf("%s %s length %d: zeta %.17g, factorized %.17g", name, q, i+1, a, b)
				}
			}
			if !rf.Diagnostics.Checked {
				t.Errorf("%s %s: factorized diagnostics not checked", name, q)
			}
		}
	}
	e := mustExpand(t, doublingCycles(12), &Settings{Function: FactorizedDeterminant})
	r, err := e.Quantity(dynsys.Lyapunov)
	if err != nil {
		t.Fatal(err)
	}
	for _, o := range r.Orders {
		if math.Abs(o.Value-math.Ln2) > o.Floor {
			t.Errorf("length %d: Lyapunov %.17g, want ln 2 within %g", o.MaxLen, o.Value, o.Floor)
		}
	}
	// Decay rate −ln|λ_1/λ_0| = ln 2 from two factors.
	d, err := e.Quantity(dynsys.DecayRate)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(d.Estimate.Value-math.Ln2) > d.Estimate.Error || d.Estimate.Error > 1e-14 {
		t.Errorf("decay rate %+v, want ln 2", d.Estimate)
	}
}

func TestFactorizedMissingCycle(t *testing.T) {
	// The coefficient check of the factorized determinant runs on the
	// Newton coefficients of the same cycles, so a missing cycle is
	// flagged as for SpectralDeterminant (TestMissingCycleFlagged).
	cycles := slices.DeleteFunc(logisticCycles(6, 12), func(c Cycle) bool { return c.Itinerary == "0011" })
	e := mustExpand(t, cycles, &Settings{Function: FactorizedDeterminant})
	r, err := e.Quantity(dynsys.Eigenvalues)
	if err != nil {
		t.Fatal(err)
	}
	if !r.Diagnostics.Stalled || r.Estimate.Status != Stalled || r.Eigenvalues[0].Status != Stalled {
		t.Errorf("missing cycle not flagged: %+v, %+v", r.Diagnostics, r.Estimate)
	}
}

func TestFactorizedErrors(t *testing.T) {
	planar := []Cycle{{Len: 1, Multipliers: []float64{3, 0.1}}}
	if _, err := NewExpansion(planar, &Settings{Function: FactorizedDeterminant}); !errors.Is(err, ErrNotOneDimensional) {
		t.Errorf("factorized in 2D: %v", err)
	}
	if _, err := CompareSpectra(planar, nil); !errors.Is(err, ErrNotOneDimensional) {
		t.Errorf("comparison in 2D: %v", err)
	}
	if _, err := CompareSpectra(nil, nil); !errors.Is(err, ErrNoCycles) {
		t.Errorf("comparison of no cycles: %v", err)
	}
}
