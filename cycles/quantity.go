package cycles

import (
	"fmt"
	"math"
	"math/cmplx"

	"crosspec/dynsys"
	"crosspec/dynsys/root"
)

// QuantityResult is a quantity of DESIGN.md section 4 computed from the
// cycle expansion at every truncation length, with the value chosen where
// the sequence stops improving.
type QuantityResult struct {
	Quantity dynsys.Quantity
	// Beta and Sum are the weight of the expansion the quantity was
	// computed from (for Dimension, Beta is 1 − s at the longest length).
	Beta float64
	Sum  OrbitSum
	// Orders holds, per truncation length, the eigenvalue estimates and
	// the quantity (Order.Value) with its round-off floor (Order.Floor).
	// A NaN value means the truncation gave no estimate (no real positive
	// leading zero, or no root).
	Orders []Order
	// Estimate is the value chosen from Orders.
	Estimate Estimate
	// Eigenvalues are the estimates of the leading eigenvalues (quantity
	// Eigenvalues only; Settings.Eigs of them).
	Eigenvalues []EigenvalueEstimate
	// Diagnostics is the coefficient-decay check of the expansion; a
	// stall there makes Estimate.Status Stalled.
	Diagnostics Diagnostics
}

// Expand builds the expansion of the cycles and computes quantity q.
func Expand(cycles []Cycle, q dynsys.Quantity, settings *Settings) (QuantityResult, error) {
	e, err := NewExpansion(cycles, settings)
	if err != nil {
		return QuantityResult{}, err
	}
	eigs := 0
	if settings != nil {
		eigs = settings.Eigs
	}
	return e.quantity(q, eigs)
}

// Quantity computes q from the expansion's cycles:
//   - Eigenvalues: λ_k = 1/z_k at the expansion's weight; Value is λ_0;
//     five eigenvalue estimates are returned (see Expand and Settings.Eigs
//     for another count).
//   - EscapeRate: γ = −ln λ_0 = ln z_0 at β = 0.
//   - Pressure: P(β) = ln λ_0(β) at the expansion's weight.
//   - Mean: ⟨a⟩ = ⟨A⟩/⟨n⟩ with ⟨A⟩ = −∂_β F and ⟨n⟩ = −z ∂_z F at the
//     leading zero (cycle averaging formula), at the expansion's weight.
//     At β = 0 it is the average over the natural measure, for open
//     systems too.
//   - Lyapunov: the Mean of A_p = ln|Λ_p| at β = 0 (for d ≥ 2, Λ_p is the
//     product of the expanding multipliers, giving the sum of the positive
//     exponents).
//   - Dimension (1D): the root s of z_0(s) = 1 with the weight
//     e^{βA_p} = |Λ_p|^{1−s}, by Brent's method at every length.
//   - DecayRate: −ln|λ_1/λ_0| at the expansion's weight, λ_1 the zero
//     after λ_0 in modulus.
func (e *Expansion) Quantity(q dynsys.Quantity) (QuantityResult, error) {
	return e.quantity(q, 0)
}

const defaultEigs = 5

func (e *Expansion) quantity(q dynsys.Quantity, eigs int) (QuantityResult, error) {
	if eigs <= 0 {
		eigs = defaultEigs
	}
	eigs = min(eigs, e.maxLen)
	var (
		src   = e
		err   error
		value func(src *Expansion, n int, o *Order)
	)
	switch q {
	case dynsys.Eigenvalues:
		value = func(_ *Expansion, _ int, o *Order) {}
	case dynsys.EscapeRate:
		src, err = e.reweighted(0, e.sum)
		value = func(_ *Expansion, _ int, o *Order) {
			o.Value, o.Floor = -math.Log(o.Value), o.Floor/o.Value
		}
	case dynsys.Pressure:
		value = func(_ *Expansion, _ int, o *Order) {
			o.Value, o.Floor = math.Log(o.Value), o.Floor/o.Value
		}
	case dynsys.Mean:
		value = meanValue
	case dynsys.Lyapunov:
		src, err = e.reweighted(0, LogMultiplier)
		value = meanValue
	case dynsys.DecayRate:
		value = func(_ *Expansion, _ int, o *Order) {
			i := leadingIndex(o.Eigenvalues)
			if i < 0 || i+1 >= len(o.Eigenvalues) {
				o.Value, o.Floor = math.NaN(), math.Inf(1)
				return
			}
			l0, l1 := o.Eigenvalues[i], o.Eigenvalues[i+1]
			o.Value = -math.Log(cmplx.Abs(l1) / real(l0))
			o.Floor = o.EigenvalueFloors[i+1]/cmplx.Abs(l1) + o.EigenvalueFloors[i]/real(l0)
		}
	case dynsys.Dimension:
		return e.dimension()
	default:
		return QuantityResult{}, fmt.Errorf("cycles: unknown quantity %q", q)
	}
	if err != nil {
		return QuantityResult{}, err
	}
	res := QuantityResult{Quantity: q, Beta: src.beta, Sum: src.sum, Orders: src.Orders(), Diagnostics: src.Diagnostics()}
	for n := range res.Orders {
		o := &res.Orders[n]
		if math.IsNaN(o.Value) {
			continue
		}
		value(src, n+1, o)
	}
	res.Estimate = res.estimateFromOrders()
	if q == dynsys.Eigenvalues {
		res.Eigenvalues = src.EigenvalueEstimates(eigs)
	}
	return res, nil
}

func (r *QuantityResult) estimateFromOrders() Estimate {
	vals := make([]float64, len(r.Orders))
	floors := make([]float64, len(r.Orders))
	lens := make([]int, len(r.Orders))
	for i, o := range r.Orders {
		vals[i], floors[i], lens[i] = o.Value, o.Floor, o.MaxLen
	}
	est := realEstimate(vals, floors, lens)
	if r.Diagnostics.Stalled {
		est.Status = Stalled
	}
	return est
}

// meanValue sets o.Value to ⟨a⟩ = ⟨A⟩/⟨n⟩ at the leading zero z_0 = 1/λ_0 of
// the truncation at length n. With F(z) = Σ c_m z^m,
// ⟨A⟩ = −∂_β F = −Σ c'_m z^m and ⟨n⟩ = −z ∂_z F = −Σ m c_m z^m; this is
// dP/dβ, since differentiating F(z_0(β), β) = 0 gives
// dz_0/dβ = −∂_βF/∂_zF and P = −ln z_0. The floor adds the coefficient
// floors pushed through the ratio and the floor of z_0.
func meanValue(src *Expansion, n int, o *Order) {
	z := 1 / o.Value
	dz := o.Floor * z * z
	var sumA, sumN, floorA, floorN, dSumA, dSumN float64
	pow, absPow := 1.0, 1.0
	for m := 0; m <= n; m++ {
		fm := float64(m)
		if m > 0 {
			// z-derivatives for the sensitivity to z_0.
			dSumA -= fm * src.dcoef[m] * pow / z
			dSumN -= fm * fm * src.coef[m] * pow / z
		}
		sumA -= src.dcoef[m] * pow
		sumN -= fm * src.coef[m] * pow
		floorA += src.dfloor[m] * absPow
		floorN += fm * src.floor[m] * absPow
		pow *= z
		absPow *= math.Abs(z)
	}
	mean := sumA / sumN
	sensitivity := math.Abs((dSumA - mean*dSumN) / sumN)
	o.Value = mean
	o.Floor = (floorA+math.Abs(mean)*floorN)/math.Abs(sumN) + sensitivity*dz
}

// dimension solves Bowen's equation order by order: with A_p = ln|Λ_p| and
// β = 1 − s the weight is |Λ_p|^{1−s} (t_p = z^{n_p}|Λ_p|^{−s} in the zeta
// function), and s_N is the root of G_N(s) = F_N(1; 1 − s), the truncated
// function at z = 1, found by root.Brent in a bracket around s_{N−1}. A root
// counts only if z = 1 is then the leading zero; its floor is
// Σ floor_m / |∂_s G_N|, ∂_s G_N = −Σ c'_m.
func (e *Expansion) dimension() (QuantityResult, error) {
	if e.dim != 1 {
		return QuantityResult{}, ErrNotOneDimensional
	}
	w := e.weights
	w.setSums(e.cycles, e.maxLen, LogMultiplier)
	work := newTraceWork(e.maxLen)
	traces := make([]float64, e.maxLen+1)
	dtraces := make([]float64, e.maxLen+1)
	coef := make([]float64, e.maxLen+1)
	dcoef := make([]float64, e.maxLen+1)
	floor := make([]float64, e.maxLen+1)
	dfloor := make([]float64, e.maxLen+1)
	// evaluate computes the coefficients of fn at s up to degree n and
	// returns G_n(s); FactorizedDeterminant solves Bowen's equation with
	// its factor 1/ζ_0.
	evaluate := func(fn Function, s float64, n int) float64 {
		beta := 1 - s
		switch fn {
		case SpectralDeterminant:
			w.tracesTo(traces, dtraces, work.mag, work.dmag, beta, 1, n)
			newtonRecursion(coef, dcoef, floor, dfloor, traces, dtraces, work.mag, work.dmag, n)
		case DynamicalZeta, FactorizedDeterminant:
			w.zetaTo(coef, dcoef, floor, dfloor, work, beta, 0, n)
		}
		var g float64
		for m := n; m >= 0; m-- {
			g += coef[m]
		}
		return g
	}
	res := QuantityResult{Quantity: dynsys.Dimension, Sum: LogMultiplier, Orders: make([]Order, e.maxLen)}
	prev, prevChange := math.NaN(), math.NaN()
	for n := 1; n <= e.maxLen; n++ {
		o := Order{MaxLen: n, Cycles: e.cumulative[n], Value: math.NaN(), Floor: math.Inf(1)}
		g := func(s float64) float64 { return evaluate(e.function, s, n) }
		lo, hi := 0.0, 1.0
		if !math.IsNaN(prev) {
			half := 1e-3
			if !math.IsNaN(prevChange) {
				half = max(4*prevChange, 64*epsilon*math.Max(1, math.Abs(prev)))
			}
			lo, hi = prev-half, prev+half
		}
		glo, ghi := g(lo), g(hi)
		for try := 0; try < 60 && !math.IsNaN(glo) && !math.IsNaN(ghi) && (glo > 0) == (ghi > 0) && glo != 0 && ghi != 0; try++ {
			width := hi - lo
			lo, hi = lo-width, hi+width
			glo, ghi = g(lo), g(hi)
		}
		r, err := root.Brent(g, lo, hi, glo, ghi, nil)
		if err == nil {
			s := r.X
			g(s)
			vals, floors := polynomialEigenvalues(coef[:n+1], floor[:n+1])
			o.Eigenvalues, o.EigenvalueFloors = vals, floors
			if i := leadingIndex(vals); i >= 0 && nearestIndex(vals, 1) == i {
				var spread, slope float64
				for m := 0; m <= n; m++ {
					spread += floor[m]
					slope -= dcoef[m]
				}
				o.Value, o.Floor = s, spread/math.Abs(slope)
				if !math.IsNaN(prev) {
					prevChange = math.Abs(s - prev)
				}
				prev = s
				res.Beta = 1 - s
			}
		}
		res.Orders[n-1] = o
	}
	// The coefficient check belongs to the expansion at the dimension's
	// weight: recompute the full-length coefficients there (of the Newton
	// determinant for FactorizedDeterminant, as in Diagnostics).
	if !math.IsNaN(prev) {
		check := e.function
		if check == FactorizedDeterminant {
			check = SpectralDeterminant
		}
		evaluate(check, 1-res.Beta, e.maxLen)
		res.Diagnostics = diagnose(coef, floor, check != DynamicalZeta, e.dim)
	}
	res.Estimate = res.estimateFromOrders()
	return res, nil
}

// nearestIndex returns the index of the value in vals closest to x.
func nearestIndex(vals []complex128, x complex128) int {
	best, bestDist := -1, math.Inf(1)
	for i, v := range vals {
		if d := cmplx.Abs(v - x); d < bestDist {
			best, bestDist = i, d
		}
	}
	return best
}
