package cycles

import (
	"math"
)

// Cycle sets built analytically for the tests: there is no cycle search in
// this package's tests, so each set comes from the closed form of its map.

// doublingCycles returns the prime cycles of x → 2x mod 1 on the closed
// interval [0, 1] up to length maxLen: every binary Lyndon word s of length
// n, point = value of the binary word/(2ⁿ − 1), multiplier 2ⁿ (convention of
// P. Gaspard, Chaos, Scattering and Statistical Mechanics, Cambridge UP,
// 1998 (from memory): "0" and "1" are both fixed points). The observable is
// x, so ObservableSum is the sum of the orbit points.
func doublingCycles(maxLen int) []Cycle {
	var out []Cycle
	for w := range LyndonWords(2, maxLen) {
		n := len(w)
		var value uint64
		for _, s := range w {
			value = value<<1 | uint64(s)
		}
		period := float64(uint64(1)<<n - 1)
		var sum float64
		v := value
		for range n {
			sum += float64(v) / period
			v = (v<<1 | v>>(n-1)) & (uint64(1)<<n - 1)
		}
		out = append(out, Cycle{
			Itinerary:     Itinerary(w),
			Len:           n,
			Point:         []float64{float64(value) / period},
			Multipliers:   []float64{math.Ldexp(1, n)},
			ObservableSum: sum,
		})
	}
	return out
}

// linearCycles returns the prime cycles of a full-branch piecewise-linear
// map with the given slopes, up to length maxLen: every Lyndon word over
// len(slopes) symbols, multiplier the product of the symbols' slopes.
// Points are not needed by the expansion and are left empty.
func linearCycles(slopes []float64, maxLen int) []Cycle {
	var out []Cycle
	for w := range LyndonWords(len(slopes), maxLen) {
		lambda := 1.0
		for _, s := range w {
			lambda *= slopes[s]
		}
		out = append(out, Cycle{Itinerary: Itinerary(w), Len: len(w), Multipliers: []float64{lambda}})
	}
	return out
}

// logisticCycles returns the prime cycles of the logistic repeller
// x → A x(1 − x), A > 4, up to length maxLen. The point of itinerary
// s_0 s_1 … s_{n−1} is the fixed point of the composition of the inverse
// branches g_{s_0} ∘ … ∘ g_{s_{n−1}}, g_∓(y) = (1 ∓ √(1 − 4y/A))/2, which
// contracts (|g'| ≤ 1/(A√(1−4/A)) < 1) so plain iteration converges to full
// double precision. The multiplier is Π A(1 − 2x_i); the observable is x.
func logisticCycles(a float64, maxLen int) []Cycle {
	inverse := func(s byte, y float64) float64 {
		root := math.Sqrt(1 - 4*y/a)
		if s == 0 {
			// (1 − root)/2 without cancellation for small y.
			return 2 * y / a / (1 + root)
		}
		return (1 + root) / 2
	}
	var out []Cycle
	orbit := make([]float64, maxLen)
	for w := range LyndonWords(2, maxLen) {
		n := len(w)
		x := 0.5
		for range 200 {
			y := x
			for i := n - 1; i >= 0; i-- {
				y = inverse(w[i], y)
			}
			if y == x {
				break
			}
			x = y
		}
		// orbit[i] = x_i with x_i = g_{s_i}(x_{i+1}), x_n = x_0.
		y := x
		for i := n - 1; i >= 1; i-- {
			y = inverse(w[i], y)
			orbit[i] = y
		}
		orbit[0] = x
		lambda, sum := 1.0, 0.0
		for _, xi := range orbit[:n] {
			lambda *= a * (1 - 2*xi)
			sum += xi
		}
		out = append(out, Cycle{
			Itinerary:     Itinerary(w),
			Len:           n,
			Point:         []float64{x},
			Multipliers:   []float64{lambda},
			ObservableSum: sum,
		})
	}
	return out
}
