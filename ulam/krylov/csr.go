package krylov

import (
	"fmt"
	"math"
	"runtime"
	"sort"
	"sync"
	"sync/atomic"
)

// CSRIndex is the pattern of a square sparse matrix in compressed sparse
// rows with 32-bit indices (12 bytes a nonzero with its value instead of
// 16: the mat-vec is bound by memory traffic). It is checked once, when
// made, so that MulVec's kernel reads without bounds checks; it may serve
// several value arrays of the same pattern.
type CSRIndex struct {
	rowPtr, col []int32
}

// NewCSRIndex returns the index of the n×n pattern rowPtr, col, n =
// len(rowPtr) − 1: the nonzeros of row i are in the columns
// col[rowPtr[i]:rowPtr[i+1]]. It panics if the pattern is malformed (no
// row pointers, pointers that do not start at 0, decrease or end before
// len(col), a column outside [0, n)) or has more than 2³¹−1 nonzeros.
func NewCSRIndex(rowPtr, col []int) *CSRIndex {
	n := len(rowPtr) - 1
	switch {
	case n < 0:
		panic("krylov: CSR pattern without row pointers")
	case len(col) > math.MaxInt32:
		panic(fmt.Sprintf("krylov: CSR pattern with %d nonzeros, more than 2³¹−1", len(col)))
	case rowPtr[0] != 0 || rowPtr[n] != len(col):
		panic(fmt.Sprintf("krylov: CSR row pointers %d … %d for %d nonzeros", rowPtr[0], rowPtr[n], len(col)))
	}
	c := &CSRIndex{rowPtr: make([]int32, n+1), col: make([]int32, len(col))}
	for i, p := range rowPtr {
		if i > 0 && p < rowPtr[i-1] {
			panic(fmt.Sprintf("krylov: CSR row pointer %d decreases", i))
		}
		c.rowPtr[i] = int32(p)
	}
	for k, j := range col {
		if j < 0 || j >= n {
			panic(fmt.Sprintf("krylov: CSR column index %d outside [0, %d)", j, n))
		}
		c.col[k] = int32(j)
	}
	return c
}

// Dim returns the number of rows (and columns).
func (c *CSRIndex) Dim() int { return len(c.rowPtr) - 1 }

// NNZ returns the number of nonzeros.
func (c *CSRIndex) NNZ() int { return len(c.col) }

// MulVec sets dst = A x for the matrix A of this pattern with the values
// val (in the order of the pattern's entries), in parallel: the rows are
// cut into pieces of equal nonzeros taken in turn by the cores. Each
// row's sum is formed from 0 in entry order whatever the cut, so the
// result does not depend on the number of cores.
func (c *CSRIndex) MulVec(dst, x, val []float64) {
	n := c.Dim()
	if len(dst) != n || len(x) != n {
		panic(fmt.Sprintf("krylov: mat-vec with vectors of length %d and %d, want %d", len(dst), len(x), n))
	}
	if len(val) != len(c.col) {
		panic(fmt.Sprintf("krylov: mat-vec with %d values for %d nonzeros", len(val), len(c.col)))
	}
	// Below about 2¹⁶ nonzeros a second goroutine costs more than it saves.
	workers := min(runtime.GOMAXPROCS(0), max(1, len(c.col)>>16))
	if workers == 1 {
		mulRows(dst, x, c.rowPtr, c.col, val, 0, n)
		return
	}
	// A helper that starts late (waking a parked thread can take as long
	// as a piece) leaves its pieces to the others instead of holding up
	// the end.
	chunks := mulVecChunks * workers
	var next atomic.Int32
	run := func() {
		for {
			p := int(next.Add(1) - 1)
			if p >= chunks {
				return
			}
			mulRows(dst, x, c.rowPtr, c.col, val, c.chunkStart(p, chunks), c.chunkStart(p+1, chunks))
		}
	}
	var wg sync.WaitGroup
	for range workers - 1 {
		wg.Go(run)
	}
	run()
	wg.Wait()
}

// mulVecChunks is the number of pieces per core of a parallel mat-vec.
const mulVecChunks = 8

// chunkStart returns the first row of piece p of chunks: the first row
// whose entries start at or after the p-th share of the nonzeros (n for
// p = chunks).
func (c *CSRIndex) chunkStart(p, chunks int) int {
	n := c.Dim()
	if p >= chunks {
		return n
	}
	share := int32((int64(len(c.col)) * int64(p)) / int64(chunks))
	return sort.Search(n, func(i int) bool { return c.rowPtr[i] >= share })
}

// mulRowsGo sets dst[i] = Σ_k val[k]·x[col[k]] for the rows i in
// [lo, hi), each sum formed from 0 in entry order. mulRows runs it, or on
// amd64 the same operations in assembly.
func mulRowsGo(dst, x []float64, rowPtr, col []int32, val []float64, lo, hi int) {
	if lo >= hi {
		return
	}
	dst = dst[lo:hi]
	rowPtr = rowPtr[lo : hi+1]
	// One slice of the row block's entries, walked by a running index:
	// the rows are short (a few entries), so per-row slicing would cost
	// more bounds checks than it saves.
	first, last := int(rowPtr[0]), int(rowPtr[len(rowPtr)-1])
	col, val = col[first:last], val[first:last]
	val = val[:len(col)]
	k := 0
	for i := range dst {
		end := int(rowPtr[i+1]) - first
		var sum float64
		for ; k < end && k < len(col); k++ {
			sum += val[k] * x[col[k]]
		}
		dst[i] = sum
	}
}
