package ulam

import (
	"fmt"
	"math"
)

// Grid is a uniform partition of a box [Lo_0, Hi_0] × … × [Lo_{d−1}, Hi_{d−1}]
// into Shape[0] × … × Shape[d−1] equal cells. Cell (i_0, …, i_{d−1}) has the
// index ((i_0·Shape[1] + i_1)·Shape[2] + …) + i_{d−1}: the last coordinate
// varies fastest.
type Grid struct {
	Lo, Hi []float64
	Shape  []int
}

// NewGrid returns the grid of the given shape over the box [lo, hi]. It
// panics when the lengths differ, a side is empty or a count is below 1.
func NewGrid(lo, hi []float64, shape []int) Grid {
	if len(lo) != len(hi) || len(lo) != len(shape) || len(lo) == 0 {
		panic(fmt.Sprintf("ulam: grid with %d lower corners, %d upper corners and %d counts", len(lo), len(hi), len(shape)))
	}
	for k := range lo {
		if !(hi[k] > lo[k]) || shape[k] < 1 {
			panic(fmt.Sprintf("ulam: grid side %d: [%g, %g] in %d cells", k, lo[k], hi[k], shape[k]))
		}
	}
	return Grid{Lo: append([]float64(nil), lo...), Hi: append([]float64(nil), hi...), Shape: append([]int(nil), shape...)}
}

// ShapeFor returns the counts per dimension of a grid of about cells cells
// over the box [lo, hi] whose cells are as close to cubes as the box allows:
// M_k ≈ (hi_k − lo_k)/δ with δ^d·Π M_k ≈ volume, each count at least 1.
func ShapeFor(lo, hi []float64, cells int) []int {
	d := len(lo)
	if cells < 1 {
		cells = 1
	}
	if d == 1 {
		return []int{cells}
	}
	volume := 1.0
	for k := range lo {
		volume *= hi[k] - lo[k]
	}
	side := math.Pow(volume/float64(cells), 1/float64(d))
	shape := make([]int, d)
	for k := range lo {
		shape[k] = max(1, int(math.Round((hi[k]-lo[k])/side)))
	}
	return shape
}

// Dim returns the dimension d.
func (g Grid) Dim() int { return len(g.Shape) }

// Cells returns the number of cells Π Shape[k].
func (g Grid) Cells() int {
	n := 1
	for _, m := range g.Shape {
		n *= m
	}
	return n
}

// Width returns the width of the cells along dimension k.
func (g Grid) Width(k int) float64 { return (g.Hi[k] - g.Lo[k]) / float64(g.Shape[k]) }

// CellMeasure returns the volume of one cell.
func (g Grid) CellMeasure() float64 {
	m := 1.0
	for k := range g.Shape {
		m *= g.Width(k)
	}
	return m
}

// Edge returns the i-th cell edge along dimension k, Lo + (Hi − Lo)·i/M,
// so that Edge(k, 0) = Lo and Edge(k, M) = Hi exactly and an edge that is a
// simple fraction of the side (1/3 at i = M/3) is its correctly rounded value.
func (g Grid) Edge(k, i int) float64 {
	if i == g.Shape[k] {
		return g.Hi[k]
	}
	return g.Lo[k] + (g.Hi[k]-g.Lo[k])*float64(i)/float64(g.Shape[k])
}

// index1 returns the cell index along dimension k of the coordinate v,
// or -1 when v is outside [Lo, Hi]. A point on an interior edge belongs to
// the cell on its right; Hi belongs to the last cell.
func (g Grid) index1(k int, v float64) int {
	lo, hi := g.Lo[k], g.Hi[k]
	if !(v >= lo && v <= hi) {
		return -1
	}
	m := g.Shape[k]
	i := int((v - lo) / (hi - lo) * float64(m))
	if i >= m {
		i = m - 1
	}
	// Make the index agree with Edge to the last bit.
	if i > 0 && v < g.Edge(k, i) {
		i--
	} else if i+1 < m && v >= g.Edge(k, i+1) {
		i++
	}
	return i
}

// CellOf returns the index of the cell that contains x, or -1 when x lies
// outside the box.
func (g Grid) CellOf(x []float64) int {
	if len(x) != g.Dim() {
		panic(fmt.Sprintf("ulam: CellOf: point of length %d in a %d-dimensional grid", len(x), g.Dim()))
	}
	cell := 0
	for k, v := range x {
		i := g.index1(k, v)
		if i < 0 {
			return -1
		}
		cell = cell*g.Shape[k] + i
	}
	return cell
}

// CenterTo writes the centre of the cell into dst (length d).
func (g Grid) CenterTo(dst []float64, cell int) {
	if len(dst) != g.Dim() {
		panic(fmt.Sprintf("ulam: CenterTo: destination of length %d in a %d-dimensional grid", len(dst), g.Dim()))
	}
	for k := g.Dim() - 1; k >= 0; k-- {
		i := cell % g.Shape[k]
		cell /= g.Shape[k]
		dst[k] = 0.5 * (g.Edge(k, i) + g.Edge(k, i+1))
	}
}

// firstEdgeAbove returns the smallest i in [0, M] with Edge(0, i) > y
// (M+1 when there is none), for a 1D grid.
func (g Grid) firstEdgeAbove(y float64) int {
	m := g.Shape[0]
	if y < g.Lo[0] {
		return 0
	}
	if y >= g.Hi[0] {
		return m + 1
	}
	i := int((y-g.Lo[0])/(g.Hi[0]-g.Lo[0])*float64(m)) + 1
	i = min(max(i, 0), m)
	for i > 0 && g.Edge(0, i-1) > y {
		i--
	}
	for i <= m && g.Edge(0, i) <= y {
		i++
	}
	return i
}

// lastEdgeBelow returns the largest i in [0, M] with Edge(0, i) < y (−1
// when there is none), for a 1D grid.
func (g Grid) lastEdgeBelow(y float64) int {
	m := g.Shape[0]
	if y <= g.Lo[0] {
		return -1
	}
	if y > g.Hi[0] {
		return m
	}
	i := int((y - g.Lo[0]) / (g.Hi[0] - g.Lo[0]) * float64(m))
	i = min(max(i, 0), m)
	for i < m && g.Edge(0, i+1) < y {
		i++
	}
	for i >= 0 && g.Edge(0, i) >= y {
		i--
	}
	return i
}
