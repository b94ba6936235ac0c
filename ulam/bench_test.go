package ulam

import (
	"runtime"
	"runtime/metrics"
	"sync"
	"sync/atomic"
	"syscall"
	"testing"
	"time"

	"crosspec/dynsys"
	"crosspec/ulam/krylov"
)

var (
	benchMatrix *Matrix
	benchResult krylov.Result
	benchVector []float64

	logistic1e6, henon1e6         *Matrix
	logistic1e6Once, henon1e6Once sync.Once
)

func logisticMatrix(b *testing.B) *Matrix {
	logistic1e6Once.Do(func() {
		m, err := Assemble(open(b, "logistic-repeller"), &Settings{Cells: 1_000_000, Restrict: RestrictNone})
		if err != nil {
			b.Fatal(err)
		}
		logistic1e6 = m
	})
	return logistic1e6
}

func henonMatrix(b *testing.B) *Matrix {
	henon1e6Once.Do(func() {
		m, err := Assemble(open(b, "henon"), &Settings{Shape: []int{1024, 1024}, Points: 16, Restrict: RestrictNone})
		if err != nil {
			b.Fatal(err)
		}
		henon1e6 = m
	})
	return henon1e6
}

// benchmarkAssemble reports, beside the time, the bytes allocated during
// one assembly per nonzero of the result: an upper bound of the peak heap
// growth per nonzero (nothing allocated is freed before the end).
//
// cpu-ms/op is the processor time (user and system, all threads) of the
// process per assembly: on a shared machine it is less disturbed by other
// programs' load than the wall time. faults/op counts the page faults
// (first touches of memory the heap got from the system): on a virtual
// machine each can cost microseconds, and they come mostly from the first
// iterations, while the heap grows.
func benchmarkAssemble(b *testing.B, sys *dynsys.System, set *Settings) {
	var before, after runtime.MemStats
	var allocated uint64
	cpu0, faults0 := cpuTime(), pageFaults()
	for b.Loop() {
		runtime.ReadMemStats(&before)
		m, err := Assemble(sys, set)
		runtime.ReadMemStats(&after)
		if err != nil {
			b.Fatal(err)
		}
		allocated += after.TotalAlloc - before.TotalAlloc
		benchMatrix = m
	}
	b.ReportMetric((cpuTime()-cpu0).Seconds()*1e3/float64(b.N), "cpu-ms/op")
	b.ReportMetric(float64(pageFaults()-faults0)/float64(b.N), "faults/op")
	b.ReportMetric(float64(allocated)/float64(b.N)/float64(benchMatrix.NNZ()), "alloc-B/nnz")
	b.ReportMetric(float64(benchMatrix.NNZ()), "nnz")
}

// BenchmarkAssemblePeak1e6 measures the memory of one assembly of each
// 10⁶-cell matrix, per nonzero of the result: peak-B/nnz is the largest
// growth of the heap's object bytes (live objects plus garbage not yet
// collected, runtime/metrics /memory/classes/heap/objects:bytes) seen by a
// sampler polling every few microseconds, from a collected heap, so it
// bounds the peak live heap from above up to the sampling gaps;
// retained-B/nnz is the live heap the matrix keeps after a collection.
// Timing is meaningless here (the sampler takes a core).
func BenchmarkAssemblePeak1e6(b *testing.B) {
	cases := []struct {
		name, system string
		set          Settings
	}{
		{"1D", "logistic-repeller", Settings{Cells: 1_000_000, Restrict: RestrictNone}},
		{"Henon", "henon", Settings{Shape: []int{1024, 1024}, Points: 16, Restrict: RestrictNone}},
		{"HenonAffine", "henon", Settings{Shape: []int{1024, 1024}, Restrict: RestrictNone}},
	}
	sample := []metrics.Sample{{Name: "/memory/classes/heap/objects:bytes"}}
	heap := func() int64 {
		metrics.Read(sample)
		return int64(sample[0].Value.Uint64())
	}
	for _, c := range cases {
		b.Run(c.name, func(b *testing.B) {
			sys := open(b, c.system)
			var peak, retained float64
			for b.Loop() {
				benchMatrix = nil
				runtime.GC()
				base := heap()
				var top atomic.Int64
				var stop atomic.Bool
				var wg sync.WaitGroup
				wg.Add(1)
				go func() {
					defer wg.Done()
					for !stop.Load() {
						if h := heap() - base; h > top.Load() {
							top.Store(h)
						}
						time.Sleep(5 * time.Microsecond)
					}
				}()
				m, err := Assemble(sys, &c.set)
				stop.Store(true)
				wg.Wait()
				if err != nil {
					b.Fatal(err)
				}
				if h := heap() - base; h > top.Load() {
					top.Store(h)
				}
				runtime.GC()
				benchMatrix = m
				nnz := float64(m.NNZ())
				peak = max(peak, float64(top.Load())/nnz)
				retained = float64(heap()-base) / nnz
			}
			b.ReportMetric(peak, "peak-B/nnz")
			b.ReportMetric(retained, "retained-B/nnz")
		})
	}
}

// BenchmarkAssemble1D1e6 assembles the exact 10⁶-cell matrix of the
// logistic repeller A x(1−x), A = 6 (the full grid, no restriction).
func BenchmarkAssemble1D1e6(b *testing.B) {
	benchmarkAssemble(b, open(b, "logistic-repeller"), &Settings{Cells: 1_000_000, Restrict: RestrictNone})
}

// BenchmarkAssembleHenon1e6 assembles the Hénon map's 1024×1024 matrix
// from 16 test points a cell.
func BenchmarkAssembleHenon1e6(b *testing.B) {
	benchmarkAssemble(b, open(b, "henon"), &Settings{Shape: []int{1024, 1024}, Points: 16, Restrict: RestrictNone})
}

// BenchmarkMatVec1e6 compares the raw parallel CSR loop (Matrix.Apply)
// with the library's MulVecTo (which adds into dst, so dst is zeroed
// first) on the 10⁶-cell 1D matrix, on one and two cores, and reports the
// memory traffic per second (12 bytes a nonzero, 24 a row).
func BenchmarkMatVec1e6(b *testing.B) {
	m := logisticMatrix(b)
	n := m.Dim()
	x := make([]float64, n)
	for i := range x {
		x[i] = 1 + float64(i%7)
	}
	dst := make([]float64, n)
	bytes := float64(12*m.NNZ() + 20*n)
	m.Apply(dst, x) // make the compact index outside the timing
	csr := m.CSR()
	for _, procs := range []int{1, 2} {
		b.Run("raw/procs="+itoa(procs), func(b *testing.B) {
			old := runtime.GOMAXPROCS(procs)
			defer runtime.GOMAXPROCS(old)
			for b.Loop() {
				m.Apply(dst, x)
			}
			b.ReportMetric(bytes*float64(b.N)/b.Elapsed().Seconds()/1e9, "GB/s")
			benchVector = dst
		})
		b.Run("MulVecTo/procs="+itoa(procs), func(b *testing.B) {
			old := runtime.GOMAXPROCS(procs)
			defer runtime.GOMAXPROCS(old)
			for b.Loop() {
				clear(dst)
				csr.MulVecTo(dst, false, x)
			}
			b.ReportMetric(bytes*float64(b.N)/b.Elapsed().Seconds()/1e9, "GB/s")
			benchVector = dst
		})
	}
}

// timed wraps an operator to count the time spent in mat-vecs.
type timed struct {
	krylov.Operator
	elapsed time.Duration
}

func (t *timed) Apply(dst, x []float64) {
	start := time.Now()
	t.Operator.Apply(dst, x)
	t.elapsed += time.Since(start)
}

// benchmarkEigs finds k leading eigenvalues of m to relative residual
// 1e-12: with split, as Compute does (krylov.EigsSparse: the irreducible
// blocks one by one); without, by Krylov–Schur on the whole matrix, which
// measures the iteration itself (and the time spent in mat-vecs).
func benchmarkEigs(b *testing.B, m *Matrix, k int, split bool) {
	op := &timed{Operator: m}
	matVecs := 0
	for b.Loop() {
		var res krylov.Result
		var err error
		if split {
			res, err = krylov.EigsSparse(m, &krylov.Settings{Wanted: k, Tol: 1e-12})
		} else {
			res, err = krylov.Eigs(op, &krylov.Settings{Wanted: k, Tol: 1e-12})
		}
		if err != nil {
			b.Fatal(err)
		}
		matVecs += res.Stats.MatVecs
		benchResult = res
	}
	b.ReportMetric(float64(matVecs)/float64(b.N), "matvecs/op")
	if !split {
		b.ReportMetric(op.elapsed.Seconds()*1e3/float64(b.N), "matvec-ms/op")
	}
}

// BenchmarkLeading1e6 finds the leading eigenvalue of the unrestricted
// 10⁶-cell 1D matrix, split into irreducible blocks and whole.
func BenchmarkLeading1e6(b *testing.B) {
	b.Run("1D/split", func(b *testing.B) { benchmarkEigs(b, logisticMatrix(b), 1, true) })
	b.Run("1D/whole", func(b *testing.B) { benchmarkEigs(b, logisticMatrix(b), 1, false) })
}

// BenchmarkSix1e6 and BenchmarkTen1e6 find 6 and 10 leading eigenvalues
// of the unrestricted 1D and Hénon matrices the same ways.
func BenchmarkSix1e6(b *testing.B) { benchmarkSeveral(b, 6) }
func BenchmarkTen1e6(b *testing.B) { benchmarkSeveral(b, 10) }

func benchmarkSeveral(b *testing.B, k int) {
	for _, split := range []bool{true, false} {
		way := "whole"
		if split {
			way = "split"
		}
		b.Run("1D/"+way, func(b *testing.B) { benchmarkEigs(b, logisticMatrix(b), k, split) })
		b.Run("Henon/"+way, func(b *testing.B) { benchmarkEigs(b, henonMatrix(b), k, split) })
	}
}

// cpuTime returns the processor time used by the process so far.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// pageFaults returns the number of page faults of the process so far.
func pageFaults() int64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return ru.Minflt + ru.Majflt
}

func itoa(n int) string { return string(rune('0' + n)) }

// BenchmarkAssembleHenonAffine1e6 assembles the Hénon map's 1024×1024
// matrix from piecewise-affine images of the cells (the 2D default).
func BenchmarkAssembleHenonAffine1e6(b *testing.B) {
	benchmarkAssemble(b, open(b, "henon"), &Settings{Shape: []int{1024, 1024}, Restrict: RestrictNone})
}
