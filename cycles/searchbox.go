package cycles

import (
	"math"
	"slices"

	"crosspec/dynsys"
)

// boxGraph is the 0/1 transition graph of a box partition of the domain:
// cells of equal size, an edge i → j when f maps part of cell i into cell
// j. It belongs to the cycle search alone (seeds and a completeness bound);
// the package stays independent of the Ulam path.
//
// For a 1D map the edges are exact: on each lap the image of a cell is the
// interval between the lap branch's values at the cell's ends, so every
// cell the image meets gets an edge and the graph covers f. For d ≥ 2 the
// edges come from a regular grid of sample points in each cell, which
// resolves every transition only when the samples are dense compared with
// the cell size over the expansion rate.
type boxGraph struct {
	sys   *dynsys.System
	cells []int // cells per axis
	size  []float64
	total int
	edges [][]int32
	// core lists the cells left after removing, again and again, cells
	// without an edge into or from a remaining cell: the cells that meet
	// the set of points whose whole orbit (past and future) stays in the
	// domain, the recurrent part of the graph.
	core []int
}

func newBoxGraph(sys *dynsys.System, cellsPerAxis, samples int, lapSettings *dynsys.LapSettings) *boxGraph {
	d := sys.Dim()
	g := &boxGraph{sys: sys, cells: make([]int, d), size: make([]float64, d), total: 1}
	for i := range d {
		g.cells[i] = cellsPerAxis
		g.size[i] = (sys.Hi[i] - sys.Lo[i]) / float64(cellsPerAxis)
		g.total *= cellsPerAxis
	}
	g.edges = make([][]int32, g.total)
	if d == 1 {
		g.build1D(lapSettings)
	} else {
		if samples <= 0 {
			samples = 6
			if d > 2 {
				samples = 3
			}
		}
		g.buildSampled(samples)
	}
	g.prune()
	return g
}

// cellOf returns the index of the cell containing x, or −1 outside the
// domain.
func (g *boxGraph) cellOf(x []float64) int {
	idx := 0
	for i := len(x) - 1; i >= 0; i-- {
		v := x[i]
		if !(v >= g.sys.Lo[i] && v <= g.sys.Hi[i]) {
			return -1
		}
		k := min(int((v-g.sys.Lo[i])/g.size[i]), g.cells[i]-1)
		idx = idx*g.cells[i] + k
	}
	return idx
}

// center writes the center of cell c into dst.
func (g *boxGraph) center(dst []float64, c int) {
	for i := range dst {
		k := c % g.cells[i]
		c /= g.cells[i]
		dst[i] = g.sys.Lo[i] + (float64(k)+0.5)*g.size[i]
	}
}

func (g *boxGraph) build1D(lapSettings *dynsys.LapSettings) {
	lm, err := newLapMap(g.sys, lapSettings)
	if err != nil {
		return
	}
	lo, hi := g.sys.Lo[0], g.sys.Hi[0]
	n := g.cells[0]
	for c := range n {
		a, b := lo+float64(c)*g.size[0], lo+float64(c+1)*g.size[0]
		var targets []int32
		for s, l := range lm.laps {
			u, v := math.Max(a, l.Lo), math.Min(b, l.Hi)
			if u > v {
				continue
			}
			fu, fv := lm.branch(s, u), lm.branch(s, v)
			ylo, yhi := math.Max(math.Min(fu, fv), lo), math.Min(math.Max(fu, fv), hi)
			if ylo > yhi {
				continue
			}
			first := min(int((ylo-lo)/g.size[0]), n-1)
			last := min(int((yhi-lo)/g.size[0]), n-1)
			for t := first; t <= last; t++ {
				targets = append(targets, int32(t))
			}
		}
		slices.Sort(targets)
		g.edges[c] = slices.Compact(targets)
	}
}

func (g *boxGraph) buildSampled(samples int) {
	d := g.sys.Dim()
	perCell := 1
	for range d {
		perCell *= samples
	}
	xs := make([]float64, perCell*d)
	ys := make([]float64, perCell*d)
	corner := make([]float64, d)
	for c := range g.total {
		g.center(corner, c)
		for p := range perCell {
			q := p
			for i := range d {
				k := q % samples
				q /= samples
				xs[p*d+i] = corner[i] + g.size[i]*((float64(k)+0.5)/float64(samples)-0.5)
			}
		}
		g.sys.MapBatch(ys, xs)
		var targets []int32
		for p := range perCell {
			if t := g.cellOf(ys[p*d : (p+1)*d]); t >= 0 {
				targets = append(targets, int32(t))
			}
		}
		slices.Sort(targets)
		g.edges[c] = slices.Compact(targets)
	}
}

// prune finds the core: cells with edges into and from the core.
func (g *boxGraph) prune() {
	alive := make([]bool, g.total)
	in := make([]int, g.total)
	out := make([]int, g.total)
	for c, e := range g.edges {
		alive[c] = true
		out[c] = len(e)
		for _, t := range e {
			in[t]++
		}
	}
	rev := make([][]int32, g.total)
	for c, e := range g.edges {
		for _, t := range e {
			rev[t] = append(rev[t], int32(c))
		}
	}
	var queue []int
	for c := range g.total {
		if in[c] == 0 || out[c] == 0 {
			alive[c] = false
			queue = append(queue, c)
		}
	}
	for len(queue) > 0 {
		c := queue[len(queue)-1]
		queue = queue[:len(queue)-1]
		for _, t := range g.edges[c] {
			if alive[t] {
				if in[t]--; in[t] == 0 {
					alive[t] = false
					queue = append(queue, int(t))
				}
			}
		}
		for _, s := range rev[c] {
			if alive[s] {
				if out[s]--; out[s] == 0 {
					alive[s] = false
					queue = append(queue, int(s))
				}
			}
		}
	}
	g.core = g.core[:0]
	for c, ok := range alive {
		if ok {
			g.core = append(g.core, c)
		}
	}
}

// closedWalks returns tr Tⁿ, n = 1…maxLen, of the transition matrix T of
// the core: the number of closed walks of length n, counted from each
// start cell by propagating its indicator vector n steps (summed in cell
// order, so the result does not depend on the workers).
func (g *boxGraph) closedWalks(maxLen, workers int) []float64 {
	out := make([]float64, maxLen)
	if len(g.core) == 0 {
		return out
	}
	index := make([]int32, g.total)
	for i := range index {
		index[i] = -1
	}
	for k, c := range g.core {
		index[c] = int32(k)
	}
	adj := make([][]int32, len(g.core))
	for k, c := range g.core {
		for _, t := range g.edges[c] {
			if j := index[t]; j >= 0 {
				adj[k] = append(adj[k], j)
			}
		}
	}
	per := make([][]float64, len(g.core))
	splitWork(len(g.core), workers, func(start int) {
		v := make([]float64, len(adj))
		w := make([]float64, len(adj))
		v[start] = 1
		res := make([]float64, maxLen)
		for n := range maxLen {
			clear(w)
			for k, x := range v {
				if x == 0 {
					continue
				}
				for _, j := range adj[k] {
					w[j] += x
				}
			}
			v, w = w, v
			res[n] = v[start]
		}
		per[start] = res
	})
	for _, res := range per {
		for n, x := range res {
			out[n] += x
		}
	}
	return out
}
