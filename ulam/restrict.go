package ulam

import (
	"fmt"
	"slices"
)

// Restriction says which cells of the grid a matrix keeps.
type Restriction int

const (
	// RestrictAuto keeps the recurrent cells (RestrictRecurrent) of a
	// closed system and the cells on cycles (RestrictCycles) of an open
	// one.
	RestrictAuto Restriction = iota
	// RestrictNone keeps every cell of the grid.
	RestrictNone
	// RestrictSurvivors keeps the cells with a nonzero row: some of their
	// points stay in the domain for one step. Dropping a zero row (and its
	// column) removes only zero eigenvalues.
	RestrictSurvivors
	// RestrictCycles keeps the cells that lie on a cycle of the cell
	// graph (i → j when P_ij ≠ 0): the cells of its nontrivial strongly
	// connected components, reached again and again by some path. In the
	// block-triangular form of P by components a trivial component is a
	// zero diagonal entry, so this keeps every nonzero eigenvalue of P
	// exactly.
	RestrictCycles
	// RestrictRecurrent keeps the final classes: nontrivial strongly
	// connected components with no edge into another component (mass
	// that reaches them stays, up to escape from the domain). These are
	// the cells of an attractor; the transient cells and their
	// eigenvalues are dropped.
	RestrictRecurrent
)

var restrictionNames = []string{"auto", "none", "survivors", "cycles", "recurrent"}

func (r Restriction) String() string {
	if int(r) >= 0 && int(r) < len(restrictionNames) {
		return restrictionNames[r]
	}
	return fmt.Sprintf("Restriction(%d)", int(r))
}

// ParseRestriction returns the restriction named s (auto, none, survivors,
// cycles, recurrent).
func ParseRestriction(s string) (Restriction, error) {
	for i, name := range restrictionNames {
		if s == name {
			return Restriction(i), nil
		}
	}
	return 0, fmt.Errorf("ulam: unknown restriction %q (known: auto, none, survivors, cycles, recurrent)", s)
}

// Restrict returns the principal submatrix on the cells chosen by r (m
// itself for RestrictNone). closed says whether the system is closed, for
// RestrictAuto.
func (m *Matrix) Restrict(r Restriction, closed bool) *Matrix {
	if r == RestrictAuto {
		r = RestrictCycles
		if closed {
			r = RestrictRecurrent
		}
	}
	n := m.Dim()
	var keep []int
	switch r {
	case RestrictNone:
		return m
	case RestrictSurvivors:
		for i := range n {
			if m.RowPtr[i+1] > m.RowPtr[i] {
				keep = append(keep, i)
			}
		}
	case RestrictCycles, RestrictRecurrent:
		comp, count := components(m)
		// Components are numbered so that every edge between two runs
		// from a higher number to a lower one.
		nontrivial := make([]bool, count)
		size := make([]int, count)
		for i := range n {
			size[comp[i]]++
			for _, j := range m.Col[m.RowPtr[i]:m.RowPtr[i+1]] {
				if j == i {
					nontrivial[comp[i]] = true
				}
			}
		}
		for c := range count {
			if size[c] > 1 {
				nontrivial[c] = true
			}
		}
		// A component that reaches no nontrivial one is a dead end: mass
		// sent there is lost after a few steps, as if it escaped (a closed
		// system's cells wholly inside a part of the domain the lap scan
		// left out, such as the first cells of the Gauss map on a fine
		// grid, and the cells that map only into those, such as its last
		// cell). An edge into a dead end does not stop a class from being
		// final. By the numbering, the components an edge reaches come
		// first, so one pass in increasing order settles reach.
		byComp := make([]int, 0, n)
		first := make([]int, count+1)
		for i := range n {
			first[comp[i]+1]++
		}
		for c := range count {
			first[c+1] += first[c]
		}
		byComp = byComp[:n]
		fill := slices.Clone(first[:count])
		for i := range n {
			byComp[fill[comp[i]]] = i
			fill[comp[i]]++
		}
		reach := slices.Clone(nontrivial)
		final := make([]bool, count)
		for c := range count {
			final[c] = true
			for _, i := range byComp[first[c]:first[c+1]] {
				for _, j := range m.Col[m.RowPtr[i]:m.RowPtr[i+1]] {
					if cj := comp[j]; cj != c && reach[cj] {
						reach[c] = true
						final[c] = false
					}
				}
			}
		}
		for i := range n {
			c := comp[i]
			if nontrivial[c] && (r == RestrictCycles || final[c]) {
				keep = append(keep, i)
			}
		}
	default:
		panic(fmt.Sprintf("ulam: unknown restriction %d", int(r)))
	}
	if len(keep) == n {
		return m
	}
	sub := m.submatrix(keep)
	if r == RestrictCycles || r == RestrictRecurrent {
		// keep is a union of whole components, so they are the
		// submatrix's irreducible blocks, in the same order: the
		// eigen-solvers need not search them again.
		order, start := m.IrreducibleBlocks()
		sub.setBlocks(keptBlocks(order, start, keep, n))
	}
	return sub
}

// keptBlocks maps the irreducible blocks (order, start) of an n-row matrix
// to its principal submatrix on keep, a union of whole blocks: the kept
// blocks in their order, with the rows renumbered as in keep.
func keptBlocks(order, start, keep []int, n int) (subOrder, subStart []int) {
	newIndex := make([]int, n)
	for i := range newIndex {
		newIndex[i] = -1
	}
	for k, i := range keep {
		newIndex[i] = k
	}
	subOrder = make([]int, 0, len(keep))
	subStart = []int{0}
	for b := range len(start) - 1 {
		rows := order[start[b]:start[b+1]]
		if newIndex[rows[0]] < 0 {
			continue
		}
		for _, i := range rows {
			subOrder = append(subOrder, newIndex[i])
		}
		subStart = append(subStart, len(subOrder))
	}
	return subOrder, subStart
}

// components labels the strongly connected components of the graph of m,
// with edges i → Col[k], k in [RowPtr[i], RowPtr[i+1]) (its cached
// IrreducibleBlocks, from krylov.IrreducibleBlocks,
// Tarjan's algorithm without recursion, so that 10⁶-cell graphs do not
// exhaust the goroutine stack), numbered so that every edge between two
// components runs from a higher number to a lower one.
func components(m *Matrix) (comp []int, count int) {
	n := m.Dim()
	order, start := m.IrreducibleBlocks()
	count = len(start) - 1
	comp = make([]int, n)
	for b := range count {
		for _, i := range order[start[b]:start[b+1]] {
			comp[i] = count - 1 - b
		}
	}
	return comp, count
}
