package krylov

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// layeredDoubling returns a reducible matrix shaped like the Galerkin
// matrix of the doubling map on a basis of polynomials of degree ≤ p per
// cell: layer k (k = 0…p) carries 2^(−k) times the doubling map's
// mass-transport Ulam matrix on n cells (eigenvalues 1, simple, and 0 with
// nilpotent Jordan blocks: common practice, no source), and layer k feeds
// every later layer through random dense coupling blocks. Its eigenvalues
// are 2^(−k) and 0 (those of the diagonal blocks of a block triangular
// matrix: common practice, no source). Rows and columns are then permuted
// at random, so that the block structure must be found.
func layeredDoubling(n, p int, seed uint64) (a *mat.Dense, want []float64) {
	rnd := rand.New(rand.NewPCG(seed, 3))
	size := n * (p + 1)
	b := mat.NewDense(size, size, nil)
	u := doublingUlam(n).dense()
	for k := 0; k <= p; k++ {
		want = append(want, math.Pow(2, -float64(k)))
		for i := range n {
			for j := range n {
				b.Set(k*n+i, k*n+j, math.Pow(2, -float64(k))*u.At(i, j))
				for l := k + 1; l <= p; l++ {
					b.Set(k*n+i, l*n+j, rnd.Float64()-0.5)
				}
			}
		}
	}
	perm := rnd.Perm(size)
	a = mat.NewDense(size, size, nil)
	for i := range size {
		for j := range size {
			a.Set(perm[i], perm[j], b.At(i, j))
		}
	}
	return a, want
}

// TestIrreducibleBlocks checks the Frobenius normal form: every nonzero
// entry runs from a block to itself or to a later block, and every block
// is strongly connected (definitions, common practice, no source).
func TestIrreducibleBlocks(t *testing.T) {
	a, _ := layeredDoubling(8, 3, 1)
	n, _ := a.Dims()
	data := a.RawMatrix().Data
	order, start := denseBlocks(data, n)
	if len(order) != n {
		t.Fatalf("order has %d indices, want %d", len(order), n)
	}
	blockOf := make([]int, n)
	for b := 0; b+1 < len(start); b++ {
		for _, i := range order[start[b]:start[b+1]] {
			blockOf[i] = b
		}
	}
	for i := range n {
		for j := range n {
			if data[i*n+j] != 0 && blockOf[i] > blockOf[j] {
				t.Fatalf("entry (%d, %d) runs from block %d back to block %d", i, j, blockOf[i], blockOf[j])
			}
		}
	}
	// The doubling layers are irreducible: 4 blocks of 8.
	if len(start) != 5 {
		t.Fatalf("found %d blocks, want 4 (boundaries %v)", len(start)-1, start)
	}
	for b := 0; b+1 < len(start); b++ {
		members := order[start[b]:start[b+1]]
		for _, forward := range []bool{true, false} {
			seen := map[int]bool{members[0]: true}
			queue := []int{members[0]}
			for len(queue) > 0 {
				v := queue[0]
				queue = queue[1:]
				for _, w := range members {
					e := data[v*n+w]
					if !forward {
						e = data[w*n+v]
					}
					if e != 0 && !seen[w] {
						seen[w] = true
						queue = append(queue, w)
					}
				}
			}
			if len(seen) != len(members) {
				t.Errorf("block %d is not strongly connected", b)
			}
		}
	}
}

// TestReducibleEigen checks that a dense solve of a reducible matrix finds
// each eigenvalue to its own block's accuracy. The smaller 2^(−k) of
// layeredDoubling are ill-conditioned in the whole matrix (the coupling
// meets the nilpotent parts of the other layers; gonum's mat.Eigen on the
// whole matrix misses them by orders of magnitude more than round-off, as
// the log shows), but well conditioned in their own layer, a multiple of a
// column-stochastic matrix, where a backward-stable solver errs by a few
// ε·‖A_kk‖ ≤ ε. So 1e-13 bounds the error with a margin for the size. The
// eigenvectors are checked by their residuals ‖Ax − λx‖ ≤ 64·n·ε·‖A‖‖x‖
// (back substitution is backward stable with a growth linear in n,
// common practice, no source; 64 covers the constants).
func TestReducibleEigen(t *testing.T) {
	for _, c := range []struct {
		n, p int
		seed uint64
	}{{16, 5, 1}, {32, 4, 2}, {8, 8, 3}} {
		a, want := layeredDoubling(c.n, c.p, c.seed)
		size, _ := a.Dims()
		op := &denseOp{a}
		r, err := Eigs(op, &Settings{Wanted: size, Dense: true, Vectors: true})
		if err != nil {
			t.Fatal(err)
		}
		var whole mat.Eigen
		whole.Factorize(a, mat.EigenNone)
		wholeValues := whole.Values(nil)
		for k, w := range want {
			got, ref := nearest(r.Values, w), nearest(wholeValues, w)
			t.Logf("n=%d p=%d: 2^-%d: error block by block %.2g, on the whole matrix %.2g", c.n, c.p, k, cmplx.Abs(got-complex(w, 0)), cmplx.Abs(ref-complex(w, 0)))
			if e := cmplx.Abs(got - complex(w, 0)); e > 1e-13 {
				t.Errorf("n=%d p=%d: eigenvalue %v, want %v (error %.3g)", c.n, c.p, got, w, e)
			}
		}
		norm := mat.Norm(a, 2)
		for i := range r.Values {
			x := r.VectorTo(nil, i)
			var res, xx float64
			for row := range size {
				var s complex128
				for col := range size {
					s += complex(a.At(row, col), 0) * x[col]
				}
				res += sq(cmplx.Abs(s - r.Values[i]*x[row]))
				xx += sq(cmplx.Abs(x[row]))
			}
			if tol := 64 * float64(size) * 0x1p-52 * norm; math.Sqrt(res/xx) > tol {
				t.Errorf("n=%d p=%d: pair %d (λ = %v): residual %.3g > %.3g", c.n, c.p, i, r.Values[i], math.Sqrt(res/xx), tol)
			}
		}
	}
}

func sq(x float64) float64 { return x * x }

func nearest(values []complex128, w float64) complex128 {
	best := values[0]
	for _, v := range values {
		if cmplx.Abs(v-complex(w, 0)) < cmplx.Abs(best-complex(w, 0)) {
			best = v
		}
	}
	return best
}

// denseOp applies a dense matrix.
type denseOp struct{ a *mat.Dense }

func (d *denseOp) Dim() int { n, _ := d.a.Dims(); return n }

func (d *denseOp) Apply(dst, x []float64) {
	mat.NewVecDense(len(dst), dst).MulVec(d.a, mat.NewVecDense(len(x), x))
}
