package cycles

import (
	"math"
	"testing"
)

// TestLeadingCurve follows λ_0(β) of the middle-thirds Cantor repeller with
// the weight e^{β ln|Λ_p|} = 3^{β n_p}: its two branches of slope 3 give
// λ_0(β) = 2·3^{β−1}, P(β) = ln 2 + (β − 1) ln 3 (a full-branch
// piecewise-linear map, common practice, no source; at β = 1 − s this is
// Bowen's equation, whose root is ln 2/ln 3, F. Hausdorff, Math. Ann. 79
// (1919) 157–179). The dynamical zeta function of this map is exact at
// length 1, so only round-off, a few ulps of λ_0, separates the curve from
// the formula.
func TestLeadingCurve(t *testing.T) {
	var cs []Cycle
	for word := range LyndonWords(2, 6) {
		n := len(word)
		cs = append(cs, Cycle{Itinerary: Itinerary(word), Len: n, Point: []float64{0}, Multipliers: []float64{math.Pow(3, float64(n))}})
	}
	betas := []float64{-1, -0.5, 0, 0.25, 0.5, 1, 1.5, 2}
	curve, err := LeadingCurve(cs, betas, &Settings{MaxLen: 6, Sum: LogMultiplier, Function: DynamicalZeta})
	if err != nil {
		t.Fatal(err)
	}
	for i, p := range curve {
		want := math.Log(2) + (betas[i]-1)*math.Log(3)
		if math.Abs(p.Pressure-want) > 1e-13 {
			t.Errorf("β = %g: P = %.16g, want %.16g", p.Beta, p.Pressure, want)
		}
	}
	if len(curve) != len(betas) {
		t.Errorf("%d points, want %d", len(curve), len(betas))
	}
}
