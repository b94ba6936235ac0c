package compare

import (
	"math"
	"testing"
)

var benchEstimate Estimate

// BenchmarkUlam11 analyses eleven Ulam estimates, 2^10 … 2^20 cells.
func BenchmarkUlam11(b *testing.B) {
	cells, values, _ := erraticUlam(erraticSine, 1, 1<<20, 1)
	for b.Loop() {
		benchEstimate = Ulam(cells, values, nil)
	}
}

// BenchmarkCycles14 analyses fourteen cycle-expansion estimates.
func BenchmarkCycles14(b *testing.B) {
	orders := lengths(14)
	values := sample(orders, func(n float64) float64 { return 1 + math.Pow(0.4, n) })
	for b.Loop() {
		benchEstimate = Cycles(orders, values, nil)
	}
}
