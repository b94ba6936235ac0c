package galerkin

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/integrate/quad"

	"crosspec/dynsys"
)

// CellMatrix is the Galerkin matrix of a 1D map on a basis of Legendre
// polynomials of degree ≤ p on each cell, in compressed sparse row form.
//
// Convention (as ulam.Matrix): row (j, b) belongs to the source cell j and
// its basis function φ_{j,b}, column (i, a) to the target cell i and ψ_{i,a}:
//
//	K_{(j,b),(i,a)} = ∫_{C_j} w(x) φ_{j,b}(x) ψ_{i,a}(f(x)) dx,
//
// the matrix of the weighted composition operator ψ ↦ w·(ψ∘f) projected on
// the basis; its transpose is the Galerkin matrix ⟨ψ_{i,a}, L φ_{j,b}⟩ of the
// transfer operator, so both have the same eigenvalues. Index (j, b) is
// j·(p+1) + b. For p = 0 the matrix is ulam's P.
type CellMatrix struct {
	// Edges are the N+1 cell edges.
	Edges []float64
	// Degree is p.
	Degree int
	// RowPtr, Col and Val are the CSR arrays (columns increasing per row).
	RowPtr []int
	Col    []int
	Val    []float64
	// Derivative holds dK/dβ (the integrals with a·w in place of w) in
	// the pattern of Val; nil unless asked for.
	Derivative []float64
	// ExcludedLength is the length of the domain whose laps were left
	// out and not covered by the tail model.
	ExcludedLength float64
	// TailLaps counts the laps whose contribution came from the tail
	// model (see the package documentation); zero if none.
	TailLaps int
	// TailCheck is the relative error of the tail rule on a sum known in
	// closed form (see the package documentation); zero without a tail.
	TailCheck float64
}

// Dim returns the number of rows, N·(p+1).
func (m *CellMatrix) Dim() int { return len(m.RowPtr) - 1 }

// NNZ returns the number of stored entries.
func (m *CellMatrix) NNZ() int { return len(m.Col) }

// Entries returns the CSR arrays RowPtr, Col and Val (not copied). It
// implements krylov.SparseMatrix.
func (m *CellMatrix) Entries() (rowPtr, col []int, val []float64) { return m.RowPtr, m.Col, m.Val }

// Apply sets dst = K x. It implements krylov.Operator.
func (m *CellMatrix) Apply(dst, x []float64) { csrMulVec(dst, x, m.RowPtr, m.Col, m.Val) }

// ApplyDerivative sets dst = (dK/dβ) x; it panics without a derivative.
func (m *CellMatrix) ApplyDerivative(dst, x []float64) {
	if m.Derivative == nil {
		panic("galerkin: matrix assembled without its derivative")
	}
	csrMulVec(dst, x, m.RowPtr, m.Col, m.Derivative)
}

// Transpose returns Kᵀ, the Galerkin matrix of the transfer operator, as
// an operator.
func (m *CellMatrix) Transpose() *CellMatrix {
	n := m.Dim()
	t := &CellMatrix{Edges: m.Edges, Degree: m.Degree, ExcludedLength: m.ExcludedLength, TailLaps: m.TailLaps}
	t.RowPtr = make([]int, n+1)
	for _, j := range m.Col {
		t.RowPtr[j+1]++
	}
	for i := range n {
		t.RowPtr[i+1] += t.RowPtr[i]
	}
	t.Col = make([]int, len(m.Col))
	t.Val = make([]float64, len(m.Val))
	if m.Derivative != nil {
		t.Derivative = make([]float64, len(m.Val))
	}
	next := slices.Clone(t.RowPtr[:n])
	for i := range n {
		for k := m.RowPtr[i]; k < m.RowPtr[i+1]; k++ {
			p := next[m.Col[k]]
			next[m.Col[k]]++
			t.Col[p], t.Val[p] = i, m.Val[k]
			if m.Derivative != nil {
				t.Derivative[p] = m.Derivative[k]
			}
		}
	}
	return t
}

func csrMulVec(dst, x []float64, rowPtr, col []int, val []float64) {
	n := len(rowPtr) - 1
	if len(dst) != n || len(x) != n {
		panic(fmt.Sprintf("galerkin: mat-vec with vectors of length %d and %d, want %d", len(dst), len(x), n))
	}
	for i := range n {
		var s float64
		for k := rowPtr[i]; k < rowPtr[i+1]; k++ {
			s += val[k] * x[col[k]]
		}
		dst[i] = s
	}
}

// cellEdges returns the cell edges of the settings: Edges if given,
// else Cells equal cells of the domain.
func cellEdges(sys *dynsys.System, set *Settings) ([]float64, error) {
	lo, hi := sys.Lo[0], sys.Hi[0]
	if set.Edges != nil {
		e := set.Edges
		if len(e) < 2 || e[0] != lo || e[len(e)-1] != hi {
			return nil, fmt.Errorf("galerkin: cell edges must run from %g to %g", lo, hi)
		}
		for k := 1; k < len(e); k++ {
			if !(e[k] > e[k-1]) {
				return nil, fmt.Errorf("galerkin: cell edges must increase (edge %d: %g after %g)", k, e[k], e[k-1])
			}
		}
		return slices.Clone(e), nil
	}
	n := set.Cells
	e := make([]float64, n+1)
	for k := range e {
		e[k] = lo + (hi-lo)*float64(k)/float64(n)
	}
	e[n] = hi
	return e, nil
}

// GradedEdges returns n+1 cell edges on [lo, hi] graded geometrically
// towards lo: the cells grow by the factor ratio from one to the next
// (ratio 1: equal cells). Useful for maps whose invariant density or laps
// vary fastest at one end.
func GradedEdges(lo, hi float64, n int, ratio float64) []float64 {
	if n < 1 || !(ratio > 0) {
		panic(fmt.Sprintf("galerkin: GradedEdges: %d cells, ratio %v", n, ratio))
	}
	e := make([]float64, n+1)
	var total, w float64 = 0, 1
	for range n {
		total += w
		w *= ratio
	}
	w, x := 1.0, lo
	for k := range n {
		e[k] = x
		x += (hi - lo) * w / total
		w *= ratio
	}
	e[n] = hi
	return e
}

// cellAssembler integrates one source cell's row block at a time.
type cellAssembler struct {
	sys     *dynsys.System
	edges   []float64
	p       int
	wt      weight
	deriv   bool
	qx, qw  []float64
	row     []float64 // (p+1) × N(p+1), row-major
	drow    []float64
	touched []bool
	// Per target cell of the current row block: the number of quadrature
	// terms, Σ|c| and Σ|c·a| over them (roundOff).
	terms      []int
	sumC, sumD []float64
	srcBasis   []float64
	tgtBasis   []float64
	pre        []float64
}

// AssembleCells builds the Galerkin matrix of a 1D map on the piecewise
// Legendre basis of the settings.
func AssembleCells(sys *dynsys.System, settings *Settings) (*CellMatrix, error) {
	set := settings.withDefaults()
	if sys.Dim() != 1 {
		return nil, fmt.Errorf("galerkin: %s has dimension %d; the Galerkin bases are for 1D maps", sys.Name, sys.Dim())
	}
	edges, err := cellEdges(sys, &set)
	if err != nil {
		return nil, err
	}
	wt, err := newWeight(sys, set.Observable, set.Beta)
	if err != nil {
		return nil, err
	}
	ls, err := sys.Laps(set.Laps)
	if err != nil {
		return nil, err
	}
	n, p := len(edges)-1, set.Degree
	nb := p + 1
	a := &cellAssembler{
		sys: sys, edges: edges, p: p, wt: wt, deriv: set.Derivative,
		qx: make([]float64, set.Quadrature), qw: make([]float64, set.Quadrature),
		row:     make([]float64, nb*n*nb),
		touched: make([]bool, n),
		terms:   make([]int, n), sumC: make([]float64, n), sumD: make([]float64, n),
		srcBasis: make([]float64, nb), tgtBasis: make([]float64, nb),
	}
	if a.deriv {
		a.drow = make([]float64, nb*n*nb)
	}
	quad.Legendre{}.FixedLocations(a.qx, a.qw, -1, 1)
	lo, hi := sys.Lo[0], sys.Hi[0]

	// Runs of laps accumulating at an end of the domain inside the first
	// or last cell are summed by the tail model.
	inRun := map[int]bool{}
	type tailPart struct {
		cell    int
		laps    []int
		weights []float64
		shifts  []float64 // added to a(x) in the derivative (logShifts)
	}
	var tails []tailPart
	m := &CellMatrix{Edges: edges, Degree: p, ExcludedLength: ls.ExcludedLength}
	for _, atLo := range []bool{true, false} {
		limit, cell := edges[1], 0
		if !atLo {
			limit, cell = edges[n-1], n-1
		}
		r := findRun(ls, lo, hi, limit, atLo)
		if r == nil {
			continue
		}
		for _, li := range r.laps {
			inRun[li] = true
		}
		rule, shifts, covered, err := r.model(sys, ls, 0, set)
		if err != nil {
			return nil, err
		}
		tp := tailPart{cell: cell, weights: rule.weights, shifts: shifts}
		for _, rk := range rule.ranks {
			tp.laps = append(tp.laps, r.laps[rk])
		}
		tails = append(tails, tp)
		m.TailCheck = max(m.TailCheck, rule.check)
		m.TailLaps += len(r.laps)
		m.ExcludedLength -= covered
	}
	m.ExcludedLength = max(m.ExcludedLength, 0)

	// Pieces of laps per source cell.
	type piece struct {
		lap            int
		u0, u1, y0, y1 float64
	}
	pieces := make([][]piece, n)
	for li, l := range ls.Laps {
		if inRun[li] {
			continue
		}
		xa, ya, xb, yb, ok := sys.ClipLap(l, lo, hi)
		if !ok {
			continue
		}
		for j := cellOf(edges, math.Nextafter(xa, math.Inf(1))); j < n && edges[j] < xb; j++ {
			u0, u1 := max(xa, edges[j]), min(xb, edges[j+1])
			if !(u1 > u0) {
				continue
			}
			y0, y1 := ya, yb
			if u0 != xa {
				y0 = sys.F(u0)
			}
			if u1 != xb {
				y1 = sys.F(u1)
			}
			pieces[j] = append(pieces[j], piece{li, u0, u1, y0, y1})
		}
	}

	m.RowPtr = make([]int, n*nb+1)
	for j := range n {
		clear(a.row)
		if a.drow != nil {
			clear(a.drow)
		}
		clear(a.touched)
		clear(a.terms)
		clear(a.sumC)
		clear(a.sumD)
		for _, pc := range pieces[j] {
			if err := a.integrate(ls.Laps[pc.lap], j, pc.u0, pc.u1, pc.y0, pc.y1, 1); err != nil {
				return nil, err
			}
		}
		for _, tp := range tails {
			if tp.cell != j {
				continue
			}
			for k, li := range tp.laps {
				l := ls.Laps[li]
				_, ya, _, yb, ok := sys.ClipLap(l, lo, hi)
				if !ok {
					continue
				}
				if err := a.integrateImage(l, j, ya, yb, tp.weights[k], tp.shifts[k]); err != nil {
					return nil, err
				}
			}
		}
		for b := range nb {
			for i := range n {
				if !a.touched[i] {
					continue
				}
				hj, hi := edges[j+1]-edges[j], edges[i+1]-edges[i]
				for c := range nb {
					col := i*nb + c
					bound := a.roundOff(b, c, i, hj, hi)
					v := a.row[b*n*nb+col]
					if math.Abs(v) <= bound*a.sumC[i] {
						v = 0
					}
					var dv float64
					if a.drow != nil {
						dv = a.drow[b*n*nb+col]
						if math.Abs(dv) <= bound*a.sumD[i] {
							dv = 0
						}
					}
					if v == 0 && dv == 0 {
						continue
					}
					m.Col = append(m.Col, col)
					m.Val = append(m.Val, v)
					if a.drow != nil {
						m.Derivative = append(m.Derivative, dv)
					}
				}
			}
			m.RowPtr[j*nb+b+1] = len(m.Col)
		}
	}
	if a.deriv && m.Derivative == nil {
		m.Derivative = []float64{}
	}
	return m, nil
}

// integrate adds scale times the integrals over the piece [u0, u1] of lap l
// inside source cell j, with f(u0) = y0 and f(u1) = y1: the piece is cut
// at the preimages of the target cell edges, and each part, which f maps
// into one target cell i, is integrated by Gauss–Legendre quadrature in x.
func (a *cellAssembler) integrate(l dynsys.Lap, j int, u0, u1, y0, y1, scale float64) error {
	edges := a.edges
	n := len(edges) - 1
	ymin, ymax := min(y0, y1), max(y0, y1)
	a.pre = a.pre[:0]
	a.pre = append(a.pre, u0)
	// Target edges strictly inside the image, in the order of x.
	first := cellOf(edges, ymin) + 1
	var inner []float64
	for e := first; e < n && edges[e] < ymax; e++ {
		if edges[e] > ymin {
			inner = append(inner, edges[e])
		}
	}
	if !l.Increasing {
		slices.Reverse(inner)
	}
	for _, y := range inner {
		x, ok := a.sys.Preimage(l, y)
		if !ok {
			return fmt.Errorf("galerkin: %s: no preimage of %g on the lap [%g, %g]", a.sys.Name, y, l.Lo, l.Hi)
		}
		a.pre = append(a.pre, min(max(x, u0), u1))
	}
	a.pre = append(a.pre, u1)
	cj0, hj := edges[j], edges[j+1]-edges[j]
	for k := 0; k+1 < len(a.pre); k++ {
		x0, x1 := a.pre[k], a.pre[k+1]
		if !(x1-x0 > a.sliver()) {
			continue
		}
		// The target cell: the k-th one crossed.
		var i int
		if l.Increasing {
			i = cellOf(edges, ymin) + k
			if ymin == edges[cellOf(edges, ymin)+1] {
				i++
			}
		} else {
			i = cellOf(edges, ymax) - k
		}
		if i < 0 || i >= n {
			continue
		}
		ci0, ci1 := edges[i], edges[i+1]
		hi := ci1 - ci0
		a.touched[i] = true
		mid, half := 0.5*(x0+x1), 0.5*(x1-x0)
		for q, t := range a.qx {
			x := mid + half*t
			y := min(max(a.sys.F(x), ci0), ci1)
			w, obs := a.wt.at(x)
			c := scale * a.qw[q] * half * w
			if math.IsNaN(c) || math.IsInf(c, 0) {
				return fmt.Errorf("galerkin: %s: weight not finite at x = %g", a.sys.Name, x)
			}
			a.accumulate(i, c, obs, 2*(x-cj0)/hj-1, hj, 2*(y-ci0)/hi-1, hi)
		}
	}
	return nil
}

// sliver returns the width below which a piece cut at preimages of cell
// edges is left out: 4ε·X, X the largest |end| of the domain, a few units
// in the last place of the edges and preimages that bound it. A piece that
// narrow cannot be told from an empty one (its ends are known only to
// about ε·X) and carries at most that much mass; it appears where an edge
// maps onto an edge in exact arithmetic but not in floating point (N = 60
// for the doubling map: 2·(k/60) and the edge 2k/60 differ by an ulp),
// and there its tiny entries would couple polynomial degrees that a
// linear branch keeps apart (see roundOff).
func (a *cellAssembler) sliver() float64 {
	return 4 * 0x1p-53 * max(math.Abs(a.edges[0]), math.Abs(a.edges[len(a.edges)-1]))
}

// roundOff returns the factor that, times Σ|c| (or Σ|c·a|) over the
// quadrature terms of source cell j and target cell i, bounds the
// round-off of the entry (j, b), (i, c): each term c·φ_b·ψ_c is at most
// |c|·√((2b+1)/h_j)·√((2c+1)/h_i) (|P_a| ≤ 1 on [−1, 1]) and carries an
// error of about (b + c + 6)·ε relative to that bound (Bonnet's recurrence
// adds about ε per degree, the products a few ε), plus that of its local
// coordinates: x and y are known to ε·X (X the largest |end| of the
// domain), the local u = 2(x − x_j)/h_j − 1 to δ_j = 4ε·X/h_j, and P_b moves
// by at most |P_b'|·δ_j ≤ b(b+1)/2·δ_j (Markov's inequality). A sum of m
// terms adds (m − 1)·ε of their absolute sum (N. J. Higham, Accuracy and
// Stability of Numerical Algorithms, 2nd ed., SIAM 2002, §4.2). An entry
// below its
// bound has no correct digit and is set to zero: it then errs by at most
// the same bound, and entries that vanish exactly (a polynomial mapped by
// a linear branch has no components above its degree) are exact zeros,
// which keeps a reducible matrix reducible (see krylov's dense solver).
func (a *cellAssembler) roundOff(b, c, i int, hj, hi float64) float64 {
	const eps = 0x1p-53
	x := max(math.Abs(a.edges[0]), math.Abs(a.edges[len(a.edges)-1]))
	rel := float64(a.terms[i]+b+c+6) + float64(b*(b+1))*2*x/hj + float64(c*(c+1))*2*x/hi
	return rel * eps * math.Sqrt(float64(2*b+1)/hj) * math.Sqrt(float64(2*c+1)/hi)
}

// accumulate adds one quadrature node's contribution c·φ_{j,b}(x)·ψ_{i,a}(y)
// to the row of source cell j, target cell i (and c·a(x) times it to the
// derivative row): u and v are x and y mapped to [−1, 1] on cells of widths
// hj and hi.
func (a *cellAssembler) accumulate(i int, c, obs, u, hj, v, hi float64) {
	nb := a.p + 1
	n := len(a.edges) - 1
	legendreTo(a.srcBasis, u, hj)
	legendreTo(a.tgtBasis, v, hi)
	a.terms[i]++
	a.sumC[i] += math.Abs(c)
	a.sumD[i] += math.Abs(c * obs)
	for b := range nb {
		cb := c * a.srcBasis[b]
		rowOff := b*n*nb + i*nb
		for cc := range nb {
			a.row[rowOff+cc] += cb * a.tgtBasis[cc]
		}
		if a.drow != nil {
			for cc := range nb {
				a.drow[rowOff+cc] += cb * obs * a.tgtBasis[cc]
			}
		}
	}
}

// integrateImage adds scale times the integrals of the whole lap l
// (inside source cell j, image clipped to [ya, yb]), with a(x) + shift in
// place of a(x) in the derivative, computed in the image variable: ∫ ψ_{i,a}(y) w(g(y)) φ_{j,b}(g(y)) |g'(y)| dy over each target
// cell, g the inverse branch, g' = 1/f'(g). It is used for the narrow laps
// of the tail model, whose end points carry a relative error of order
// ε·x/width when the integral is taken in x; in y nothing cancels.
func (a *cellAssembler) integrateImage(l dynsys.Lap, j int, ya, yb, scale, shift float64) error {
	edges := a.edges
	n := len(edges) - 1
	ymin, ymax := min(ya, yb), max(ya, yb)
	cj0, hj := edges[j], edges[j+1]-edges[j]
	for i := cellOf(edges, ymin); i < n && edges[i] < ymax; i++ {
		ci0, ci1 := edges[i], edges[i+1]
		y0, y1 := max(ymin, ci0), min(ymax, ci1)
		if !(y1-y0 > a.sliver()) {
			continue
		}
		hi := ci1 - ci0
		a.touched[i] = true
		mid, half := 0.5*(y0+y1), 0.5*(y1-y0)
		for q, t := range a.qx {
			y := mid + half*t
			x, ok := a.sys.Preimage(l, y)
			if !ok {
				return fmt.Errorf("galerkin: %s: no preimage of %g on the lap [%g, %g]", a.sys.Name, y, l.Lo, l.Hi)
			}
			w, obs := a.wt.at(x)
			c := scale * a.qw[q] * half * w / math.Abs(a.sys.DF(x))
			if math.IsNaN(c) || math.IsInf(c, 0) {
				return fmt.Errorf("galerkin: %s: weight or slope not finite at x = %g", a.sys.Name, x)
			}
			a.accumulate(i, c, obs+shift, 2*(x-cj0)/hj-1, hj, 2*(y-ci0)/hi-1, hi)
		}
	}
	return nil
}
