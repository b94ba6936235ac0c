package krylov

import (
	"math"
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
// long streams keep the hardware prefetchers busy (measured on the
// reference machine, 10 streams of 10⁶ numbers: 12 GB/s with 1024-row
// blocks, 31 GB/s with 16384, 36 GB/s with 65536), while the vectors being
// orthogonalised stay in a core's L2 cache across the pass (see
// subBlockRows). On the k = 6 solve of the 10⁶-cell logistic-repeller
// matrix (BenchmarkEigs1e6Six, 2026-12-02, four runs each) the solver's
// own time per step was 16.0–16.5 ms with 32768-row blocks and
// 16384-row sub-blocks, 20 ms with 16384 and 4096, and no better with
// 65536-row blocks.
const blockRows = 32768

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

// newBasis returns a basis of cols vectors of length n with room to
// extend to capCols vectors without moving them (see extend). The room is
// reserved address space: pages the solver never writes are never touched.
func newBasis(n, cols, capCols int) *basis {
	capCols = max(cols, capCols)
	blocks := (n + blockRows - 1) / blockRows
	stride := 2*capCols + 3 // projectPair's partial sums
	return &basis{
		n:       n,
		cols:    cols,
		v:       make([]float64, n*cols, n*capCols),
		partial: make([]float64, blocks*stride),
		stride:  stride,
		blocks:  blocks,
	}
}

// extend makes room for cols vectors, keeping the current ones in place
// (the columns are stored one after another, so growing moves nothing).
func (b *basis) extend(cols int) {
	if cols*b.n > cap(b.v) || 2*cols+3 > b.stride {
		panic("krylov: basis extended beyond its capacity")
	}
	b.v = b.v[:cols*b.n]
	b.cols = cols
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

// subBlockRows is the number of rows of the sub-blocks of the fused
// sweeps (projectPair, updatePair): the two vectors being worked on, 2 ×
// 128 KiB of a sub-block, stay in a core's L2 cache while the basis
// streams past.
const subBlockRows = 16384

// projectPair makes one sweep over the first q basis vectors, x and z,
// setting s[l] = v_lᵀ x and g[l] = v_lᵀ z for l < q, and returns xᵀx,
// xᵀz and zᵀz. s and g must have length at least q.
func (b *basis) projectPair(s, g []float64, q int, x, z []float64) (xx, xz, zz float64) {
	forBlocks(b.n, func(_, blk, lo, hi int) {
		p := b.partial[blk*b.stride : blk*b.stride+2*q+3]
		clear(p)
		for sub := lo; sub < hi; sub += subBlockRows {
			end := min(sub+subBlockRows, hi)
			xb, zb := x[sub:end], z[sub:end]
			l := 0
			for ; l+4 <= q; l += 4 {
				dots4x2(p[l:l+4], p[q+l:q+l+4], b.v[l*b.n+sub:l*b.n+end], b.v[(l+1)*b.n+sub:(l+1)*b.n+end],
					b.v[(l+2)*b.n+sub:(l+2)*b.n+end], b.v[(l+3)*b.n+sub:(l+3)*b.n+end], xb, zb)
			}
			if r := q - l; r > 0 {
				// The last one to three vectors, the missing slots filled
				// with v_l again (their sums are dropped).
				var vs [4][]float64
				for i := range 4 {
					vs[i] = b.v[(l+min(i, r-1))*b.n+sub : (l+min(i, r-1))*b.n+end]
				}
				var sx, sz [4]float64
				dots4x2(sx[:], sz[:], vs[0], vs[1], vs[2], vs[3], xb, zb)
				for i := range r {
					p[l+i] += sx[i]
					p[q+l+i] += sz[i]
				}
			}
			p[2*q] += floats.Dot(xb, xb)
			p[2*q+1] += floats.Dot(xb, zb)
			p[2*q+2] += floats.Dot(zb, zb)
		}
	})
	count := 2*q + 3
	for i := range count {
		var sum float64
		for blk := range b.blocks {
			sum += b.partial[blk*b.stride+i]
		}
		switch {
		case i < q:
			s[i] = sum
		case i < 2*q:
			g[i-q] = sum
		case i == 2*q:
			xx = sum
		case i == 2*q+1:
			xz = sum
		default:
			zz = sum
		}
	}
	return xx, xz, zz
}

// updatePair makes one sweep over the first q basis vectors, performing
//
//	x ← xScale·x − Σ_{l<q} s[l] v_l,
//	z ← zScale·z − Σ_{l<q} c[l] v_l − c[q] x   (x the updated vector),
//
// sub-block by sub-block so that x is updated in cache before it is used,
// and returns the new zᵀz.
func (b *basis) updatePair(x []float64, xScale float64, s []float64, q int, z []float64, zScale float64, c []float64) float64 {
	forBlocks(b.n, func(_, blk, lo, hi int) {
		var zz float64
		for sub := lo; sub < hi; sub += subBlockRows {
			end := min(sub+subBlockRows, hi)
			xb, zb := x[sub:end], z[sub:end]
			floats.Scale(xScale, xb)
			floats.Scale(zScale, zb)
			l := 0
			for ; l+4 <= q; l += 4 {
				axpy4x2(xb, zb, s[l:l+4], c[l:l+4], b.v[l*b.n+sub:l*b.n+end], b.v[(l+1)*b.n+sub:(l+1)*b.n+end],
					b.v[(l+2)*b.n+sub:(l+2)*b.n+end], b.v[(l+3)*b.n+sub:(l+3)*b.n+end])
			}
			if r := q - l; r > 0 {
				// The last one to three vectors, the missing slots with
				// zero coefficients (fma(−0, v, x) = x).
				var vs [4][]float64
				var sr, cr [4]float64
				for i := range 4 {
					vs[i] = b.v[(l+min(i, r-1))*b.n+sub : (l+min(i, r-1))*b.n+end]
					if i < r {
						sr[i], cr[i] = s[l+i], c[l+i]
					}
				}
				axpy4x2(xb, zb, sr[:], cr[:], vs[0], vs[1], vs[2], vs[3])
			}
			floats.AddScaled(zb, -c[q], xb)
			zz += floats.Dot(zb, zb)
		}
		b.partial[blk*b.stride] = zz
	})
	var zz float64
	for blk := range b.blocks {
		zz += b.partial[blk*b.stride]
	}
	return zz
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
//
// Each goroutine forms the p output columns for one sub-block of
// rotateRows rows at a time in a scratch that stays in its cache, two
// columns by four basis vectors per call of axpy4x2, then copies them out.
func (b *basis) multiplyTo(dst []float64, ldd, q, p int, qmat []float64, ldq int) {
	workers := workersFor(b.n)
	scratch := make([][]float64, workers)
	for i := range scratch {
		scratch[i] = make([]float64, (p+1)*rotateRows)
	}
	forBlocks(b.n, func(worker, _, lo, hi int) {
		for sub := lo; sub < hi; sub += rotateRows {
			end := min(sub+rotateRows, hi)
			rows := end - sub
			s := scratch[worker][:(p+1)*rows]
			clear(s)
			for c := 0; c < p; c += 2 {
				// Columns c and c+1 (a dummy past the last).
				x, z := s[c*rows:(c+1)*rows], s[(c+1)*rows:(c+2)*rows]
				c1 := min(c+1, p-1)
				var cx, cz [4]float64
				l := 0
				for ; l+4 <= q; l += 4 {
					for i := range 4 {
						cx[i] = -qmat[(l+i)*ldq+c]
						cz[i] = -qmat[(l+i)*ldq+c1]
						if c+1 == p {
							cz[i] = 0
						}
					}
					axpy4x2(x, z, cx[:], cz[:], b.v[l*b.n+sub:l*b.n+end], b.v[(l+1)*b.n+sub:(l+1)*b.n+end],
						b.v[(l+2)*b.n+sub:(l+2)*b.n+end], b.v[(l+3)*b.n+sub:(l+3)*b.n+end])
				}
				for ; l < q; l++ {
					v := b.v[l*b.n+sub : l*b.n+end]
					v = v[:rows]
					a := qmat[l*ldq+c]
					for i, vi := range v {
						x[i] = math.FMA(a, vi, x[i])
					}
					if c+1 < p {
						a := qmat[l*ldq+c+1]
						for i, vi := range v {
							z[i] = math.FMA(a, vi, z[i])
						}
					}
				}
			}
			for c := range p {
				copy(dst[c*ldd+sub:c*ldd+end], s[c*rows:(c+1)*rows])
			}
		}
	})
}

// rotateRows is the number of rows of the sub-blocks of multiplyTo: with
// p ≤ 60 output columns its scratch of (p+1)·rotateRows numbers (under
// 0.5 MB) stays in a core's L2 cache.
const rotateRows = 1024

// dots4x2 adds v_iᵀx to sx[i] and v_iᵀz to sz[i] for the four vectors
// v_0…v_3, reading x and z once. Each sum is formed in four lanes (row r
// into lane r mod 4) by fused multiply–adds, the lanes added as
// (l0 + l1) + (l2 + l3), then the rows past the last multiple of 4 added
// in order. The AVX2 kernel and the portable loop follow exactly this
// order, and math.FMA is exactly rounded everywhere, so the result is the
// same bytes on every machine.
func dots4x2(sx, sz []float64, v0, v1, v2, v3, x, z []float64) {
	n := len(x)
	v0, v1, v2, v3, z = v0[:n], v1[:n], v2[:n], v3[:n], z[:n]
	var acc [32]float64 // acc[8k+lane]: v_k·x; acc[8k+4+lane]: v_k·z
	body := n &^ 3
	if useFMA4 && body > 0 {
		dots4x2Asm(&v0[0], &v1[0], &v2[0], &v3[0], &x[0], &z[0], body, &acc)
	} else {
		vs := [4][]float64{v0, v1, v2, v3}
		for i := 0; i < body; i += 4 {
			for lane := range 4 {
				xi, zi := x[i+lane], z[i+lane]
				for k, v := range vs {
					a := v[i+lane]
					acc[8*k+lane] = math.FMA(a, xi, acc[8*k+lane])
					acc[8*k+4+lane] = math.FMA(a, zi, acc[8*k+4+lane])
				}
			}
		}
	}
	vs := [4][]float64{v0, v1, v2, v3}
	for k, v := range vs {
		ax := (acc[8*k] + acc[8*k+1]) + (acc[8*k+2] + acc[8*k+3])
		az := (acc[8*k+4] + acc[8*k+5]) + (acc[8*k+6] + acc[8*k+7])
		for i := body; i < n; i++ {
			ax = math.FMA(v[i], x[i], ax)
			az = math.FMA(v[i], z[i], az)
		}
		sx[k] += ax
		sz[k] += az
	}
}

// axpy4x2 performs x ← x − Σ_i s[i] v_i and z ← z − Σ_i c[i] v_i over
// the four vectors v_0…v_3, reading and writing x and z once, each entry
// by four nested fused multiply–adds in the order v_0…v_3 (the AVX2 kernel
// does the same, so the bytes do not depend on the machine).
func axpy4x2(x, z, s, c []float64, v0, v1, v2, v3 []float64) {
	n := len(x)
	v0, v1, v2, v3, z = v0[:n], v1[:n], v2[:n], v3[:n], z[:n]
	coef := [8]float64{-s[0], -s[1], -s[2], -s[3], -c[0], -c[1], -c[2], -c[3]}
	start := 0
	if body := n &^ 3; useFMA4 && body > 0 {
		axpy4x2Asm(&x[0], &z[0], body, &coef, &v0[0], &v1[0], &v2[0], &v3[0])
		start = body
	}
	s0, s1, s2, s3 := coef[0], coef[1], coef[2], coef[3]
	c0, c1, c2, c3 := coef[4], coef[5], coef[6], coef[7]
	for i := start; i < n; i++ {
		a, b, cc, d := v0[i], v1[i], v2[i], v3[i]
		x[i] = math.FMA(s3, d, math.FMA(s2, cc, math.FMA(s1, b, math.FMA(s0, a, x[i]))))
		z[i] = math.FMA(c3, d, math.FMA(c2, cc, math.FMA(c1, b, math.FMA(c0, a, z[i]))))
	}
}
