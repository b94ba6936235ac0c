package krylov

import (
	"errors"
	"strconv"
	"sync"
	"testing"
	"time"

	"gonum.org/v1/gonum/floats"
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
	logistic1e6, circle1e6   *csr
	logisticOnce, circleOnce sync.Once

	benchResult Result
)

// logisticBench is the 10⁶-cell mass-transport Ulam matrix of the open
// logistic map 6x(1 − x) (about 2.4 nonzeros per row), the 1D matrix of
// the solver targets: λ_0 ≈ 0.4354 and the next moduli crowd near 0.09.
func logisticBench() *csr {
	logisticOnce.Do(func() { logistic1e6 = logisticRepellerUlam(1_000_000, 6) })
	return logistic1e6
}

// circleBench is the 10⁶-cell mass-transport Ulam matrix of the expanding
// circle map x ↦ 2x + 0.1 sin 2πx mod 1: λ_0 = 1, and the next moduli
// crowd near 0.44, where the spurious eigenvalues of Ulam's method fill a
// disc.
func circleBench() *csr {
	circleOnce.Do(func() { circle1e6 = perturbedDoublingUlam(1_000_000, 0.1) })
	return circle1e6
}

// benchmarkEigs solves for the k leading eigenvalues, with vectors, at the
// default tolerance 1e-12. It reports the mat-vecs, the time spent in them
// and the solver's own time per solve, the restarts, the final subspace
// size, the fraction of solves that converged within maxRestarts and the
// worst relative residual reached.
func benchmarkEigs(b *testing.B, a *csr, set Settings) {
	// The mat-vec of the Ulam matrices (CSRIndex), not the test's loop.
	op := &timedOperator{Operator: &csrOperator{index: NewCSRIndex(a.rowPtr, a.col), val: a.val}}
	set.Vectors = true
	var matVecs, restarts, subspace, reorth int
	var total time.Duration
	converged := 0
	worst := 0.0
	for b.Loop() {
		start := time.Now()
		res, err := Eigs(op, &set)
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
		restarts += res.Stats.Restarts
		reorth += res.Stats.Reorthogonalizations
		subspace = res.Stats.Subspace
		benchResult = res
	}
	n := float64(b.N)
	b.ReportMetric(float64(matVecs)/n, "matvecs/op")
	b.ReportMetric(float64(restarts)/n, "restarts/op")
	b.ReportMetric(float64(subspace), "subspace")
	b.ReportMetric(op.elapsed.Seconds()*1e3/n, "matvec-ms/op")
	b.ReportMetric((total-op.elapsed).Seconds()*1e3/n, "solver-ms/op")
	b.ReportMetric(float64(converged)/n, "converged")
	b.ReportMetric(worst/1e-12, "residual/1e-12")
	b.ReportMetric(float64(reorth)/n, "reorth/op")
}

// BenchmarkEigs1e6Leading: the leading eigenvalue by the default path
// (power steps, Krylov–Schur if they converge slowly).
func BenchmarkEigs1e6Leading(b *testing.B) {
	b.Run("logistic", func(b *testing.B) { benchmarkEigs(b, logisticBench(), Settings{}) })
	b.Run("circle", func(b *testing.B) { benchmarkEigs(b, circleBench(), Settings{}) })
}

// BenchmarkEigs1e6LeadingKrylovSchur: the leading eigenvalue by
// Krylov–Schur alone, at fixed subspace sizes.
func BenchmarkEigs1e6LeadingKrylovSchur(b *testing.B) {
	for _, m := range []int{6, 20} {
		b.Run("logistic/m="+strconv.Itoa(m), func(b *testing.B) {
			benchmarkEigs(b, logisticBench(), Settings{SubspaceSize: m, MaxSubspaceSize: m})
		})
	}
}

// BenchmarkEigs1e6Six and BenchmarkEigs1e6Ten: 6 and 10 leading
// eigenvalues of the logistic matrix, at most 100 restarts, with the
// default subspace (growing from max(2k+1, 20) to twice that) and fixed
// sizes.
func BenchmarkEigs1e6Six(b *testing.B) { benchmarkSeveral(b, 6, []int{30, 60}) }
func BenchmarkEigs1e6Ten(b *testing.B) { benchmarkSeveral(b, 10, []int{40, 60}) }

func benchmarkSeveral(b *testing.B, k int, fixed []int) {
	b.Run("logistic/m=default", func(b *testing.B) {
		benchmarkEigs(b, logisticBench(), Settings{Wanted: k, MaxRestarts: 100})
	})
	for _, m := range fixed {
		b.Run("logistic/m="+strconv.Itoa(m), func(b *testing.B) {
			benchmarkEigs(b, logisticBench(), Settings{Wanted: k, SubspaceSize: m, MaxSubspaceSize: m, MaxRestarts: 100})
		})
	}
}

// BenchmarkEigsSparse1e6: 1, 6 and 10 leading eigenvalues (no vectors) of
// the logistic matrix by EigsSparse, the split into irreducible blocks
// included. The matrix is mostly transient cells (see the package
// documentation), so this measures the split more than the iteration.
func BenchmarkEigsSparse1e6(b *testing.B) {
	a := logisticBench()
	for _, k := range []int{1, 6, 10} {
		b.Run("logistic/k="+strconv.Itoa(k), func(b *testing.B) {
			var matVecs int
			worst := 0.0
			for b.Loop() {
				res, err := EigsSparse(a, &Settings{Wanted: k})
				if err != nil {
					b.Fatal(err)
				}
				matVecs += res.Stats.MatVecs
				for _, r := range res.Residuals {
					worst = max(worst, r)
				}
				benchResult = res
			}
			b.ReportMetric(float64(matVecs)/float64(b.N), "matvecs/op")
			b.ReportMetric(worst/1e-12, "residual/1e-12")
		})
	}
	b.Run("tarjan", func(b *testing.B) {
		for b.Loop() {
			IrreducibleBlocks(a.rowPtr, a.col)
		}
	})
}

// BenchmarkDot1e6 times the accurate inner product against gonum's plain
// one on 10^6 entries.
func BenchmarkDot1e6(b *testing.B) {
	x, y := make([]float64, 1e6), make([]float64, 1e6)
	for i := range x {
		x[i], y[i] = 1/float64(i+1), float64(i%7)+0.5
	}
	b.Run("Dot", func(b *testing.B) {
		for b.Loop() {
			Dot(x, y)
		}
	})
	b.Run("floats.Dot", func(b *testing.B) {
		for b.Loop() {
			floats.Dot(x, y)
		}
	})
}
