package ulam

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"runtime"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"

	"github.com/james-bowman/sparse"
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

	compact atomic.Pointer[compactCSR] // index arrays of the mat-vec
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
// of the index arrays (int32 columns and row pointers: 12 bytes a nonzero
// instead of 16), made at the first call and kept with the matrix; it is
// remade when RowPtr or Col are replaced, but not when they are changed in
// place, which must therefore happen before the first Apply.
func (m *Matrix) Apply(dst, x []float64) { m.compactIndex().mulVec(dst, x, m.Val) }

// ApplyDerivative sets dst = (dP/dβ) x. It panics if the matrix holds no
// derivative.
func (m *Matrix) ApplyDerivative(dst, x []float64) {
	if m.Derivative == nil {
		panic("ulam: matrix assembled without its derivative")
	}
	m.compactIndex().mulVec(dst, x, m.Derivative)
}

// compactCSR is the index part of a CSR matrix in 32-bit integers, for the
// mat-vec.
type compactCSR struct {
	rowPtr []int32
	col    []int32
	// rowPtrSrc and colSrc identify the arrays it was made from.
	rowPtrSrc, colSrc *int
	rows, nnz         int
}

// compactIndex returns the compact index arrays of m, making them when m
// has none or its RowPtr or Col arrays have been replaced since. Matrices
// with more than 2³¹−1 nonzeros keep their int indices (rowPtr nil).
func (m *Matrix) compactIndex() *compactCSR {
	c := m.compact.Load()
	if c != nil && c.matches(m) {
		return c
	}
	c = &compactCSR{rows: len(m.RowPtr) - 1, nnz: len(m.Col)}
	if len(m.RowPtr) > 0 {
		c.rowPtrSrc = &m.RowPtr[0]
	}
	if len(m.Col) > 0 {
		c.colSrc = &m.Col[0]
	}
	if len(m.Col) <= math.MaxInt32 {
		// The mat-vec kernel reads without bounds checks: the arrays are
		// checked here, once.
		n := len(m.RowPtr) - 1
		if n < 0 {
			panic("ulam: matrix without row pointers")
		}
		if m.RowPtr[0] != 0 || m.RowPtr[n] != len(m.Col) {
			panic(fmt.Sprintf("ulam: matrix row pointers %d … %d for %d nonzeros", m.RowPtr[0], m.RowPtr[n], len(m.Col)))
		}
		c.rowPtr = make([]int32, len(m.RowPtr))
		for i, p := range m.RowPtr {
			if i > 0 && p < m.RowPtr[i-1] {
				panic(fmt.Sprintf("ulam: matrix row pointer %d decreases", i))
			}
			c.rowPtr[i] = int32(p)
		}
		c.col = make([]int32, len(m.Col))
		for k, j := range m.Col {
			if j < 0 || j >= n {
				panic(fmt.Sprintf("ulam: matrix column index %d outside [0, %d)", j, n))
			}
			c.col[k] = int32(j)
		}
	}
	m.compact.Store(c)
	return c
}

func (c *compactCSR) matches(m *Matrix) bool {
	if c.rows != len(m.RowPtr)-1 || c.nnz != len(m.Col) {
		return false
	}
	return (len(m.RowPtr) == 0 || c.rowPtrSrc == &m.RowPtr[0]) && (len(m.Col) == 0 || c.colSrc == &m.Col[0])
}

// mulVec sets dst = A x, A the matrix of index c and values val. The rows
// are cut into pieces balanced by nonzeros and spread over the cores; each
// row's sum is formed in the same order whatever the cut, so the result
// does not depend on the number of cores.
func (c *compactCSR) mulVec(dst, x []float64, val []float64) {
	n := c.rows
	if len(dst) != n || len(x) != n {
		panic(fmt.Sprintf("ulam: mat-vec with vectors of length %d and %d, want %d", len(dst), len(x), n))
	}
	if c.rowPtr == nil {
		panic("ulam: mat-vec of a matrix with more than 2³¹−1 nonzeros")
	}
	if len(val) != c.nnz {
		panic(fmt.Sprintf("ulam: mat-vec with %d values for %d nonzeros", len(val), c.nnz))
	}
	// Below about 2¹⁶ nonzeros a second goroutine costs more than it saves.
	workers := min(runtime.GOMAXPROCS(0), max(1, c.nnz>>16))
	if workers == 1 {
		mulRows(dst, x, c.rowPtr, c.col, val, 0, n)
		return
	}
	// The rows are cut into mulVecChunks pieces of equal nonzeros, taken
	// in turn by the calling goroutine and workers−1 others: a helper
	// that starts late (waking a parked thread can take as long as a
	// piece) leaves its pieces to the others instead of holding up the
	// end.
	chunks := mulVecChunks * workers
	var next atomic.Int32
	run := func() {
		for {
			p := int(next.Add(1) - 1)
			if p >= chunks {
				return
			}
			mulRows(dst, x, c.rowPtr, c.col, val, c.chunkStart(p, chunks), c.chunkStart(p+1, chunks))
		}
	}
	var wg sync.WaitGroup
	for range workers - 1 {
		wg.Go(run)
	}
	run()
	wg.Wait()
}

// mulVecChunks is the number of pieces per core of a parallel mat-vec.
const mulVecChunks = 8

// chunkStart returns the first row of piece p of chunks: the first row
// whose entries start at or after the p-th share of the nonzeros (n for
// p = chunks).
func (c *compactCSR) chunkStart(p, chunks int) int {
	if p >= chunks {
		return c.rows
	}
	share := int32((int64(c.nnz) * int64(p)) / int64(chunks))
	return sort.Search(c.rows, func(i int) bool { return c.rowPtr[i] >= share })
}

// mulRowsGo sets dst[i] = Σ_k val[k]·x[col[k]] for the rows i in
// [lo, hi), each sum formed from 0 in entry order. mulRows runs it, or on
// amd64 the same operations in assembly.
func mulRowsGo(dst, x []float64, rowPtr, col []int32, val []float64, lo, hi int) {
	if lo >= hi {
		return
	}
	dst = dst[lo:hi]
	rowPtr = rowPtr[lo : hi+1]
	// One slice of the row block's entries, walked by a running index:
	// the rows are short (a few entries), so per-row slicing would cost
	// more bounds checks than it saves.
	first, last := int(rowPtr[0]), int(rowPtr[len(rowPtr)-1])
	col, val = col[first:last], val[first:last]
	val = val[:len(col)]
	k := 0
	for i := range dst {
		end := int(rowPtr[i+1]) - first
		var sum float64
		for ; k < end && k < len(col); k++ {
			sum += val[k] * x[col[k]]
		}
		dst[i] = sum
	}
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
