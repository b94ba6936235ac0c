package ulam

import (
	"bufio"
	"fmt"
	"io"
	"slices"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"

	"github.com/james-bowman/sparse"

	"crosspec/ulam/krylov"
)

// Matrix is an Ulam transfer matrix in compressed sparse row form.
//
// Convention: P_ij is the (weighted) fraction of cell i that f maps into
// cell j, P_ij = (1/m(B_i)) ∫_{B_i ∩ f⁻¹(B_j)} w(x) dx, so a row holds where
// a cell's mass goes and the rows of a closed, unweighted system sum to 1.
// A density, as the vector of masses ρ_i of the cells, evolves as ρ ← Pᵀρ:
// Pᵀ is the discrete transfer (Perron–Frobenius) operator and its leading
// eigenvector the (conditionally) invariant measure, the left eigenvector of
// P. P itself acts on functions of the cells (the discrete Koopman
// operator); its leading right eigenvector is constant for a closed system.
// P and Pᵀ have the same eigenvalues.
//
// The matrix is restricted to the cells listed in Cells: row and column k
// belong to the grid cell Cells[k].
type Matrix struct {
	// Grid is the partition.
	Grid Grid
	// Cells lists the grid cells kept, sorted.
	Cells []int
	// RowPtr, Col and Val are the CSR arrays: the entries of row k are
	// Col[RowPtr[k]:RowPtr[k+1]] (strictly increasing) and the matching Val.
	RowPtr []int
	Col    []int
	Val    []float64
	// Derivative holds the entries of dP/dβ, (1/m(B_i)) ∫ a w, in the
	// pattern of Val; nil unless asked for.
	Derivative []float64
	// ExcludedLength is, for a 1D map, the length of the domain left out
	// because its laps are too narrow to resolve (the Gauss map near 0).
	ExcludedLength float64
	// GridCells is the number of cells of the full grid before restriction.
	GridCells int

	pattern atomic.Pointer[patternCache] // mat-vec index and blocks, made when needed
}

// Dim returns the number of rows (and columns).
func (m *Matrix) Dim() int { return len(m.RowPtr) - 1 }

// NNZ returns the number of stored entries.
func (m *Matrix) NNZ() int { return len(m.Col) }

// CSR returns the matrix as a *sparse.CSR sharing its arrays. Note that
// (*sparse.CSR).MulVecTo adds into its destination.
func (m *Matrix) CSR() *sparse.CSR {
	n := m.Dim()
	return sparse.NewCSR(n, n, m.RowPtr, m.Col, m.Val)
}

// Entries returns the CSR arrays RowPtr, Col and Val (not copied). It
// implements krylov.SparseMatrix.
func (m *Matrix) Entries() (rowPtr, col []int, val []float64) { return m.RowPtr, m.Col, m.Val }

// DerivativeCSR returns dP/dβ as a *sparse.CSR, or nil when the matrix
// holds no derivative.
func (m *Matrix) DerivativeCSR() *sparse.CSR {
	if m.Derivative == nil {
		return nil
	}
	n := m.Dim()
	return sparse.NewCSR(n, n, m.RowPtr, m.Col, m.Derivative)
}

// Apply sets dst = P x (the action on functions), in parallel over
// blocks of rows. It implements the krylov.Operator interface.
//
// The mat-vec is bound by memory traffic, so it runs over a compact copy
// of the index arrays (krylov.CSRIndex: int32 columns and row pointers, 12
// bytes a nonzero instead of 16, checked once), made at the first call
// and kept with the matrix; it is
// remade when RowPtr or Col are replaced, but not when they are changed in
// place, which must therefore happen before the first Apply.
func (m *Matrix) Apply(dst, x []float64) { m.patternCache().csr().MulVec(dst, x, m.Val) }

// ApplyDerivative sets dst = (dP/dβ) x. It panics if the matrix holds no
// derivative.
func (m *Matrix) ApplyDerivative(dst, x []float64) {
	if m.Derivative == nil {
		panic("ulam: matrix assembled without its derivative")
	}
	m.patternCache().csr().MulVec(dst, x, m.Derivative)
}

// patternCache keeps what is derived from the matrix's pattern, each part
// made at its first use: the compact index of the mat-vec
// (krylov.CSRIndex, 32-bit integers) and the irreducible blocks; with what
// identifies the arrays they were made from.
type patternCache struct {
	rowPtrSrc, colSrc *int
	n, nnz            int
	rowPtr, col       []int // the arrays, for the parts still to be made

	indexOnce sync.Once
	index     *krylov.CSRIndex

	blocksOnce   sync.Once
	order, start []int
}

// IrreducibleBlocks returns krylov.IrreducibleBlocks of the matrix's
// pattern, found at the first call and kept with the matrix (so the
// eigenvalues and the leading eigenvectors of one matrix split it once,
// and a restriction passes the blocks on to its submatrix). The slices
// must not be modified.
func (m *Matrix) IrreducibleBlocks() (order, start []int) {
	c := m.patternCache()
	c.blocksOnce.Do(func() { c.order, c.start = krylov.IrreducibleBlocks(c.rowPtr, c.col) })
	return c.order, c.start
}

// setBlocks records (order, start) as the irreducible blocks of m, which
// IrreducibleBlocks then returns instead of searching them; the caller
// vouches for them.
func (m *Matrix) setBlocks(order, start []int) {
	c := m.patternCache()
	c.blocksOnce.Do(func() { c.order, c.start = order, start })
}

// patternCache returns the pattern cache of m, a new one when m has none
// or its RowPtr or Col arrays have been replaced since.
func (m *Matrix) patternCache() *patternCache {
	c := m.pattern.Load()
	if c != nil && c.matches(m) {
		return c
	}
	c = &patternCache{n: len(m.RowPtr) - 1, nnz: len(m.Col), rowPtr: m.RowPtr, col: m.Col}
	if len(m.RowPtr) > 0 {
		c.rowPtrSrc = &m.RowPtr[0]
	}
	if len(m.Col) > 0 {
		c.colSrc = &m.Col[0]
	}
	m.pattern.Store(c)
	return c
}

func (c *patternCache) matches(m *Matrix) bool {
	if c.n != len(m.RowPtr)-1 || c.nnz != len(m.Col) {
		return false
	}
	return (len(m.RowPtr) == 0 || c.rowPtrSrc == &m.RowPtr[0]) && (len(m.Col) == 0 || c.colSrc == &m.Col[0])
}

// csr returns the compact index of the mat-vec, making it at the first
// call. It panics, through krylov.NewCSRIndex, on a malformed pattern and
// on more than 2³¹−1 nonzeros.
func (c *patternCache) csr() *krylov.CSRIndex {
	c.indexOnce.Do(func() { c.index = krylov.NewCSRIndex(c.rowPtr, c.col) })
	return c.index
}

// Transpose returns Pᵀ as a new matrix (with the transposed derivative, if
// any): its Apply is the transfer operator acting on cell masses.
func (m *Matrix) Transpose() *Matrix {
	n := m.Dim()
	rowPtr := make([]int, n+1)
	for _, j := range m.Col {
		rowPtr[j+1]++
	}
	for i := range n {
		rowPtr[i+1] += rowPtr[i]
	}
	col := make([]int, len(m.Col))
	val := make([]float64, len(m.Val))
	var deriv []float64
	if m.Derivative != nil {
		deriv = make([]float64, len(m.Derivative))
	}
	next := slices.Clone(rowPtr[:n])
	for i := range n {
		for k := m.RowPtr[i]; k < m.RowPtr[i+1]; k++ {
			j := m.Col[k]
			p := next[j]
			next[j]++
			col[p] = i
			val[p] = m.Val[k]
			if deriv != nil {
				deriv[p] = m.Derivative[k]
			}
		}
	}
	return &Matrix{
		Grid: m.Grid, Cells: m.Cells, RowPtr: rowPtr, Col: col, Val: val, Derivative: deriv,
		ExcludedLength: m.ExcludedLength, GridCells: m.GridCells,
	}
}

// RowSumsTo writes the sum of each row into dst (length Dim).
func (m *Matrix) RowSumsTo(dst []float64) {
	if len(dst) != m.Dim() {
		panic(fmt.Sprintf("ulam: RowSumsTo: destination of length %d, want %d", len(dst), m.Dim()))
	}
	for i := range dst {
		var s float64
		for _, v := range m.Val[m.RowPtr[i]:m.RowPtr[i+1]] {
			s += v
		}
		dst[i] = s
	}
}

// WriteMatrixMarket writes the matrix in the Matrix Market coordinate
// format (real, general; 1-based indices), with comment lines naming the
// grid, so that an external eigen-solver can read it. Values are written
// with the shortest representation that reads back to the same float64.
func (m *Matrix) WriteMatrixMarket(w io.Writer, comments ...string) error {
	bw := bufio.NewWriterSize(w, 1<<16)
	fmt.Fprintln(bw, "%%MatrixMarket matrix coordinate real general")
	fmt.Fprintf(bw, "%% Ulam transfer matrix: P_ij = fraction of cell i mapped into cell j (rows = source cells)\n")
	fmt.Fprintf(bw, "%% grid shape %v over box %v to %v, %d of %d cells kept\n", m.Grid.Shape, m.Grid.Lo, m.Grid.Hi, m.Dim(), m.GridCells)
	for _, c := range comments {
		fmt.Fprintf(bw, "%% %s\n", c)
	}
	n := m.Dim()
	fmt.Fprintf(bw, "%d %d %d\n", n, n, m.NNZ())
	buf := make([]byte, 0, 64)
	for i := range n {
		for k := m.RowPtr[i]; k < m.RowPtr[i+1]; k++ {
			buf = buf[:0]
			buf = strconv.AppendInt(buf, int64(i+1), 10)
			buf = append(buf, ' ')
			buf = strconv.AppendInt(buf, int64(m.Col[k]+1), 10)
			buf = append(buf, ' ')
			buf = strconv.AppendFloat(buf, m.Val[k], 'g', -1, 64)
			buf = append(buf, '\n')
			if _, err := bw.Write(buf); err != nil {
				return err
			}
		}
	}
	return bw.Flush()
}

// submatrix returns the principal submatrix on the sorted matrix indices
// keep (which index m's rows), with Cells mapped accordingly.
func (m *Matrix) submatrix(keep []int) *Matrix {
	n := m.Dim()
	newIndex := make([]int, n)
	for i := range newIndex {
		newIndex[i] = -1
	}
	for k, i := range keep {
		newIndex[i] = k
	}
	nnz := 0
	for _, i := range keep {
		for _, j := range m.Col[m.RowPtr[i]:m.RowPtr[i+1]] {
			if newIndex[j] >= 0 {
				nnz++
			}
		}
	}
	out := &Matrix{
		Grid:           m.Grid,
		Cells:          make([]int, len(keep)),
		RowPtr:         make([]int, len(keep)+1),
		Col:            make([]int, 0, nnz),
		Val:            make([]float64, 0, nnz),
		ExcludedLength: m.ExcludedLength,
		GridCells:      m.GridCells,
	}
	if m.Derivative != nil {
		out.Derivative = make([]float64, 0, nnz)
	}
	for k, i := range keep {
		out.Cells[k] = m.Cells[i]
		for p := m.RowPtr[i]; p < m.RowPtr[i+1]; p++ {
			if j := newIndex[m.Col[p]]; j >= 0 {
				out.Col = append(out.Col, j)
				out.Val = append(out.Val, m.Val[p])
				if m.Derivative != nil {
					out.Derivative = append(out.Derivative, m.Derivative[p])
				}
			}
		}
		out.RowPtr[k+1] = len(out.Col)
	}
	return out
}

// ReadMatrixMarket reads a square real matrix in Matrix Market coordinate
// format (general; 1-based indices; duplicates summed) as written by
// WriteMatrixMarket or by other programs. The result has no grid: Cells
// numbers the rows 0 … n−1.
func ReadMatrixMarket(r io.Reader) (*Matrix, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 1<<16), 1<<20)
	if !sc.Scan() {
		return nil, fmt.Errorf("ulam: Matrix Market: empty input")
	}
	header := strings.Fields(strings.ToLower(sc.Text()))
	if len(header) < 5 || header[0] != "%%matrixmarket" || header[1] != "matrix" || header[2] != "coordinate" || header[3] != "real" || header[4] != "general" {
		return nil, fmt.Errorf("ulam: Matrix Market: header %q, want %%%%MatrixMarket matrix coordinate real general", sc.Text())
	}
	line := 1
	var n, nnz int
	for sc.Scan() {
		line++
		text := strings.TrimSpace(sc.Text())
		if text == "" || text[0] == '%' {
			continue
		}
		var rows, cols int
		if _, err := fmt.Sscan(text, &rows, &cols, &nnz); err != nil || rows != cols || rows < 0 || nnz < 0 {
			return nil, fmt.Errorf("ulam: Matrix Market line %d: size line %q: want a square matrix", line, text)
		}
		n = rows
		break
	}
	type entry struct {
		i, j int
		v    float64
	}
	entries := make([]entry, 0, nnz)
	for sc.Scan() {
		line++
		f := strings.Fields(sc.Text())
		if len(f) == 0 || f[0][0] == '%' {
			continue
		}
		if len(f) != 3 {
			return nil, fmt.Errorf("ulam: Matrix Market line %d: want 3 fields, found %d", line, len(f))
		}
		i, err1 := strconv.Atoi(f[0])
		j, err2 := strconv.Atoi(f[1])
		v, err3 := strconv.ParseFloat(f[2], 64)
		if err1 != nil || err2 != nil || err3 != nil || i < 1 || i > n || j < 1 || j > n {
			return nil, fmt.Errorf("ulam: Matrix Market line %d: bad entry %q", line, sc.Text())
		}
		entries = append(entries, entry{i - 1, j - 1, v})
	}
	if err := sc.Err(); err != nil {
		return nil, fmt.Errorf("ulam: Matrix Market: %w", err)
	}
	if len(entries) != nnz {
		return nil, fmt.Errorf("ulam: Matrix Market: %d entries, the size line says %d", len(entries), nnz)
	}
	slices.SortStableFunc(entries, func(a, b entry) int {
		if a.i != b.i {
			return a.i - b.i
		}
		return a.j - b.j
	})
	m := &Matrix{Cells: make([]int, n), RowPtr: make([]int, n+1), GridCells: n}
	for k, e := range entries {
		if k > 0 && e.i == entries[k-1].i && e.j == entries[k-1].j {
			m.Val[len(m.Val)-1] += e.v
			continue
		}
		m.Col = append(m.Col, e.j)
		m.Val = append(m.Val, e.v)
		m.RowPtr[e.i+1]++
	}
	for i := range n {
		m.RowPtr[i+1] += m.RowPtr[i]
		m.Cells[i] = i
	}
	return m, nil
}
