package ulam

import (
	"math"
	"runtime"

	"crosspec/dynsys"
)

// sampledCells is the number of cells per block of the sampled assembly,
// fixed so the matrix does not depend on the number of goroutines.
const sampledCells = 1 << 10

// sampledChunk is the number of cells whose test points are mapped in one
// batch: small enough for the points, their images and their cells to stay
// in the first-level caches.
const sampledChunk = 64

// assembleSampled builds the Ulam matrix of a d-dimensional map from q^d
// test points per cell: P_ij = (1/q^d) Σ_{points x of cell i, f(x) ∈ B_j}
// w(x), the midpoint rule for (1/m(B_i)) ∫_{B_i ∩ f⁻¹(B_j)} w. Points whose
// image leaves the box escape. It runs twice over the cells, first counting
// each row's distinct targets and then writing them, so the only large
// allocations are the CSR arrays themselves (storing the image cells
// between the passes would take 4q^d bytes a cell, more than the matrix).
func assembleSampled(sys *dynsys.System, g Grid, wt weight, set *Settings) (*Matrix, error) {
	d := g.Dim()
	q := max(1, int(math.Round(math.Pow(float64(set.Points), 1/float64(d)))))
	perCell := 1
	for range d {
		perCell *= q
	}
	n := g.Cells()
	blocks := (n + sampledCells - 1) / sampledCells
	rowPtr := make([]int, n+1)
	m := &Matrix{Grid: g, RowPtr: rowPtr, GridCells: n}

	// The cells' lower corners and the test points' offsets in a cell,
	// per dimension.
	edges := make([][]float64, d)
	offsets := make([][]float64, d)
	inv := make([]float64, d)
	for k := range d {
		edges[k] = make([]float64, g.Shape[k])
		for i := range edges[k] {
			edges[k][i] = g.Edge(k, i)
		}
		offsets[k] = make([]float64, q)
		for s := range q {
			offsets[k][s] = g.Width(k) * (float64(s) + 0.5) / float64(q)
		}
		inv[k] = float64(g.Shape[k]) / (g.Hi[k] - g.Lo[k])
	}
	samplers := make([]*sampler, runtime.GOMAXPROCS(0))
	work := func(pass int) {
		forEachBlock(blocks, func(worker, b int) {
			sc := samplers[worker]
			if sc == nil {
				sc = &sampler{
					sys: sys, g: g, d: d, q: q, perCell: perCell, edges: edges, offsets: offsets, inv: inv,
					xs:      make([]float64, sampledChunk*perCell*d),
					ys:      make([]float64, sampledChunk*perCell*d),
					cells:   make([]int32, sampledChunk*perCell),
					targets: make([]int32, perCell),
					counts:  make([]int32, perCell),
					w:       make([]float64, perCell),
					aw:      make([]float64, perCell),
					wt:      wt.clone(),
				}
				samplers[worker] = sc
			}
			c0, c1 := b*sampledCells, min((b+1)*sampledCells, n)
			for c := c0; c < c1; c += sampledChunk {
				sc.chunk(m, pass, c, min(c+sampledChunk, c1))
			}
		})
	}
	work(0)
	for i := range n {
		rowPtr[i+1] += rowPtr[i]
	}
	nnz := rowPtr[n]
	m.Cells = make([]int, n)
	m.Col = make([]int, nnz)
	m.Val = make([]float64, nnz)
	if wt.deriv {
		m.Derivative = make([]float64, nnz)
	}
	work(1)
	return m, nil
}

// sampler holds one goroutine's scratch space for assembleSampled.
type sampler struct {
	sys             *dynsys.System
	g               Grid
	d, q, perCell   int
	edges, offsets  [][]float64
	inv             []float64
	xs, ys          []float64
	cells           []int32
	targets, counts []int32
	w, aw           []float64
	wt              weight
}

// chunk handles the cells c0 … c1−1: in pass 0 it stores each row's number
// of distinct targets in RowPtr[c+1]; in pass 1 it writes the rows (RowPtr
// then holds their starts) and the cells' indices.
func (sc *sampler) chunk(m *Matrix, pass, c0, c1 int) {
	d, perCell := sc.d, sc.perCell
	points := (c1 - c0) * perCell
	xs, ys, cells := sc.xs[:points*d], sc.ys[:points*d], sc.cells[:points]
	sc.samplePoints(xs, c0, c1)
	sc.sys.MapBatch(ys, xs)
	cellsOf(cells, ys, sc.g, sc.inv)
	if pass == 1 {
		for c := c0; c < c1; c++ {
			m.Cells[c] = c
		}
	}
	tg, cnt := sc.targets, sc.counts
	uniform := sc.wt.uniform
	for c := c0; c < c1; c++ {
		base := (c - c0) * perCell
		// Collect the distinct targets of the cell's points; consecutive
		// points mostly share their target.
		nt := 0
		last, lastAt := int32(-1), 0
		for p, t := range cells[base : base+perCell] {
			if t < 0 {
				continue
			}
			if t != last {
				lastAt = 0
				for lastAt < nt && tg[lastAt] != t {
					lastAt++
				}
				if lastAt == nt {
					tg[nt], cnt[nt] = t, 0
					if !uniform {
						sc.w[nt], sc.aw[nt] = 0, 0
					}
					nt++
				}
				last = t
			}
			cnt[lastAt]++
			if !uniform {
				x := xs[(base+p)*d : (base+p+1)*d]
				w, aw := sc.wt.at(x)
				sc.w[lastAt] += w
				sc.aw[lastAt] += aw
			}
		}
		if pass == 0 {
			m.RowPtr[c+1] = nt
			continue
		}
		// Sort by target, insertion (nt is small).
		tw, taw := sc.w, sc.aw
		for a := 1; a < nt; a++ {
			for b := a; b > 0 && tg[b] < tg[b-1]; b-- {
				tg[b], tg[b-1] = tg[b-1], tg[b]
				cnt[b], cnt[b-1] = cnt[b-1], cnt[b]
				if !uniform {
					tw[b], tw[b-1] = tw[b-1], tw[b]
					taw[b], taw[b-1] = taw[b-1], taw[b]
				}
			}
		}
		at := m.RowPtr[c]
		col, val := m.Col[at:at+nt], m.Val[at:at+nt]
		for q := range col {
			col[q] = int(tg[q])
			if uniform {
				// A sum of cnt ones, exactly cnt.
				val[q] = float64(cnt[q]) / float64(perCell)
			} else {
				val[q] = tw[q] / float64(perCell)
			}
		}
		if m.Derivative != nil {
			for q, v := range taw[:nt] {
				m.Derivative[at+q] = v / float64(perCell)
			}
		}
	}
}

// samplePoints writes the test points of cells c0 … c1−1 into xs (d
// coordinates a point, row-major): the centres of a q×…×q subdivision of
// each cell.
func (sc *sampler) samplePoints(xs []float64, c0, c1 int) {
	g, q := sc.g, sc.q
	if sc.d == 2 {
		m1 := g.Shape[1]
		e0, e1 := sc.edges[0], sc.edges[1]
		o0, o1 := sc.offsets[0], sc.offsets[1]
		p := 0
		for c := c0; c < c1; c++ {
			lo0, lo1 := e0[c/m1], e1[c%m1]
			for _, a := range o0 {
				x0 := lo0 + a
				for _, b := range o1 {
					xs[p], xs[p+1] = x0, lo1+b
					p += 2
				}
			}
		}
		return
	}
	samplePoints(xs, g, c0, c1, q)
}

// samplePoints writes the q^d test points of cells c0 … c1−1 into xs
// (row-major, d coordinates a point): the centres of a q×…×q subdivision.
func samplePoints(xs []float64, g Grid, c0, c1, q int) {
	d := g.Dim()
	perCell := len(xs) / ((c1 - c0) * d)
	offsets := make([]float64, perCell*d)
	idx := make([]int, d)
	for s := range perCell {
		rest := s
		for k := d - 1; k >= 0; k-- {
			idx[k] = rest % q
			rest /= q
		}
		for k := range d {
			offsets[s*d+k] = g.Width(k) * (float64(idx[k]) + 0.5) / float64(q)
		}
	}
	lower := make([]float64, d)
	p := 0
	for c := c0; c < c1; c++ {
		rest := c
		for k := d - 1; k >= 0; k-- {
			i := rest % g.Shape[k]
			rest /= g.Shape[k]
			lower[k] = g.Edge(k, i)
		}
		for s := range perCell {
			for k := range d {
				xs[p] = lower[k] + offsets[s*d+k]
				p++
			}
		}
	}
}

// cellsOf writes into dst the cell of each point of ys (d coordinates a
// point) by index arithmetic, or -1 for a point outside the box (or not
// finite). inv holds Shape[k]/(Hi[k] − Lo[k]).
func cellsOf(dst []int32, ys []float64, g Grid, inv []float64) {
	d := g.Dim()
	ys = ys[:len(dst)*d]
	if d == 2 {
		lo0, hi0, inv0, m0 := g.Lo[0], g.Hi[0], inv[0], g.Shape[0]
		lo1, hi1, inv1, m1 := g.Lo[1], g.Hi[1], inv[1], g.Shape[1]
		for p := range dst {
			y0, y1 := ys[2*p], ys[2*p+1]
			if !(y0 >= lo0 && y0 <= hi0 && y1 >= lo1 && y1 <= hi1) {
				dst[p] = -1
				continue
			}
			i0 := min(int((y0-lo0)*inv0), m0-1)
			i1 := min(int((y1-lo1)*inv1), m1-1)
			dst[p] = int32(i0*m1 + i1)
		}
		return
	}
	for p := range dst {
		cell := 0
		for k, v := range ys[p*d : (p+1)*d] {
			if !(v >= g.Lo[k] && v <= g.Hi[k]) {
				cell = -1
				break
			}
			i := min(int((v-g.Lo[k])*inv[k]), g.Shape[k]-1)
			cell = cell*g.Shape[k] + i
		}
		dst[p] = int32(cell)
	}
}
