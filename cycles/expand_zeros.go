package cycles

import (
	"cmp"
	"math"
	"math/cmplx"
	"slices"

	"gonum.org/v1/gonum/mat"
)

// polynomialEigenvalues returns the eigenvalue estimates λ_k = 1/z_k of the
// zeros z_k of F(z) = Σ_{n=0}^{d} c_n zⁿ (c_0 = 1), sorted by decreasing
// modulus, with their round-off floors. floor may be longer than c: the
// coefficients beyond c were dropped as indistinguishable from zero, and
// their floors count in the floors of the zeros.
//
// Since F(z) = Π_k (1 − zλ_k), the λ_k are the zeros of the monic
// reciprocal polynomial R(λ) = λ^d F(1/λ) = λ^d + c_1 λ^{d−1} + … + c_d: the
// eigenvalues of its companion matrix, computed by gonum's mat.Eigen, then
// polished by Newton's method on R. Zero coefficients at the top are
// dropped (an exact zero λ is no eigenvalue estimate). The floor of λ_k is
// the first-order change δλ = Σ_n floor_n |λ|^{d−n} / |R'(λ)| that errors of
// size floor_n in the coefficients cause (n = 0…len(floor)−1: a dropped
// coefficient c_n, n > d, changes R by c_n λ^{d−n}).
func polynomialEigenvalues(c, floor []float64) ([]complex128, []float64) {
	d := len(c) - 1
	for d > 0 && c[d] == 0 {
		d--
	}
	if d == 0 {
		return nil, nil
	}
	vals := make([]complex128, d)
	if d == 1 {
		vals[0] = complex(-c[1], 0)
	} else {
		companion := mat.NewDense(d, d, nil)
		for j := range d {
			companion.Set(0, j, -c[j+1])
		}
		for i := 1; i < d; i++ {
			companion.Set(i, i-1, 1)
		}
		var eig mat.Eigen
		if !eig.Factorize(companion, mat.EigenNone) {
			nan := complex(math.NaN(), math.NaN())
			for i := range vals {
				vals[i] = nan
			}
		} else {
			eig.Values(vals)
		}
	}
	floors := make([]float64, d)
	for i, v := range vals {
		v = polish(c[:d+1], v)
		vals[i] = v
		_, dr := reciprocalPoly(c[:d+1], v)
		var spread float64
		av := cmplx.Abs(v)
		pow := 1.0
		for n := d; n >= 0; n-- {
			spread += floor[n] * pow
			pow *= av
		}
		pow = 1
		for n := d + 1; n < len(floor); n++ {
			pow /= av
			spread += floor[n] * pow
		}
		floors[i] = spread / cmplx.Abs(dr)
	}
	sortEigenvalues(vals, floors)
	return vals, floors
}

// sortEigenvalues sorts eigenvalue estimates by decreasing modulus, then
// decreasing real part, then increasing imaginary part, keeping each floor
// with its value.
func sortEigenvalues(vals []complex128, floors []float64) {
	order := make([]int, len(vals))
	for i := range order {
		order[i] = i
	}
	slices.SortStableFunc(order, func(i, j int) int {
		a, b := vals[i], vals[j]
		if c := cmp.Compare(cmplx.Abs(b), cmplx.Abs(a)); c != 0 {
			return c
		}
		if c := cmp.Compare(real(b), real(a)); c != 0 {
			return c
		}
		return cmp.Compare(imag(a), imag(b))
	})
	sortedVals := make([]complex128, len(vals))
	sortedFloors := make([]float64, len(vals))
	for k, i := range order {
		sortedVals[k], sortedFloors[k] = vals[i], floors[i]
	}
	copy(vals, sortedVals)
	copy(floors, sortedFloors)
}

// reciprocalPoly evaluates R(λ) = Σ_n c_n λ^{d−n} and R'(λ) by Horner's rule.
func reciprocalPoly(c []float64, lambda complex128) (r, dr complex128) {
	for _, cn := range c {
		dr = dr*lambda + r
		r = r*lambda + complex(cn, 0)
	}
	return r, dr
}

// polish refines a zero of R by Newton steps while they reduce |R|. A real
// start stays real, so real zeros remain exactly real.
func polish(c []float64, lambda complex128) complex128 {
	if cmplx.IsNaN(lambda) {
		return lambda
	}
	r, dr := reciprocalPoly(c, lambda)
	for range 4 {
		if r == 0 || dr == 0 {
			break
		}
		next := lambda - r/dr
		rn, drn := reciprocalPoly(c, next)
		if cmplx.Abs(rn) >= cmplx.Abs(r) {
			break
		}
		lambda, r, dr = next, rn, drn
	}
	return lambda
}

// leadingIndex returns the index of the leading eigenvalue λ_0 in vals
// (sorted by decreasing modulus): the first real positive one, or −1. For a
// positive transfer operator it is the eigenvalue of largest modulus; a
// complex pair of larger modulus (at low orders, or for a cycle set that
// is not a full description of the system) is passed over.
func leadingIndex(vals []complex128) int {
	for i, v := range vals {
		if imag(v) == 0 && real(v) > 0 {
			return i
		}
	}
	return -1
}
