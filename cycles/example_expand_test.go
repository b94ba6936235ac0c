package cycles_test

import (
	"fmt"
	"math"

	"crosspec/cycles"
	"crosspec/dynsys"
)

// The escape rate of a repeller with two linear branches of slopes 3 and
// −5 is −ln(1/3 + 1/5).
func ExampleExpand() {
	slopes := []float64{3, -5}
	var set []cycles.Cycle
	for w := range cycles.LyndonWords(2, 8) {
		lambda := 1.0
		for _, s := range w {
			lambda *= slopes[s]
		}
		set = append(set, cycles.Cycle{Itinerary: cycles.Itinerary(w), Len: len(w), Multipliers: []float64{lambda}})
	}
	r, err := cycles.Expand(set, dynsys.EscapeRate, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, o := range r.Orders[:4] {
		fmt.Printf("N=%d cycles=%d escape rate %.6g\n", o.MaxLen, o.Cycles, o.Value)
	}
	fmt.Printf("estimate %.6g (length %d, %v)\n", r.Estimate.Value, r.Estimate.Len, r.Estimate.Status)
	// Output:
	// N=1 cycles=2 escape rate 0.405465
	// N=2 cycles=3 escape rate 0.654557
	// N=3 cycles=5 escape rate 0.628058
	// N=4 cycles=8 escape rate 0.628613
	// estimate 0.628609 (length 7, at-floor)
}

// The doubling map x → 2x mod 1 has the eigenvalues 2^(−k). From cycles up
// to length 10, the Newton recursion loses digits in the later ones; the
// factorized determinant keeps them.
func ExampleCompareSpectra() {
	var set []cycles.Cycle
	for w := range cycles.LyndonWords(2, 10) {
		set = append(set, cycles.Cycle{Itinerary: cycles.Itinerary(w), Len: len(w), Multipliers: []float64{math.Ldexp(1, len(w))}})
	}
	c, err := cycles.CompareSpectra(set, &cycles.Settings{Eigs: 6})
	if err != nil {
		fmt.Println(err)
		return
	}
	for k := range c.Newton.Eigenvalues {
		n, f := c.Newton.Eigenvalues[k], c.Factorized.Eigenvalues[k]
		fmt.Printf("λ_%d newton %.6g ± %.1g  factorized %.6g ± %.1g\n", k, real(n.Value), n.Error, real(f.Value), f.Error)
	}
	// Output:
	// λ_0 newton 1 ± 3e-13  factorized 1 ± 6e-16
	// λ_1 newton 0.5 ± 2e-10  factorized 0.5 ± 1e-15
	// λ_2 newton 0.25 ± 3e-08  factorized 0.25 ± 7e-16
	// λ_3 newton 0.125 ± 2e-06  factorized 0.125 ± 5e-16
	// λ_4 newton 0.0624991 ± 7e-05  factorized 0.0625 ± 3e-16
	// λ_5 newton 0.0312842 ± 0.001  factorized 0.03125 ± 2e-16
}
