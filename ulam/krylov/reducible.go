package krylov

import (
	"math"
	"slices"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack"
	"gonum.org/v1/gonum/mat"
)

// IrreducibleBlocks orders the n indices of a matrix with the sparsity
// pattern rowPtr, col (compressed sparse rows: the nonzeros of row i are in
// the columns col[rowPtr[i]:rowPtr[i+1]]) so that the matrix permuted
// symmetrically is block upper triangular with irreducible diagonal blocks
// (its Frobenius normal form): the blocks are the strongly connected
// components of the graph with an edge i → j for every nonzero, listed so
// that every edge between two blocks runs from an earlier to a later one.
// It returns the order and the block boundaries (block b holds
// order[start[b]:start[b+1]], each sorted). The eigenvalues of the matrix
// are those of its diagonal blocks.
//
// The components come from Tarjan's algorithm (R. Tarjan, SIAM J. Comput.
// 1 (1972) 146–160), run without recursion (10⁶-vertex graphs would
// exhaust the goroutine stack); Tarjan emits a component only after every
// component it reaches, so the reversed emission order is the one wanted.
func IrreducibleBlocks(rowPtr, col []int) (order, start []int) {
	n := len(rowPtr) - 1
	if n > math.MaxInt32-1 {
		panic("krylov: IrreducibleBlocks of more than 2³¹−2 indices")
	}
	// index[v] is 0 for an unvisited vertex, its visiting number (from 1)
	// while it is on the stack, and done once it belongs to an emitted
	// component: done exceeds every number, so the low-link update
	// low[v] = min(low[v], index[w]) ignores such w without a flag.
	// 32-bit arrays, and a stack and call stack touched only as deep as
	// they grow, keep the memory a 10⁶-vertex graph first touches (and
	// pays page faults for) small.
	const done = math.MaxInt32
	index := make([]int32, n)
	low := make([]int32, n)
	stack := make([]int32, 0, n)
	type frame struct{ v, edge int32 } // edge: offset within v's row
	calls := make([]frame, 0, n)
	var counter int32
	// Components are written from the back of order, so that the reversed
	// emission order comes out; ends records where each one starts.
	order = make([]int, n)
	pos := n
	ends := make([]int, 0, n+1)
	for root := range n {
		if index[root] != 0 {
			continue
		}
		counter++
		index[root], low[root] = counter, counter
		stack = append(stack, int32(root))
		calls = append(calls, frame{int32(root), 0})
		for len(calls) > 0 {
			f := &calls[len(calls)-1]
			v := int(f.v)
			descended := false
			for e := rowPtr[v] + int(f.edge); e < rowPtr[v+1]; e++ {
				w := col[e]
				f.edge++
				if index[w] == 0 {
					counter++
					index[w], low[w] = counter, counter
					stack = append(stack, int32(w))
					calls = append(calls, frame{int32(w), 0})
					descended = true
					break
				}
				low[v] = min(low[v], index[w])
			}
			if descended {
				continue
			}
			if low[v] == index[v] {
				for {
					w := int(stack[len(stack)-1])
					stack = stack[:len(stack)-1]
					index[w] = done
					pos--
					order[pos] = w
					if w == v {
						break
					}
				}
				ends = append(ends, pos)
			}
			calls = calls[:len(calls)-1]
			if len(calls) > 0 {
				u := calls[len(calls)-1].v
				low[u] = min(low[u], low[v])
			}
		}
	}
	// ends holds the component starts in decreasing order, the last 0.
	slices.Reverse(ends)
	start = append(ends, n)
	for b := 0; b+1 < len(start); b++ {
		slices.Sort(order[start[b]:start[b+1]])
	}
	return order, start
}

// denseBlocks is IrreducibleBlocks for the n×n row-major matrix a.
func denseBlocks(a []float64, n int) (order, start []int) {
	rowPtr := make([]int, n+1)
	var col []int
	for i := range n {
		for j := range n {
			if a[i*n+j] != 0 {
				col = append(col, j)
			}
		}
		rowPtr[i+1] = len(col)
	}
	return IrreducibleBlocks(rowPtr, col)
}

// reducibleEigen computes all eigenvalues and right eigenvectors of the
// n×n matrix a when it is reducible, block by block: with the order of
// IrreducibleBlocks, P A Pᵀ is block upper triangular, so its eigenvalues
// are those of the diagonal blocks A_bb. Each block is balanced (Dgebal,
// diagonal scaling D_b) and brought to real Schur form
// D_b⁻¹ A_bb D_b = Q_b T_b Q_bᵀ; with S = diag(D_b Q_b) the whole matrix
// S⁻¹ P A Pᵀ S is upper quasi-triangular, its off-diagonal blocks
// Q_bᵀ D_b⁻¹ A_bc D_c Q_c, and its eigenvectors follow by back substitution
// (Dtrevc3) mapped back by S and Pᵀ.
//
// Why: a backward-stable solver on the whole matrix errs on λ by about
// κ·ε·‖A‖, with κ the eigenvalue's condition number in A, and a block's
// smooth modes may be coupled to other blocks' non-normal (e.g. nilpotent)
// parts so that κ is huge while the entries, exact zeros included,
// determine λ to working precision: a Galerkin matrix of a map with linear
// branches is block triangular by polynomial degree, and its eigenvalues
// 2^(−k) came out 1e-8 wrong on the whole matrix and to round-off block by
// block. Here each eigenvalue carries only its own block's conditioning.
//
// It returns ok = false when a is irreducible (one block) or the QR
// algorithm fails on a block; the caller then solves the whole matrix.
// The eigenvalues come in mat.Eigen's convention: a complex pair as
// consecutive values, positive imaginary part first, its vectors
// conjugate.
func reducibleEigen(a *mat.Dense) (values []complex128, vectors *mat.CDense, ok bool) {
	n, _ := a.Dims()
	raw := a.RawMatrix()
	dense := raw.Data
	if raw.Stride != n {
		dense = mat.DenseCopyOf(a).RawMatrix().Data
	}
	order, start := denseBlocks(dense, n)
	if len(start) <= 2 {
		return nil, nil, false
	}
	// P A Pᵀ, then the block similarity applied in place.
	t := make([]float64, n*n)
	for i, oi := range order {
		for j, oj := range order {
			t[i*n+j] = dense[oi*n+oj]
		}
	}
	s := make([]float64, n*n) // S = diag(D_b Q_b)
	scale := make([]float64, n)
	wr, wi := make([]float64, n), make([]float64, n)
	for b := 0; b+1 < len(start); b++ {
		lo, hi := start[b], start[b+1]
		m := hi - lo
		blk := make([]float64, m*m)
		for i := range m {
			copy(blk[i*m:(i+1)*m], t[(lo+i)*n+lo:(lo+i)*n+hi])
		}
		lapackImpl.Dgebal(lapack.Scale, m, blk, m, scale[lo:hi])
		f := &schurForm{m: 1, t: blk, q: []float64{1}, wr: blk[:1], wi: []float64{0}}
		if m > 1 {
			f = newSchurForm(m)
			if f.factor(blk, m) != nil {
				return nil, nil, false
			}
		}
		copy(wr[lo:hi], f.wr)
		copy(wi[lo:hi], f.wi)
		for i := range m {
			for j := range m {
				s[(lo+i)*n+lo+j] = scale[lo+i] * f.q[i*m+j]
				t[(lo+i)*n+lo+j] = f.t[i*m+j]
			}
		}
		// Rows of the block: T_bc ← Q_bᵀ D_b⁻¹ T_bc for the later blocks c,
		// columns: T_ab ← T_ab D_b Q_b for the earlier blocks a.
		if hi < n {
			right := blas64.General{Rows: m, Cols: n - hi, Stride: n, Data: t[lo*n+hi:]}
			for i := range m {
				for j := hi; j < n; j++ {
					t[(lo+i)*n+j] /= scale[lo+i]
				}
			}
			q := blas64.General{Rows: m, Cols: m, Stride: m, Data: f.q}
			tmp := blas64.General{Rows: m, Cols: n - hi, Stride: n - hi, Data: make([]float64, m*(n-hi))}
			blas64.Gemm(blas.Trans, blas.NoTrans, 1, q, right, 0, tmp)
			for i := range m {
				copy(t[(lo+i)*n+hi:(lo+i)*n+n], tmp.Data[i*(n-hi):(i+1)*(n-hi)])
			}
		}
		if lo > 0 {
			above := blas64.General{Rows: lo, Cols: m, Stride: n, Data: t[lo:]}
			for i := range lo {
				for j := range m {
					t[i*n+lo+j] *= scale[lo+j]
				}
			}
			q := blas64.General{Rows: m, Cols: m, Stride: m, Data: f.q}
			tmp := blas64.General{Rows: lo, Cols: m, Stride: m, Data: make([]float64, lo*m)}
			blas64.Gemm(blas.NoTrans, blas.NoTrans, 1, above, q, 0, tmp)
			for i := range lo {
				copy(t[i*n+lo:i*n+hi], tmp.Data[i*m:(i+1)*m])
			}
		}
	}
	query := make([]float64, 1)
	lapackImpl.Dtrevc3(lapack.EVRight, lapack.EVAllMulQ, nil, n, t, n, nil, 1, s, n, n, query, -1)
	work := make([]float64, max(3*n, int(query[0])))
	lapackImpl.Dtrevc3(lapack.EVRight, lapack.EVAllMulQ, nil, n, t, n, nil, 1, s, n, n, work, len(work))
	values = make([]complex128, n)
	vectors = mat.NewCDense(n, n, nil)
	for j := 0; j < n; {
		if wi[j] == 0 {
			values[j] = complex(wr[j], 0)
			for i := range n {
				vectors.Set(order[i], j, complex(s[i*n+j], 0))
			}
			j++
			continue
		}
		values[j] = complex(wr[j], math.Abs(wi[j]))
		values[j+1] = complex(wr[j], -math.Abs(wi[j]))
		for i := range n {
			re, im := s[i*n+j], s[i*n+j+1]
			vectors.Set(order[i], j, complex(re, im))
			vectors.Set(order[i], j+1, complex(re, -im))
		}
		j += 2
	}
	return values, vectors, true
}
