package krylov

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"slices"
	"testing"
)

// reducibleSparse returns an n×n matrix similar, by a random permutation,
// to a block upper triangular one: diagonal blocks of the given sizes
// with about perRow standard normal entries a row (irreducible: each
// holds a cycle through all its rows), then one-row blocks for the
// remaining rows, each with the diagonal entry diag[i] (0: none), and
// coupling entries of size couple from each row to rows of later blocks
// only. scale multiplies block b's entries by scale[b], so that the
// leading eigenvalues come from different blocks.
func reducibleSparse(n int, sizes []int, scales []float64, diag []float64, perRow int, couple float64, seed uint64) *csr {
	rng := rand.New(rand.NewPCG(seed, 43))
	perm := rng.Perm(n)
	var es []entry
	first := 0
	var blockStart []int
	for b, size := range sizes {
		blockStart = append(blockStart, first)
		for i := range size {
			es = append(es, entry{perm[first+i], perm[first+(i+1)%size], scales[b] * (0.5 + rng.Float64())})
			for range perRow - 1 {
				es = append(es, entry{perm[first+i], perm[first+rng.IntN(size)], scales[b] * rng.NormFloat64()})
			}
		}
		first += size
	}
	for i, d := range diag {
		blockStart = append(blockStart, first+i)
		if d != 0 {
			es = append(es, entry{perm[first+i], perm[first+i], d})
		}
	}
	blockStart = append(blockStart, n)
	for b := 0; b+1 < len(blockStart); b++ {
		for i := blockStart[b]; i < blockStart[b+1]; i++ {
			if later := n - blockStart[b+1]; later > 0 && rng.Float64() < 0.5 {
				es = append(es, entry{perm[i], perm[blockStart[b+1]+rng.IntN(later)], couple * rng.NormFloat64()})
			}
		}
	}
	return newCSR(n, es)
}

// TestEigsSparseAgainstDense compares EigsSparse on reducible matrices with
// gonum's mat.Eigen on the whole matrix (the reference library of
// REFERENCES.md for sparse nonsymmetric matrices of modest size), with
// the tolerance of TestEigsAgainstDense (checkAgainstDense).
func TestEigsSparseAgainstDense(t *testing.T) {
	const tol = 1e-13
	singles := func(count int, values ...float64) []float64 {
		d := make([]float64, count)
		copy(d, values)
		return d
	}
	cases := []struct {
		name   string
		a      *csr
		k      int
		blocks int // irreducible blocks expected
	}{
		// Blocks of 150 and 120 rows go through the Krylov iteration, the
		// 60-row one densely (60 ≤ 2m); the leading values come from
		// all three, the largest from a one-row block.
		{"three blocks and singles k=6", reducibleSparse(400, []int{150, 120, 60}, []float64{0.3, 0.25, 0.2}, singles(70, 3.5, -0.2, 0.1), 4, 0.2, 1), 6, 73},
		{"three blocks and singles k=10", reducibleSparse(400, []int{60, 150, 120}, []float64{0.2, 0.3, 0.25}, singles(70, 0, 1.4), 4, 0.2, 2), 10, 73},
		// The leading value from one block, the others from another.
		{"two blocks k=6", reducibleSparse(300, []int{200, 100}, []float64{1, 0.1}, nil, 5, 0.5, 3), 6, 2},
		{"one block and transients k=1", reducibleSparse(400, []int{150}, []float64{1}, singles(250), 5, 1, 4), 1, 251},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			if _, start := IrreducibleBlocks(tc.a.rowPtr, tc.a.col); len(start)-1 != tc.blocks {
				t.Fatalf("test matrix has %d irreducible blocks, want %d", len(start)-1, tc.blocks)
			}
			res, err := EigsSparse(tc.a, &Settings{Wanted: tc.k, Tol: tol})
			if err != nil {
				t.Fatalf("EigsSparse: %v (stats %+v)", err, res.Stats)
			}
			if res.Status != Converged {
				t.Fatalf("status %v", res.Status)
			}
			checkAgainstDense(t, tc.a, &res, tc.k, tol)
			for i, r := range res.Residuals {
				if r > tol {
					t.Errorf("value %d: residual %.3g above the tolerance", i, r)
				}
			}
			t.Logf("%d values, stats %+v", len(res.Values), res.Stats)
		})
	}
}

// TestEigsSparseZeros: a 3×3 cycle among 200 transient rows. The nonzero
// eigenvalues are the cube roots of the cycle's product p (the 3×3 block
// is a weighted cyclic permutation), the others exact zeros (nilpotent
// transient part), which a dense solve would blur to about ε^(1/j) for
// Jordan chains of length j. (Closed form: common practice, no source.)
func TestEigsSparseZeros(t *testing.T) {
	es := []entry{{0, 1, 2}, {1, 2, 0.5}, {2, 0, 0.216}} // p = 0.216 = 0.6³
	for i := 3; i < 203; i++ {
		es = append(es, entry{i, i - 1, 1}) // a chain feeding the cycle
	}
	a := newCSR(203, es)
	res, err := EigsSparse(a, &Settings{Wanted: 6})
	if err != nil {
		t.Fatal(err)
	}
	// The cube roots of 0.216: 0.6 and 0.6 e^{±2πi/3}, all of modulus 0.6.
	want := []complex128{0.6, cmplx.Rect(0.6, 2*math.Pi/3), cmplx.Rect(0.6, -2*math.Pi/3), 0, 0, 0}
	if len(res.Values) != len(want) {
		t.Fatalf("values %v, want %v", res.Values, want)
	}
	for i, w := range want {
		if cmplx.Abs(res.Values[i]-w) > 1e-14 {
			t.Errorf("value %d = %v, want %v", i, res.Values[i], w)
		}
	}
}

// TestEigsSparseSameAsEigs: an irreducible matrix, and any matrix with
// Settings.Vectors, are handed to Eigs unchanged: the same bytes.
func TestEigsSparseSameAsEigs(t *testing.T) {
	for _, tc := range []struct {
		name string
		a    *csr
		set  Settings
	}{
		{"irreducible", stochastic(400, 3, 9), Settings{Wanted: 4}},
		{"reducible with vectors", reducibleSparse(300, []int{200, 100}, []float64{1, 0.1}, nil, 5, 0.5, 3), Settings{Wanted: 4, Vectors: true}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			got, err := EigsSparse(tc.a, &tc.set)
			if err != nil {
				t.Fatal(err)
			}
			want, err := Eigs(tc.a, &tc.set)
			if err != nil {
				t.Fatal(err)
			}
			if !slices.Equal(got.Values, want.Values) || !slices.Equal(got.Residuals, want.Residuals) || got.Stats != want.Stats {
				t.Errorf("EigsSparse %v %+v, Eigs %v %+v", got.Values, got.Stats, want.Values, want.Stats)
			}
			for i := range want.Vectors {
				if !slices.Equal(got.Vectors[i], want.Vectors[i]) {
					t.Errorf("vector %d differs", i)
				}
			}
		})
	}
}

// positiveReducible is reducibleSparse with positive entries (a
// nonnegative matrix, whose leading eigenvalue is real and, here,
// isolated): the first block, scaled by 1, dominates the others.
func positiveReducible(n int, sizes []int, scales []float64, diag []float64, seed uint64) *csr {
	a := reducibleSparse(n, sizes, scales, diag, 4, 0.3, seed)
	for k := range a.val {
		a.val[k] = math.Abs(a.val[k])
	}
	return a
}

// diagonals returns count diagonal entries for one-row blocks: every
// other one nonzero, from top down to top/count.
func diagonals(count int, top float64) []float64 {
	d := make([]float64, count)
	for i := 0; i < count; i += 2 {
		d[i] = top * float64(count-i) / float64(count)
	}
	return d
}

// TestLeadingSparse compares LeadingSparse on reducible nonnegative
// matrices with gonum's mat.Eigen (the reference library): λ_0 to 1e-10
// relative (its condition number times the 1e-12 residual is far below),
// and the returned vectors by their residuals on the whole matrix, which
// must be at the solver's tolerance (the Neumann series stop at 1e-12
// relative change); ⟨u, v⟩ = 1; and the same pair as Leading on the whole
// matrix (common practice, no source: first-order perturbation theory
// bounds the difference of the unit right vectors by the residual over
// the gap to the next eigenvalue, ≥ 0.1 here, times a modest
// conditioning: 1e-8).
func TestLeadingSparse(t *testing.T) {
	cases := []struct {
		name string
		a    *csr
	}{
		// The dominant block first (reaching the others), in the middle,
		// and among transient one-row blocks.
		{"dominant block with blocks before and after", positiveReducible(400, []int{120, 150, 60}, []float64{0.2, 1, 0.25}, diagonals(70, 0.3), 11)},
		{"dominant first block", positiveReducible(300, []int{200, 100}, []float64{1, 0.2}, nil, 12)},
		{"one block among transients", positiveReducible(400, []int{150}, []float64{1}, diagonals(250, 0.5), 13)},
		// Transposed, the one-row blocks lead to the dominant one.
		{"transients leading to one block", positiveReducible(400, []int{150}, []float64{1}, diagonals(250, 0.5), 13).transpose()},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			pair, err := LeadingSparse(tc.a, nil)
			if err != nil {
				t.Fatal(err)
			}
			want, _ := denseSpectrum(t, tc.a.dense())
			if math.Abs(pair.Value-real(want[0])) > 1e-10*math.Abs(real(want[0])) || imag(want[0]) != 0 {
				t.Errorf("λ_0 = %.15g, mat.Eigen %v", pair.Value, want[0])
			}
			if pair.RightResidual > 1e-10 || pair.LeftResidual > 1e-10 {
				t.Errorf("residuals %.3g (right), %.3g (left)", pair.RightResidual, pair.LeftResidual)
			}
			if uv := Dot(pair.Left, pair.Right); math.Abs(uv-1) > 1e-12 {
				t.Errorf("⟨u, v⟩ = %.15g", uv)
			}
			whole, err := Leading(tc.a, tc.a.transpose(), nil)
			if err != nil {
				t.Fatal(err)
			}
			var dv float64
			for i := range pair.Right {
				dv = max(dv, math.Abs(pair.Right[i]-whole.Right[i]))
			}
			if dv > 1e-8 {
				t.Errorf("right vectors differ from the whole-matrix Leading by %.3g", dv)
			}
			t.Logf("λ_0 %.12g, residuals %.2g %.2g, condition %.3g, |Δv| %.2g, stats %+v", pair.Value, pair.RightResidual, pair.LeftResidual, pair.Condition, dv, pair.Stats)
		})
	}
}

// TestLeadingSparseTie: two disconnected copies of a block share the
// leading eigenvalue (1, the row sums of each: common practice, no
// source), which is then not isolated.
func TestLeadingSparseTie(t *testing.T) {
	a := newCSR(4, []entry{{0, 0, 0.5}, {0, 1, 0.5}, {1, 0, 0.5}, {1, 1, 0.5}, {2, 2, 0.5}, {2, 3, 0.5}, {3, 2, 0.5}, {3, 3, 0.5}})
	if _, err := LeadingSparse(a, nil); !errors.Is(err, ErrLeadingMismatch) {
		t.Errorf("error %v, want ErrLeadingMismatch", err)
	}
}
