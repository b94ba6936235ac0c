package krylov

import (
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"sync"

	"gonum.org/v1/gonum/mat"
)

// csr is a plain compressed-sparse-row matrix for the tests and benchmarks:
// row i holds columns col[rowPtr[i]:rowPtr[i+1]] (sorted, distinct) with
// values val[rowPtr[i]:rowPtr[i+1]].
type csr struct {
	n      int
	rowPtr []int
	col    []int
	val    []float64
}

type entry struct {
	row, col int
	val      float64
}

// newCSR builds an n×n csr matrix from entries, summing duplicates.
func newCSR(n int, entries []entry) *csr {
	a := &csr{n: n, rowPtr: make([]int, n+1)}
	for _, e := range entries {
		a.rowPtr[e.row+1]++
	}
	for i := range n {
		a.rowPtr[i+1] += a.rowPtr[i]
	}
	next := slices.Clone(a.rowPtr[:n])
	cols := make([]int, len(entries))
	vals := make([]float64, len(entries))
	for _, e := range entries {
		cols[next[e.row]] = e.col
		vals[next[e.row]] = e.val
		next[e.row]++
	}
	a.col = make([]int, 0, len(entries))
	a.val = make([]float64, 0, len(entries))
	type pair struct {
		col int
		val float64
	}
	var row []pair
	start := 0
	for i := range n {
		row = row[:0]
		for p := a.rowPtr[i]; p < a.rowPtr[i+1]; p++ {
			row = append(row, pair{cols[p], vals[p]})
		}
		slices.SortStableFunc(row, func(x, y pair) int { return x.col - y.col })
		for j, p := range row {
			if j > 0 && row[j-1].col == p.col {
				a.val[len(a.val)-1] += p.val
				continue
			}
			a.col = append(a.col, p.col)
			a.val = append(a.val, p.val)
		}
		a.rowPtr[i] = start
		start = len(a.col)
	}
	a.rowPtr[n] = start
	return a
}

func (a *csr) Dim() int { return a.n }

// Apply sets dst = A x, rows split into contiguous chunks over the cores;
// every row is summed in the same order, so the result does not depend on
// the number of chunks.
func (a *csr) Apply(dst, x []float64) {
	rows := func(lo, hi int) {
		for i := lo; i < hi; i++ {
			var s float64
			for p := a.rowPtr[i]; p < a.rowPtr[i+1]; p++ {
				s += a.val[p] * x[a.col[p]]
			}
			dst[i] = s
		}
	}
	workers := runtime.GOMAXPROCS(0)
	if a.n < 1<<15 || workers == 1 {
		rows(0, a.n)
		return
	}
	var wg sync.WaitGroup
	chunk := (a.n + workers - 1) / workers
	for lo := 0; lo < a.n; lo += chunk {
		wg.Go(func() { rows(lo, min(lo+chunk, a.n)) })
	}
	wg.Wait()
}

func (a *csr) entries() []entry {
	var es []entry
	for i := range a.n {
		for p := a.rowPtr[i]; p < a.rowPtr[i+1]; p++ {
			es = append(es, entry{i, a.col[p], a.val[p]})
		}
	}
	return es
}

func (a *csr) transpose() *csr {
	es := a.entries()
	for i := range es {
		es[i].row, es[i].col = es[i].col, es[i].row
	}
	return newCSR(a.n, es)
}

func (a *csr) dense() *mat.Dense {
	d := mat.NewDense(a.n, a.n, nil)
	for _, e := range a.entries() {
		d.Set(e.row, e.col, e.val)
	}
	return d
}

// randomSparse returns an n×n matrix with about perRow nonzeros per row at
// random columns, standard normal values, from a fixed PCG seed.
func randomSparse(n, perRow int, seed uint64) *csr {
	rng := rand.New(rand.NewPCG(seed, 17))
	var es []entry
	for i := range n {
		for range perRow {
			es = append(es, entry{i, rng.IntN(n), rng.NormFloat64()})
		}
	}
	return newCSR(n, es)
}

// clusteredRotations returns a matrix similar, by a random permutation, to
// a block diagonal of 2×2 blocks r_j R(θ_j) (R a rotation), plus eps times a
// random sparse matrix. The first `circle` blocks have radii 1, 0.99, 0.98,
// … and the others radii in [0.3, 0.8), so the eigenvalues of largest
// modulus crowd near the unit circle in conjugate pairs.
func clusteredRotations(n, circle int, eps float64, seed uint64) *csr {
	rng := rand.New(rand.NewPCG(seed, 29))
	perm := rng.Perm(n)
	var es []entry
	for b := 0; 2*b+1 < n; b++ {
		r := 1 - 0.01*float64(b)
		if b >= circle {
			r = 0.3 + 0.5*rng.Float64()
		}
		theta := 0.1 + 3*rng.Float64()
		c, s := r*math.Cos(theta), r*math.Sin(theta)
		i, j := perm[2*b], perm[2*b+1]
		es = append(es, entry{i, i, c}, entry{i, j, -s}, entry{j, i, s}, entry{j, j, c})
	}
	if n%2 == 1 {
		es = append(es, entry{perm[n-1], perm[n-1], 0.1})
	}
	for i := range n {
		for range 3 {
			es = append(es, entry{i, rng.IntN(n), eps * rng.NormFloat64()})
		}
	}
	return newCSR(n, es)
}

// stochastic returns a random sparse column-stochastic matrix (nonnegative,
// every column summing to one): each column j has a self-loop, the edge
// j → j+1 mod n (so the matrix is irreducible and aperiodic) and perCol
// random entries.
func stochastic(n, perCol int, seed uint64) *csr {
	rng := rand.New(rand.NewPCG(seed, 31))
	var es []entry
	for j := range n {
		weights := make([]float64, perCol+2)
		rows := make([]int, perCol+2)
		rows[0], rows[1] = j, (j+1)%n
		for p := 2; p < len(rows); p++ {
			rows[p] = rng.IntN(n)
		}
		var sum float64
		for p := range weights {
			weights[p] = 0.1 + rng.Float64()
			sum += weights[p]
		}
		for p := range rows {
			es = append(es, entry{rows[p], j, weights[p] / sum})
		}
	}
	return newCSR(n, es)
}

// openLinearUlam returns the Ulam matrix P on cells = 4·q equal cells of
// the open full-branch piecewise-linear map with branches x ↦ 4x on
// [0, 1/4] and x ↦ 2x − 1 on [1/2, 1] (points of (1/4, 1/2) escape),
// P_ij = |B_i ∩ f⁻¹(B_j)|/|B_i|. The branch points lie on cell edges and
// every cell maps onto whole cells.
func openLinearUlam(cells int) *csr {
	if cells%4 != 0 {
		panic("openLinearUlam: cells must be a multiple of 4")
	}
	var es []entry
	for i := range cells / 4 {
		for d := range 4 {
			es = append(es, entry{i, 4*i + d, 0.25})
		}
	}
	for i := cells / 2; i < cells; i++ {
		k := i - cells/2
		es = append(es, entry{i, 2 * k, 0.5}, entry{i, 2*k + 1, 0.5})
	}
	return newCSR(cells, es)
}

// doublingUlam returns the transposed (mass-transport) Ulam matrix of the
// doubling map x ↦ 2x mod 1 on n equal cells, n even: cell i maps onto
// cells 2i mod n and 2i+1 mod n, half of its mass to each, so row j
// gathers half the mass of cells ⌊j/2⌋ and ⌊j/2⌋ + n/2.
func doublingUlam(n int) *csr {
	a := &csr{n: n, rowPtr: make([]int, n+1), col: make([]int, 2*n), val: make([]float64, 2*n)}
	for j := range n {
		a.rowPtr[j] = 2 * j
		a.col[2*j], a.col[2*j+1] = j/2, j/2+n/2
		a.val[2*j], a.val[2*j+1] = 0.5, 0.5
	}
	a.rowPtr[n] = 2 * n
	return a
}

// perturbedDoublingUlam returns the transposed (mass-transport) Ulam matrix,
// on n equal cells of the circle [0, 1), of the expanding circle map
// f(x) = 2x + eps·sin(2πx) mod 1 (|eps| < 1/(2π), so f′ ≥ 2 − 2π|eps| > 1):
// entry (j, i) is |B_i ∩ f⁻¹(B_j)|/|B_i|, the preimage pieces found by
// Newton's method on the increasing lift of f. Each cell meets two to four
// image cells.
func perturbedDoublingUlam(n int, eps float64) *csr {
	lift := func(x float64) float64 { return 2*x + eps*math.Sin(2*math.Pi*x) }
	slope := func(x float64) float64 { return 2 + 2*math.Pi*eps*math.Cos(2*math.Pi*x) }
	var es []entry
	h := 1 / float64(n)
	for i := range n {
		a, b := float64(i)*h, float64(i+1)*h
		fa, fb := lift(a), lift(b)
		inverse := func(y float64) float64 {
			if y <= fa {
				return a
			}
			if y >= fb {
				return b
			}
			x := a + (b-a)*(y-fa)/(fb-fa)
			for range 6 {
				x -= (lift(x) - y) / slope(x)
			}
			return min(max(x, a), b)
		}
		for cell := int(math.Floor(fa * float64(n))); float64(cell)*h < fb; cell++ {
			lo, hi := max(fa, float64(cell)*h), min(fb, float64(cell+1)*h)
			if hi <= lo {
				continue
			}
			w := (inverse(hi) - inverse(lo)) * float64(n)
			es = append(es, entry{((cell % n) + n) % n, i, w})
		}
	}
	return newCSR(n, es)
}

// logisticRepellerUlam returns the transposed (mass-transport) Ulam matrix
// on n equal cells of [0, 1] of the open logistic map f(x) = r x(1 − x),
// r > 4: entry (j, i) is |B_i ∩ f⁻¹(B_j)|/|B_i|, the mass of cell i that
// lands in cell j; mass mapped above 1 escapes. The preimage pieces come
// from the two inverse branches x = (1 ∓ √(1 − 4y/r))/2 in closed form.
func logisticRepellerUlam(n int, r float64) *csr {
	inverse := func(y float64, lap int) float64 {
		d := math.Sqrt(max(0, 1-4*y/r))
		if lap == 0 {
			return (1 - d) / 2
		}
		return (1 + d) / 2
	}
	f := func(x float64) float64 { return r * x * (1 - x) }
	h := 1 / float64(n)
	var es []entry
	for i := range n {
		a, b := float64(i)*h, float64(i+1)*h
		// The monotone pieces of the cell: [a, b] split at 1/2.
		pieces := [][2]float64{{a, b}}
		if a < 0.5 && b > 0.5 {
			pieces = [][2]float64{{a, 0.5}, {0.5, b}}
		}
		for _, p := range pieces {
			lap := 0
			if p[0] >= 0.5 {
				lap = 1
			}
			lo, hi := min(f(p[0]), f(p[1])), max(f(p[0]), f(p[1]))
			hi = min(hi, 1)
			for cell := int(lo * float64(n)); cell < n && float64(cell)*h < hi; cell++ {
				ylo, yhi := max(lo, float64(cell)*h), min(hi, float64(cell+1)*h)
				if yhi <= ylo {
					continue
				}
				w := math.Abs(inverse(yhi, lap)-inverse(ylo, lap)) * float64(n)
				es = append(es, entry{cell, i, w})
			}
		}
	}
	return newCSR(n, es)
}

func (a *csr) Entries() (rowPtr, col []int, val []float64) { return a.rowPtr, a.col, a.val }
