package ulam

import "fmt"

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
		comp, count := components(m.RowPtr, m.Col)
		nontrivial := make([]bool, count)
		final := make([]bool, count)
		size := make([]int, count)
		for i := range final {
			final[i] = true
		}
		// A cell with an empty row is a dead end: mass sent there is lost,
		// as if it escaped (a closed system's cell wholly inside a part of
		// the domain the lap scan left out, such as the first cells of the
		// Gauss map on a fine grid). An edge into a dead end does not stop
		// a class from being final.
		deadEnd := func(j int) bool { return m.RowPtr[j+1] == m.RowPtr[j] }
		for i := range n {
			size[comp[i]]++
			for _, j := range m.Col[m.RowPtr[i]:m.RowPtr[i+1]] {
				if j == i {
					nontrivial[comp[i]] = true
				}
				if comp[j] != comp[i] && !deadEnd(j) {
					final[comp[i]] = false
				}
			}
		}
		for c := range count {
			if size[c] > 1 {
				nontrivial[c] = true
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
	return m.submatrix(keep)
}

// components labels the strongly connected components of the graph with
// edges i → Col[k], k in [RowPtr[i], RowPtr[i+1]), by Tarjan's algorithm
// (R. Tarjan, SIAM J. Comput. 1 (1972) 146–160) without recursion, so that
// 10⁶-cell graphs do not exhaust the goroutine stack.
func components(rowPtr, col []int) (comp []int, count int) {
	n := len(rowPtr) - 1
	const unvisited = -1
	index := make([]int, n)
	low := make([]int, n)
	comp = make([]int, n)
	onStack := make([]bool, n)
	for i := range index {
		index[i] = unvisited
		comp[i] = -1
	}
	var stack []int // Tarjan's stack of vertices
	type frame struct{ v, edge int }
	var calls []frame
	next := 0
	for root := range n {
		if index[root] != unvisited {
			continue
		}
		calls = append(calls, frame{root, rowPtr[root]})
		index[root], low[root] = next, next
		next++
		stack = append(stack, root)
		onStack[root] = true
		for len(calls) > 0 {
			f := &calls[len(calls)-1]
			v := f.v
			if f.edge < rowPtr[v+1] {
				w := col[f.edge]
				f.edge++
				if index[w] == unvisited {
					index[w], low[w] = next, next
					next++
					stack = append(stack, w)
					onStack[w] = true
					calls = append(calls, frame{w, rowPtr[w]})
				} else if onStack[w] {
					low[v] = min(low[v], index[w])
				}
				continue
			}
			// v is finished.
			if low[v] == index[v] {
				for {
					w := stack[len(stack)-1]
					stack = stack[:len(stack)-1]
					onStack[w] = false
					comp[w] = count
					if w == v {
						break
					}
				}
				count++
			}
			calls = calls[:len(calls)-1]
			if len(calls) > 0 {
				u := calls[len(calls)-1].v
				low[u] = min(low[u], low[v])
			}
		}
	}
	return comp, count
}
