package krylov

import (
	"fmt"
	"math"
	"slices"
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

// blockKeeper is a SparseMatrix that keeps its irreducible blocks (the
// result of IrreducibleBlocks on its pattern, not to be modified), so that
// EigsSparse and LeadingSparse on the same matrix find them once.
type blockKeeper interface {
	IrreducibleBlocks() (order, start []int)
}

// blocksOf returns the irreducible blocks of a, kept ones if it keeps them.
func blocksOf(a SparseMatrix, rowPtr, col []int) (order, start []int) {
	if k, ok := a.(blockKeeper); ok {
		return k.IrreducibleBlocks()
	}
	return IrreducibleBlocks(rowPtr, col)
}

// EigsSparse computes what Eigs computes, for a matrix known by its
// entries (which may keep its blocks: a method IrreducibleBlocks() (order,
// start []int) returning IrreducibleBlocks of its pattern is used). A reducible matrix (its graph of nonzeros not strongly
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
	order, start := blocksOf(a, rowPtr, col)
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
	return newCSROperator(principalArrays(rowPtr, col, val, rows, pos))
}

// principalArrays returns the CSR arrays of that submatrix.
func principalArrays(rowPtr, col []int, val []float64, rows []int, pos []int) ([]int, []int, []float64) {
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
	return bRowPtr, bCol, bVal
}

// transposed returns the transpose of the n×n CSR matrix rowPtr, col,
// val as an Operator, columns increasing in every row.
func transposed(rowPtr, col []int, val []float64) *csrOperator {
	n := len(rowPtr) - 1
	tPtr := make([]int, n+1)
	for _, j := range col {
		tPtr[j+1]++
	}
	for j := range n {
		tPtr[j+1] += tPtr[j]
	}
	tCol := make([]int, len(col))
	tVal := make([]float64, len(col))
	fill := slices.Clone(tPtr[:n])
	for i := range n {
		for e := rowPtr[i]; e < rowPtr[i+1]; e++ {
			j := col[e]
			tCol[fill[j]], tVal[fill[j]] = i, val[e]
			fill[j]++
		}
	}
	return newCSROperator(tPtr, tCol, tVal)
}

func newCSROperator(rowPtr, col []int, val []float64) *csrOperator {
	return &csrOperator{index: NewCSRIndex(rowPtr, col), val: val}
}

// csrOperator is a matrix given by a CSRIndex and its values.
type csrOperator struct {
	index *CSRIndex
	val   []float64
}

func (a *csrOperator) Dim() int               { return a.index.Dim() }
func (a *csrOperator) Apply(dst, x []float64) { a.index.MulVec(dst, x, a.val) }

// LeadingSparse is Leading for a matrix known by its entries; the
// transpose is formed from them. A reducible matrix is split as in
// EigsSparse. In the block upper triangular order of IrreducibleBlocks
// (A_cd ≠ 0 only for c ≤ d) the leading eigenvalue λ is that of the block
// b whose leading eigenvalue is largest in modulus, and Leading on that
// block gives λ with its vectors u_b, v_b. The right eigenvector is zero
// on the blocks after b and, on an earlier block c, the solution of
//
//	(λ − A_cc) v_c = Σ_{d>c} A_cd v_d,
//
// taken from block b−1 down to the first; the left eigenvector is zero
// on the blocks before b and, on a later block c, the solution of
//
//	(λ − A_ccᵀ) u_c = Σ_{d<c} A_dcᵀ u_d,
//
// taken from block b+1 up. λ − A_cc is invertible when no other block has
// an eigenvalue of modulus |λ|; the solves are by the Neumann series
// x ← (r + A_cc x)/λ, which converges like (ρ(A_cc)/|λ|)^k (a division for
// a one-row block). Only the blocks that reach b (for v) or that b reaches
// (for u) get nonzero entries. Should a series not converge in
// neumannSteps steps, the whole matrix goes to Leading. When another
// block's leading eigenvalue has the same modulus to within the
// tolerance, λ is not isolated and LeadingSparse returns an error matching
// ErrLeadingMismatch. The residuals are computed on the whole matrix,
// relative to the lower bound max(|λ|, ‖Av‖/‖v‖, ‖Aᵀu‖/‖u‖) of ‖A‖. Unlike
// Leading, it returns no vectors with an error from a split matrix.
func LeadingSparse(a SparseMatrix, s *Settings) (LeadingPair, error) {
	var set Settings
	if s != nil {
		set = *s
	}
	tol := set.Tol
	if tol == 0 {
		tol = 1e-12
	}
	rowPtr, col, val := a.Entries()
	n := len(rowPtr) - 1
	whole := func() (LeadingPair, error) { return Leading(a, transposed(rowPtr, col, val), s) }
	order, start := blocksOf(a, rowPtr, col)
	if len(start) <= 2 {
		return whole()
	}
	blockOf := make([]int, n)
	for b := 0; b+1 < len(start); b++ {
		for _, i := range order[start[b]:start[b+1]] {
			blockOf[i] = b
		}
	}
	pos := make([]int, n)
	for i := range pos {
		pos[i] = -1
	}
	diagonal := func(i int) float64 {
		for e := rowPtr[i]; e < rowPtr[i+1]; e++ {
			if col[e] == i {
				return val[e]
			}
		}
		return 0
	}

	// The leading eigenvalue of every block; the largest is λ. The solve
	// of the leading block, with its vectors, serves as the right half of
	// Leading on it (its work is counted there).
	var stats Stats
	best, bestMod, second := -1, 0.0, 0.0
	bs := set
	bs.Wanted, bs.Vectors, bs.Start = 1, true, nil
	type blockSolve struct {
		rowPtr, col []int
		val         []float64
		op          *csrOperator
		right       Result
	}
	var lead blockSolve // of the leading block, when it has more than one row
	for b := 0; b+1 < len(start); b++ {
		rows := order[start[b]:start[b+1]]
		var mod float64
		var this blockSolve
		if len(rows) == 1 {
			mod = math.Abs(diagonal(rows[0]))
		} else {
			this.rowPtr, this.col, this.val = principalArrays(rowPtr, col, val, rows, pos)
			this.op = newCSROperator(this.rowPtr, this.col, this.val)
			var err error
			this.right, err = Eigs(this.op, &bs)
			if err != nil {
				stats.Add(this.right.Stats)
				return LeadingPair{Stats: stats}, fmt.Errorf("krylov: diagonal block %d of %d (%d of %d rows): %w", b+1, len(start)-1, len(rows), n, err)
			}
			mod = cmplxAbs(this.right.Values[0])
		}
		if best < 0 || mod > bestMod {
			second = max(second, bestMod)
			stats.Add(lead.right.Stats)
			best, bestMod, lead = b, mod, this
		} else {
			second = max(second, mod)
			stats.Add(this.right.Stats)
		}
	}
	if bestMod == 0 {
		return whole() // nilpotent: no dominant block
	}
	if second >= bestMod*(1-math.Sqrt(tol)) {
		stats.Add(lead.right.Stats)
		return LeadingPair{Stats: stats}, fmt.Errorf("%w: two diagonal blocks have leading eigenvalues of modulus %.15g and %.15g",
			ErrLeadingMismatch, bestMod, second)
	}

	// λ and the block's own vectors.
	rows := order[start[best]:start[best+1]]
	var pair LeadingPair
	if len(rows) == 1 {
		pair = LeadingPair{Value: diagonal(rows[0]), Right: []float64{1}, Left: []float64{1}}
	} else {
		var err error
		pair, err = leadingFrom(lead.right, nil, lead.op, transposed(lead.rowPtr, lead.col, lead.val), bs)
		stats.Add(pair.Stats)
		if err != nil {
			// The block's vectors are not the matrix's: none returned.
			return LeadingPair{Stats: stats}, fmt.Errorf("krylov: diagonal block %d of %d (%d of %d rows): %w", best+1, len(start)-1, len(rows), n, err)
		}
	}
	lambda := pair.Value
	v := make([]float64, n)
	u := make([]float64, n)
	for p, i := range rows {
		v[i], u[i] = pair.Right[p], pair.Left[p]
	}
	x := make([]float64, n)  // scratch of the Neumann series
	bx := make([]float64, n) // A_cc x or A_ccᵀ x on the block's rows

	// Right vector: blocks best−1 down to 0; rhs holds each row's sum over
	// the entries leaving its block (v is zero where not yet set).
	rhs := make([]float64, n)
	for b := best - 1; b >= 0; b-- {
		rows := order[start[b]:start[b+1]]
		reached := false
		for _, i := range rows {
			var sum float64
			for e := rowPtr[i]; e < rowPtr[i+1]; e++ {
				if blockOf[col[e]] != b {
					sum += val[e] * v[col[e]]
				}
			}
			rhs[i] = sum
			reached = reached || sum != 0
		}
		switch {
		case !reached:
			// A block that does not lead to best: v stays zero there.
		case len(rows) == 1:
			i := rows[0]
			v[i] = rhs[i] / (lambda - diagonal(i))
		default:
			ok := neumann(v, rhs, x, bx, rows, lambda, tol, func() {
				for _, i := range rows {
					var sum float64
					for e := rowPtr[i]; e < rowPtr[i+1]; e++ {
						if blockOf[col[e]] == b {
							sum += val[e] * x[col[e]]
						}
					}
					bx[i] = sum
				}
			})
			if !ok {
				return whole()
			}
		}
	}

	// Left vector: blocks best+1 up; acc gathers the entries entering
	// each block from the rows already set.
	acc := make([]float64, n)
	scatter := func(b int) {
		for _, i := range order[start[b]:start[b+1]] {
			if u[i] == 0 {
				continue
			}
			for e := rowPtr[i]; e < rowPtr[i+1]; e++ {
				if blockOf[col[e]] != b {
					acc[col[e]] += val[e] * u[i]
				}
			}
		}
	}
	scatter(best)
	for b := best + 1; b+1 < len(start); b++ {
		rows := order[start[b]:start[b+1]]
		reached := false
		for _, j := range rows {
			reached = reached || acc[j] != 0
		}
		switch {
		case !reached:
			continue // a block that best does not lead to: u stays zero
		case len(rows) == 1:
			j := rows[0]
			u[j] = acc[j] / (lambda - diagonal(j))
		default:
			ok := neumann(u, acc, x, bx, rows, lambda, tol, func() {
				for _, j := range rows {
					bx[j] = 0
				}
				for _, i := range rows {
					for e := rowPtr[i]; e < rowPtr[i+1]; e++ {
						if blockOf[col[e]] == b {
							bx[col[e]] += val[e] * x[i]
						}
					}
				}
			})
			if !ok {
				return whole()
			}
		}
		scatter(b)
	}

	// v of unit norm with its entry of largest modulus positive, as
	// Leading returns it; ⟨u, v⟩ = 1 (it is ⟨u_b, v_b⟩ = 1 before v is
	// rescaled).
	vn := math.Sqrt(Dot(v, v))
	top := 0
	for i, x := range v {
		if math.Abs(x) > math.Abs(v[top]) {
			top = i
		}
	}
	scale(math.Copysign(1/vn, v[top]), v)
	scale(1/Dot(u, v), u)
	out := LeadingPair{Value: lambda, Right: v, Left: u, Condition: math.Sqrt(Dot(u, u)), Stats: stats}
	out.RightResidual, out.LeftResidual = pairResiduals(rowPtr, col, val, lambda, u, v)
	out.Stats.MatVecs += 2
	return out, nil
}

// neumannSteps bounds the steps of a Neumann series in LeadingSparse.
const neumannSteps = 10000

// neumann solves (λ − B) y = r on the given rows by y ← (r + B y)/λ from
// y = r/λ, until a step changes y by at most tol relative, and writes y
// into dst's rows. x and bx are scratch vectors indexed like dst: mulB
// sets bx = B x on the rows. It reports whether the series converged.
func neumann(dst, r, x, bx []float64, rows []int, lambda, tol float64, mulB func()) bool {
	for _, i := range rows {
		x[i] = r[i] / lambda
	}
	for range neumannSteps {
		mulB()
		var change, norm float64
		for _, i := range rows {
			next := (r[i] + bx[i]) / lambda
			change += (next - x[i]) * (next - x[i])
			norm += next * next
			x[i] = next
		}
		if change <= tol*tol*norm {
			for _, i := range rows {
				dst[i] = x[i]
			}
			return true
		}
	}
	return false
}

// pairResiduals returns ‖A v − λ v‖/(ν‖v‖) and ‖Aᵀu − λ u‖/(ν‖u‖) for the
// CSR matrix A, with ν = max(|λ|, ‖A v‖/‖v‖, ‖Aᵀu‖/‖u‖) ≤ ‖A‖₂.
func pairResiduals(rowPtr, col []int, val []float64, lambda float64, u, v []float64) (right, left float64) {
	n := len(rowPtr) - 1
	av := make([]float64, n)
	atu := make([]float64, n)
	for i := range n {
		var sum float64
		for e := rowPtr[i]; e < rowPtr[i+1]; e++ {
			sum += val[e] * v[col[e]]
			atu[col[e]] += val[e] * u[i]
		}
		av[i] = sum
	}
	var rr, ll, avv, atuu float64
	for i := range n {
		rr += (av[i] - lambda*v[i]) * (av[i] - lambda*v[i])
		ll += (atu[i] - lambda*u[i]) * (atu[i] - lambda*u[i])
		avv += av[i] * av[i]
		atuu += atu[i] * atu[i]
	}
	vn, un := math.Sqrt(Dot(v, v)), math.Sqrt(Dot(u, u))
	nu := max(math.Abs(lambda), math.Sqrt(avv)/vn, math.Sqrt(atuu)/un)
	return math.Sqrt(rr) / (nu * vn), math.Sqrt(ll) / (nu * un)
}
