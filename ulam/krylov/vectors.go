package krylov

import (
	"fmt"
	"math"
	"math/cmplx"
	"sort"

	"gonum.org/v1/gonum/floats"
	"gonum.org/v1/gonum/mat"
)

// Dot returns xᵀy as accurately as if it were computed in twice the
// working precision and then rounded: the compensated dot product Dot2 of
// T. Ogita, S. M. Rump and S. Oishi, "Accurate sum and dot product", SIAM
// J. Sci. Comput. 26 (2005) 1955–1988, whose error is at most
// ε|xᵀy| + γ_n²·|x|ᵀ|y| (ε = 2⁻⁵³, γ_n = nε/(1 − nε); from memory, checked
// against math/big in the tests). A plain sum of n
// products errs by up to γ_n·|x|ᵀ|y|, and for the long vectors of equal
// sign that eigenvectors of transfer matrices are, the error does grow
// with n: the doubling map's Lyapunov exponent ⟨u, P'v⟩/λ_0 on 2^18 cells
// came out 2.6e-12 off with plain sums, 1e-16 with this one. Each
// product is split exactly into its rounded value and error (FMA), each
// sum by TwoSum, and the errors are added up separately. The rows are
// processed in blocks in parallel, and the blocks' pairs are combined in
// block order, so the result does not depend on the number of cores. The
// solvers use it for the inner products outside the Krylov sweeps (norms,
// the normalisation ⟨u, v⟩ = 1 of a left and right pair, Rayleigh
// quotients), so that quantities drawn from the vectors are not limited by
// their summation. It panics if the lengths differ.
func Dot(x, y []float64) float64 {
	if len(x) != len(y) {
		panic(fmt.Sprintf("krylov: Dot of lengths %d and %d", len(x), len(y)))
	}
	blocks := (len(x) + blockRows - 1) / blockRows
	sums := make([]float64, 2*blocks)
	forBlocks(len(x), func(_, blk, lo, hi int) {
		sums[2*blk], sums[2*blk+1] = dot2(x[lo:hi], y[lo:hi])
	})
	var p, s float64
	for blk := range blocks {
		var q float64
		p, q = twoSum(p, sums[2*blk])
		s += q + sums[2*blk+1]
	}
	return p + s
}

// dot2 returns the sum p of the rounded products and the sum s of their
// rounding and summation errors; p + s is xᵀy to about twice the working
// precision (the Dot2 of Ogita, Rump and Oishi).
func dot2(x, y []float64) (p, s float64) {
	y = y[:len(x)]
	for i, xi := range x {
		h := xi * y[i]
		r := math.FMA(xi, y[i], -h)
		var q float64
		p, q = twoSum(p, h)
		s += q + r
	}
	return p, s
}

// twoSum returns a + b rounded and its exact rounding error (Knuth).
func twoSum(a, b float64) (sum, err float64) {
	sum = a + b
	z := sum - a
	return sum, (a - (sum - z)) + (b - z)
}

// normalizeVectors scales every eigenvector (real layout, see
// Result.Vectors) to unit 2-norm with its first entry of largest modulus
// real and positive, which makes the vectors unique for simple eigenvalues.
func normalizeVectors(values []complex128, vectors [][]float64) {
	for i := 0; i < len(values); i++ {
		if imag(values[i]) == 0 {
			x := vectors[i]
			big := 0
			for j, v := range x {
				if math.Abs(v) > math.Abs(x[big]) {
					big = j
				}
			}
			f := 1 / math.Sqrt(Dot(x, x))
			if x[big] < 0 {
				f = -f
			}
			scale(f, x)
			continue
		}
		re, im := vectors[i], vectors[i+1]
		big, bigMod := 0, -1.0
		for j := range re {
			if mod := re[j]*re[j] + im[j]*im[j]; mod > bigMod {
				big, bigMod = j, mod
			}
		}
		// Multiply by conj(x_big)/(|x_big| ‖x‖).
		norm := math.Sqrt(Dot(re, re) + Dot(im, im))
		c := re[big] / math.Sqrt(bigMod) / norm
		s := im[big] / math.Sqrt(bigMod) / norm
		forBlocks(len(re), func(_, _, lo, hi int) {
			for j := lo; j < hi; j++ {
				r, m := re[j], im[j]
				re[j] = c*r + s*m
				im[j] = c*m - s*r
			}
		})
		im[big] = 0
		i++
	}
}

// residualsTo sets dst[i] = ‖A x_i − λ_i x_i‖/(norm ‖x_i‖) for the
// eigenvectors in real layout, and returns the number of operator
// applications made (one per real vector, two per pair).
func residualsTo(dst []float64, op Operator, values []complex128, vectors [][]float64, norm float64) int {
	n := op.Dim()
	ax := make([]float64, n)
	ay := make([]float64, n)
	blocks := (n + blockRows - 1) / blockRows
	partial := make([]float64, blocks)
	sum := func() float64 {
		var s float64
		for _, p := range partial {
			s += p
		}
		return s
	}
	matVecs := 0
	for i := 0; i < len(values); i++ {
		lambda := values[i]
		if imag(lambda) == 0 {
			x := vectors[i]
			op.Apply(ax, x)
			matVecs++
			a := real(lambda)
			forBlocks(n, func(_, blk, lo, hi int) {
				var s float64
				for j := lo; j < hi; j++ {
					r := ax[j] - a*x[j]
					s += r * r
				}
				partial[blk] = s
			})
			dst[i] = math.Sqrt(sum()/Dot(x, x)) / norm
			continue
		}
		x, y := vectors[i], vectors[i+1]
		op.Apply(ax, x)
		op.Apply(ay, y)
		matVecs += 2
		a, b := real(lambda), imag(lambda)
		// A(x + iy) − (a + ib)(x + iy) = (Ax − a x + b y) + i (Ay − a y − b x).
		forBlocks(n, func(_, blk, lo, hi int) {
			var s float64
			for j := lo; j < hi; j++ {
				re := ax[j] - a*x[j] + b*y[j]
				im := ay[j] - a*y[j] - b*x[j]
				s += re*re + im*im
			}
			partial[blk] = s
		})
		r := math.Sqrt(sum()/(Dot(x, x)+Dot(y, y))) / norm
		dst[i], dst[i+1] = r, r
		i++
	}
	return matVecs
}

// sortResult orders the values of r by decreasing modulus, ties by
// decreasing real part, moving each conjugate pair as one entry, and
// permutes Vectors and Residuals alike.
func sortResult(r *Result) {
	type group struct{ start, size int }
	var groups []group
	for i := 0; i < len(r.Values); {
		size := 1
		if imag(r.Values[i]) > 0 {
			size = 2
		}
		groups = append(groups, group{i, size})
		i += size
	}
	sort.SliceStable(groups, func(a, b int) bool {
		va, vb := r.Values[groups[a].start], r.Values[groups[b].start]
		ma, mb := cmplx.Abs(va), cmplx.Abs(vb)
		if ma != mb {
			return ma > mb
		}
		return real(va) > real(vb)
	})
	values := make([]complex128, 0, len(r.Values))
	residuals := make([]float64, 0, len(r.Values))
	var vectors [][]float64
	for _, g := range groups {
		values = append(values, r.Values[g.start:g.start+g.size]...)
		residuals = append(residuals, r.Residuals[g.start:g.start+g.size]...)
		if r.Vectors != nil {
			vectors = append(vectors, r.Vectors[g.start:g.start+g.size]...)
		}
	}
	r.Values, r.Residuals, r.Vectors = values, residuals, vectors
}

// eigsDense solves a small problem densely: the matrix is assembled column
// by column from the operator and handed to gonum's mat.Eigen.
func eigsDense(op Operator, c settings) (Result, error) {
	n := c.n
	a := mat.NewDense(n, n, nil)
	e := make([]float64, n)
	col := make([]float64, n)
	norm := c.norm
	for j := range n {
		e[j] = 1
		op.Apply(col, e)
		e[j] = 0
		colNorm := math.Sqrt(floats.Dot(col, col))
		if math.IsNaN(colNorm) || math.IsInf(colNorm, 0) {
			return Result{}, errNonFinite
		}
		if c.norm == 0 {
			norm = max(norm, colNorm)
		}
		a.SetCol(j, col)
	}
	res := Result{Norm: norm, Status: Converged, Stats: Stats{MatVecs: n}}
	if norm == 0 {
		// The zero operator: every vector is an eigenvector of 0.
		norm = 1
		res.Norm = 0
	}
	// The vectors are computed even when not asked for, to give the
	// residuals.
	all, vecs, err := denseEigen(a)
	if err != nil {
		return Result{}, err
	}
	// Groups: a real value, or a pair with the positive imaginary part
	// first (mat.Eigen's order).
	type group struct{ start, size int }
	var groups []group
	for i := 0; i < n; {
		size := 1
		if imag(all[i]) != 0 {
			size = 2
		}
		groups = append(groups, group{i, size})
		i += size
	}
	sort.SliceStable(groups, func(x, y int) bool {
		vx, vy := all[groups[x].start], all[groups[y].start]
		mx, my := cmplx.Abs(vx), cmplx.Abs(vy)
		if mx != my {
			return mx > my
		}
		return real(vx) > real(vy)
	})
	for _, g := range groups {
		if len(res.Values) >= c.k {
			break
		}
		v := all[g.start]
		if g.size == 1 {
			res.Values = append(res.Values, v)
		} else {
			res.Values = append(res.Values, complex(real(v), math.Abs(imag(v))), complex(real(v), -math.Abs(imag(v))))
		}
		re := make([]float64, n)
		im := make([]float64, n)
		sign := 1.0
		if imag(v) < 0 {
			sign = -1
		}
		for i := range n {
			z := vecs.At(i, g.start)
			re[i], im[i] = real(z), sign*imag(z)
		}
		if g.size == 1 {
			res.Vectors = append(res.Vectors, re)
		} else {
			res.Vectors = append(res.Vectors, re, im)
		}
	}
	res.Residuals = make([]float64, len(res.Values))
	normalizeVectors(res.Values, res.Vectors)
	res.Stats.MatVecs += residualsTo(res.Residuals, op, res.Values, res.Vectors, norm)
	if !c.vectors {
		res.Vectors = nil
	}
	return res, nil
}

// denseEigen returns all eigenvalues and right eigenvectors of a, in
// mat.Eigen's convention, block by block when a is reducible
// (reducibleEigen) and by mat.Eigen otherwise.
func denseEigen(a *mat.Dense) ([]complex128, *mat.CDense, error) {
	if values, vectors, ok := reducibleEigen(a); ok {
		return values, vectors, nil
	}
	var eig mat.Eigen
	if !eig.Factorize(a, mat.EigenRight) {
		n, _ := a.Dims()
		return nil, nil, fmt.Errorf("krylov: dense eigen-decomposition of the %d×%d matrix failed", n, n)
	}
	var vecs mat.CDense
	eig.VectorsTo(&vecs)
	return eig.Values(nil), &vecs, nil
}
