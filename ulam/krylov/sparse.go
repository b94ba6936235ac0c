package krylov

import (
	"fmt"
	"math"
)

// SparseMatrix is an Operator whose entries are known in compressed sparse
// rows, so that EigsSparse can look at its pattern.
type SparseMatrix interface {
	Operator
	// Entries returns the compressed sparse rows of the matrix: the
	// nonzeros of row i are in the columns col[rowPtr[i]:rowPtr[i+1]] with
	// the values val[rowPtr[i]:rowPtr[i+1]]. The arrays are not modified.
	Entries() (rowPtr, col []int, val []float64)
}

// EigsSparse computes what Eigs computes, for a matrix known by its
// entries. A reducible matrix (its graph of nonzeros not strongly
// connected) is first split into the irreducible diagonal blocks of its
// block triangular form (IrreducibleBlocks). The eigenvalues of a block
// triangular matrix are those of its diagonal blocks, so each block of
// more than one row gets its own Eigs for min(k, size) eigenvalues, a
// block of one row gives its diagonal entry (0 for the many transient
// cells of a transfer matrix), and the k of largest modulus over all
// blocks are returned. Each comes out with only its own block's
// conditioning, and the work scales with the size of the blocks, not of
// the matrix: the unrestricted 10⁶-cell Ulam matrix of a repeller is
// mostly transient cells around a few thousand cells on cycles.
//
// A residual is that of the eigenvector within its block, relative to
// the largest block norm, which bounds the residual relative to ‖A‖
// from above. Settings.Start is restricted to each block, and
// Settings.DenseSize applies to each block. Without the split (an
// irreducible matrix, a problem solved densely, or Settings.Vectors, since
// an eigenvector of a reducible matrix spreads over the blocks that lead
// to its own) EigsSparse is Eigs.
func EigsSparse(a SparseMatrix, s *Settings) (Result, error) {
	c, err := validate(a, s)
	if err != nil {
		return Result{}, err
	}
	if c.dense || c.vectors {
		return Eigs(a, s)
	}
	rowPtr, col, val := a.Entries()
	order, start := IrreducibleBlocks(rowPtr, col)
	if len(start) <= 2 {
		return Eigs(a, s)
	}

	var in Settings
	if s != nil {
		in = *s
	}
	var res Result
	var blockNorm []float64 // the norm of the block each value came from
	add := func(v complex128, residual, norm float64) {
		res.Values = append(res.Values, v)
		res.Residuals = append(res.Residuals, residual)
		blockNorm = append(blockNorm, norm)
	}
	pos := make([]int, len(rowPtr)-1)
	for i := range pos {
		pos[i] = -1
	}
	// The k values of largest modulus of the one-row blocks (there may be
	// a million of them, so they are selected, not sorted).
	var singles topValues
	singles.k = c.k
	for b := 0; b+1 < len(start); b++ {
		rows := order[start[b]:start[b+1]]
		if len(rows) == 1 {
			i := rows[0]
			var d float64
			for e := rowPtr[i]; e < rowPtr[i+1]; e++ {
				if col[e] == i {
					d = val[e]
				}
			}
			singles.offer(d)
			continue
		}
		blk := principal(rowPtr, col, val, rows, pos)
		bs := in
		bs.Wanted = min(c.k, len(rows))
		bs.Start = nil
		if in.Start != nil {
			bs.Start = make([]float64, len(rows))
			var nz bool
			for p, i := range rows {
				bs.Start[p] = in.Start[i]
				nz = nz || in.Start[i] != 0
			}
			if !nz {
				bs.Start = nil // the default start vector
			}
		}
		r, err := Eigs(blk, &bs)
		res.Stats.Add(r.Stats)
		if err != nil {
			res.Status = IterationLimit
			return res, fmt.Errorf("krylov: diagonal block %d of %d (%d of %d rows): %w", b+1, len(start)-1, len(rows), len(pos), err)
		}
		for i, v := range r.Values {
			add(v, r.Residuals[i], r.Norm)
		}
	}
	for _, v := range singles.values {
		add(complex(v, 0), 0, math.Abs(v))
	}

	norm := c.norm
	for _, x := range blockNorm {
		norm = max(norm, x)
	}
	res.Norm = norm
	for i, r := range res.Residuals {
		if norm > 0 {
			res.Residuals[i] = r * blockNorm[i] / norm
		}
	}
	sortResult(&res)
	kk := min(c.k, len(res.Values))
	if kk < len(res.Values) && imag(res.Values[kk-1]) > 0 {
		kk++ // keep a conjugate pair whole
	}
	res.Values, res.Residuals = res.Values[:kk], res.Residuals[:kk]
	res.Status = Converged
	return res, nil
}

// topValues keeps the k values of largest modulus offered to it.
type topValues struct {
	k      int
	values []float64 // by decreasing modulus
}

func (t *topValues) offer(v float64) {
	if len(t.values) == t.k && math.Abs(v) <= math.Abs(t.values[t.k-1]) {
		return
	}
	if len(t.values) < t.k {
		t.values = append(t.values, v)
	}
	i := len(t.values) - 1
	for ; i > 0 && math.Abs(t.values[i-1]) < math.Abs(v); i-- {
		t.values[i] = t.values[i-1]
	}
	t.values[i] = v
}

// principal returns the principal submatrix of the CSR matrix rowPtr,
// col, val on the sorted indices rows, as an Operator. pos must hold −1
// for every index on entry, and does so again on return.
func principal(rowPtr, col []int, val []float64, rows []int, pos []int) *csrOperator {
	for p, i := range rows {
		pos[i] = p
	}
	nnz := 0
	for _, i := range rows {
		for _, j := range col[rowPtr[i]:rowPtr[i+1]] {
			if pos[j] >= 0 {
				nnz++
			}
		}
	}
	bRowPtr := make([]int, 1, len(rows)+1)
	bCol := make([]int, 0, nnz)
	bVal := make([]float64, 0, nnz)
	for _, i := range rows {
		for e := rowPtr[i]; e < rowPtr[i+1]; e++ {
			if p := pos[col[e]]; p >= 0 {
				bCol = append(bCol, p)
				bVal = append(bVal, val[e])
			}
		}
		bRowPtr = append(bRowPtr, len(bCol))
	}
	for _, i := range rows {
		pos[i] = -1
	}
	return &csrOperator{index: NewCSRIndex(bRowPtr, bCol), val: bVal}
}

// csrOperator is a matrix given by a CSRIndex and its values.
type csrOperator struct {
	index *CSRIndex
	val   []float64
}

func (a *csrOperator) Dim() int               { return a.index.Dim() }
func (a *csrOperator) Apply(dst, x []float64) { a.index.MulVec(dst, x, a.val) }
