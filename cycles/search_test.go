package cycles

import (
	"context"
	"math"
	"slices"
	"strconv"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"crosspec/dynsys"
)

func openSystem(t testing.TB, name string) *dynsys.System {
	t.Helper()
	s, err := dynsys.Open(name, nil)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

func search(t testing.TB, s *dynsys.System, settings *SearchSettings) SearchResult {
	t.Helper()
	res, err := Search(context.Background(), s, settings)
	if err != nil {
		t.Fatal(err)
	}
	return res
}

func TestDoublingExact(t *testing.T) {
	// On the closed interval each lap extends to its closed interval, so
	// fⁿ has 2ⁿ fixed points k/(2ⁿ − 1) and every n-cycle has multiplier
	// 2ⁿ: P. Gaspard, Chaos, Scattering and Statistical Mechanics,
	// Cambridge UP, 1998 (from memory). The inverse branches are found to
	// full precision, so x(2ⁿ − 1) is an integer to a few ulps of 2ⁿ; the
	// slopes are exactly 2, so the multipliers are exact.
	const maxLen = 12
	res := search(t, openSystem(t, "doubling"), &SearchSettings{MaxLen: maxLen})
	for _, c := range res.Cycles {
		denom := math.Exp2(float64(c.Len)) - 1
		k := c.Point[0] * denom
		if math.Abs(k-math.Round(k)) > 8*denom*0x1p-52 {
			t.Errorf("cycle %s: point %v is not k/(2^%d-1)", c.Itinerary, c.Point[0], c.Len)
		}
		if c.Multipliers[0] != math.Exp2(float64(c.Len)) {
			t.Errorf("cycle %s: multiplier %v, want 2^%d", c.Itinerary, c.Multipliers[0], c.Len)
		}
	}
	for _, c := range res.Counts {
		if want := 1 << c.Length; c.PeriodicPoints != want {
			t.Errorf("length %d: %d periodic points, want %d", c.Length, c.PeriodicPoints, want)
		}
		if c.BoxBound < float64(c.PeriodicPoints) {
			t.Errorf("length %d: box bound %g below the %d periodic points", c.Length, c.BoxBound, c.PeriodicPoints)
		}
	}
	if res.Status != SearchComplete {
		t.Errorf("status %v", res.Status)
	}
}

func TestLogisticRepeller(t *testing.T) {
	s := openSystem(t, "logistic-repeller")
	maxLen := 16
	if testing.Short() {
		maxLen = 12
	}
	res := search(t, s, &SearchSettings{MaxLen: maxLen})
	// Complete binary symbolic dynamics: the prime-cycle counts are the
	// necklace numbers (necklace (Möbius) counting, C. Moreau 1872
	// (common practice)). Exact integers.
	for _, c := range res.Counts {
		want, _ := LyndonCount(2, c.Length)
		if c.PrimeCycles != want || c.Note != "" {
			t.Errorf("length %d: %d prime cycles, want %d (%s)", c.Length, c.PrimeCycles, want, c.Note)
		}
	}
	// Fixed points x = 0 with multiplier A and x = 1 − 1/A with multiplier
	// 2 − A: elementary algebra (common practice, no source). Inverse
	// branches give the points to full precision and the multipliers are
	// one derivative evaluation each: a few ulps.
	const A = 6.0
	want := []Cycle{
		{Itinerary: "0", Point: []float64{0}, Multipliers: []float64{A}},
		{Itinerary: "1", Point: []float64{1 - 1/A}, Multipliers: []float64{2 - A}},
	}
	for i, w := range want {
		got := res.Cycles[i]
		if got.Itinerary != w.Itinerary || got.Len != 1 ||
			!scalar.EqualWithinAbsOrRel(got.Point[0], w.Point[0], 1e-15, 1e-15) ||
			!scalar.EqualWithinAbsOrRel(got.Multipliers[0], w.Multipliers[0], 1e-14, 1e-14) {
			t.Errorf("fixed point %d: got %+v, want %+v", i, got, w)
		}
	}
	if math.Abs(res.Cycles[1].ObservableSum-(1-1/A)) > 1e-15 {
		t.Errorf("observable sum of the fixed point %v, want %v", res.Cycles[1].ObservableSum, 1-1/A)
	}
}

// TestLogistic4Complete searches the logistic map at A = 4, whose laps map
// onto [0, 1] exactly (complete binary dynamics), where orbits such as
// 0^11 1 linger near the fixed point 0 and pass within 1e-7 of x = 1: the
// prime-cycle counts must be the necklace numbers (necklace (Möbius)
// counting, C. Moreau 1872 (common practice)). A search that stopped its
// inverse-branch passes too early lost 0^11 1 at length 12.
func TestLogistic4Complete(t *testing.T) {
	maxLen := 14
	if testing.Short() {
		maxLen = 12
	}
	res := search(t, openSystem(t, "logistic4"), &SearchSettings{MaxLen: maxLen})
	for _, c := range res.Counts {
		if want, _ := LyndonCount(2, c.Length); c.PrimeCycles != want || c.Note != "" {
			t.Errorf("length %d: %d prime cycles, want %d (%s)", c.Length, c.PrimeCycles, want, c.Note)
		}
	}
}

func TestCantorMultipliers(t *testing.T) {
	// Both branches have slope 3 (F. Hausdorff, Math. Ann. 79 (1919)
	// 157–179 for the set; the slopes are the map's definition), so every
	// multiplier is 3ⁿ exactly: products of 3 are exact in binary floating
	// point up to 3^33.
	res := search(t, openSystem(t, "cantor"), &SearchSettings{MaxLen: 12})
	for _, c := range res.Cycles {
		if c.Multipliers[0] != math.Pow(3, float64(c.Len)) {
			t.Errorf("cycle %s: multiplier %v, want 3^%d", c.Itinerary, c.Multipliers[0], c.Len)
		}
	}
	for _, c := range res.Counts {
		if want, _ := LyndonCount(2, c.Length); c.PrimeCycles != want {
			t.Errorf("length %d: %d prime cycles, want %d", c.Length, c.PrimeCycles, want)
		}
	}
}

func TestHenon(t *testing.T) {
	s := openSystem(t, "henon")
	res := search(t, s, &SearchSettings{MaxLen: 12})
	// Number of prime cycles of period 1…12: R. L. Davidchack and Y.-C.
	// Lai, Phys. Rev. E 60 (1999) 6172 (from memory). Exact integers.
	want := []int{2, 1, 0, 1, 0, 2, 4, 7, 6, 10, 14, 19}
	for i, c := range res.Counts {
		if c.PrimeCycles != want[i] {
			t.Errorf("period %d: %d prime cycles, want %d", c.Length, c.PrimeCycles, want[i])
		}
		if c.BoxBound < float64(c.PeriodicPoints) {
			t.Errorf("period %d: box bound %g below the %d periodic points", c.Length, c.BoxBound, c.PeriodicPoints)
		}
	}
	// Fixed points x = (−(1−b) ± √((1−b)² + 4a))/(2a), y = b x: elementary
	// algebra (common practice, no source). Multiple-shooting Newton
	// converges to round-off: a few ulps of the coordinates.
	a, b := 1.4, 0.3
	root := math.Sqrt((1-b)*(1-b) + 4*a)
	xs := []float64{(-(1 - b) - root) / (2 * a), (-(1 - b) + root) / (2 * a)}
	for i, x := range xs {
		got := res.Cycles[i]
		if got.Len != 1 || !scalar.EqualWithinAbsOrRel(got.Point[0], x, 1e-14, 1e-14) || !scalar.EqualWithinAbsOrRel(got.Point[1], b*x, 1e-14, 1e-14) {
			t.Errorf("fixed point %d: got %v, want (%v, %v)", i, got.Point, x, b*x)
		}
		// det Df = −b, so Λ_1 Λ_2 = −b (elementary algebra): the QR
		// product gives each multiplier to a few ulps.
		if p := got.Multipliers[0] * got.Multipliers[1]; !scalar.EqualWithinAbsOrRel(p, -b, 1e-14, 1e-14) {
			t.Errorf("fixed point %d: Λ1Λ2 = %v, want %v", i, p, -b)
		}
	}
}

func TestHorseshoeNecklace(t *testing.T) {
	// The quadratic map at a = 10 is a complete two-symbol horseshoe
	// (R. Devaney and Z. Nitecki, Commun. Math. Phys. 67 (1979) 137-146,
	// from memory, as the catalog says), so the prime-cycle counts are the
	// necklace numbers (C. Moreau 1872, common practice). Exact integers.
	maxLen := 10
	if testing.Short() {
		maxLen = 8
	}
	res := search(t, openSystem(t, "horseshoe"), &SearchSettings{MaxLen: maxLen})
	for _, c := range res.Counts {
		if want, _ := LyndonCount(2, c.Length); c.PrimeCycles != want || c.Note != "" {
			t.Errorf("length %d: %d prime cycles, want %d (%s)", c.Length, c.PrimeCycles, want, c.Note)
		}
	}
	// Every itinerary is a Lyndon word and appears once.
	seen := map[string]bool{}
	for _, c := range res.Cycles {
		w, err := ParseItinerary(c.Itinerary, 2)
		if err != nil || len(w) != c.Len || leastRotation(w) != 0 || primitivePeriod(w) != c.Len || seen[c.Itinerary] {
			t.Errorf("cycle %q of length %d is not a new Lyndon word", c.Itinerary, c.Len)
		}
		seen[c.Itinerary] = true
	}
}

// TestCyclesOnFaces: the product of x → 6x(1−x) and y → 5y(1−y) on the
// unit square is a complete four-symbol shift (each factor is a complete
// two-symbol repeller), so its prime-cycle counts are the necklace numbers
// of four letters (C. Moreau 1872, common practice); its fixed points are
// the products of the factors' 0, 5/6 and 0, 4/5, three of them on faces
// of the box. Newton's iteration converges to (5/6, 0) from just below
// y = 0, by rounding: it must be kept, on the face.
func TestCyclesOnFaces(t *testing.T) {
	s, err := dynsys.Parse("product.toml", []byte(`name = "product"
vars = ["x", "y"]
map = ["6*x*(1-x)", "5*y*(1-y)"]
domain = [[0.0, 1.0], [0.0, 1.0]]
symbols = "(x > 0.5) + 2*(y > 0.5)"
`), nil)
	if err != nil {
		t.Fatal(err)
	}
	res := search(t, s, &SearchSettings{MaxLen: 3})
	for _, c := range res.Counts {
		if want, _ := LyndonCount(4, c.Length); c.PrimeCycles != want || c.Note != "" {
			t.Errorf("length %d: %d prime cycles, want %d (%s)", c.Length, c.PrimeCycles, want, c.Note)
		}
	}
	found := false
	for _, c := range res.Cycles {
		if c.Len == 1 && math.Abs(c.Point[0]-5.0/6) < 1e-12 && c.Point[1] == 0 {
			found = true
		}
	}
	if !found {
		t.Error("the fixed point (5/6, 0) on the face y = 0 is missing")
	}
}

// goldenTent is the tent map of slope φ = (1+√5)/2 restricted to its core
// [f²(c), f(c)] = [(φ−1)/2, φ/2]; forbidden is the file's grammar line.
func goldenTent(t testing.TB, forbidden string) *dynsys.System {
	t.Helper()
	phi := (1 + math.Sqrt(5)) / 2
	src := `name = "golden-tent"
vars = ["x"]
map = ["g*min(x, 1 - x)"]
domain = [[` + formatFloat((phi-1)/2) + `, ` + formatFloat(phi/2) + `]]
` + forbidden + `
[params]
g = ` + formatFloat(phi) + "\n"
	s, err := dynsys.Parse("golden-tent.toml", []byte(src), nil)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

func TestGoldenTentPruning(t *testing.T) {
	// The core of the golden-mean tent map is a Markov partition: the
	// left lap maps onto the right one, the right lap onto the core, so the
	// only forbidden word is "00" and fⁿ has L_n (Lucas numbers) periodic
	// points (common practice, no source). The search is not told the
	// grammar: it must recognise the pruned itineraries itself.
	const maxLen = 14
	res := search(t, goldenTent(t, ""), &SearchSettings{MaxLen: maxLen})
	g, err := NewGrammar(2, []string{"00"})
	if err != nil {
		t.Fatal(err)
	}
	var want []string
	for w := range LyndonWords(2, maxLen) {
		if g.Admissible(w) {
			want = append(want, Itinerary(w))
		}
	}
	var got []string
	for _, c := range res.Cycles {
		got = append(got, c.Itinerary)
	}
	slices.Sort(want)
	slices.Sort(got)
	if !slices.Equal(got, want) {
		t.Errorf("itineraries found:\n%v\nadmissible:\n%v", got, want)
	}
	lucas := []int{1, 3}
	for len(lucas) < maxLen {
		lucas = append(lucas, lucas[len(lucas)-1]+lucas[len(lucas)-2])
	}
	for _, c := range res.Counts {
		if c.PeriodicPoints != lucas[c.Length-1] {
			t.Errorf("length %d: %d periodic points, want the Lucas number %d", c.Length, c.PeriodicPoints, lucas[c.Length-1])
		}
	}
	// Told the grammar, the search expects the Lucas numbers and says the
	// search is complete.
	res = search(t, goldenTent(t, `forbidden = ["00"]`), &SearchSettings{MaxLen: maxLen})
	for _, c := range res.Counts {
		if c.ExpectedPoints != float64(lucas[c.Length-1]) || c.PeriodicPoints != lucas[c.Length-1] || c.Note != "" {
			t.Errorf("length %d with grammar: %d points, expected %g (%s)", c.Length, c.PeriodicPoints, c.ExpectedPoints, c.Note)
		}
	}
	if res.Status != SearchComplete {
		t.Errorf("status %v", res.Status)
	}
}

func TestSearchFlagsMissingCycles(t *testing.T) {
	// A horseshoe search that cannot converge (no iterations allowed, no
	// seeds) finds fewer cycles than the necklace numbers and says so.
	res := search(t, openSystem(t, "horseshoe"), &SearchSettings{MaxLen: 3, MaxIter: 1, SeedCells: 2, GridSeeds: 1})
	if res.Status != SearchShort {
		t.Errorf("status %v, want %v", res.Status, SearchShort)
	}
	flagged := 0
	for _, c := range res.Counts {
		if c.Note != "" {
			flagged++
		}
	}
	if flagged == 0 {
		t.Errorf("no length flagged: %+v", res.Counts)
	}
}

func TestDeterministic(t *testing.T) {
	s := openSystem(t, "henon")
	one := search(t, s, &SearchSettings{MaxLen: 9, Workers: 1})
	two := search(t, s, &SearchSettings{MaxLen: 9, Workers: 3})
	if len(one.Cycles) != len(two.Cycles) {
		t.Fatalf("%d cycles with one worker, %d with three", len(one.Cycles), len(two.Cycles))
	}
	for i := range one.Cycles {
		a, b := one.Cycles[i], two.Cycles[i]
		if !slices.Equal(a.Point, b.Point) || !slices.Equal(a.Multipliers, b.Multipliers) {
			t.Errorf("cycle %d differs: %+v and %+v", i, a, b)
		}
	}
}

func TestFloquetLargeMultipliers(t *testing.T) {
	// J_j = P_{j+1} diag(10, 0.1) P_j⁻¹ with rotations P_j (P_n = P_0):
	// the product over 30 steps is P_0 diag(1e30, 1e-30) P_0⁻¹, whose
	// multipliers are 1e30 and 1e-30 (closed form). The product formed
	// directly would lose the small one entirely; the QR-accumulated
	// product keeps both to a few ulps per step.
	const n = 30
	rot := func(theta float64) [4]float64 {
		c, s := math.Cos(theta), math.Sin(theta)
		return [4]float64{c, -s, s, c}
	}
	jacs := make([]float64, 0, 4*n)
	for j := range n {
		p, q := rot(0.7*float64(j)), rot(0.7*float64((j+1)%n))
		// q · diag(10, 0.1) · pᵀ (p⁻¹ = pᵀ for a rotation).
		d := [4]float64{10, 0, 0, 0.1}
		var qd, m [4]float64
		matMul(qd[:], q[:], d[:], 2)
		pt := [4]float64{p[0], p[2], p[1], p[3]}
		matMul(m[:], qd[:], pt[:], 2)
		jacs = append(jacs, m[:]...)
	}
	got := floquet(jacs, n, 2)
	if !scalar.EqualWithinAbsOrRel(got[0], 1e30, 0, 1e-12) || !scalar.EqualWithinAbsOrRel(got[1], 1e-30, 0, 1e-12) {
		t.Errorf("multipliers %v, want 1e30 and 1e-30", got)
	}
}

func TestGrammar(t *testing.T) {
	// Golden-mean shift (forbidden "00") and full binary shift: periodic
	// points Lucas numbers and 2ⁿ, 1/ζ_top = 1 − z − z² and 1 − 2z,
	// entropy ln φ and ln 2 (common practice, no source). Exact integers;
	// the entropy from gonum's mat.Eigen to round-off.
	phi := (1 + math.Sqrt(5)) / 2
	for _, tc := range []struct {
		forbidden []string
		points    []float64
		zeta      []float64
		entropy   float64
	}{
		{[]string{"00"}, []float64{1, 3, 4, 7, 11, 18, 29, 47}, []float64{1, -1, -1}, math.Log(phi)},
		{nil, []float64{2, 4, 8, 16, 32, 64, 128, 256}, []float64{1, -2}, math.Ln2},
		{[]string{"000"}, nil, nil, math.Log(1.8392867552141612)}, // tribonacci constant, common practice, no source
	} {
		g, err := NewGrammar(2, tc.forbidden)
		if err != nil {
			t.Fatal(err)
		}
		if tc.points != nil {
			if got := g.PeriodicPoints(len(tc.points)); !slices.Equal(got, tc.points) {
				t.Errorf("%v: periodic points %v, want %v", tc.forbidden, got, tc.points)
			}
			if got := g.TopologicalZeta(); !slices.Equal(got, tc.zeta) {
				t.Errorf("%v: 1/ζ_top %v, want %v", tc.forbidden, got, tc.zeta)
			}
		}
		if got := g.Entropy(); !scalar.EqualWithinAbsOrRel(got, tc.entropy, 1e-13, 1e-13) {
			t.Errorf("%v: entropy %v, want %v", tc.forbidden, got, tc.entropy)
		}
	}
	g, _ := GrammarFromTransitions([][]bool{{false, true}, {true, true}})
	if got := PrimeCounts(g.PeriodicPoints(8)); !slices.Equal(got, []float64{1, 1, 1, 1, 2, 2, 4, 5}) {
		t.Errorf("golden-mean prime counts %v", got)
	}
	if _, err := NewGrammar(2, []string{"02"}); err == nil {
		t.Errorf("symbol 2 of a binary alphabet accepted")
	}
}

func formatFloat(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }
