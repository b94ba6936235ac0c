package ulam

import (
	"math"
	"runtime"

	"crosspec/dynsys"
)

// sampledCells is the number of cells per block of the sampled assembly,
// fixed so the matrix does not depend on the number of goroutines.
const sampledCells = 1 << 10

// assembleSampled builds the Ulam matrix of a d-dimensional map from q^d
// test points per cell: P_ij = (1/q^d) Σ_{points x of cell i, f(x) ∈ B_j}
// w(x), the midpoint rule for (1/m(B_i)) ∫_{B_i ∩ f⁻¹(B_j)} w. Points whose
// image leaves the box escape. It runs twice over the cells, first counting
// each row's distinct targets and then writing them, so the only large
// allocations are the CSR arrays themselves.
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
	var col []int
	var val, deriv []float64

	type scratch struct {
		xs, ys  []float64
		targets []int32
		cells   []int32
		w, aw   []float64
		wt      weight
	}
	scratches := make([]*scratch, runtime.GOMAXPROCS(0))
	work := func(pass int) {
		forEachBlock(blocks, func(worker, b int) {
			c0, c1 := b*sampledCells, min((b+1)*sampledCells, n)
			cells := c1 - c0
			sc := scratches[worker]
			if sc == nil {
				sc = &scratch{
					xs:      make([]float64, sampledCells*perCell*d),
					ys:      make([]float64, sampledCells*perCell*d),
					targets: make([]int32, perCell),
					cells:   make([]int32, sampledCells*perCell),
					w:       make([]float64, perCell),
					aw:      make([]float64, perCell),
					wt:      wt.clone(),
				}
				scratches[worker] = sc
			}
			sc.xs, sc.ys = sc.xs[:cells*perCell*d], sc.ys[:cells*perCell*d]
			samplePoints(sc.xs, g, c0, c1, q)
			sys.MapBatch(sc.ys, sc.xs)
			inv := make([]float64, d)
			for k := range d {
				inv[k] = float64(g.Shape[k]) / (g.Hi[k] - g.Lo[k])
			}
			tg, tw, taw := sc.targets, sc.w, sc.aw
			cellsOf(sc.cells[:cells*perCell], sc.ys, g, inv)
			for c := c0; c < c1; c++ {
				base := (c - c0) * perCell
				// Collect the distinct targets of the cell's points, with
				// their summed weights.
				nt := 0
				for p, t := range sc.cells[base : base+perCell] {
					if t < 0 {
						continue
					}
					w, aw := 1.0, 0.0
					if !wt.uniform {
						x := sc.xs[(base+p)*d : (base+p+1)*d]
						w, aw = sc.wt.at(x)
					}
					q := 0
					for q < nt && tg[q] != t {
						q++
					}
					if q == nt {
						tg[q], tw[q], taw[q] = t, 0, 0
						nt++
					}
					tw[q] += w
					taw[q] += aw
				}
				if pass == 0 {
					rowPtr[c+1] = nt
					continue
				}
				for a := 1; a < nt; a++ {
					for b := a; b > 0 && tg[b] < tg[b-1]; b-- {
						tg[b], tg[b-1] = tg[b-1], tg[b]
						tw[b], tw[b-1] = tw[b-1], tw[b]
						taw[b], taw[b-1] = taw[b-1], taw[b]
					}
				}
				at := rowPtr[c]
				for q := range nt {
					col[at+q] = int(tg[q])
					val[at+q] = tw[q] / float64(perCell)
					if deriv != nil {
						deriv[at+q] = taw[q] / float64(perCell)
					}
				}
			}
		})
	}
	work(0)
	for i := range n {
		rowPtr[i+1] += rowPtr[i]
	}
	nnz := rowPtr[n]
	col = make([]int, nnz)
	val = make([]float64, nnz)
	if wt.deriv {
		deriv = make([]float64, nnz)
	}
	work(1)
	m := &Matrix{Grid: g, Cells: make([]int, n), RowPtr: rowPtr, Col: col, Val: val, Derivative: deriv, GridCells: n}
	for i := range m.Cells {
		m.Cells[i] = i
	}
	return m, nil
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
