package ulam

import (
	"math"

	"crosspec/dynsys"
)

// solver1D finds many preimages on one monotone piece of a lap at once,
// using the system's batch evaluation (a few ns a point, against tens of ns
// for a single call). The targets are bracketed by sampling the piece on a
// uniform grid as fine as the targets are many — consecutive targets have
// consecutive brackets, so one walk finds them all. Each target starts from
// inverse quadratic interpolation of the three samples around it, x(y)
// through (y_a, x_a), error O(h³ f”/f') for a sample spacing h, which on a
// smooth lap at the grid's resolution is already below one ulp; it is then
// refined by a safeguarded secant iteration inside its bracket, all targets
// of the piece together, one batch evaluation per round. A target is done
// when the secant step falls below 4|x|ε or its bracket below 8|x|ε: full
// double precision, as Brent's method (System.Preimage) would give, which
// serves as the fallback for a bracket that sampling round-off spoils.
// Smooth laps need one round after the sampling, which confirms the start.
type solver1D struct {
	sys    *dynsys.System
	sx, sy []float64
	// The iteration of target k, in separate arrays for the batch rounds:
	// its bracket [lo, hi] with residuals glo, ghi of opposite signs, the
	// current point x and the previous one xp with its residual gp.
	lo, hi, glo, ghi, x, xp, gp []float64
	// best is the point with the smallest residual |gbest| met so far.
	best, gbest []float64
	active      []int32
	bx, by      []float64
	// Scratch of gridPreimages: the coarse targets and their preimages,
	// the predicted points, their images and slopes dx/dy.
	cy, cx, px, py, pd []float64
	// accepted and rejected count the coarse steps of gridPreimages whose
	// targets kept the corrected prediction or went to the bracketed
	// solver.
	accepted, rejected int
}

func newSolver1D(sys *dynsys.System) *solver1D { return &solver1D{sys: sys} }

// maxSecantRounds bounds the refinement; a target still moving then keeps
// the point of smallest residual met (it has met the round-off floor of f,
// where secant steps between residuals of pure noise wander off).
const maxSecantRounds = 12

func grow[T any](s []T, n int) []T {
	if cap(s) < n {
		return make([]T, n, n+n/4)
	}
	return s[:n]
}

// preimages writes into dst the x in [u0, u1] with f(x) = ys[k], where f is
// monotone on [u0, u1] with f(u0) = f0, f(u1) = f1, and ys is ordered as
// the preimages are (increasing in x). l is the lap, for the fallback.
func (s *solver1D) preimages(dst, ys []float64, u0, u1, f0, f1 float64, l dynsys.Lap) {
	m := len(ys)
	if m == 0 {
		return
	}
	dst = dst[:m]
	inc := f1 > f0
	// Sample the piece.
	samples := m + 1
	s.sx = grow(s.sx, samples+1)
	s.sy = grow(s.sy, samples+1)
	sx, sy := s.sx, s.sy
	step := (u1 - u0) / float64(samples)
	for k := 1; k < samples; k++ {
		sx[k] = u0 + step*float64(k)
	}
	sx[0], sx[samples] = u0, u1
	s.sys.MapBatch(sy[1:samples], sx[1:samples])
	sy[0], sy[samples] = f0, f1

	s.lo, s.hi = grow(s.lo, m), grow(s.hi, m)
	s.glo, s.ghi = grow(s.glo, m), grow(s.ghi, m)
	s.x, s.xp, s.gp = grow(s.x, m), grow(s.xp, m), grow(s.gp, m)
	s.best, s.gbest = grow(s.best, m), grow(s.gbest, m)
	best, gbest := s.best[:m], s.gbest[:m]
	s.active = s.active[:0]
	lo, hi, glo, ghi, xs, xp, gp := s.lo[:m], s.hi[:m], s.glo[:m], s.ghi[:m], s.x[:m], s.xp[:m], s.gp[:m]
	j := 0
	for k, y := range ys {
		if inc {
			for j < samples-1 && sy[j+1] <= y {
				j++
			}
		} else {
			for j < samples-1 && sy[j+1] >= y {
				j++
			}
		}
		a, b := sx[j], sx[j+1]
		ga, gb := sy[j]-y, sy[j+1]-y
		switch {
		case ga == 0:
			dst[k] = a
			continue
		case gb == 0:
			dst[k] = b
			continue
		case (ga > 0) == (gb > 0) || math.IsNaN(ga) || math.IsNaN(gb):
			dst[k] = s.fallback(l, y, u0, u1)
			continue
		}
		lo[k], hi[k], glo[k], ghi[k] = a, b, ga, gb
		// Start from inverse quadratic interpolation through the bracket
		// and its nearer outer neighbour, else from false position.
		c, gc := math.NaN(), math.NaN()
		if j > 0 {
			c, gc = sx[j-1], sy[j-1]-y
		} else if j+2 <= samples {
			c, gc = sx[j+2], sy[j+2]-y
		}
		// Newton's form in the residual g: x(0) = a − ga·[a,b] +
		// ga·gb·[a,b,c] with the divided differences of x over g, the
		// corrections to a small, so the round-off is that of a.
		dab, dbc := (b-a)/(gb-ga), (c-b)/(gc-gb)
		x := a - ga*dab + ga*gb*(dbc-dab)/(gc-ga)
		if !(x > a && x < b) {
			x = a - ga*(b-a)/(gb-ga)
			if !(x > a && x < b) {
				x = 0.5 * (a + b)
			}
		}
		xs[k] = x
		// The secant partner is the bracket end with the smaller residual.
		if math.Abs(ga) < math.Abs(gb) {
			xp[k], gp[k] = a, ga
		} else {
			xp[k], gp[k] = b, gb
		}
		best[k], gbest[k] = xp[k], math.Abs(gp[k])
		s.active = append(s.active, int32(k))
	}

	for round := 0; len(s.active) > 0; round++ {
		na := len(s.active)
		s.bx = grow(s.bx, na)
		s.by = grow(s.by, na)
		bx, by := s.bx[:na], s.by[:na]
		for q, k := range s.active {
			bx[q] = xs[k]
		}
		s.sys.MapBatch(by, bx)
		still := s.active[:0]
		for q, k := range s.active {
			x, gx := bx[q], by[q]-ys[k]
			if gx == 0 || math.IsNaN(gx) {
				if math.IsNaN(gx) {
					x = s.fallback(l, ys[k], u0, u1)
				}
				dst[k] = x
				continue
			}
			if math.Abs(gx) < gbest[k] {
				best[k], gbest[k] = x, math.Abs(gx)
			}
			if (gx > 0) == (glo[k] > 0) {
				lo[k], glo[k] = x, gx
			} else {
				hi[k], ghi[k] = x, gx
			}
			a, b := lo[k], hi[k]
			next := math.NaN()
			if dx := x - xp[k]; dx != 0 {
				if slope := (gx - gp[k]) / dx; slope != 0 {
					next = x - gx/slope
				}
			}
			tiny := max(math.Abs(x)*0x1p-52, 0x1p-1074)
			if math.IsNaN(next) && math.Abs(x-xp[k]) <= 4*tiny {
				// Two points within round-off with the same residual: f
				// cannot tell them apart, and x is a root to full
				// precision.
				dst[k] = x
				continue
			}
			if round == maxSecantRounds {
				// The residuals are round-off: keep the best point.
				dst[k] = best[k]
				continue
			}
			if math.Abs(next-x) <= 4*tiny || b-a <= 8*tiny {
				if next >= a && next <= b {
					dst[k] = next
				} else {
					dst[k] = x
				}
				continue
			}
			if !(next > a && next < b) {
				next = a - glo[k]*(b-a)/(ghi[k]-glo[k])
				if !(next > a && next < b) {
					next = 0.5 * (a + b)
				}
			}
			xp[k], gp[k] = x, gx
			xs[k] = next
			still = append(still, k)
		}
		s.active = still
	}
	// Preimages of ordered targets are ordered: remove round-off
	// inversions and keep them inside the piece.
	prev := u0
	for k, x := range dst {
		if !(x >= prev) { // also catches NaN
			x = prev
		}
		if x > u1 {
			x = u1
		}
		dst[k] = x
		prev = x
	}
}

func (s *solver1D) fallback(l dynsys.Lap, y, u0, u1 float64) float64 {
	x, ok := s.sys.Preimage(l, y)
	if !ok {
		// y is at an end of the piece up to round-off.
		if math.Abs(y-s.sys.F(u0)) < math.Abs(y-s.sys.F(u1)) {
			return u0
		}
		return u1
	}
	return min(max(x, u0), u1)
}

// gridStride is the number of equally spaced targets per coarse step of
// gridPreimages. The cubic's error grows like the fourth power of the
// step and the correction leaves its square, so at the cell counts where
// speed matters (10⁵ cells and more) a step of 32 targets is still far
// inside the acceptance test on smooth laps, at half the bracketed solves
// of a step of 16.
const gridStride = 32

// gridPreimages is preimages for targets ys that are equally spaced (the
// cell edges of a uniform grid met by a piece of a lap), by a
// coarse-to-fine continuation: the 1D assembly's hot path, two preimages a
// cell at 10⁶ cells. Every gridStride-th target is solved to full
// precision by preimages. Inside coarse step q the prediction is the cubic through the
// four nearest coarse solutions X_a, in the step's coordinate r ∈ [0, 1]
// (r = 1 at the next coarse target),
//
//	x̃(r) = X_q + r(c_1 + r(c_2 + r c_3)),   dx̃/dy = (c_1 + r(2c_2 + 3r c_3))/H,
//
// H the coarse spacing in y: one Horner evaluation a point. Then one Newton
// step with the cubic's slope, x = x̃ − (f(x̃) − y)·dx̃/dy, all targets of the
// piece in one batch evaluation. The step leaves an error of about c·(c/D)
// for a correction c and the coarse step's width D in x, so a coarse step
// keeps its points when every |c| ≤ √(D·2⁻⁵⁸|x|) (an error below a
// sixty-fourth of an ulp) and every point lies inside the step's bracket
// [X_q, X_{q+1}]; otherwise the bracketed solver redoes the step. Pieces
// with fewer than five coarse targets go to preimages directly. The
// results are non-decreasing: within a kept step a point below its
// predecessor (round-off) is raised to it.
func (s *solver1D) gridPreimages(dst, ys []float64, u0, u1, f0, f1 float64, l dynsys.Lap) {
	const K = gridStride
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

	// Predict the targets inside the coarse steps, K−1 a step.
	var rs [K - 1]float64
	for k := range rs {
		rs[k] = float64(k+1) / K
	}
	fine := (nc - 1) * (K - 1)
	s.px, s.py, s.pd = grow(s.px, fine), grow(s.py, fine), grow(s.pd, fine)
	px, py, pd := s.px[:fine], s.py[:fine], s.pd[:fine]
	perY := float64(nc-1) / (cy[nc-1] - cy[0]) // 1/H
	for q := 0; q < nc-1; q++ {
		b := min(max(q-1, 0), nc-4)
		c1, c2, c3 := cubicInStep(cx[b], cx[b+1], cx[b+2], cx[b+3], q-b)
		x0 := cx[q]
		sx := (*[K - 1]float64)(px[q*(K-1):])
		sd := (*[K - 1]float64)(pd[q*(K-1):])
		for k, r := range &rs {
			sx[k] = x0 + r*(c1+r*(c2+r*c3))
			sd[k] = (c1 + r*(2*c2+3*r*c3)) * perY
		}
	}
	s.sys.MapBatch(py, px)

	// Correct, and check each coarse step.
	for q := 0; q < nc-1; q++ {
		lo, hi := cx[q], cx[q+1]
		dst[q*K] = lo
		j := q*K + 1
		out := (*[K - 1]float64)(dst[j:])
		target := (*[K - 1]float64)(ys[j:])
		sx := (*[K - 1]float64)(px[q*(K-1):])
		sy := (*[K - 1]float64)(py[q*(K-1):])
		sd := (*[K - 1]float64)(pd[q*(K-1):])
		// A NaN fails every test.
		largest := math.Sqrt((hi - lo) * max(math.Abs(lo), math.Abs(hi), 0x1p-1022) * 0x1p-58)
		ok := hi > lo
		prev := lo
		for k := range out {
			c := (sy[k] - target[k]) * sd[k]
			x := sx[k] - c
			if !(math.Abs(c) <= largest && x >= lo && x <= hi) {
				ok = false
			}
			if x < prev {
				x = prev
			}
			out[k] = x
			prev = x
		}
		if ok {
			s.accepted++
		} else {
			s.rejected++
			s.preimages(out[:], target[:], lo, hi, cy[q], cy[q+1], l)
		}
	}
	dst[(nc-1)*K] = cx[nc-1]
	// The targets after the last coarse one.
	if last := (nc - 1) * K; last < m-1 {
		s.preimages(dst[last+1:], ys[last+1:], cx[nc-1], u1, cy[nc-1], f1, l)
	}
}

// cubicInStep returns the coefficients c_1, c_2, c_3 of the cubic through
// (s, x_s), s = 0 … 3, written about node o in the variable r = s − o:
// x = x_o + r(c_1 + r(c_2 + r c_3)), Newton's forward-difference form
// re-expanded about o (c_k is the k-th derivative at o over k!).
func cubicInStep(x0, x1, x2, x3 float64, o int) (c1, c2, c3 float64) {
	// Forward differences of the equally spaced nodes.
	d1a, d1b, d1c := x1-x0, x2-x1, x3-x2
	d2a, d2b := d1b-d1a, d1c-d1b
	d3 := d2b - d2a
	// x(s) = x0 + s d1a + s(s−1)/2 d2a + s(s−1)(s−2)/6 d3; expand about
	// s = o + r: the derivatives at o divided by 1!, 2!, 3!.
	s := float64(o)
	c1 = d1a + (2*s-1)/2*d2a + (3*s*s-6*s+2)/6*d3
	c2 = d2a/2 + (s-1)/2*d3
	c3 = d3 / 6
	return c1, c2, c3
}
