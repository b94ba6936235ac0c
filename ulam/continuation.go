package ulam

import (
	"math"

	"crosspec/dynsys"
)

// coarseStride is the number of equally spaced targets per coarse step of
// edgePreimages: one target in coarseStride is solved by the bracketed
// solver, the others are interpolated from those and corrected once.
const coarseStride = 16

// stencilWeights[o][r] are the cubic Lagrange weights, and stencilSlopes
// [o][r] their derivatives in the node coordinate, of the four nodes
// 0, 1, 2, 3 at the point o + r/coarseStride (o = 0, 1, 2 is the position
// of the coarse step inside the four-node stencil).
var stencilWeights, stencilSlopes = func() (w, d [3][coarseStride][4]float64) {
	for o := range 3 {
		for r := 1; r < coarseStride; r++ {
			s := float64(o) + float64(r)/coarseStride
			w[o][r] = [4]float64{
				-(s - 1) * (s - 2) * (s - 3) / 6,
				s * (s - 2) * (s - 3) / 2,
				-s * (s - 1) * (s - 3) / 2,
				s * (s - 1) * (s - 2) / 6,
			}
			d[o][r] = [4]float64{
				-((s-2)*(s-3) + (s-1)*(s-3) + (s-1)*(s-2)) / 6,
				((s-2)*(s-3) + s*(s-3) + s*(s-2)) / 2,
				-((s-1)*(s-3) + s*(s-3) + s*(s-1)) / 2,
				((s-1)*(s-2) + s*(s-2) + s*(s-1)) / 6,
			}
		}
	}
	return w, d
}()

// edgePreimages is preimages for targets ys that are equally spaced (the
// cell edges of a uniform grid met by a piece of a lap), by a coarse-to-
// fine continuation. Every coarseStride-th target is solved to full
// precision by preimages; each target in between starts from the cubic
// through the four nearest coarse solutions, x̃ = Σ L_a(s) X_a, whose
// error on the smooth inverse branch x(y) is E = O(H⁴ x⁗) for the coarse
// spacing H in y, and takes one Newton step with the slope of the same
// cubic, x = x̃ − (f(x̃) − y)·dx̃/dy, evaluated for all targets in one
// batch. The step leaves an error of E·δ, δ = |1 − f'·dx̃/dy| ≈ E/D the
// relative error of the slope (D the coarse spacing in x), so a coarse step
// is accepted when the largest correction c of its targets has c²/D below
// 2⁻⁵⁸|x|, a sixty-fourth of an ulp, and every corrected point lies inside
// the step's bracket; otherwise its targets go to the bracketed solver
// (near a critical point, where x⁗ is large, or at a lap end). Pieces with
// fewer than four coarse steps go to preimages directly.
func (s *solver1D) edgePreimages(dst, ys []float64, u0, u1, f0, f1 float64, l dynsys.Lap) {
	const K = coarseStride
	m := len(ys)
	nc := (m-1)/K + 1 // coarse targets ys[0], ys[K], …, ys[(nc−1)K]
	if nc < 5 {
		s.preimages(dst, ys, u0, u1, f0, f1, l)
		return
	}
	dst = dst[:m]
	s.cy, s.cx = grow(s.cy, nc), grow(s.cx, nc)
	cy, cx := s.cy[:nc], s.cx[:nc]
	for q := range cy {
		cy[q] = ys[q*K]
	}
	s.preimages(cx, cy, u0, u1, f0, f1, l)
	for q, x := range cx {
		dst[q*K] = x
	}

	// Predict the targets inside the coarse steps.
	fine := (nc - 1) * (K - 1)
	s.px, s.py, s.pd = grow(s.px, fine), grow(s.py, fine), grow(s.pd, fine)
	px, py, pd := s.px[:fine], s.py[:fine], s.pd[:fine]
	dsdy := float64(nc-1) / (cy[nc-1] - cy[0]) // the coarse steps per unit of y
	p := 0
	for q := 0; q < nc-1; q++ {
		b := min(max(q-1, 0), nc-4)
		x0, x1, x2, x3 := cx[b], cx[b+1], cx[b+2], cx[b+3]
		o := q - b
		for r := 1; r < K; r++ {
			w, d := &stencilWeights[o][r], &stencilSlopes[o][r]
			px[p] = w[0]*x0 + w[1]*x1 + w[2]*x2 + w[3]*x3
			pd[p] = (d[0]*x0 + d[1]*x1 + d[2]*x2 + d[3]*x3) * dsdy
			p++
		}
	}
	s.sys.MapBatch(py, px)

	// Correct, and check each coarse step.
	p = 0
	for q := 0; q < nc-1; q++ {
		lo, hi := cx[q], cx[q+1]
		ok := hi > lo
		var worst float64
		// A NaN image leaves x NaN, which fails the bracket test.
		for r := 1; r < K; r++ {
			j := q*K + r
			c := (py[p] - ys[j]) * pd[p]
			x := px[p] - c
			dst[j] = x
			if c = math.Abs(c); c > worst {
				worst = c
			}
			ok = ok && x >= lo && x <= hi
			p++
		}
		limit := (hi - lo) * max(math.Abs(lo), math.Abs(hi), 0x1p-1022) * 0x1p-58
		if ok && worst*worst <= limit {
			s.accepted++
		} else {
			s.rejected++
			j := q*K + 1
			s.preimages(dst[j:j+K-1], ys[j:j+K-1], lo, hi, cy[q], cy[q+1], l)
		}
	}
	// The targets after the last coarse one.
	if last := (nc - 1) * K; last < m-1 {
		s.preimages(dst[last+1:], ys[last+1:], cx[nc-1], u1, cy[nc-1], f1, l)
	}
	// Preimages of ordered targets are ordered: remove round-off
	// inversions and keep them inside the piece.
	prev := u0
	for k, x := range dst {
		if !(x >= prev) {
			x = prev
		}
		if x > u1 {
			x = u1
		}
		dst[k] = x
		prev = x
	}
}
