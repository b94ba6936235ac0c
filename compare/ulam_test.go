package compare

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// Synthetic Ulam sequences with known limits and error laws (closed form):
// the bar must contain the limit and be at most 100× the true error (floored
// at TrueErrorFloor for extrapolations exact to round-off).
func TestUlamSmoothSequences(t *testing.T) {
	const limit = 0.8314023
	cells := doublingCells(1 << 20)
	for _, tc := range []struct {
		name string
		f    func(n float64) float64
		// Expected order and its tolerance: exact for pure powers (the
		// three-point fit reproduces p to the bisection precision, 1e-12
		// relative, degraded by round-off in differences of size
		// C/N ~ 1e-7 relative to values of size 1: 1e-8); for log N / N the
		// local order at the last triple (2^18, 2^19, 2^20) is
		// 1 + log2(1 − ln 2 / ln 2^18) = 0.9175 by the same algebra.
		order, orderTol float64
	}{
		{"L+C/N", func(n float64) float64 { return limit + 0.7/n }, 1, 1e-6},
		{"L-C/N^2", func(n float64) float64 { return limit - 3/(n*n) }, 2, 1e-3},
		{"L+C*lnN/N", func(n float64) float64 { return limit + 0.7*math.Log(n)/n }, 1 + math.Log2(1-1.0/18), 1e-6},
		{"L+C/N+D/N^2", func(n float64) float64 { return limit + 0.3/n + 50/(n*n) }, 1, 0.01},
	} {
		e := Ulam(cells, sample(cells, tc.f), nil)
		if e.Status != Converged {
			t.Errorf("%s: status %v (%s), want converged", tc.name, e.Status, e.Reason)
		}
		contains, tight := checkBar(e, limit)
		if !contains || !tight {
			t.Errorf("%s: value %.17g ± %.3g, true error %.3g: contains %v, within 100×: %v",
				tc.name, e.Value, e.Error, math.Abs(e.Value-limit), contains, tight)
		}
		if !scalar.EqualWithinAbsOrRel(e.Order, tc.order, tc.orderTol, tc.orderTol) {
			t.Errorf("%s: order %.10g, want %.10g", tc.name, e.Order, tc.order)
		}
		if e.Last != tc.f(1<<20) || e.Used != 1<<20 {
			t.Errorf("%s: Last %v Used %d", tc.name, e.Last, e.Used)
		}
	}
}

// The erratic sequences the issue warns about. The design target is
// coverage of at least 99% over the family: with random signs, all K−1
// earlier errors share the sign of the last with probability 2^−(K−1), and
// then the spread can fall below the last error, so 100% is not attainable;
// the amplitudes make the actual failure rate far smaller than 1/8. The
// bars must also stay tight in the typical case: median ratio to the true
// error at most MaxOverstatement. The table prints the calibration of
// SpreadPoints and SpreadFactor (package documentation).
func TestUlamErraticCoverage(t *testing.T) {
	type family struct {
		kind  int
		order float64
		last  int
	}
	var families []family
	for kind := range erraticKinds {
		for _, order := range []float64{0.5, 1} {
			for _, last := range []int{1 << 14, 1 << 17, 1 << 20} {
				families = append(families, family{kind, order, last})
			}
		}
	}
	seeds := uint64(200)
	if testing.Short() {
		seeds = 50
	}
	run := func(set *Settings, keep func(family) bool) Coverage {
		var cases []Case
		for _, f := range families {
			if !keep(f) {
				continue
			}
			for seed := range seeds {
				cells, values, limit := erraticUlam(f.kind, seed, f.last, f.order)
				cases = append(cases, Case{Truth: limit, Estimate: Ulam(cells, values, set)})
			}
		}
		return Calibrate(cases)
	}
	all := func(family) bool { return true }

	var table strings.Builder
	fmt.Fprintf(&table, "erratic Ulam coverage, %d sequences per setting\n  K  factor  covered  median bar/true  >100×\n", int(seeds)*len(families))
	for _, k := range []int{3, 4, 5} {
		for _, f := range []float64{1, 1.5, 2, 3} {
			c := run(&Settings{SpreadPoints: k, SpreadFactor: f}, all)
			fmt.Fprintf(&table, "  %d  %6.1f  %7.4f  %15.3g  %5.3f\n", k, f, c.Fraction(), c.MedianRatio, float64(c.Overstated)/float64(c.Cases))
		}
	}
	t.Log(table.String())

	def := run(nil, all)
	t.Logf("defaults: covered %d of %d, median ratio %.3g", def.Covered, def.Cases, def.MedianRatio)
	if def.Fraction() < 0.99 || def.MedianRatio > MaxOverstatement {
		t.Errorf("defaults cover %.4f (want ≥ 0.99), median bar/true %.3g (want ≤ %d)", def.Fraction(), def.MedianRatio, MaxOverstatement)
	}
	// The very sequence of the issue: L + C(1 + 0.9 sin kN)/N with random
	// signs, N = 2^10 … 2^20.
	issue := run(nil, func(f family) bool { return f.kind == erraticSine && f.order == 1 && f.last == 1<<20 })
	t.Logf("issue sequence: covered %d of %d", issue.Covered, issue.Cases)
	if issue.Fraction() < 0.99 {
		t.Errorf("issue sequence covered %.4f, want ≥ 0.99", issue.Fraction())
	}
	// Most erratic sequences must be recognised as such.
	irregular := 0
	for _, r := range def.Rows {
		if r.Status == Irregular {
			irregular++
		}
	}
	if float64(irregular) < 0.95*float64(def.Cases) {
		t.Errorf("only %d of %d erratic sequences reported irregular", irregular, def.Cases)
	}
}

func TestUlamStagnationAndShortSequences(t *testing.T) {
	const limit = 0.5
	// An exact Ulam sequence (full-branch piecewise-linear maps with a
	// Markov partition give the exact eigenvalue at every N, common
	// practice, no source) with round-off noise of one ulp: the floor.
	cells := doublingCells(1 << 16)
	exact := sample(cells, func(n float64) float64 { return limit + limit*epsilon*math.Sin(n) })
	e := Ulam(cells, exact, nil)
	if e.Status != RoundOffFloor || e.Used != 1024 {
		t.Errorf("exact sequence: status %v used %d, want round-off floor from 1024", e.Status, e.Used)
	}
	// Floor error: SpreadFactor × range of values within ±1 ulp, at least
	// four ulps of round-off: at most 2 × 2 ulp + 4 ulp = 8 ulp.
	if math.Abs(e.Value-limit) > e.Error || e.Error > 8*epsilon*limit {
		t.Errorf("exact sequence: %v ± %v", e.Value, e.Error)
	}

	one := Ulam([]int{1024}, []float64{0.7}, nil)
	if one.Status != TooFewPoints || !math.IsInf(one.Error, 1) || one.Value != 0.7 {
		t.Errorf("single estimate: %+v", one)
	}
	three := Ulam([]int{1024, 2048, 4096}, []float64{0.71, 0.705, 0.7025}, nil)
	// Spread of the three values about the last, times SpreadFactor 2.
	if three.Status != TooFewPoints || !scalar.EqualWithinAbsOrRel(three.Error, 2*0.0075, 1e-15, 1e-12) {
		t.Errorf("three estimates: %v ± %v (%v)", three.Value, three.Error, three.Status)
	}
	nan := Ulam([]int{1024, 2048, 4096, 8192, 16384}, []float64{0.71, math.NaN(), 0.7025, 0.70125, 0.700625}, nil)
	if !strings.Contains(nan.Reason, "dropped 1 non-finite") {
		t.Errorf("NaN estimate not reported: %q", nan.Reason)
	}
	if none := Ulam(nil, nil, nil); !math.IsNaN(none.Value) || none.Status != TooFewPoints {
		t.Errorf("no estimates: %+v", none)
	}
}

func TestUlamPanicsOnBadShapes(t *testing.T) {
	for _, tc := range []struct {
		name   string
		cells  []int
		values []float64
	}{
		{"lengths", []int{1, 2}, []float64{1}},
		{"order", []int{4, 2}, []float64{1, 2}},
		{"zero", []int{0, 2}, []float64{1, 2}},
	} {
		func() {
			defer func() {
				r := recover()
				if s, ok := r.(string); !ok || !strings.HasPrefix(s, "compare: ") {
					t.Errorf("%s: panic %v, want a message prefixed by compare:", tc.name, r)
				}
			}()
			Ulam(tc.cells, tc.values, nil)
		}()
	}
}

func TestLocalOrderUnequalRatios(t *testing.T) {
	// v = L + C h^p sampled at N = 1000, 3000, 4000: the three-point fit
	// must recover p whatever the ratios (closed form).
	for _, p := range []float64{0.5, 1, 1.7, 3} {
		h := []float64{1.0 / 1000, 1.0 / 3000, 1.0 / 4000}
		v := make([]float64, 3)
		for i := range h {
			v[i] = 2 + 5*math.Pow(h[i], p)
		}
		d0, d1 := v[1]-v[0], v[2]-v[1]
		got := localOrder(h[0], h[1], h[2], d0, d1)
		// Each difference of values of size 2 carries a round-off of at
		// most 2 ulps, 4ε·2 absolutely; to first order the ratio d0/d1 then
		// errs by 8ε/min|d| relatively, and the order, as ln(ratio)
		// over ln(h1/h2) or more, by at most that over ln(h1/h2). The
		// bisection itself stops at 1e-12.
		tol := 8*epsilon*2/math.Min(math.Abs(d0), math.Abs(d1))/math.Log(h[1]/h[2]) + 1e-12
		if !scalar.EqualWithinAbsOrRel(got, p, tol, tol) {
			t.Errorf("p = %v: got %v", p, got)
		}
	}
	if !math.IsNaN(localOrder(1, 0.5, 0.25, 1, -1)) {
		t.Error("opposite signs must give no order")
	}
}
