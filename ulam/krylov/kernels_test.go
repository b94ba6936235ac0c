package krylov

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// TestPairKernels checks the fused two-vector kernels (projectPair,
// updatePair) against plain loops, and that the vector (AVX2/FMA) and the
// portable paths give the same bytes, on lengths that are and are not
// multiples of the sub-block and of the vector width, with q from 1 to 9
// (every remainder modulo 4).
func TestPairKernels(t *testing.T) {
	for _, n := range []int{1, 7, 4096, 4099, 40003} {
		for q := 1; q <= 9; q++ {
			rng := rand.New(rand.NewPCG(uint64(n), uint64(q)))
			b := newBasis(n, q+2, q+2)
			for i := range b.v {
				b.v[i] = rng.Float64() - 0.5
			}
			x0 := append([]float64(nil), b.col(q)...)
			z0 := append([]float64(nil), b.col(q+1)...)
			coefS := make([]float64, q)
			coefC := make([]float64, q+1)
			for i := range coefS {
				coefS[i] = rng.Float64() - 0.5
			}
			for i := range coefC {
				coefC[i] = rng.Float64() - 0.5
			}

			type outcome struct {
				s, g         []float64
				xx, xz, zz   float64
				x, z         []float64
				updatedNorm2 float64
			}
			run := func(vector bool) outcome {
				saved := useFMA4
				useFMA4 = vector && saved
				defer func() { useFMA4 = saved }()
				x := append([]float64(nil), x0...)
				z := append([]float64(nil), z0...)
				var o outcome
				o.s, o.g = make([]float64, q), make([]float64, q)
				o.xx, o.xz, o.zz = b.projectPair(o.s, o.g, q, x, z)
				o.updatedNorm2 = b.updatePair(x, 0.75, coefS, q, z, 1.25, coefC)
				o.x, o.z = x, z
				return o
			}
			got := run(true)
			portable := run(false)
			same := func(a, b []float64) bool {
				for i := range a {
					if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
						return false
					}
				}
				return true
			}
			if !same(got.s, portable.s) || !same(got.g, portable.g) || !same(got.x, portable.x) || !same(got.z, portable.z) ||
				got.xx != portable.xx || got.xz != portable.xz || got.zz != portable.zz || got.updatedNorm2 != portable.updatedNorm2 {
				t.Errorf("n=%d q=%d: vector and portable kernels differ", n, q)
			}

			// Plain loops. Sums of n products of numbers below 1 in
			// modulus differ between summation orders by at most about
			// n·ε times the sum of the moduli (common practice, no
			// source); the entries are O(1), so 1e-10 absolute is ample
			// at n ≤ 40003 (n·ε ≈ 1e-11) and far below any real error.
			const tol = 1e-10
			for l := range q {
				var s, g float64
				for i := range n {
					s += b.v[l*n+i] * x0[i]
					g += b.v[l*n+i] * z0[i]
				}
				if !scalar.EqualWithinAbsOrRel(got.s[l], s, tol, tol) || !scalar.EqualWithinAbsOrRel(got.g[l], g, tol, tol) {
					t.Errorf("n=%d q=%d: projection %d: got %v %v, want %v %v", n, q, l, got.s[l], got.g[l], s, g)
				}
			}
			x := append([]float64(nil), x0...)
			z := append([]float64(nil), z0...)
			var zz float64
			for i := range n {
				x[i] *= 0.75
				z[i] *= 1.25
				for l := range q {
					x[i] -= coefS[l] * b.v[l*n+i]
					z[i] -= coefC[l] * b.v[l*n+i]
				}
				z[i] -= coefC[q] * x[i]
				zz += z[i] * z[i]
			}
			for i := range n {
				if !scalar.EqualWithinAbsOrRel(got.x[i], x[i], tol, tol) || !scalar.EqualWithinAbsOrRel(got.z[i], z[i], tol, tol) {
					t.Fatalf("n=%d q=%d: update row %d: got %v %v, want %v %v", n, q, i, got.x[i], got.z[i], x[i], z[i])
				}
			}
			if !scalar.EqualWithinAbsOrRel(got.updatedNorm2, zz, tol, tol) {
				t.Errorf("n=%d q=%d: updated norm² %v, want %v", n, q, got.updatedNorm2, zz)
			}
		}
	}
}

// TestMultiplyTo checks the blocked product V Q (the restart rotation and
// the Ritz vectors) against a plain loop, in place and out of place, for
// odd and even numbers of columns.
func TestMultiplyTo(t *testing.T) {
	for _, n := range []int{5, 1030, 40003} {
		for _, qp := range [][2]int{{1, 1}, {5, 3}, {9, 4}, {8, 7}} {
			q, p := qp[0], qp[1]
			rng := rand.New(rand.NewPCG(uint64(n), uint64(q*10+p)))
			b := newBasis(n, q, q)
			for i := range b.v {
				b.v[i] = rng.Float64() - 0.5
			}
			qmat := make([]float64, q*p)
			for i := range qmat {
				qmat[i] = rng.Float64() - 0.5
			}
			want := make([]float64, n*p)
			for c := range p {
				for l := range q {
					for i := range n {
						want[c*n+i] += qmat[l*p+c] * b.v[l*n+i]
					}
				}
			}
			out := make([]float64, n*p)
			b.multiplyTo(out, n, q, p, qmat, p)
			b.rotate(q, p, qmat, p)
			// Different summation orders of q ≤ 9 products of O(1)
			// numbers: a few ε (common practice, no source).
			const tol = 1e-14
			for i := range want {
				if !scalar.EqualWithinAbsOrRel(out[i], want[i], tol, tol) || b.v[i] != out[i] {
					t.Fatalf("n=%d q=%d p=%d: entry %d: got %v (in place %v), want %v", n, q, p, i, out[i], b.v[i], want[i])
				}
			}
		}
	}
}
