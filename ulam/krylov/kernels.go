package krylov

import (
	"runtime"
	"sync"
	"sync/atomic"

	"gonum.org/v1/gonum/floats"
)

// blockRows is the number of rows of one row block of the long-vector
// kernels. It is fixed, independent of the number of cores, so that the
// partial sums of a dot product are always formed over the same rows and
// reduced in the same order: the results are the same bytes whatever
// GOMAXPROCS is. The basis is stored column after column, so a block pass
// over q basis vectors reads q separate streams of blockRows numbers each;
// streams of 128 KiB keep the hardware prefetchers busy (measured on the
// reference machine, 10 streams of 10⁶ numbers: 12 GB/s with 1024-row
// blocks, 31 GB/s with 16384, 36 GB/s with 65536), while the vector being
// orthogonalised, one block of it, stays in a core's L2 cache across the
// pass.
const blockRows = 16384

// parallelRows is the vector length below which the kernels run on the
// calling goroutine; below it the cost of starting goroutines is not repaid.
const parallelRows = 1 << 15

// forBlocks calls fn(worker, block, lo, hi) for every row block
// [lo, hi) of [0, n), spreading the blocks over min(GOMAXPROCS, blocks)
// goroutines. worker identifies the goroutine (0 ≤ worker < workers(n)), so
// that fn can use a per-goroutine scratch; what fn computes for a block
// must depend on the block alone.
func forBlocks(n int, fn func(worker, block, lo, hi int)) {
	blocks := (n + blockRows - 1) / blockRows
	workers := workersFor(n)
	if workers == 1 {
		for b := range blocks {
			lo := b * blockRows
			fn(0, b, lo, min(lo+blockRows, n))
		}
		return
	}
	var next atomic.Int64
	var wg sync.WaitGroup
	for w := range workers {
		wg.Go(func() {
			for {
				b := int(next.Add(1) - 1)
				if b >= blocks {
					return
				}
				lo := b * blockRows
				fn(w, b, lo, min(lo+blockRows, n))
			}
		})
	}
	wg.Wait()
}

// workersFor returns the number of goroutines forBlocks uses for length n.
func workersFor(n int) int {
	if n < parallelRows {
		return 1
	}
	blocks := (n + blockRows - 1) / blockRows
	return max(1, min(runtime.GOMAXPROCS(0), blocks))
}

// basis is an orthonormal Krylov basis v_0, …, v_{cols-1} of vectors of
// length n, stored contiguously column after column, with the scratch the
// blocked kernels need.
type basis struct {
	n    int
	cols int
	v    []float64 // column j is v[j*n : (j+1)*n]

	// partial holds per-block partial sums, block b in
	// partial[b*stride : (b+1)*stride]; they are reduced in block order.
	partial []float64
	stride  int
	blocks  int
}

func newBasis(n, cols int) *basis {
	blocks := (n + blockRows - 1) / blockRows
	stride := cols + 1
	return &basis{
		n:       n,
		cols:    cols,
		v:       make([]float64, n*cols),
		partial: make([]float64, blocks*stride),
		stride:  stride,
		blocks:  blocks,
	}
}

// col returns basis vector j.
func (b *basis) col(j int) []float64 { return b.v[j*b.n : (j+1)*b.n] }

// reduce sums the first count partial sums of every block, in block order,
// into dst.
func (b *basis) reduce(dst []float64, count int) {
	for i := range dst[:count] {
		dst[i] = 0
	}
	for blk := range b.blocks {
		p := b.partial[blk*b.stride : blk*b.stride+count]
		for i, x := range p {
			dst[i] += x
		}
	}
}

// project sets h[l] = v_lᵀ w for l < q and returns ‖w‖².
// h must have length at least q.
func (b *basis) project(h []float64, q int, w []float64) float64 {
	forBlocks(b.n, func(_, blk, lo, hi int) {
		p := b.partial[blk*b.stride:]
		wb := w[lo:hi]
		for l := range q {
			p[l] = floats.Dot(b.v[l*b.n+lo:l*b.n+hi], wb)
		}
		p[q] = floats.Dot(wb, wb)
	})
	b.reduce(h, q+1)
	norm2 := h[q]
	h[q] = 0
	return norm2
}

// subtract performs w ← (w − Σ_{l<q} h[l] v_l)·scale and returns the
// squared norm of the result.
func (b *basis) subtract(w, h []float64, q int, scale float64) float64 {
	forBlocks(b.n, func(_, blk, lo, hi int) {
		wb := w[lo:hi]
		for l := range q {
			if h[l] != 0 {
				floats.AddScaled(wb, -h[l], b.v[l*b.n+lo:l*b.n+hi])
			}
		}
		if scale != 1 {
			floats.Scale(scale, wb)
		}
		b.partial[blk*b.stride] = floats.Dot(wb, wb)
	})
	var norm2 float64
	for blk := range b.blocks {
		norm2 += b.partial[blk*b.stride]
	}
	return norm2
}

// subBlockRows is the number of rows of the sub-blocks of a fused sweep
// (subtractProject): the q basis vectors of a sub-block stay in a core's
// cache between the update and the projection. Measured on the reference
// machine with q = 30 and 10⁶ rows: 13–14 ms a sweep with 4096 rows, 15 ms
// with 2048 or 16384, 17.6 ms with 1024, against 16.5 ms for a separate
// update and projection.
const subBlockRows = 4096

// subtractProject performs w ← w − Σ_{l<q} h[l] v_l and sets
// again[l] = v_lᵀ w for the updated w, in one sweep over the basis: each
// sub-block of rows is updated and then projected while it is in cache.
// It returns the new ‖w‖². again must have length at least q+1.
func (b *basis) subtractProject(w, h []float64, q int, again []float64) float64 {
	forBlocks(b.n, func(_, blk, lo, hi int) {
		p := b.partial[blk*b.stride : blk*b.stride+q+1]
		clear(p)
		for sub := lo; sub < hi; sub += subBlockRows {
			end := min(sub+subBlockRows, hi)
			wb := w[sub:end]
			for l := range q {
				if h[l] != 0 {
					floats.AddScaled(wb, -h[l], b.v[l*b.n+sub:l*b.n+end])
				}
			}
			for l := range q {
				p[l] += floats.Dot(b.v[l*b.n+sub:l*b.n+end], wb)
			}
			p[q] += floats.Dot(wb, wb)
		}
	})
	b.reduce(again, q+1)
	norm2 := again[q]
	again[q] = 0
	return norm2
}

// scale performs x ← alpha x.
func scale(alpha float64, x []float64) {
	forBlocks(len(x), func(_, _, lo, hi int) {
		floats.Scale(alpha, x[lo:hi])
	})
}

// rotate replaces the first p basis vectors by the columns of V Q, where V
// holds the first q basis vectors and Q is the q×p row-major matrix q
// with leading dimension ldq:
//
//	v_c ← Σ_{l<q} Q[l,c] v_l,   c < p.
//
// It works in place, one row block at a time, with a scratch of p·blockRows
// numbers per goroutine.
func (b *basis) rotate(q, p int, qmat []float64, ldq int) {
	b.multiplyTo(b.v, b.n, q, p, qmat, ldq)
}

// multiplyTo writes the columns of V Q into dst, column c at
// dst[c*ldd : c*ldd+n]; dst may be the basis itself (see rotate).
func (b *basis) multiplyTo(dst []float64, ldd, q, p int, qmat []float64, ldq int) {
	workers := workersFor(b.n)
	scratch := make([][]float64, workers)
	for i := range scratch {
		scratch[i] = make([]float64, p*blockRows)
	}
	forBlocks(b.n, func(worker, _, lo, hi int) {
		rows := hi - lo
		s := scratch[worker][:p*rows]
		for i := range s {
			s[i] = 0
		}
		for c := range p {
			sc := s[c*rows : (c+1)*rows]
			for l := range q {
				if x := qmat[l*ldq+c]; x != 0 {
					floats.AddScaled(sc, x, b.v[l*b.n+lo:l*b.n+hi])
				}
			}
		}
		for c := range p {
			copy(dst[c*ldd+lo:c*ldd+hi], s[c*rows:(c+1)*rows])
		}
	})
}
