package ulam

import (
	"math"
	"runtime"
	"slices"

	"crosspec/dynsys"
)

// affineMaxDepth is how many times a triangle is cut into four when the
// map is not close to affine on it (a jump, strong curvature); beyond
// that, the image of its centroid takes the whole triangle. A line across
// a cell meets at most 4·2^D of its triangles at depth D, of area 4^−D/2
// each: at most 2^(1−D) of the cell is misplaced, 2^−7 for D = 8, in rows
// that are a fraction of order h of all when the jumps lie on curves. Each
// level doubles the work along a jump (the cat map's 2^16 cells: 1.7 s at
// D = 8, 4.1 s at D = 10).
const affineMaxDepth = 8

// affineChunk is the number of cells whose lattice points are mapped in
// one batch.
const affineChunk = 64

// affineBend is the largest distance, in cells of the grid, between the
// image of an edge's midpoint and the midpoint of the chord between the
// images of its ends before the triangle is cut. An affine map has none; a
// smooth one on a triangle of width h has at most h²/8 times its largest
// second derivative, a small fraction of a cell on the grids crosspec
// uses, so in practice jumps cut triangles, and curvature only on grids too
// coarse to resolve the map. (A fold bends a triangle no more than the
// curvature does: it is not detected, and the cells it crosses get the
// affine map's unfolded image.)
const affineBend = 0.25

// assembleAffine2D builds the Ulam matrix of a 2D map from piecewise-affine
// images, not test points. Each cell is cut along its diagonal into two
// triangles; on each, the map is replaced by the affine map through the
// images of the triangle's corners, and the image triangle is clipped
// against the grid. The fraction of its area in cell j is the fraction of
// the source triangle that lands in B_j, exactly for an affine map, so
// P_ij = (1/m(B_i)) Σ_triangles ∫_{T ∩ f⁻¹(B_j)} w is exact for
// piecewise-affine maps whose pieces the grid resolves, and has an error of
// order h² in position (h the cell width) for smooth ones. Test points
// instead give each entry a counting error of order 1/q for q points per
// side that does not shrink with h: the Ulam estimates of an open system
// then stop converging (measured on the catalog's skew-cantor and
// horseshoe, see the README).
//
// The weight w and a·w are interpolated linearly from the triangle's
// corners and integrated exactly over each piece. Parts of the image
// outside the box escape; for a closed system (whose box is invariant) the
// pieces inside are scaled up to the whole image instead, so rows keep
// their mass where the affine image pokes out of the box.
func assembleAffine2D(sys *dynsys.System, g Grid, wt weight) (*Matrix, error) {
	n := g.Cells()
	blocks := (n + sampledCells - 1) / sampledCells
	m := &Matrix{Grid: g, GridCells: n, RowPtr: make([]int, n+1), Cells: make([]int, n)}
	workers := make([]*affineAssembler, runtime.GOMAXPROCS(0))
	// Two passes, as assembleSampled makes, so that the only large
	// allocations are the CSR arrays: the first stores each row's length in
	// RowPtr[c+1], the second writes the rows where RowPtr then says.
	run := func(emit func(c int, targets []int, val, deriv []float64)) {
		forEachBlock(blocks, func(worker, b int) {
			a := workers[worker]
			if a == nil {
				a = newAffineAssembler(sys, g, wt)
				workers[worker] = a
			}
			c0, c1 := b*sampledCells, min((b+1)*sampledCells, n)
			for c := c0; c < c1; c += affineChunk {
				a.chunk(c, min(c+affineChunk, c1), emit)
			}
		})
	}
	run(func(c int, targets []int, _, _ []float64) {
		m.RowPtr[c+1] = len(targets)
	})
	for c := range n {
		m.RowPtr[c+1] += m.RowPtr[c]
		m.Cells[c] = c
	}
	nnz := m.RowPtr[n]
	m.Col, m.Val = make([]int, nnz), make([]float64, nnz)
	if wt.deriv {
		m.Derivative = make([]float64, nnz)
	}
	run(func(c int, targets []int, val, deriv []float64) {
		at := m.RowPtr[c]
		if len(targets) != m.RowPtr[c+1]-at {
			panic("ulam: the two passes of the 2D assembly disagree")
		}
		copy(m.Col[at:], targets)
		copy(m.Val[at:], val)
		if m.Derivative != nil {
			copy(m.Derivative[at:], deriv)
		}
	})
	return m, nil
}

// vec2 is a point of the plane.
type vec2 struct{ x, y float64 }

// corner is a triangle's corner: the point, its image in cell units of the
// grid, and the weights w and a·w there.
type corner struct {
	p, f  vec2
	w, aw float64
}

// affineAssembler holds one goroutine's scratch space for assembleAffine2D.
type affineAssembler struct {
	sys    *dynsys.System
	g      Grid
	wt     weight
	closed bool
	h      vec2 // cell widths
	inv    vec2 // cells per unit length
	xs, ys []float64
	buf    []float64 // one point and its image
	// The targets of the current cell and their sums of w and a·w
	// (times the source triangles' area in cells).
	tg    []int
	w, aw []float64
	// The pieces of the current triangle's image, with their integrals,
	// before they are added to the targets (a closed system rescales them).
	pieces []imagePiece
	poly   [2]polygon
}

// imagePiece is the part of an image triangle in one cell.
type imagePiece struct {
	cell  int
	area  float64 // in cells
	w, aw float64 // integrals of the interpolated w and a·w, in cells
}

func newAffineAssembler(sys *dynsys.System, g Grid, wt weight) *affineAssembler {
	return &affineAssembler{
		sys: sys, g: g, wt: wt.clone(), closed: sys.Closed,
		inv: vec2{float64(g.Shape[0]) / (g.Hi[0] - g.Lo[0]), float64(g.Shape[1]) / (g.Hi[1] - g.Lo[1])},
		xs:  make([]float64, affineChunk*9*2),
		ys:  make([]float64, affineChunk*9*2),
		buf: make([]float64, 4),
	}
}

// chunk assembles the rows of the cells c0 … c1−1 and hands each, sorted
// by target, to emit with its cell (the slices are reused afterwards).
func (a *affineAssembler) chunk(c0, c1 int, emit func(c int, targets []int, val, deriv []float64)) {
	g := a.g
	m1 := g.Shape[1]
	// The 3×3 lattice of each cell: corners, edge midpoints, centre.
	p := 0
	for c := c0; c < c1; c++ {
		// The cell's edges as Edge gives them, so that neighbouring cells
		// map the same points.
		i0, i1 := c/m1, c%m1
		xe := [3]float64{g.Edge(0, i0), 0, g.Edge(0, i0+1)}
		ye := [3]float64{g.Edge(1, i1), 0, g.Edge(1, i1+1)}
		xe[1], ye[1] = 0.5*(xe[0]+xe[2]), 0.5*(ye[0]+ye[2])
		for _, x := range xe {
			for _, y := range ye {
				a.xs[p], a.xs[p+1] = x, y
				p += 2
			}
		}
	}
	xs, ys := a.xs[:p], a.ys[:p]
	a.sys.MapBatch(ys, xs)
	var order, targets []int
	var val, deriv []float64
	lo, hi := vec2{g.Lo[0], g.Lo[1]}, vec2{g.Hi[0], g.Hi[1]}
	for c := c0; c < c1; c++ {
		base := (c - c0) * 18
		// All nine images beyond one side of the box: both triangles
		// escape whole (what straddles would find for each), so the row
		// is empty; most cells of an open map's box are such.
		var img [9]vec2
		for k := range img {
			img[k] = vec2{ys[base+2*k], ys[base+2*k+1]}
		}
		if beyondOneSide(img[:], lo, hi) {
			emit(c, nil, nil, nil)
			continue
		}
		var lat [9]corner
		for k := range lat {
			q := base + 2*k
			lat[k] = a.corner(vec2{xs[q], xs[q+1]}, vec2{ys[q], ys[q+1]})
		}
		// lat[3s+t] is the point (s, t) halves of a cell from the corner.
		a.tg, a.w, a.aw = a.tg[:0], a.w[:0], a.aw[:0]
		a.triangle([3]corner{lat[0], lat[6], lat[8]}, [3]corner{lat[3], lat[7], lat[4]}, 0.5, 0)
		a.triangle([3]corner{lat[0], lat[8], lat[2]}, [3]corner{lat[4], lat[5], lat[1]}, 0.5, 0)
		order = order[:0]
		for k := range a.tg {
			order = append(order, k)
		}
		slices.SortFunc(order, func(i, j int) int { return a.tg[i] - a.tg[j] })
		targets, val, deriv = targets[:0], val[:0], deriv[:0]
		for _, k := range order {
			targets = append(targets, a.tg[k])
			val = append(val, a.w[k])
			deriv = append(deriv, a.aw[k])
		}
		emit(c, targets, val, deriv)
	}
}

// corner returns the corner at p whose image is f, in cell units.
func (a *affineAssembler) corner(p, f vec2) corner {
	g := a.g
	c := corner{p: p, f: vec2{
		snap((f.x - g.Lo[0]) * a.inv.x),
		snap((f.y - g.Lo[1]) * a.inv.y),
	}, w: 1}
	if !a.wt.uniform {
		a.buf[0], a.buf[1] = p.x, p.y
		c.w, c.aw = a.wt.at(a.buf[:2])
	}
	return c
}

// snap puts a coordinate within 1e-9 of a cell edge on it: the images of
// a grid's edges under a map that the grid resolves exactly (a
// piecewise-affine one with its breaks on edges) land on edges but for
// round-off, which would otherwise leave slivers in the neighbouring cells.
func snap(u float64) float64 {
	if r := math.Round(u); math.Abs(u-r) <= 1e-9 {
		return r
	}
	return u
}

// eval returns the corner at p, mapping it.
func (a *affineAssembler) eval(p vec2) corner {
	a.buf[0], a.buf[1] = p.x, p.y
	a.sys.Map(a.buf[2:4], a.buf[:2])
	return a.corner(p, vec2{a.buf[2], a.buf[3]})
}

// triangle adds the triangle v (with the corners mid at the midpoints of
// its edges v0v1, v1v2, v2v0) to the current row; area is its area in
// cells.
func (a *affineAssembler) triangle(v, mid [3]corner, area float64, depth int) {
	if !a.straddles(v, mid) {
		return // the whole image escapes
	}
	finite := 0
	for k := range 3 {
		for _, f := range [2]vec2{v[k].f, mid[k].f} {
			if !math.IsNaN(f.x) && !math.IsNaN(f.y) {
				finite++
			}
		}
	}
	if finite == 0 {
		return // no image: the map is undefined there
	}
	bent := false
	for k := range 3 {
		f0, f1, fm := v[k].f, v[(k+1)%3].f, mid[k].f
		if !(math.Abs(fm.x-0.5*(f0.x+f1.x)) <= affineBend && math.Abs(fm.y-0.5*(f0.y+f1.y)) <= affineBend) {
			bent = true // also when an image is not finite
		}
	}
	if bent {
		if depth < affineMaxDepth {
			a.split(v, mid, area, depth)
			return
		}
		a.point(v, area)
		return
	}
	a.clip(v, area)
}

// straddles reports whether the images of the corners and midpoints do not
// all lie beyond one side of the box: the image may then cross it.
func (a *affineAssembler) straddles(v, mid [3]corner) bool {
	var pts [6]vec2
	for k := range 3 {
		pts[2*k], pts[2*k+1] = v[k].f, mid[k].f
	}
	return !beyondOneSide(pts[:], vec2{}, vec2{float64(a.g.Shape[0]), float64(a.g.Shape[1])})
}

// beyondOneSide reports whether every point lies on or beyond one and the
// same side of the box [lo, hi]. (A point that is not finite lies beyond
// no side.)
func beyondOneSide(pts []vec2, lo, hi vec2) bool {
	var left, right, below, above int
	for _, f := range pts {
		if f.x <= lo.x {
			left++
		}
		if f.x >= hi.x {
			right++
		}
		if f.y <= lo.y {
			below++
		}
		if f.y >= hi.y {
			above++
		}
	}
	n := len(pts)
	return left == n || right == n || below == n || above == n
}

// split cuts the triangle into four at its edges' midpoints.
func (a *affineAssembler) split(v, mid [3]corner, area float64, depth int) {
	half := func(p, q corner) corner {
		return a.eval(vec2{0.5 * (p.p.x + q.p.x), 0.5 * (p.p.y + q.p.y)})
	}
	kids := [4][3]corner{
		{v[0], mid[0], mid[2]},
		{mid[0], v[1], mid[1]},
		{mid[2], mid[1], v[2]},
		{mid[0], mid[1], mid[2]},
	}
	for _, k := range kids {
		a.triangle(k, [3]corner{half(k[0], k[1]), half(k[1], k[2]), half(k[2], k[0])}, area/4, depth+1)
	}
}

// point gives the whole triangle to the cell of its centroid's image.
func (a *affineAssembler) point(v [3]corner, area float64) {
	c := a.eval(vec2{(v[0].p.x + v[1].p.x + v[2].p.x) / 3, (v[0].p.y + v[1].p.y + v[2].p.y) / 3})
	i, j := math.Floor(c.f.x), math.Floor(c.f.y)
	m0, m1 := float64(a.g.Shape[0]), float64(a.g.Shape[1])
	if !(i >= 0 && i < m0 && j >= 0 && j < m1) {
		return
	}
	a.add(int(i)*a.g.Shape[1]+int(j), area*c.w, area*c.aw)
}

// clip adds the pieces of the affine image of the triangle v in the grid's
// cells.
func (a *affineAssembler) clip(v [3]corner, area float64) {
	f0, f1, f2 := v[0].f, v[1].f, v[2].f
	total := 0.5 * ((f1.x-f0.x)*(f2.y-f0.y) - (f2.x-f0.x)*(f1.y-f0.y))
	if !(math.Abs(total) > 1e-12) {
		// The image is a segment (a fold of the map, or a contraction to
		// far below a cell): no area to share out.
		a.point(v, area)
		return
	}
	m0, m1 := a.g.Shape[0], a.g.Shape[1]
	lo0 := max(0, int(math.Floor(min(f0.x, f1.x, f2.x))))
	hi0 := min(m0-1, int(math.Ceil(max(f0.x, f1.x, f2.x)))-1)
	a.pieces = a.pieces[:0]
	inBox := 0.0
	tri := polygon{n: 3}
	for k := range 3 {
		tri.c[0][k], tri.c[1][k] = v[k].f.x, v[k].f.y
	}
	for i := lo0; i <= hi0; i++ {
		col := &a.poly[0]
		if !tri.clip(col, 0, float64(i), float64(i+1)) {
			continue
		}
		ylo, yhi := col.yRange()
		lo1, hi1 := max(0, int(math.Floor(ylo))), min(m1-1, int(math.Ceil(yhi))-1)
		for j := lo1; j <= hi1; j++ {
			cell := &a.poly[1]
			if !col.clip(cell, 1, float64(j), float64(j+1)) {
				continue
			}
			ar, cx, cy := cell.moments()
			if !(ar > 1e-14*math.Abs(total)) {
				continue
			}
			// Barycentric coordinates of the piece's centroid in the image
			// triangle give the interpolated w and a·w there.
			l1 := ((cx-f0.x)*(f2.y-f0.y) - (f2.x-f0.x)*(cy-f0.y)) / (2 * total)
			l2 := ((f1.x-f0.x)*(cy-f0.y) - (cx-f0.x)*(f1.y-f0.y)) / (2 * total)
			l0 := 1 - l1 - l2
			pc := imagePiece{cell: i*m1 + j, area: ar, w: ar, aw: 0}
			if !a.wt.uniform {
				pc.w = ar * (l0*v[0].w + l1*v[1].w + l2*v[2].w)
				pc.aw = ar * (l0*v[0].aw + l1*v[1].aw + l2*v[2].aw)
			}
			a.pieces = append(a.pieces, pc)
			inBox += ar
		}
	}
	scale := area / math.Abs(total)
	if a.closed && inBox > 0 {
		scale = area / inBox
	}
	for _, pc := range a.pieces {
		a.add(pc.cell, scale*pc.w, scale*pc.aw)
	}
}

// add adds w and a·w to the current row's entry for the target cell.
func (a *affineAssembler) add(cell int, w, aw float64) {
	for k, t := range a.tg {
		if t == cell {
			a.w[k] += w
			a.aw[k] += aw
			return
		}
	}
	a.tg = append(a.tg, cell)
	a.w = append(a.w, w)
	a.aw = append(a.aw, aw)
}

// polygon is a convex polygon of at most 7 corners: a triangle clipped by
// the four sides of a cell. c[0] holds the first coordinates, c[1] the
// second.
type polygon struct {
	c [2][8]float64
	n int
}

// clip writes into dst the part of the polygon with lo ≤ coordinate axis ≤
// hi (Sutherland–Hodgman, one pair of parallel lines) and reports whether
// it has any corners.
func (p *polygon) clip(dst *polygon, axis int, lo, hi float64) bool {
	var mid polygon
	p.half(&mid, axis, lo, 1)
	mid.half(dst, axis, hi, -1)
	return dst.n >= 3
}

// half writes into dst the part of the polygon with sign·(coordinate − at)
// ≥ 0.
func (p *polygon) half(dst *polygon, axis int, at, sign float64) {
	dst.n = 0
	if p.n == 0 {
		return
	}
	u, v := &p.c[axis], &p.c[1-axis]
	du, dv := &dst.c[axis], &dst.c[1-axis]
	prev := p.n - 1
	dp := sign * (u[prev] - at)
	for k := range p.n {
		dk := sign * (u[k] - at)
		if (dk >= 0) != (dp >= 0) {
			// The side crosses the line: add the crossing, exactly on it.
			t := dp / (dp - dk)
			du[dst.n], dv[dst.n] = at, v[prev]+t*(v[k]-v[prev])
			dst.n++
		}
		if dk >= 0 {
			du[dst.n], dv[dst.n] = u[k], v[k]
			dst.n++
		}
		prev, dp = k, dk
	}
}

// yRange returns the smallest and largest second coordinate.
func (p *polygon) yRange() (lo, hi float64) {
	y := &p.c[1]
	lo, hi = y[0], y[0]
	for k := 1; k < p.n; k++ {
		lo, hi = min(lo, y[k]), max(hi, y[k])
	}
	return lo, hi
}

// moments returns the area and the centroid, by the shoelace formulas
// about the first corner.
func (p *polygon) moments() (area, cx, cy float64) {
	x, y := &p.c[0], &p.c[1]
	x0, y0 := x[0], y[0]
	var a2, sx, sy float64
	for k := 1; k+1 < p.n; k++ {
		ax, ay := x[k]-x0, y[k]-y0
		bx, by := x[k+1]-x0, y[k+1]-y0
		cr := ax*by - bx*ay
		a2 += cr
		sx += cr * (ax + bx)
		sy += cr * (ay + by)
	}
	if a2 == 0 {
		return 0, x0, y0
	}
	return math.Abs(a2) / 2, x0 + sx/(3*a2), y0 + sy/(3*a2)
}
