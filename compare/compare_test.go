package compare

import (
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// Verdict thresholds of the issue: agree at ≤ 2 combined errors, disagree
// above 5, inconclusive between. Errors 3 and 4 combine to exactly 5
// (hypot is exact here), so the differences 10 and 25 sit exactly on the
// thresholds.
func TestCompareThresholds(t *testing.T) {
	ok := Estimate{Error: 3, Status: Converged}
	for _, tc := range []struct {
		diff        float64
		want        Verdict
		discrepancy float64
	}{
		{0, Agree, 0},
		{10, Agree, 2},
		{10.000001, Inconclusive, 2.0000002},
		{15, Inconclusive, 3},
		{25, Inconclusive, 5},
		{25.000001, Disagree, 5.0000002},
		{100, Disagree, 20},
	} {
		u := ok
		u.Value = 1
		c := Estimate{Value: 1 + tc.diff, Error: 4, Status: Converged}
		got := Compare(u, c)
		if got.Verdict != tc.want || !scalar.EqualWithinAbsOrRel(got.Discrepancy, tc.discrepancy, 1e-12, 1e-12) {
			t.Errorf("diff %v: %v %v, want %v %v", tc.diff, got.Verdict, got.Discrepancy, tc.want, tc.discrepancy)
		}
		if (got.Verdict != Agree) != (len(got.Reasons) > 0) {
			t.Errorf("diff %v: verdict %v with reasons %q", tc.diff, got.Verdict, got.Reasons)
		}
	}
}

func TestCompareSpecialCases(t *testing.T) {
	plateau := Estimate{Value: 1, Error: 1e-6, Status: Plateau, Reason: "cycles: stalled"}
	good := Estimate{Value: 1, Error: 1e-6, Status: Converged}
	// Values that agree within the bar of a path that stalled on a plateau
	// do not confirm each other: inconclusive, with the plateau named.
	c := Compare(good, plateau)
	if c.Verdict != Inconclusive || len(c.Reasons) < 2 || !strings.Contains(c.Reasons[0], "plateau") {
		t.Errorf("stagnation must be noted and must block agreement: %+v", c)
	}
	// A round-off floor is convergence, and plain Ulam is irregular by
	// nature: both still agree.
	floor := Estimate{Value: 1, Error: 1e-15, Status: RoundOffFloor}
	irregular := Estimate{Value: 1, Error: 1e-6, Status: Irregular}
	if c := Compare(irregular, floor); c.Verdict != Agree {
		t.Errorf("irregular Ulam against a cycle floor: %+v", c)
	}
	// An irregular cycle expansion is not converged.
	if c := Compare(good, irregular); c.Verdict != Inconclusive {
		t.Errorf("irregular cycles: %+v", c)
	}
	c = Compare(Estimate{Value: 1, Error: math.Inf(1), Status: TooFewPoints}, good)
	if c.Verdict != Inconclusive || !math.IsNaN(c.Discrepancy) || len(c.Reasons) == 0 {
		t.Errorf("infinite error: %+v", c)
	}
	c = Compare(Estimate{Value: 1}, Estimate{Value: 2})
	if c.Verdict != Disagree || !math.IsInf(c.Discrepancy, 1) {
		t.Errorf("different exact values: %+v", c)
	}
	// Paths that need not estimate the same thing (Incomparable): a
	// disagreement and an agreement alike become inconclusive. Paths whose
	// disagreement may be legitimate but whose agreement confirms
	// (Unrefuted): only a disagreement does. The reason is kept always.
	disagree, agree := Estimate{Value: 2}, floor
	for _, k := range []struct {
		name  string
		apply func(*Comparison, string)
		with  Estimate
		want  Verdict
	}{
		{"incomparable disagreement", (*Comparison).Incomparable, disagree, Inconclusive},
		{"incomparable agreement", (*Comparison).Incomparable, agree, Inconclusive},
		{"unrefuted disagreement", (*Comparison).Unrefuted, disagree, Inconclusive},
		{"unrefuted agreement", (*Comparison).Unrefuted, agree, Agree},
	} {
		first := good
		if k.with == disagree {
			first = Estimate{Value: 1}
		}
		c := Compare(first, k.with)
		k.apply(&c, "different function spaces")
		if c.Verdict != k.want || c.Reasons[len(c.Reasons)-1] != "different function spaces" {
			t.Errorf("%s: %+v", k.name, c)
		}
	}
	for v, s := range map[Verdict]string{Agree: "agree", Inconclusive: "inconclusive", Disagree: "disagree"} {
		if v.String() != s {
			t.Errorf("%d: %q", int(v), v.String())
		}
	}
}

func TestAdvise(t *testing.T) {
	const limit, tol = 0.8314023, 1e-8
	gauss := func(n float64) float64 { return limit + 0.5*math.Exp(-0.2*n*n) }
	// Closed form: the truncation error 0.5 exp(−0.2 n²) first drops below
	// tol at n = 10 (4.6e-8 at 9, 1.0e-9 at 10); the extrapolation error of
	// ten orders is ~1e-15, so it does not move the threshold.
	want := 0
	for n := 1; ; n++ {
		if 0.5*math.Exp(-0.2*float64(n*n)) < tol {
			want = n
			break
		}
	}
	cells := doublingCells(1 << 20)
	ulam := sample(cells, func(n float64) float64 { return limit + 0.7/n })
	orders := lengths(12)
	a := Advise(cells, ulam, orders, sample(orders, gauss), nil, tol, nil)
	if a.CycleLength != want {
		t.Errorf("cycle length %d, want %d (%q)", a.CycleLength, want, a.Notes)
	}
	// Error C/N at order 1 reaches tol at N = C/tol = 7e7 (closed form);
	// the order and the raw error are measured to ~1e-9 relative.
	if !scalar.EqualWithinAbsOrRel(a.CellsNeeded, 0.7/tol, 0, 1e-6) {
		t.Errorf("cells needed %.6g, want %.6g", a.CellsNeeded, 0.7/tol)
	}

	// Only orders 1…8 computed: the length comes from the fitted decay.
	// The predicted remaining tail after n, times TailFactor 3, must fall
	// below tol: 3 × 1.0e-9 at n = 10 does, 3 × 4.6e-8 at 9 does not.
	short := lengths(8)
	a = Advise(cells, ulam, short, sample(short, gauss), nil, tol, nil)
	if a.CycleLength != want || !strings.Contains(strings.Join(a.Notes, " "), "prediction") {
		t.Errorf("predicted cycle length %d, want %d (%q)", a.CycleLength, want, a.Notes)
	}

	// Ulam exact at every partition but for rounding noise of 1e-16: the
	// estimates are on their floor from the first partition, which is
	// the one advised; a tolerance below the floor's error gets none.
	exact := sample(cells, func(n float64) float64 { return limit + 1e-16*math.Sin(n) })
	a = Advise(cells, exact, orders, sample(orders, gauss), nil, tol, nil)
	if a.CellsNeeded != float64(cells[0]) {
		t.Errorf("Ulam at its floor: cells needed %g, want %d (%q)", a.CellsNeeded, cells[0], a.Notes)
	}
	a = Advise(cells, exact, orders, sample(orders, gauss), nil, 1e-18, nil)
	if !math.IsInf(a.CellsNeeded, 1) {
		t.Errorf("Ulam at its floor, tolerance 1e-18: cells needed %g, want +Inf (%q)", a.CellsNeeded, a.Notes)
	}

	// Order 2: N = sqrt(C/tol).
	ulam2 := sample(cells, func(n float64) float64 { return limit + 3/(n*n) })
	a = Advise(cells, ulam2, orders, sample(orders, gauss), nil, 0, nil)
	if !scalar.EqualWithinAbsOrRel(a.CellsNeeded, math.Sqrt(3/DefaultTolerance), 0, 1e-3) {
		t.Errorf("order 2: cells needed %.6g, want %.6g", a.CellsNeeded, math.Sqrt(3/DefaultTolerance))
	}
}

func TestCalibrate(t *testing.T) {
	c := Calibrate([]Case{
		{Label: "inside", Truth: 1, Estimate: Estimate{Value: 1.001, Error: 0.002}},
		{Label: "outside", Truth: 1, Estimate: Estimate{Value: 1.01, Error: 0.002}},
		{Label: "loose", Truth: 1, Estimate: Estimate{Value: 1.00001, Error: 0.01}},
	})
	if c.Cases != 3 || c.Covered != 2 || c.Overstated != 1 {
		t.Errorf("%+v", c)
	}
	if !scalar.EqualWithinAbsOrRel(c.MedianRatio, 2, 1e-9, 1e-9) || !scalar.EqualWithinAbsOrRel(c.MaxRatio, 1000, 1e-6, 1e-6) {
		t.Errorf("ratios: median %v max %v", c.MedianRatio, c.MaxRatio)
	}
	if s := c.String(); !strings.Contains(s, "covered 2 of 3") || !strings.Contains(s, "outside") {
		t.Errorf("table:\n%s", s)
	}
}
