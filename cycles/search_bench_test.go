package cycles

import (
	"context"
	"testing"
)

var benchCycles SearchResult

func benchmarkSearch(b *testing.B, name string, maxLen int) {
	s := openSystem(b, name)
	b.ResetTimer()
	for range b.N {
		res, err := Search(context.Background(), s, &SearchSettings{MaxLen: maxLen})
		if err != nil {
			b.Fatal(err)
		}
		benchCycles = res
	}
	b.ReportMetric(float64(len(benchCycles.Cycles)), "cycles")
}

// BenchmarkLogistic20 finds all prime cycles of the logistic repeller
// (A = 6) up to length 20.
func BenchmarkLogistic20(b *testing.B) { benchmarkSearch(b, "logistic-repeller", 20) }

// BenchmarkHenon12 finds all prime cycles of the Hénon map up to period 12.
func BenchmarkHenon12(b *testing.B) { benchmarkSearch(b, "henon", 12) }

// BenchmarkHenon20 finds all prime cycles of the Hénon map up to period 20.
func BenchmarkHenon20(b *testing.B) { benchmarkSearch(b, "henon", 20) }
