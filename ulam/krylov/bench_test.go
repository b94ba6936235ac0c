package krylov

import (
	"errors"
	"sync"
	"testing"
	"time"
)

// timedOperator wraps an operator and accumulates the time spent in Apply,
// so a benchmark can tell the solver's own work from the mat-vecs.
type timedOperator struct {
	Operator
	elapsed time.Duration
}

func (t *timedOperator) Apply(dst, x []float64) {
	start := time.Now()
	t.Operator.Apply(dst, x)
	t.elapsed += time.Since(start)
}

var (
	ulam1e6     *csr
	ulam1e6Once sync.Once

	benchResult Result
)

// benchmarkUlam solves for the k leading eigenvalues, with vectors, of the
// 10⁶-cell mass-transport Ulam matrix of the expanding circle map
// x ↦ 2x + 0.1 sin 2πx mod 1 (about 2.4 nonzeros per row), whose
// subleading eigenvalues crowd near a circle of radius about 1/2. It
// reports the mat-vecs, the time spent in them and the solver's own time,
// whether the solve converged within maxRestarts, and the worst relative
// residual reached.
func benchmarkUlam(b *testing.B, k, subspace, maxRestarts int) {
	ulam1e6Once.Do(func() { ulam1e6 = perturbedDoublingUlam(1_000_000, 0.1) })
	op := &timedOperator{Operator: ulam1e6}
	var matVecs int
	var total time.Duration
	converged := 0
	worst := 0.0
	b.ResetTimer()
	for b.Loop() {
		start := time.Now()
		res, err := Eigs(op, &Settings{Wanted: k, SubspaceSize: subspace, Vectors: true, MaxRestarts: maxRestarts})
		total += time.Since(start)
		if err != nil && !errors.Is(err, ErrNotConverged) {
			b.Fatal(err)
		}
		if res.Status == Converged {
			converged++
		}
		for _, r := range res.Residuals {
			worst = max(worst, r)
		}
		matVecs += res.Stats.MatVecs
		benchResult = res
	}
	b.ReportMetric(float64(matVecs)/float64(b.N), "matvecs/op")
	b.ReportMetric(float64(op.elapsed.Milliseconds())/float64(b.N), "matvec-ms/op")
	b.ReportMetric(float64((total-op.elapsed).Milliseconds())/float64(b.N), "solver-ms/op")
	b.ReportMetric(float64(converged)/float64(b.N), "converged")
	b.ReportMetric(worst/1e-12, "residual/1e-12")
}

func BenchmarkEigs1e6Leading(b *testing.B)   { benchmarkUlam(b, 1, 0, 0) }
func BenchmarkEigs1e6LeadingM6(b *testing.B) { benchmarkUlam(b, 1, 6, 0) }
func BenchmarkEigs1e6Six(b *testing.B)       { benchmarkUlam(b, 6, 0, 20) }
func BenchmarkEigs1e6Ten(b *testing.B)       { benchmarkUlam(b, 10, 0, 20) }
