package cycles

import (
	"math"
	"math/cmplx"

	"crosspec/dynsys"
)

// factorZeros is one factor 1/ζ_k of the spectral determinant of a 1D map:
// the zeros of its truncations and its estimated radius of convergence.
type factorZeros struct {
	// vals[n−1] are the eigenvalue estimates 1/z of the zeros of the
	// truncation at length n, sorted by decreasing modulus, and floors[n−1]
	// their round-off floors.
	vals   [][]complex128
	floors [][]float64
	// radius[n−1] is the radius of convergence estimated from c_0…c_n.
	radius []float64
}

// newFactorZeros finds the zeros of the truncations of a factor with the
// given coefficients and floors, and estimates its radius of convergence
// at each length.
//
// The coefficients at the top of each truncation that are no larger than
// their floors are dropped first: they are indistinguishable from zero,
// and left in they would add zeros made of round-off alone. Dropping them
// changes the function by at most Σ floor_n |z|ⁿ, which the floors of the
// remaining zeros include.
//
// The radius is the ratio test |c_{m−1}/c_m| at the last m ≤ n whose two
// coefficients are above their floors (m ≥ 2); +Inf when no such m exists,
// the factor being a polynomial of degree ≤ 1 to round-off. The first pole
// of 1/ζ_k makes the coefficients decay geometrically with that ratio.
func newFactorZeros(coef, floor []float64) factorZeros {
	maxLen := len(coef) - 1
	f := factorZeros{
		vals:   make([][]complex128, maxLen),
		floors: make([][]float64, maxLen),
		radius: make([]float64, maxLen),
	}
	for n := 1; n <= maxLen; n++ {
		d := n
		for d > 0 && math.Abs(coef[d]) <= floor[d] {
			d--
		}
		f.vals[n-1], f.floors[n-1] = polynomialEigenvalues(coef[:d+1], floor[:n+1])
		f.radius[n-1] = math.Inf(1)
		for m := n; m >= 2; m-- {
			if math.Abs(coef[m]) > floor[m] && math.Abs(coef[m-1]) > floor[m-1] {
				f.radius[n-1] = math.Abs(coef[m-1] / coef[m])
				break
			}
		}
	}
	return f
}

// resolvedTail is the largest neglected tail (|z|/R)ᴺ a factor's series
// may have at a zero z for the zero to be kept; see keptZeros.
const resolvedTail = 1e-2

// converges reports whether the series of factor f truncated at length n
// has converged at |z| = 1/|λ| to within resolvedTail.
func (f *factorZeros) converges(lambda complex128, n int) bool {
	q := 1 / (cmplx.Abs(lambda) * f.radius[n-1])
	return math.Pow(q, float64(n)) <= resolvedTail
}

// keptZeros appends to vals and floors the zeros of factor k at length n
// that are eigenvalue estimates of the determinant: those at which the
// series of factor k and of every factor before it have converged,
// (|z|/R_j)ᴺ ≤ resolvedTail for j ≤ k. The rule removes two kinds of
// zeros that are not eigenvalues:
//   - the zeros of the truncation itself near its circle of convergence:
//     partial sums of a series of radius R have zeros that cluster on
//     |z| = R (Jentzsch's theorem), at |z| ≈ R ρ^{1/N} with ρ = O(1), so
//     their tail (|z|/R)ᴺ ≈ ρ stays of order one;
//   - zeros of 1/ζ_k that a pole of an earlier factor cancels: 1/ζ_j =
//     det_j/det_{j+1} has poles at the eigenvalues of L_{j+1} that are not
//     eigenvalues of L_j, and such a pole, lying on or beyond the circle
//     of convergence of 1/ζ_j, removes the same zero of 1/ζ_{j+1}…1/ζ_k
//     from the product.
//
// The 1% is a choice, not a derived bound: it keeps a zero once the series
// at it has converged to about two digits; the estimates over lengths then
// report how well.
func keptZeros(vals []complex128, floors []float64, factors []factorZeros, k, n int) ([]complex128, []float64) {
outer:
	for i, v := range factors[k].vals[n-1] {
		for j := 0; j <= k; j++ {
			if !factors[j].converges(v, n) {
				continue outer
			}
		}
		vals = append(vals, v)
		floors = append(floors, factors[k].floors[n-1][i])
	}
	return vals, floors
}

// factorizedOrders computes the orders of FactorizedDeterminant and the
// number of factors whose zeros they use. Factors 1/ζ_0, 1/ζ_1, … are
// added until the zeros kept from them at the longest length number at
// least e.eigs, or the leading zero of the next factor lies beyond the
// radius of convergence of an earlier one (its zeros, and those of later
// factors, which lie further out, cannot be kept), or MaxLen factors.
// At length N the factors 0…min(K, N−1) contribute, so that, as for the
// Newton determinant, order N has about N zeros and factor k enters at
// length k + 1.
func (e *Expansion) factorizedOrders(work *traceWork) ([]Order, int) {
	factors := []factorZeros{newFactorZeros(e.coef, e.floor)}
	minRadius := factors[0].radius[e.maxLen-1]
	for k := 1; k < e.maxLen; k++ {
		var kept []complex128
		var floors []float64
		for j := range k {
			kept, floors = keptZeros(kept, floors, factors, j, e.maxLen)
		}
		if len(kept) >= e.eigs {
			break
		}
		coef, floor := make([]float64, e.maxLen+1), make([]float64, e.maxLen+1)
		e.weights.zetaTo(coef, nil, floor, nil, work, e.beta, k, e.maxLen)
		f := newFactorZeros(coef, floor)
		if v := f.vals[e.maxLen-1]; len(v) > 0 && 1/cmplx.Abs(v[0]) >= minRadius {
			break
		}
		factors = append(factors, f)
		minRadius = min(minRadius, f.radius[e.maxLen-1])
	}
	orders := make([]Order, e.maxLen)
	for n := 1; n <= e.maxLen; n++ {
		o := Order{MaxLen: n, Cycles: e.cumulative[n], Value: math.NaN(), Floor: math.Inf(1)}
		for j := range min(len(factors), n) {
			o.Eigenvalues, o.EigenvalueFloors = keptZeros(o.Eigenvalues, o.EigenvalueFloors, factors, j, n)
			if j == 0 {
				// λ_0 is the leading zero of 1/ζ_0, whose coefficients
				// (e.coef) the derivatives of the quantities use.
				if i := leadingIndex(o.Eigenvalues); i >= 0 {
					o.Value, o.Floor = real(o.Eigenvalues[i]), o.EigenvalueFloors[i]
				}
			}
		}
		sortEigenvalues(o.Eigenvalues, o.EigenvalueFloors)
		orders[n-1] = o
	}
	return orders, len(factors)
}

// Factors returns the number K + 1 of factors 1/ζ_0…1/ζ_K whose zeros
// FactorizedDeterminant uses, 0 for the other functions.
func (e *Expansion) Factors() int {
	return e.factors
}

// SpectrumComparison is the spectrum of a 1D map computed from one cycle
// set by the two expansions of its spectral determinant, for a
// side-by-side report.
type SpectrumComparison struct {
	// Newton is the quantity Eigenvalues of SpectralDeterminant (the Newton
	// recursion), Factorized that of FactorizedDeterminant, both with the
	// same cycles and settings.
	Newton, Factorized QuantityResult
	// Discrepancy[k] = |λ_k^N − λ_k^F| / (Error_k^N + Error_k^F) compares
	// the two estimates of λ_k: at most 1 when they agree within their
	// errors, NaN when either has no value.
	Discrepancy []float64
}

// CompareSpectra expands the cycles of a 1D map both as SpectralDeterminant
// and as FactorizedDeterminant and returns their eigenvalue estimates
// (Settings.Eigs of them; settings.Function is ignored). Where the Newton
// determinant reaches its round-off floor, growing like ε|z_k|ᴺ, the
// factorized one goes on; where a factor's disk of convergence misses an
// eigenvalue, the Newton determinant still has it: the two side by side
// show both. Errors are those of NewExpansion, and ErrNotOneDimensional.
func CompareSpectra(cycles []Cycle, settings *Settings) (SpectrumComparison, error) {
	var s Settings
	if settings != nil {
		s = *settings
	}
	if s.MaxLen < 0 {
		panic("cycles: negative MaxLen")
	}
	if s.Sum != ObservableSum && s.Sum != LogMultiplier {
		panic("cycles: unknown OrbitSum")
	}
	sorted, err := sortedCycles(cycles, s.MaxLen)
	if err != nil {
		return SpectrumComparison{}, err
	}
	if len(sorted[0].Multipliers) != 1 {
		return SpectrumComparison{}, ErrNotOneDimensional
	}
	s.Function = SpectralDeterminant
	newton, err := newSortedExpansion(sorted, s, nil, nil)
	if err != nil {
		return SpectrumComparison{}, err
	}
	s.Function = FactorizedDeterminant
	factorized, err := newSortedExpansion(sorted, s, &newton.weights, nil)
	if err != nil {
		return SpectrumComparison{}, err
	}
	var c SpectrumComparison
	if c.Newton, err = newton.quantity(dynsys.Eigenvalues, s.Eigs); err != nil {
		return SpectrumComparison{}, err
	}
	if c.Factorized, err = factorized.quantity(dynsys.Eigenvalues, s.Eigs); err != nil {
		return SpectrumComparison{}, err
	}
	c.Discrepancy = make([]float64, len(c.Newton.Eigenvalues))
	for k, a := range c.Newton.Eigenvalues {
		b := c.Factorized.Eigenvalues[k]
		if d := cmplx.Abs(a.Value - b.Value); d == 0 {
			c.Discrepancy[k] = 0
		} else {
			c.Discrepancy[k] = d / (a.Error + b.Error)
		}
	}
	return c, nil
}
