package ulam

import (
	"math"
	"runtime"
	"slices"

	"gonum.org/v1/gonum/integrate/quad"

	"crosspec/dynsys"
)

// blockCells is the number of source cells per block of the 1D assembly:
// fixed, so the matrix is the same whatever the number of goroutines.
const blockCells = 1 << 9

// chebyshevNodes is the number of Chebyshev nodes on which the pushforward
// of a lap narrower than a cell is interpolated (see narrowGroup).
const chebyshevNodes = 16

// piece is the part of a lap inside one block whose image lies in the
// domain: x in [lo, hi], f(lo) = ylo, f(hi) = yhi.
type piece struct {
	lap      int
	lo, hi   float64
	ylo, yhi float64
}

// narrowGroup is a run of consecutive laps that lie inside one source cell
// and share their image [c, d]. Their contribution to the cell's row is
// P_ij = (1/h) ∫_{B_j ∩ [c,d]} Σ_l w(x_l(y)) |x_l'(y)| dy with x_l the
// inverse branch of lap l: the integrand is interpolated at Chebyshev nodes
// of [c, d] (inverse branches computed to full precision), summed over the
// laps, and its antiderivative evaluated at the target edges. This replaces
// N+1 root finds per lap by chebyshevNodes, and is exact to the
// interpolation error, negligible for laps that are smooth and narrow
// (the Gauss map's laps near 0 are the branches 1/(k+y), analytic in a
// Bernstein ellipse of parameter ≈ 2k).
type narrowGroup struct {
	cell       int
	first, end int // laps[first:end]
	c, d       float64
}

// item is a piece or a narrow group, in the order of x.
type item struct {
	x     float64
	piece *piece
	group *narrowGroup
}

type block1D struct {
	i0, i1 int
	items  []item
	bound  int // upper bound on its entries
	offset int // start of its slot in the entry arrays
}

// assemble1D builds the exact Ulam matrix of a 1D map on the grid g.
func assemble1D(sys *dynsys.System, g Grid, wt weight, set *Settings) (*Matrix, error) {
	ls, err := sys.Laps(set.Laps)
	if err != nil {
		return nil, err
	}
	n := g.Shape[0]
	lo, hi := g.Lo[0], g.Hi[0]
	laps := ls.Laps

	// Classify the laps: one inside a single cell is narrow.
	cellLeft := func(x float64) int { return g.firstEdgeAbove(x) - 1 } // cell containing x from the right
	cellRight := func(x float64) int { return g.lastEdgeBelow(x) }     // cell containing x from the left
	blocks := make([]block1D, (n+blockCells-1)/blockCells)
	for b := range blocks {
		blocks[b].i0, blocks[b].i1 = b*blockCells, min((b+1)*blockCells, n)
	}
	blockOf := func(cell int) int { return cell / blockCells }
	for li := 0; li < len(laps); li++ {
		l := laps[li]
		if c := cellLeft(l.Lo); c == cellRight(l.Hi) && c >= 0 && c < n {
			// A run of narrow laps in cell c with the same image.
			end := li + 1
			for end < len(laps) && cellLeft(laps[end].Lo) == c && cellRight(laps[end].Hi) == c &&
				laps[end].ImageLo() == l.ImageLo() && laps[end].ImageHi() == l.ImageHi() {
				end++
			}
			grp := &narrowGroup{cell: c, first: li, end: end, c: l.ImageLo(), d: l.ImageHi()}
			ya, yb := max(grp.c, lo), min(grp.d, hi)
			if yb > ya {
				blk := &blocks[blockOf(c)]
				blk.items = append(blk.items, item{x: l.Lo, group: grp})
				blk.bound += max(0, g.lastEdgeBelow(yb)-g.firstEdgeAbove(ya)+1) + 1
			}
			li = end - 1
			continue
		}
		// A wide lap: clip it to the part whose image lies in the domain.
		xa, ya, xb, yb, ok := sys.ClipLap(l, lo, hi)
		if !ok {
			continue
		}
		for b := blockOf(max(cellLeft(xa), 0)); b < len(blocks); b++ {
			x0, x1 := g.Edge(0, blocks[b].i0), g.Edge(0, blocks[b].i1)
			if x0 >= xb {
				break
			}
			u0, u1 := max(xa, x0), min(xb, x1)
			if u1 <= u0 {
				continue
			}
			p := &piece{lap: li, lo: u0, hi: u1, ylo: ya, yhi: yb}
			ymin, ymax := min(ya, yb), max(ya, yb)
			if u0 != xa {
				p.ylo = min(max(sys.F(u0), ymin), ymax)
			}
			if u1 != xb {
				p.yhi = min(max(sys.F(u1), ymin), ymax)
			}
			pmin, pmax := min(p.ylo, p.yhi), max(p.ylo, p.yhi)
			edges := max(0, g.lastEdgeBelow(u1)-g.firstEdgeAbove(u0)+1)
			targets := max(0, g.lastEdgeBelow(pmax)-g.firstEdgeAbove(pmin)+1)
			blocks[b].items = append(blocks[b].items, item{x: u0, piece: p})
			blocks[b].bound += edges + targets + 1
		}
	}
	total := 0
	for b := range blocks {
		blk := &blocks[b]
		slices.SortStableFunc(blk.items, func(p, q item) int {
			switch {
			case p.x < q.x:
				return -1
			case p.x > q.x:
				return 1
			}
			return 0
		})
		blk.offset = total
		total += blk.bound
	}

	// The output arrays are zeroed by the allocator: a memory-bound pass
	// over 50 MB at 10⁶ cells, shared out among the cores.
	var (
		rowPtr, col, cells []int
		val, deriv         []float64
	)
	parallel(
		func() { col = make([]int, total) },
		func() {
			val = make([]float64, total)
			if wt.deriv {
				deriv = make([]float64, total)
			}
		},
		func() {
			rowPtr = make([]int, n+1)
			cells = make([]int, n)
		},
	)
	nq := set.Quadrature
	qx, qw := make([]float64, nq), make([]float64, nq)
	quad.Legendre{}.FixedLocations(qx, qw, -1, 1)

	// Each block writes its entries into its slot, sorts and merges them
	// there (compute); then, in block order, they are moved down to close
	// the gaps left by the blocks before it and the block's row counts
	// become row pointers (place). counts[b] is the number of entries of
	// block b; write is where the placed entries end.
	counts := make([]int, len(blocks))
	write := 0
	workers := make([]*assembler1D, runtime.GOMAXPROCS(0))
	compute := func(worker, b int) {
		blk := &blocks[b]
		for i := blk.i0; i < blk.i1; i++ {
			cells[i] = i
		}
		if len(blk.items) == 0 {
			return
		}
		a := workers[worker]
		if a == nil {
			a = &assembler1D{
				sys: sys, g: g, laps: laps, wt: wt.clone(),
				col: col, val: val, deriv: deriv, rowCount: rowPtr[1:],
				qx: qx, qw: qw, obsBuf: make([]float64, 1),
				solver: newSolver1D(sys), widthRow: -1,
			}
			workers[worker] = a
		}
		a.pos = blk.offset
		a.mustMerge = false
		a.base = blk.i0
		a.edges = grow(a.edges, blk.i1-blk.i0+1)
		a.invWidth = grow(a.invWidth, blk.i1-blk.i0)
		for c := blk.i0; c <= blk.i1; c++ {
			a.edges[c-blk.i0] = g.Edge(0, c)
		}
		for c := blk.i0; c < blk.i1; c++ {
			a.invWidth[c-blk.i0] = 1 / (a.edges[c+1-blk.i0] - a.edges[c-blk.i0])
		}
		for _, it := range blk.items {
			if it.piece != nil {
				a.sweep(it.piece)
			} else {
				a.narrow(it.group)
			}
		}
		counts[b] = a.pos - blk.offset
		if a.mustMerge {
			counts[b] = mergeRows(col, val, deriv, rowPtr[1:], blk.i0, blk.i1, blk.offset)
		}
	}
	place := func(b int) {
		blk := &blocks[b]
		if count := counts[b]; write != blk.offset && count > 0 {
			copy(col[write:], col[blk.offset:blk.offset+count])
			copy(val[write:], val[blk.offset:blk.offset+count])
			if deriv != nil {
				copy(deriv[write:], deriv[blk.offset:blk.offset+count])
			}
		}
		// Row counts to row pointers.
		end := write
		for i := blk.i0; i < blk.i1; i++ {
			end += rowPtr[i+1]
			rowPtr[i+1] = end
		}
		write = end
	}
	forEachBlockOrdered(len(blocks), compute, place)
	m := &Matrix{
		Grid:           g,
		Cells:          cells,
		RowPtr:         rowPtr,
		Col:            col[:write:write],
		Val:            val[:write:write],
		ExcludedLength: ls.ExcludedLength,
		GridCells:      n,
	}
	if deriv != nil {
		m.Derivative = deriv[:write:write]
	}
	if sys.Closed && len(ls.Excluded) > 0 {
		excludedMass(m, ls.Excluded, wt)
	}
	return m, nil
}

// excludedMass handles the mass of the intervals E left out by the lap
// scan in a closed system. It must land somewhere in the domain, and the
// best estimate of where is the distribution of the resolved part of the
// same cell (for the Gauss map both are the images of runs of ever
// narrower full branches, nearly uniform on [0, 1]), or, for a cell that
// E covers wholly, that of the nearest cell with a resolved part. How much
// lands is known: the integrals of w and a·w over B_i ∩ E (excludedIntegrals).
// So row i becomes P_ij + (∫_{B_i∩E} w / h) π_ij and P'_ij +
// (∫_{B_i∩E} a·w / h) π_ij, with π_i the resolved row normalised to sum 1.
//
// The rows used to be scaled by h/(h − |B_i ∩ E|), which gives the excluded
// part the resolved part's average of a, and a wholly excluded cell kept
// an empty row, so its mass was lost. For the Gauss map's Lyapunov exponent
// (a = −2 ln x, largest on E = [0, 3.2e-5]) the errors on 1024 to 16384
// cells were 3.2e-4 to 1.2e-4 that way and are 1.4e-6 to 1.8e-7 now, and
// from 32768 cells on, where the first cell lies inside E, 8.6e-4 against
// 7e-8 (measured 2026-12-02). Where a or w is not finite on E (the map
// is undefined there) the old scaling stays, and a wholly excluded cell an
// empty row (its mass lost, as ExcludedLength says).
func excludedMass(m *Matrix, excluded []dynsys.Interval, wt weight) {
	g := m.Grid
	h := g.Width(0)
	n := g.Shape[0]
	// part is B_i ∩ E: its length and the integrals of w and a·w.
	type part struct{ length, w, aw float64 }
	parts := map[int]part{}
	w1 := wt.clone()
	for _, e := range excluded {
		for i := max(g.firstEdgeAbove(e.Lo)-1, 0); i < n && g.Edge(0, i) < e.Hi; i++ {
			a, b := max(e.Lo, g.Edge(0, i)), min(e.Hi, g.Edge(0, i+1))
			if !(b > a) {
				continue
			}
			iw, iaw := excludedIntegrals(&w1, a, b)
			p := parts[i]
			parts[i] = part{p.length + b - a, p.w + iw, p.aw + iaw}
		}
	}
	rowSum := func(i int) float64 {
		var s float64
		for k := m.RowPtr[i]; k < m.RowPtr[i+1]; k++ {
			s += m.Val[k]
		}
		return s
	}
	resolved := func(i int) bool { return parts[i].length < h && rowSum(i) > 0 }
	finite := func(p part) bool {
		return !math.IsNaN(p.w) && !math.IsInf(p.w, 0) && !math.IsNaN(p.aw) && !math.IsInf(p.aw, 0)
	}
	// source[i] is the row whose distribution row i takes: its own, or
	// the nearest resolved one's.
	source := map[int]int{}
	for i, p := range parts {
		switch {
		case resolved(i):
			source[i] = i
		case finite(p):
			for d := 1; d < n; d++ {
				if j := i - d; j >= 0 && resolved(j) {
					source[i] = j
					break
				}
				if j := i + d; j < n && resolved(j) {
					source[i] = j
					break
				}
			}
		}
	}
	// The distributions, before any row changes.
	dist := map[int][]float64{}
	for i, src := range source {
		sum := rowSum(src)
		lo, hi := m.RowPtr[src], m.RowPtr[src+1]
		pi := make([]float64, hi-lo)
		for k := lo; k < hi; k++ {
			pi[k-lo] = m.Val[k] / sum
		}
		dist[i] = pi
	}
	// Rows that borrow another row's distribution take its columns.
	borrowed := map[int][]int{}
	for i, src := range source {
		if src != i {
			borrowed[i] = m.Col[m.RowPtr[src]:m.RowPtr[src+1]]
		}
	}
	if len(borrowed) > 0 {
		m.setRows(borrowed)
	}
	for i, p := range parts {
		lo, hi := m.RowPtr[i], m.RowPtr[i+1]
		pi, ok := dist[i]
		switch {
		case ok && finite(p) && hi-lo == len(pi):
			for k := lo; k < hi; k++ {
				m.Val[k] += p.w / h * pi[k-lo]
				if m.Derivative != nil {
					m.Derivative[k] += p.aw / h * pi[k-lo]
				}
			}
		case resolved(i):
			// a or w undefined on E: the resolved part's averages.
			sc := h / (h - p.length)
			for k := lo; k < hi; k++ {
				m.Val[k] *= sc
				if m.Derivative != nil {
					m.Derivative[k] *= sc
				}
			}
		}
	}
}

// setRows replaces each row i of rows by the columns rows[i] with zero
// values, rebuilding the arrays.
func (m *Matrix) setRows(rows map[int][]int) {
	n := m.Dim()
	extra := 0
	for _, c := range rows {
		extra += len(c)
	}
	nnz := len(m.Col) + extra
	rowPtr := make([]int, n+1)
	col := make([]int, 0, nnz)
	val := make([]float64, 0, nnz)
	var deriv []float64
	if m.Derivative != nil {
		deriv = make([]float64, 0, nnz)
	}
	for i := range n {
		lo, hi := m.RowPtr[i], m.RowPtr[i+1]
		c, ok := rows[i]
		if !ok {
			c = m.Col[lo:hi]
			val = append(val, m.Val[lo:hi]...)
			if deriv != nil {
				deriv = append(deriv, m.Derivative[lo:hi]...)
			}
		} else {
			val = append(val, make([]float64, len(c))...)
			if deriv != nil {
				deriv = append(deriv, make([]float64, len(c))...)
			}
		}
		col = append(col, c...)
		rowPtr[i+1] = len(col)
	}
	m.RowPtr, m.Col, m.Val, m.Derivative = rowPtr, col, val, deriv
}

// excludedIntegrals returns ∫ w and ∫ a·w over [a, b] by 32-point
// Gauss–Legendre quadrature after the substitution x = a + (b − a)(3t² −
// 2t³), t in [0, 1], whose Jacobian 6t(1 − t)(b − a) vanishes at both ends
// and so tames integrable singularities of a there (ln|f'| = −2 ln x of the
// Gauss map at 0). Not finite when w or a is not on [a, b].
func excludedIntegrals(wt *weight, a, b float64) (iw, iaw float64) {
	buf := make([]float64, 1)
	for q, t := range excludedNodes {
		x := a + (b-a)*t*t*(3-2*t)
		jac := 6 * t * (1 - t) * (b - a) * excludedWeights[q]
		obs := wt.observable1(x, buf)
		w := math.Exp(wt.beta * obs)
		iw += jac * w
		iaw += jac * obs * w
	}
	return iw, iaw
}

// excludedNodes and excludedWeights are the 32-point Gauss–Legendre rule
// on [0, 1] (gonum's quad.Legendre).
var excludedNodes, excludedWeights = func() ([]float64, []float64) {
	x, w := make([]float64, 32), make([]float64, 32)
	quad.Legendre{}.FixedLocations(x, w, 0, 1)
	return x, w
}()

// assembler1D writes the entries of one block into its slot.
type assembler1D struct {
	sys      *dynsys.System
	g        Grid
	laps     []dynsys.Lap
	wt       weight
	col      []int
	val      []float64
	deriv    []float64
	rowCount []int
	pos      int
	qx, qw   []float64
	obsBuf   []float64
	solver   *solver1D
	targets  []float64
	pre      []float64
	widthRow int // the row whose width is cached in width
	width    float64
	// edges and invWidth hold the edges of the block's cells from cell
	// base on and the reciprocals of their widths.
	base            int
	edges, invWidth []float64
	// mustMerge is set when a row of the block may hold more than one
	// run of columns, or a run not increasing.
	mustMerge bool
}

// emit adds the piece [a, b] of source cell i mapped into target cell t.
func (a *assembler1D) emit(i, t int, x0, x1 float64) {
	if !(x1 > x0) || t < 0 || t >= a.g.Shape[0] {
		return
	}
	var v, dv float64
	if i != a.widthRow {
		a.widthRow, a.width = i, a.g.Edge(0, i+1)-a.g.Edge(0, i)
	}
	h := a.width
	if a.wt.uniform {
		v = (x1 - x0) / h
	} else {
		mid, half := 0.5*(x0+x1), 0.5*(x1-x0)
		for q, t := range a.qx {
			x := mid + half*t
			obs := a.wt.observable1(x, a.obsBuf)
			w := math.Exp(a.wt.beta * obs)
			v += a.qw[q] * w
			dv += a.qw[q] * obs * w
		}
		v *= half / h
		dv *= half / h
		if a.wt.obs == NoObservable || a.wt.beta == 0 {
			v = (x1 - x0) / h
		}
	}
	a.col[a.pos] = t
	a.val[a.pos] = v
	if a.deriv != nil {
		a.deriv[a.pos] = dv
	}
	a.pos++
	a.rowCount[i]++
	a.mustMerge = true
}

// sweep walks a piece from left to right, cutting it at the source cell
// edges and at the preimages of the target cell edges.
func (a *assembler1D) sweep(p *piece) {
	g := a.g
	l := a.laps[p.lap]
	ymin, ymax := min(p.ylo, p.yhi), max(p.ylo, p.yhi)
	jFirst, jLast := g.firstEdgeAbove(ymin), g.lastEdgeBelow(ymax)
	m := max(0, jLast-jFirst+1)
	a.targets = grow(a.targets, m)
	targets := a.targets[:m]
	var t, step int
	if l.Increasing {
		for k := range targets {
			targets[k] = g.Edge(0, jFirst+k)
		}
		t, step = jFirst-1, 1
	} else {
		for k := range targets {
			targets[k] = g.Edge(0, jLast-k)
		}
		t, step = jLast, -1
	}
	a.pre = grow(a.pre, m)
	pre := a.pre[:m]
	a.solver.gridPreimages(pre, targets, p.lo, p.hi, p.ylo, p.yhi, l)
	i := g.firstEdgeAbove(p.lo) - 1
	lastEdge := g.lastEdgeBelow(p.hi)
	if a.wt.uniform {
		a.sweepUniform(pre, i, lastEdge, t, step, p.lo, p.hi)
		return
	}
	nextEdge := math.Inf(1)
	if i+1 <= lastEdge {
		nextEdge = g.Edge(0, i+1)
	}
	pos, k := p.lo, 0
	for pos < p.hi {
		next := p.hi
		if nextEdge < next {
			next = nextEdge
		}
		if k < m && pre[k] < next {
			next = pre[k]
		}
		a.emit(i, t, pos, next)
		if nextEdge == next {
			i++
			nextEdge = math.Inf(1)
			if i+1 <= lastEdge {
				nextEdge = g.Edge(0, i+1)
			}
		}
		for k < m && pre[k] <= next {
			t += step
			k++
		}
		pos = max(pos, next)
	}
}

// sweepUniform is sweep's walk for the weight w = 1, where an entry is the
// length of its piece over the cell width: source cells i … lastCell
// (lastCell the largest edge index below x1) cut by the preimages pre of
// the target edges, met in the order of t += step starting in target cell
// t, on [x0, x1]. Each cell receives one run of consecutive columns, which
// on a decreasing lap is written from its right end so that every run is
// increasing; only a row that receives a second run (a cell shared by two
// laps) leaves the block to be merged. A piece of zero length (a preimage
// on a cell edge) is left out.
func (a *assembler1D) sweepUniform(pre []float64, i, lastCell, t, step int, x0, x1 float64) {
	n := uint(a.g.Shape[0])
	col, val, rowCount := a.col, a.val, a.rowCount
	edges, invWidth := a.edges, a.invWidth // of the block's cells, from a.base
	w := a.pos
	k := 0
	for c := i; c <= lastCell; c++ {
		left, right := x0, x1
		if c > i {
			left = edges[c-a.base]
		}
		if c < lastCell {
			right = edges[c+1-a.base]
		}
		iw := invWidth[c-a.base]
		start := w
		first := k
		for k < len(pre) && pre[k] < right {
			k++
		}
		// The preimages pre[first:k] are non-decreasing and lie in
		// [left, right): the pieces are [left, pre[first]], …,
		// [pre[k−1], right], in target cells t, t+step, … .
		if step > 0 {
			pos := left
			for _, x := range pre[first:k] {
				if x > pos && uint(t) < n {
					col[w] = t
					val[w] = (x - pos) * iw
					w++
				}
				pos = x
				t++
			}
			if right > pos && uint(t) < n {
				col[w] = t
				val[w] = (right - pos) * iw
				w++
			}
		} else {
			t -= k - first // the target of [pre[k−1], right]
			end := right
			for q := k - 1; q >= first; q-- {
				x := pre[q]
				if end > x && uint(t) < n {
					col[w] = t
					val[w] = (end - x) * iw
					w++
				}
				end = x
				t++
			}
			if end > left && uint(t) < n {
				col[w] = t
				val[w] = (end - left) * iw
				w++
			}
			t -= k - first // back to the target of [pre[k−1], right]
		}
		if rowCount[c] > 0 {
			a.mustMerge = true
		}
		rowCount[c] += w - start
	}
	a.pos = w
}

// narrow emits the row entries of a group of narrow laps (see narrowGroup).
func (a *assembler1D) narrow(grp *narrowGroup) {
	const p = chebyshevNodes
	var nodes, theta [p]float64
	for k := range p {
		theta[k] = math.Pi * (float64(k) + 0.5) / p
		nodes[k] = 0.5*(grp.c+grp.d) + 0.5*(grp.d-grp.c)*math.Cos(theta[k])
	}
	// nodes decrease with k; sort ascending for the solver.
	ys := make([]float64, p)
	for k := range p {
		ys[k] = nodes[p-1-k]
	}
	var coef, dcoef [p + 2]float64
	xs := make([]float64, p)
	rev := make([]float64, p)
	for li := grp.first; li < grp.end; li++ {
		l := a.laps[li]
		if l.Increasing {
			a.solver.preimages(xs, ys, l.Lo, l.Hi, l.FLo, l.FHi, l)
		} else {
			for k := range p {
				rev[k] = ys[p-1-k]
			}
			a.solver.preimages(xs, rev, l.Lo, l.Hi, l.FLo, l.FHi, l)
			slices.Reverse(xs)
		}
		// xs[k] is the preimage of ys[k] = nodes[p-1-k].
		for k := range p {
			x := xs[p-1-k] // preimage of nodes[k]
			jac := 1 / math.Abs(a.sys.DF(x))
			w, aw := 1.0, 0.0
			if !a.wt.uniform {
				obs := a.wt.observable1(x, a.obsBuf)
				w = math.Exp(a.wt.beta * obs)
				aw = obs * w
				if a.wt.obs == NoObservable || a.wt.beta == 0 {
					w = 1
				}
			}
			for n := range p {
				c := math.Cos(float64(n) * theta[k])
				coef[n] += w * jac * c
				dcoef[n] += aw * jac * c
			}
		}
	}
	scale := 0.5 * (grp.d - grp.c)
	anti := antiderivative(coef[:], scale)
	var dAnti []float64
	if a.deriv != nil {
		dAnti = antiderivative(dcoef[:], scale)
	}
	g := a.g
	h := g.Edge(0, grp.cell+1) - g.Edge(0, grp.cell)
	ya, yb := max(grp.c, g.Lo[0]), min(grp.d, g.Hi[0])
	tOf := func(y float64) float64 { return (2*y - grp.c - grp.d) / (grp.d - grp.c) }
	prev := ya
	fPrev := clenshaw(anti, tOf(prev))
	var dPrev float64
	if dAnti != nil {
		dPrev = clenshaw(dAnti, tOf(prev))
	}
	for t := g.firstEdgeAbove(ya) - 1; t < g.Shape[0]; t++ {
		next := min(g.Edge(0, t+1), yb)
		fNext := clenshaw(anti, tOf(next))
		v := (fNext - fPrev) / h
		if v > 0 {
			a.col[a.pos] = t
			a.val[a.pos] = v
			if a.deriv != nil {
				dNext := clenshaw(dAnti, tOf(next))
				a.deriv[a.pos] = (dNext - dPrev) / h
				dPrev = dNext
			}
			a.pos++
			a.rowCount[grp.cell]++
			a.mustMerge = true
		} else if dAnti != nil {
			dPrev = clenshaw(dAnti, tOf(next))
		}
		prev, fPrev = next, fNext
		if next >= yb {
			break
		}
	}
	_ = prev
}

// antiderivative turns the sums c_n = Σ_k g(t_k) cos(nθ_k) over p
// Chebyshev nodes into the Chebyshev coefficients of the antiderivative of
// the interpolant of g in y = mid + scale·t (constant term zero). With
// a_n = (2/p) c_n (a_0 = c_0/p) the interpolant is Σ a_n T_n and
// ∫ Σ a_n T_n dt = Σ_{n≥1} (a'_{n−1} − a_{n+1})/(2n) T_n, a'_0 = 2a_0.
func antiderivative(c []float64, scale float64) []float64 {
	p := len(c) - 2
	a := make([]float64, p+2)
	for n := range p {
		a[n] = 2 * c[n] / float64(p)
	}
	// a[0] is already the doubled coefficient a'_0 of the formula.
	out := make([]float64, p+1)
	for n := 1; n <= p; n++ {
		out[n] = scale * (a[n-1] - a[n+1]) / float64(2*n)
	}
	return out
}

// clenshaw evaluates Σ_n c_n T_n(t).
func clenshaw(c []float64, t float64) float64 {
	var b1, b2 float64
	for n := len(c) - 1; n >= 1; n-- {
		b1, b2 = 2*t*b1-b2+c[n], b1
	}
	return t*b1 - b2 + c[0]
}

// mergeRows sorts the entries of rows i0 … i1−1 (contiguous from offset,
// counted in rowCount) by column, sums duplicates and packs them from
// offset on. It returns the number of entries kept.
func mergeRows(col []int, val, deriv []float64, rowCount []int, i0, i1, offset int) int {
	read, write := offset, offset
	for i := i0; i < i1; i++ {
		cnt := rowCount[i]
		c, v := col[read:read+cnt], val[read:read+cnt]
		var dv []float64
		if deriv != nil {
			dv = deriv[read : read+cnt]
		}
		if read == write && increasing(c) {
			// Sorted, duplicate-free and in place: nothing to do.
			read += cnt
			write += cnt
			continue
		}
		if !increasing(c) {
			if decreasing(c) {
				slices.Reverse(c)
				slices.Reverse(v)
				if dv != nil {
					slices.Reverse(dv)
				}
			} else {
				sortEntries(c, v, dv)
			}
		}
		// Pack, summing duplicates.
		kept := 0
		for k := range cnt {
			if kept > 0 && col[write+kept-1] == c[k] {
				val[write+kept-1] += v[k]
				if dv != nil {
					deriv[write+kept-1] += dv[k]
				}
				continue
			}
			col[write+kept] = c[k]
			val[write+kept] = v[k]
			if dv != nil {
				deriv[write+kept] = dv[k]
			}
			kept++
		}
		rowCount[i] = kept
		read += cnt
		write += kept
	}
	return write - offset
}

func increasing(c []int) bool {
	for k := 1; k < len(c); k++ {
		if c[k] <= c[k-1] {
			return false
		}
	}
	return true
}

func decreasing(c []int) bool {
	for k := 1; k < len(c); k++ {
		if c[k] >= c[k-1] {
			return false
		}
	}
	return true
}

// sortEntries sorts the entries by column, stably (so that duplicates are
// summed in emission order, the same on every run).
func sortEntries(c []int, v, dv []float64) {
	idx := make([]int, len(c))
	for k := range idx {
		idx[k] = k
	}
	slices.SortStableFunc(idx, func(p, q int) int { return c[p] - c[q] })
	c2 := make([]int, len(c))
	v2 := make([]float64, len(v))
	for k, p := range idx {
		c2[k], v2[k] = c[p], v[p]
	}
	copy(c, c2)
	copy(v, v2)
	if dv != nil {
		d2 := make([]float64, len(dv))
		for k, p := range idx {
			d2[k] = dv[p]
		}
		copy(dv, d2)
	}
}
