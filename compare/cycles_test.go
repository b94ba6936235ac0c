package compare

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// Synthetic cycle-expansion sequences with known limits (closed form):
// super-exponential L + C exp(−a n²) as for smooth hyperbolic maps, and
// geometric L + C q^n as for dynamical zeta functions with a next pole.
func TestCyclesSmoothSequences(t *testing.T) {
	const limit = 0.8314023
	orders := lengths(12)
	for _, tc := range []struct {
		name string
		f    func(n float64) float64
		// Expected decay rate at the last difference and its tolerance:
		// exact for geometric sequences (the line fit reproduces ln(1/|q|) up
		// to round-off in ln|d|, ε/|d| ≤ 1e-9 here); for exp(−a n²) the
		// rate of the exact differences at n = 11 is ≈ a(2·11 + 1) up to the
		// correction ln((1 − e^{−23a})/(1 − e^{−25a})) and the fit's
		// curvature error, a few percent.
		rate, rateTol float64
	}{
		{"exp(-0.1n^2)", func(n float64) float64 { return limit + 0.5*math.Exp(-0.1*n*n) }, 0.1 * 23, 0.06},
		{"exp(-0.2n^2)", func(n float64) float64 { return limit + 0.5*math.Exp(-0.2*n*n) }, 0.2 * 23, 0.06},
		{"-exp(-0.05n^2)", func(n float64) float64 { return limit - 0.5*math.Exp(-0.05*n*n) }, 0.05 * 23, 0.1},
		{"0.5^n", func(n float64) float64 { return limit + 0.5*math.Pow(0.5, n) }, math.Log(2), 1e-6},
		{"(-0.3)^n", func(n float64) float64 { return limit + 0.5*math.Pow(-0.3, n) }, math.Log(1 / 0.3), 1e-6},
		{"0.1^n", func(n float64) float64 { return limit - 2*math.Pow(0.1, n) }, math.Log(10), 1e-6},
	} {
		e := Cycles(orders, sample(orders, tc.f), nil)
		if e.Status != Converged {
			t.Errorf("%s: status %v (%s), want converged", tc.name, e.Status, e.Reason)
		}
		contains, tight := checkBar(e, limit)
		if !contains || !tight {
			t.Errorf("%s: value %.17g ± %.3g, true error %.3g: contains %v, within 100×: %v (%s)",
				tc.name, e.Value, e.Error, math.Abs(e.Value-limit), contains, tight, e.Reason)
		}
		if !scalar.EqualWithinAbsOrRel(e.Order, tc.rate, tc.rateTol, tc.rateTol) {
			t.Errorf("%s: rate %.6g, want %.6g", tc.name, e.Order, tc.rate)
		}
	}
}

// Coverage of the Converged cycle estimates over broad synthetic families.
// Design target 95%: the tail model is a two-parameter extrapolation of a
// handful of differences, and the pre-asymptotic and beating sequences of
// the family are built to strain it. The table prints the calibration of
// TailFactor (package documentation).
func TestCyclesCoverage(t *testing.T) {
	seeds := uint64(300)
	if testing.Short() {
		seeds = 60
	}
	run := func(set *Settings, kind int) (converged Coverage, statuses map[Status]int) {
		statuses = map[Status]int{}
		var cases []Case
		for _, nmax := range []int{8, 10, 12, 14} {
			for seed := range seeds {
				orders, values, limit := syntheticCycles(kind, seed, nmax)
				e := Cycles(orders, values, set)
				statuses[e.Status]++
				if e.Status == Converged {
					cases = append(cases, Case{Truth: limit, Estimate: e})
				}
			}
		}
		return Calibrate(cases), statuses
	}
	names := [...]string{"exp(-an²+bn)", "two geometric", "wobbly exp(-an²)"}
	var table strings.Builder
	fmt.Fprintf(&table, "cycle coverage (converged estimates), %d sequences per family\n  factor  family            converged  covered  median bar/true  >100×\n", 4*seeds)
	for _, f := range []float64{1, 2, 3, 5} {
		for kind := range cycleKinds {
			c, _ := run(&Settings{TailFactor: f}, kind)
			fmt.Fprintf(&table, "  %6.0f  %-16s  %9d  %7.4f  %15.3g  %5.3f\n", f, names[kind], c.Cases, c.Fraction(), c.MedianRatio, float64(c.Overstated)/float64(c.Cases))
		}
	}
	t.Log(table.String())
	for kind := range cycleKinds {
		c, statuses := run(nil, kind)
		t.Logf("defaults, %s: statuses %v", names[kind], statuses)
		if c.Fraction() < 0.95 || c.MedianRatio > MaxOverstatement {
			t.Errorf("%s: covered %.4f (want ≥ 0.95), median bar/true %.3g", names[kind], c.Fraction(), c.MedianRatio)
		}
	}
}

// Round-off floor: super-exponential convergence with noise of 1e-15. With
// a = 0.5 the truncation error 0.5 exp(−a n²) is 1.1e-11 at n = 7 (above the
// floor RoundOff·|v| ≈ 8e-14) and 6e-15 at n = 8, so the floor starts at
// n = 8. The error is SpreadFactor × the range on the floor: at most
// 2 × (6e-15 + 2e-15).
func TestCyclesRoundOffFloor(t *testing.T) {
	const limit = 0.8314023
	rng := rand.New(rand.NewPCG(7, 7))
	orders := lengths(14)
	values := sample(orders, func(n float64) float64 {
		return limit + 0.5*math.Exp(-0.5*n*n) + 1e-15*(2*rng.Float64()-1)
	})
	e := Cycles(orders, values, nil)
	if e.Status != RoundOffFloor || e.Used != 8 {
		t.Fatalf("status %v used %d (%s), want round-off floor from 8", e.Status, e.Used, e.Reason)
	}
	bound := 2 * (0.5*math.Exp(-0.5*64) + 2e-15)
	if math.Abs(e.Value-limit) > e.Error || e.Error > bound {
		t.Errorf("value %.17g ± %.3g, true error %.3g, bound %.3g", e.Value, e.Error, math.Abs(e.Value-limit), bound)
	}
}

// Plateau: a cycle expansion converging like exp(−0.2 n²) until a missing
// cycle of length 7 leaves errors of size 1e-6 that no longer decrease.
func TestCyclesPlateau(t *testing.T) {
	const limit = 0.8314023
	rng := rand.New(rand.NewPCG(3, 11))
	orders := lengths(12)
	values := sample(orders, func(n float64) float64 {
		v := limit + 0.5*math.Exp(-0.2*n*n)
		if n >= 7 {
			v += 1e-6 * (2*rng.Float64() - 1)
		}
		return v
	})
	e := Cycles(orders, values, nil)
	if e.Status != Plateau {
		t.Fatalf("status %v (%s), want plateau", e.Status, e.Reason)
	}
	// Never an error below the plateau: the largest difference from
	// n = 8 on, where only the stalled errors remain (0.5 exp(−0.2·64) =
	// 1.4e-6 is of the same size, so start after it).
	level := maxAbs(differences(values[8:]))
	if e.Error < level || math.Abs(e.Value-limit) > e.Error {
		t.Errorf("value %.10g ± %.3g, plateau level %.3g, true error %.3g", e.Value, e.Error, level, math.Abs(e.Value-limit))
	}
	if !strings.Contains(e.Reason, "missing cycles") {
		t.Errorf("reason %q does not name the likely cause", e.Reason)
	}
	// The same sequence from a higher-order basis: the same estimate,
	// its own name and causes in the reason.
	g := Galerkin(orders, values, nil)
	if g.Value != e.Value || g.Error != e.Error || g.Status != e.Status {
		t.Errorf("Galerkin %v ± %v (%v), Cycles %v ± %v (%v)", g.Value, g.Error, g.Status, e.Value, e.Error, e.Status)
	}
	if !strings.HasPrefix(g.Reason, "galerkin: ") || strings.Contains(g.Reason, "cycles") || !strings.Contains(g.Reason, "spurious eigenvalues") {
		t.Errorf("Galerkin reason %q", g.Reason)
	}
}

// Oscillation: sign alternation without decay (marginal cycles, pruning).
func TestCyclesOscillating(t *testing.T) {
	const limit = 0.25
	orders := lengths(10)
	values := sample(orders, func(n float64) float64 {
		return limit + 1e-3*math.Pow(-1, n)*(1+1/n)
	})
	e := Cycles(orders, values, nil)
	if e.Status != Oscillating {
		t.Fatalf("status %v (%s), want oscillating", e.Status, e.Reason)
	}
	if math.Abs(e.Value-limit) > e.Error {
		t.Errorf("value %.10g ± %.3g does not contain %v", e.Value, e.Error, limit)
	}
}

func TestCyclesNotConvergingAndShort(t *testing.T) {
	orders := lengths(8)
	growing := sample(orders, func(n float64) float64 { return 1 + 0.01*n*n })
	if e := Cycles(orders, growing, nil); e.Status != NotConverging {
		t.Errorf("growing differences: status %v (%s)", e.Status, e.Reason)
	}
	short := Cycles([]int{1, 2, 3}, []float64{1.1, 1.01, 1.001}, nil)
	if short.Status != TooFewPoints || !(short.Error > 0) {
		t.Errorf("three orders: %+v", short)
	}
	if e := Cycles([]int{3}, []float64{2}, nil); !math.IsInf(e.Error, 1) {
		t.Errorf("single order: %+v", e)
	}
}

// Growing round-off: a subleading zero z of a truncated determinant, far
// from the origin, converges like exp(−0.5 n²) until the rounding noise
// of the coefficients, ε|z|^n with |z| = 15 (the growth seen for the decay
// rate of the logistic repeller 6x(1 − x): floors 2.3e-10, 3.4e-9, 5e-8 at
// lengths 6, 7, 8), takes over. Without the floors the model sees
// differences that grow again and reports a stall; with them the sequence
// is cut where successive values agree within their floors and the error
// covers the truth and is not below the floor there. The floors are those
// of the noise model itself (common practice, no source).
func TestCyclesWithFloors(t *testing.T) {
	const limit, z = 2.6930538661, 15.0
	rng := rand.New(rand.NewPCG(5, 13))
	orders := lengths(12)
	floors := make([]float64, len(orders))
	values := sample(orders, func(n float64) float64 {
		floor := 0x1p-52 * math.Pow(z, n)
		floors[int(n)-1] = floor
		return limit + 0.2*math.Exp(-0.5*n*n) + floor*(2*rng.Float64()-1)
	})
	e := CyclesWithFloors(orders, values, floors, nil)
	idx, j := floorCut(values, floors)
	if j < 0 {
		t.Fatal("no cut found")
	}
	floor := math.Max(floors[idx[j]], floors[idx[j-1]])
	if e.Used != orders[idx[j]] || e.Status != RoundOffFloor {
		t.Errorf("used %d, status %v (%s); want length %d, at the round-off floor", e.Used, e.Status, e.Reason, orders[idx[j]])
	}
	if math.Abs(e.Value-limit) > e.Error {
		t.Errorf("value %.12g ± %.3g misses %.12g by %.3g", e.Value, e.Error, limit, math.Abs(e.Value-limit))
	}
	if e.Error < floor || e.Error > 100*math.Max(math.Abs(e.Value-limit), floor) {
		t.Errorf("error %.3g, floors at the cut %.3g, true error %.3g", e.Error, floor, math.Abs(e.Value-limit))
	}
	if !strings.Contains(e.Reason, "agree within their round-off floors") {
		t.Errorf("reason %q does not say where the sequence was cut", e.Reason)
	}
	// Floors far below the changes: the same estimate as Cycles.
	tiny := make([]float64, len(orders))
	smooth := sample(orders, func(n float64) float64 { return limit + 0.2*math.Exp(-0.25*n) })
	if a, b := CyclesWithFloors(orders, smooth, tiny, nil), Cycles(orders, smooth, nil); a != b {
		t.Errorf("with negligible floors %+v, without %+v", a, b)
	}
}

// TestGalerkinWithFloors: a spectral basis converging geometrically, then
// scattered by its round-off floor (1e-9, a subleading eigenvalue's
// condition times ε), as the Chebyshev basis's decay rates are; synthetic
// (common practice, no source). The sequence is cut where two sizes agree
// within their floors, the status is the round-off floor, the bar covers
// the limit and is no smaller than the floor. Without floors it is
// Galerkin's estimate.
func TestGalerkinWithFloors(t *testing.T) {
	const limit, floor = 3.8301312202, 1e-9
	rng := rand.New(rand.NewPCG(9, 2))
	steps := lengths(9)
	floors := make([]float64, len(steps))
	values := sample(steps, func(n float64) float64 {
		floors[int(n)-1] = floor
		return limit + 0.05*math.Exp(-2.5*n) + floor*(2*rng.Float64()-1)
	})
	e := GalerkinWithFloors(steps, values, floors, nil)
	if e.Status != RoundOffFloor || e.Error < floor || math.Abs(e.Value-limit) > e.Error || !strings.HasPrefix(e.Reason, "step ") {
		t.Errorf("%.12g ± %.3g, status %v (%s); want the limit %.12g within a bar of at least %g, at the floor", e.Value, e.Error, e.Status, e.Reason, limit, floor)
	}
	if a, b := GalerkinWithFloors(steps, values, nil, nil), Galerkin(steps, values, nil); a != b {
		t.Errorf("without floors %+v, Galerkin %+v", a, b)
	}
}

// skewCantorExpansion holds the escape-rate estimates of the catalog's
// skew-cantor (the product of the skew tent and the Cantor map, a 2D
// repeller) from its spectral determinant truncated at lengths 1 … 8, as
// crosspec expand prints them; the limit is ln 2, the sum of the factors'
// escape rates (product rule, common practice, no source). Its steps decay
// non-monotonically (4.3e-4, then 5.4e-4) with irregular signs.
var skewCantorExpansion = []float64{0.405465108108164, 0.608526946053701, 0.742205631822324,
	0.69305269566705, 0.69262060360701, 0.693162134792067, 0.69314950121365, 0.693147091374876}

// TestCyclesTwoDimensional analyses the skew-cantor sequence cut at every
// length from 5 to 8. A slowed concave trend whose terms rise before they
// fall is no tail of a decaying sequence: it made the bar at length 7 2e23
// (and 7e6 at length 6); a bar larger than the distance the sequence has
// travelled, Σ|d_k| = 0.39, says nothing, so every bar must be below it.
// With NonMonotone (check's setting for d ≥ 2) every bar must also contain
// ln 2: without it the bar at length 5 (1.8e-4) missed the error 5.3e-4,
// because the step after (5.4e-4) exceeds the last (4.3e-4).
func TestCyclesTwoDimensional(t *testing.T) {
	travelled := 0.0
	for k := 1; k < len(skewCantorExpansion); k++ {
		travelled += math.Abs(skewCantorExpansion[k] - skewCantorExpansion[k-1])
	}
	for n := 5; n <= len(skewCantorExpansion); n++ {
		values := skewCantorExpansion[:n]
		for _, nonMonotone := range []bool{false, true} {
			est := Cycles(lengths(n), values, &Settings{NonMonotone: nonMonotone})
			if !(est.Error < travelled) {
				t.Errorf("length %d, NonMonotone %v: error bar %.3g, more than the %.2g the sequence travelled (%s)", n, nonMonotone, est.Error, travelled, est.Reason)
			}
			if nonMonotone && !(math.Abs(est.Value-math.Ln2) <= est.Error) {
				t.Errorf("length %d: %.15g ± %.2g does not contain ln 2 (%s)", n, est.Value, est.Error, est.Reason)
			}
		}
	}
}

// TestAdviseNonMonotone: Advise judges the lengths with the error of the
// analysis its caller made. On the skew-cantor sequence to length 8 the
// default bar is 6.8e-7, so length 8 meets 2e-6; with NonMonotone (check's
// setting for d ≥ 2) the bar is 7.2e-6 and no length does, and none may be
// predicted past the data.
func TestAdviseNonMonotone(t *testing.T) {
	orders := lengths(len(skewCantorExpansion))
	if a := Advise(nil, nil, orders, skewCantorExpansion, nil, 2e-6, nil); a.CycleLength != 8 {
		t.Errorf("default settings: length %d, want 8 (%v)", a.CycleLength, a.Notes)
	}
	if a := Advise(nil, nil, orders, skewCantorExpansion, nil, 2e-6, &Settings{NonMonotone: true}); a.CycleLength != 0 {
		t.Errorf("NonMonotone: length %d, want none (%v)", a.CycleLength, a.Notes)
	}
}
