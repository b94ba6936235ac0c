package cycles

// ZetaCoefficients returns the coefficients c_0…c_MaxLen of the dynamical
// zeta function 1/ζ_k(z) = Π_p (1 − t_p/Λ_p^k) at the expansion's weight,
// t_p = z^{n_p} e^{βA_p}/|Λ_p|, multiplied out as a polynomial truncated at
// degree MaxLen (exact up to round-off: the product of the factors of all
// cycles of length ≤ N has the same coefficients up to zᴺ as the infinite
// product). k = 0 is the zeta function of DynamicalZeta, defined in any
// dimension with Λ_p the product of the expanding multipliers.
//
// For k ≥ 1 it is defined for 1D maps only, where Λ_p keeps its sign: since
// |1 − Λ^r| = |Λ|^r (1 − Λ^{−r}) for |Λ| > 1,
// 1/|1 − Λ^r| = |Λ|^{−r} Σ_{k≥0} Λ^{−kr}, and summing over r,
// det(1 − zL) = Π_{k≥0} 1/ζ_k. A negative multiplier makes 1/ζ_k with odd
// k weigh the cycle with sign −1.
func (e *Expansion) ZetaCoefficients(k int) ([]float64, error) {
	if k < 0 {
		panic("cycles: negative zeta index")
	}
	if k > 0 && e.dim != 1 {
		return nil, ErrNotOneDimensional
	}
	coef, _ := e.zetaFactor(k)
	return coef, nil
}

// ZetaCoefficientFloors returns the round-off floors of the coefficients
// of ZetaCoefficients(k): ε times the magnitudes of the products of cycle
// weights that make up each coefficient, weighted by their roundings.
func (e *Expansion) ZetaCoefficientFloors(k int) ([]float64, error) {
	if k < 0 {
		panic("cycles: negative zeta index")
	}
	if k > 0 && e.dim != 1 {
		return nil, ErrNotOneDimensional
	}
	_, floor := e.zetaFactor(k)
	return floor, nil
}

// zetaFactor returns the coefficients of 1/ζ_k at the expansion's weight,
// truncated at MaxLen, and their floors.
func (e *Expansion) zetaFactor(k int) (coef, floor []float64) {
	n := e.maxLen + 1
	coef, floor = make([]float64, n), make([]float64, n)
	e.weights.zetaTo(coef, nil, floor, nil, newTraceWork(e.maxLen), e.beta, k, e.maxLen)
	return coef, floor
}
