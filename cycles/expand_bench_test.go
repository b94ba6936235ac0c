package cycles

import (
	"testing"

	"crosspec/dynsys"
)

// benchResult keeps benchmark results alive.
var benchResult []QuantityResult

// BenchmarkExpand20 runs the full expansion (traces, coefficients, all
// zeros at every length, all quantities) of the logistic repeller A = 6
// with all prime cycles up to length 20 (52 377 of length 20, 111 013 in
// all); the cycles are built outside the timed loop.
func BenchmarkExpand20(b *testing.B) {
	set := logisticCycles(6, 20)
	b.ResetTimer()
	for b.Loop() {
		e, err := NewExpansion(set, nil)
		if err != nil {
			b.Fatal(err)
		}
		results := make([]QuantityResult, 0, len(dynsys.Quantities))
		for _, q := range dynsys.Quantities {
			r, err := e.Quantity(q)
			if err != nil {
				b.Fatal(err)
			}
			results = append(results, r)
		}
		benchResult = results
	}
}

// BenchmarkExpandFactorized20 is BenchmarkExpand20 with the factorized
// determinant: the factors 1/ζ_k, their zeros at every length, and all
// quantities.
func BenchmarkExpandFactorized20(b *testing.B) {
	set := logisticCycles(6, 20)
	b.ResetTimer()
	for b.Loop() {
		e, err := NewExpansion(set, &Settings{Function: FactorizedDeterminant})
		if err != nil {
			b.Fatal(err)
		}
		results := make([]QuantityResult, 0, len(dynsys.Quantities))
		for _, q := range dynsys.Quantities {
			r, err := e.Quantity(q)
			if err != nil {
				b.Fatal(err)
			}
			results = append(results, r)
		}
		benchResult = results
	}
}
