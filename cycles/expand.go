package cycles

import (
	"cmp"
	"errors"
	"fmt"
	"math"
	"math/bits"
	"slices"
)

// epsilon is the unit round-off of float64, the ε of the round-off floors.
const epsilon = 0x1p-53

// OrbitSum selects the orbit sum A_p that enters the cycle weight e^{βA_p}.
type OrbitSum int

const (
	// ObservableSum uses Cycle.ObservableSum, the sum of the system's
	// observable a(x) along the orbit.
	ObservableSum OrbitSum = iota
	// LogMultiplier uses A_p = ln|Λ_p|, Λ_p the product of the expanding
	// Floquet multipliers: the observable ln|f'| of the Lyapunov exponent
	// and, with β = 1 − s, the weight |Λ_p|^{1−s} of the dimension.
	LogMultiplier
)

func (s OrbitSum) String() string {
	switch s {
	case ObservableSum:
		return "observable-sum"
	case LogMultiplier:
		return "log-multiplier"
	}
	return fmt.Sprintf("OrbitSum(%d)", int(s))
}

// Function selects the function of z whose zeros give the spectrum.
type Function int

const (
	// SpectralDeterminant is det(1 − zL), expanded from the traces by the
	// Newton recursion. Its zeros are the inverse eigenvalues.
	SpectralDeterminant Function = iota
	// DynamicalZeta is 1/ζ(z) = Π_p (1 − t_p), expanded as a product
	// truncated by cycle length. Its leading zero is the inverse leading
	// eigenvalue; its other zeros are not eigenvalues in general.
	DynamicalZeta
	// FactorizedDeterminant is det(1 − zL) of a 1D map as the product
	// Π_{k≥0} 1/ζ_k of the zeta functions of ZetaCoefficients: each factor
	// is expanded on its own and contributes the zeros that lie inside its
	// disk of convergence (see the package documentation). Its eigenvalue
	// estimates keep full precision where the Newton recursion loses
	// digits like ε|z_k|ᴺ. The leading eigenvalue and the quantities that
	// differentiate the expanded function (Mean, Lyapunov, Dimension) come
	// from the factor 1/ζ_0, exactly as for DynamicalZeta; the
	// coefficient-decay check (Diagnostics) runs on the Newton
	// determinant of the same cycles. Defined for 1D maps only.
	FactorizedDeterminant
)

func (f Function) String() string {
	switch f {
	case SpectralDeterminant:
		return "spectral-determinant"
	case DynamicalZeta:
		return "dynamical-zeta"
	case FactorizedDeterminant:
		return "factorized-determinant"
	}
	return fmt.Sprintf("Function(%d)", int(f))
}

// Settings controls an expansion. A nil *Settings means the defaults.
type Settings struct {
	// MaxLen is the longest cycle length used: the expansion is truncated at
	// every order N = 1…MaxLen. Default 0 means the longest cycle in the set.
	MaxLen int
	// Beta is β of the weight e^{βA_p}. Default 0.
	Beta float64
	// Sum selects A_p. Default ObservableSum.
	Sum OrbitSum
	// Function selects the expanded function. Default SpectralDeterminant.
	Function Function
	// Eigs is the number of eigenvalue estimates Expand returns for the
	// quantity Eigenvalues. For FactorizedDeterminant it also sets how
	// many factors 1/ζ_k are expanded: enough for Eigs eigenvalues at the
	// longest length. Default 5 (at most MaxLen).
	Eigs int
}

// Errors a user can cause with the cycles given.
var (
	// ErrNoCycles means the cycle set is empty (below MaxLen).
	ErrNoCycles = errors.New("cycles: no cycles to expand")
	// ErrMarginal means a cycle has a multiplier of modulus 1, whose weight
	// 1/|1 − Λ^r| is infinite.
	ErrMarginal = errors.New("cycles: marginal cycle (multiplier of modulus 1)")
	// ErrNotOneDimensional means a quantity or function defined for 1D
	// maps only was asked of cycles with several multipliers.
	ErrNotOneDimensional = errors.New("cycles: defined for one-dimensional maps only")
)

// Order is the expansion truncated at one cycle length.
type Order struct {
	// MaxLen is the truncation length N.
	MaxLen int
	// Cycles is the number of prime cycles of length ≤ MaxLen used.
	Cycles int
	// Eigenvalues are λ_k = 1/z_k for all zeros z_k of the truncated
	// function, sorted by decreasing modulus. For FactorizedDeterminant,
	// the zeros of the truncated factors 1/ζ_k that lie inside their disks
	// of convergence.
	Eigenvalues []complex128
	// EigenvalueFloors are the round-off floors of Eigenvalues: the
	// change of λ_k that the rounding errors of the coefficients can cause.
	EigenvalueFloors []float64
	// Value is the quantity at this order (for an Expansion's own orders,
	// the leading real eigenvalue λ_0; NaN when there is none).
	Value float64
	// Floor is the round-off floor of Value.
	Floor float64
}

// Expansion is a cycle expansion of a set of prime cycles at one weight:
// the traces, the coefficients of the spectral determinant or dynamical
// zeta function with their derivatives in β and their round-off floors,
// and the zeros of every truncation. It is immutable once built.
type Expansion struct {
	cycles   []Cycle // sorted by length then itinerary; Len ≤ maxLen
	dim      int
	maxLen   int
	beta     float64
	sum      OrbitSum
	function Function
	// eigs is Settings.Eigs with its default applied.
	eigs int

	// cumulative[n] is the number of cycles of length ≤ n.
	cumulative []int

	// weights holds one entry per cycle repeat (p, r) with r·n_p ≤ maxLen.
	weights cycleWeights

	// traces[n] = C_n = tr Lⁿ, dtraces[n] = ∂_β C_n, n = 1…maxLen.
	traces, dtraces []float64
	// coef[n] are the coefficients of F(z) = Σ_{n=0}^{maxLen} coef[n] zⁿ,
	// coef[0] = 1; dcoef = ∂_β coef; floor and dfloor their round-off
	// floors. For FactorizedDeterminant they are those of 1/ζ_0.
	coef, dcoef, floor, dfloor []float64
	// checkCoef and checkFloor are the coefficients of the Newton
	// determinant and their floors, on which Diagnostics checks the
	// decay (coef and floor for SpectralDeterminant, nil for
	// DynamicalZeta).
	checkCoef, checkFloor []float64
	// factors is the number of factors 1/ζ_k whose zeros
	// FactorizedDeterminant uses.
	factors int

	orders []Order
}

// cycleWeights is the weight of every cycle repeat in struct-of-arrays form,
// so that re-weighting at another β costs one exponential per entry:
// weight = lenFactor·exp(logBase + β·sum).
type cycleWeights struct {
	length    []int32   // r·n_p
	lenFactor []float64 // n_p
	logBase   []float64 // −Σ_i ln|1 − Λ_{p,i}^r|
	base      []float64 // 1/Π_i |1 − Λ_{p,i}^r|, 0 if not a normal number
	sum       []float64 // r·A_p
	// prefix[n] is the number of entries of cycles of length ≤ n (the
	// entries follow the sorted cycles).
	prefix []int
	// zeta terms, one per cycle: t_p = z^{n_p} exp(β A_p + logInvLambda).
	zetaLen          []int32
	zetaLogInvLambda []float64 // −ln|Λ_p|
	zetaAbsLambda    []float64 // |Λ_p|
	zetaSign         []float64 // sign of Λ_p (1D family 1/ζ_k)
	zetaSum          []float64 // A_p
}

// NewExpansion builds the expansion of the prime cycles at the weight of
// settings. The cycles are copied and sorted by length, then itinerary,
// then point, so that every sum runs in a fixed order. Cycles longer than
// MaxLen are ignored. Errors report empty sets, marginal cycles and cycles
// whose dimensions disagree.
func NewExpansion(cycles []Cycle, settings *Settings) (*Expansion, error) {
	var s Settings
	if settings != nil {
		s = *settings
	}
	if s.MaxLen < 0 {
		panic("cycles: negative MaxLen")
	}
	if s.Function != SpectralDeterminant && s.Function != DynamicalZeta && s.Function != FactorizedDeterminant {
		panic("cycles: unknown Function")
	}
	if s.Sum != ObservableSum && s.Sum != LogMultiplier {
		panic("cycles: unknown OrbitSum")
	}
	sorted, err := sortedCycles(cycles, s.MaxLen)
	if err != nil {
		return nil, err
	}
	if s.Function == FactorizedDeterminant && len(sorted[0].Multipliers) != 1 {
		return nil, ErrNotOneDimensional
	}
	return newSortedExpansion(sorted, s, nil, nil)
}

// newSortedExpansion builds the expansion of sorted, checked cycles. If
// weights is not nil, it holds the weights of these cycles at the same
// MaxLen and is reused with the orbit sums of s.Sum. If orders is not nil,
// it holds the zeros of the same coefficients (the weight is unchanged and
// only the β-derivatives differ) and is reused.
func newSortedExpansion(sorted []Cycle, s Settings, weights *cycleWeights, orders []Order) (*Expansion, error) {
	maxLen := s.MaxLen
	if maxLen == 0 {
		maxLen = sorted[len(sorted)-1].Len
	}
	e := &Expansion{
		cycles:   sorted,
		dim:      len(sorted[0].Multipliers),
		maxLen:   maxLen,
		beta:     s.Beta,
		sum:      s.Sum,
		function: s.Function,
		eigs:     s.Eigs,
	}
	if e.eigs <= 0 {
		e.eigs = defaultEigs
	}
	e.eigs = min(e.eigs, maxLen)
	e.cumulative = make([]int, maxLen+1)
	for _, c := range sorted {
		e.cumulative[c.Len]++
	}
	for n := 1; n <= maxLen; n++ {
		e.cumulative[n] += e.cumulative[n-1]
	}
	if weights == nil {
		if err := e.weights.build(sorted, maxLen); err != nil {
			return nil, err
		}
	} else {
		e.weights = *weights
	}
	e.weights.setSums(sorted, maxLen, s.Sum)
	e.traces, e.dtraces = make([]float64, maxLen+1), make([]float64, maxLen+1)
	e.coef, e.dcoef = make([]float64, maxLen+1), make([]float64, maxLen+1)
	e.floor, e.dfloor = make([]float64, maxLen+1), make([]float64, maxLen+1)
	ws := newTraceWork(maxLen)
	e.weights.tracesTo(e.traces, e.dtraces, ws.mag, ws.dmag, e.beta, e.dim, maxLen)
	switch e.function {
	case SpectralDeterminant:
		newtonRecursion(e.coef, e.dcoef, e.floor, e.dfloor, e.traces, e.dtraces, ws.mag, ws.dmag, maxLen)
		e.checkCoef, e.checkFloor = e.coef, e.floor
	case DynamicalZeta:
		e.weights.zetaTo(e.coef, e.dcoef, e.floor, e.dfloor, ws, e.beta, 0, maxLen)
	case FactorizedDeterminant:
		e.weights.zetaTo(e.coef, e.dcoef, e.floor, e.dfloor, ws, e.beta, 0, maxLen)
		e.checkCoef, e.checkFloor = make([]float64, maxLen+1), make([]float64, maxLen+1)
		scratch, dscratch := make([]float64, maxLen+1), make([]float64, maxLen+1)
		newtonRecursion(e.checkCoef, scratch, e.checkFloor, dscratch, e.traces, e.dtraces, ws.mag, ws.dmag, maxLen)
	}
	if orders != nil {
		e.orders = orders
		return e, nil
	}
	if e.function == FactorizedDeterminant {
		e.orders, e.factors = e.factorizedOrders(ws)
		return e, nil
	}
	e.orders = make([]Order, maxLen)
	for n := 1; n <= maxLen; n++ {
		vals, floors := polynomialEigenvalues(e.coef[:n+1], e.floor[:n+1])
		o := Order{MaxLen: n, Cycles: e.cumulative[n], Eigenvalues: vals, EigenvalueFloors: floors}
		o.Value, o.Floor = math.NaN(), math.Inf(1)
		if i := leadingIndex(vals); i >= 0 {
			o.Value, o.Floor = real(vals[i]), floors[i]
		}
		e.orders[n-1] = o
	}
	return e, nil
}

// sortedCycles checks the cycles and returns a sorted copy of those of
// length ≤ maxLen (all if maxLen is 0).
func sortedCycles(cycles []Cycle, maxLen int) ([]Cycle, error) {
	dim, kept, longest := -1, 0, 0
	for i, c := range cycles {
		if c.Len < 1 {
			return nil, fmt.Errorf("cycles: cycle %d (%q) has length %d", i, c.Itinerary, c.Len)
		}
		if maxLen > 0 && c.Len > maxLen {
			continue
		}
		if len(c.Multipliers) == 0 {
			return nil, fmt.Errorf("cycles: cycle %d (%q) has no multipliers", i, c.Itinerary)
		}
		if dim >= 0 && len(c.Multipliers) != dim {
			return nil, fmt.Errorf("cycles: cycle %d (%q) has %d multipliers, earlier cycles %d", i, c.Itinerary, len(c.Multipliers), dim)
		}
		dim = len(c.Multipliers)
		for _, m := range c.Multipliers {
			if math.IsNaN(m) || math.IsInf(m, 0) {
				return nil, fmt.Errorf("cycles: cycle %d (%q) has multiplier %g", i, c.Itinerary, m)
			}
		}
		if math.IsNaN(c.ObservableSum) || math.IsInf(c.ObservableSum, 0) {
			return nil, fmt.Errorf("cycles: cycle %d (%q) has observable sum %g", i, c.Itinerary, c.ObservableSum)
		}
		kept++
		longest = max(longest, c.Len)
	}
	if kept == 0 {
		return nil, ErrNoCycles
	}
	// A stable counting sort by length, then a sort of each length by
	// compareCycles, skipped when the input is in order already (a cycle
	// search or a Lyndon word generator lists each length in order).
	// compareCycles is a total order up to cycles equal in every field,
	// whose order cannot change a result, so an unstable sort is
	// deterministic here.
	start := make([]int, longest+2)
	for _, c := range cycles {
		if c.Len <= longest {
			start[c.Len+1]++
		}
	}
	for n := 1; n <= longest+1; n++ {
		start[n] += start[n-1]
	}
	sorted := make([]Cycle, kept)
	next := slices.Clone(start)
	for _, c := range cycles {
		if c.Len <= longest {
			sorted[next[c.Len]] = c
			next[c.Len]++
		}
	}
	for n := 1; n <= longest; n++ {
		group := sorted[start[n]:start[n+1]]
		if !slices.IsSortedFunc(group, compareCycles) {
			slices.SortFunc(group, compareCycles)
		}
	}
	return sorted, nil
}

// compareCycles orders cycles by length, itinerary, point, multipliers and
// observable sum, so that equal inputs sort alike whatever their order.
func compareCycles(a, b Cycle) int {
	if c := cmp.Compare(a.Len, b.Len); c != 0 {
		return c
	}
	if c := cmp.Compare(a.Itinerary, b.Itinerary); c != 0 {
		return c
	}
	if c := slices.Compare(a.Point, b.Point); c != 0 {
		return c
	}
	if c := slices.Compare(a.Multipliers, b.Multipliers); c != 0 {
		return c
	}
	return cmp.Compare(a.ObservableSum, b.ObservableSum)
}

// expandingMultiplier returns Λ_p, the product of the multipliers of
// modulus greater than one (1 if there are none).
func expandingMultiplier(c Cycle) float64 {
	lambda := 1.0
	for _, m := range c.Multipliers {
		if math.Abs(m) > 1 {
			lambda *= m
		}
	}
	return lambda
}

// logAbsOneMinusPow returns ln|1 − Λ^r| without overflow for large |Λ|^r
// and without cancellation for small |Λ|^r; −Inf when Λ^r = 1.
func logAbsOneMinusPow(lambda float64, r int) float64 {
	if math.Abs(lambda) > 1 {
		return float64(r)*math.Log(math.Abs(lambda)) + math.Log1p(-math.Pow(1/lambda, float64(r)))
	}
	return math.Log1p(-math.Pow(lambda, float64(r)))
}

// build computes the weights of the cycle repeats that do not depend on
// the orbit sum.
func (w *cycleWeights) build(sorted []Cycle, maxLen int) error {
	entries := 0
	for _, c := range sorted {
		entries += maxLen / c.Len
	}
	w.length = make([]int32, 0, entries)
	w.lenFactor = make([]float64, 0, entries)
	w.logBase = make([]float64, 0, entries)
	w.base = make([]float64, 0, entries)
	w.prefix = make([]int, maxLen+1)
	w.zetaLen = make([]int32, 0, len(sorted))
	w.zetaLogInvLambda = make([]float64, 0, len(sorted))
	w.zetaAbsLambda = make([]float64, 0, len(sorted))
	w.zetaSign = make([]float64, 0, len(sorted))
	for _, c := range sorted {
		lambda := expandingMultiplier(c)
		for r := 1; r*c.Len <= maxLen; r++ {
			logBase, base := 0.0, 1.0
			for _, m := range c.Multipliers {
				base /= math.Abs(1 - math.Pow(m, float64(r)))
				l := logAbsOneMinusPow(m, r)
				if math.IsInf(l, -1) || math.IsNaN(l) {
					return fmt.Errorf("%w: %q, multiplier %g", ErrMarginal, c.Itinerary, m)
				}
				logBase -= l
			}
			w.length = append(w.length, int32(r*c.Len))
			w.lenFactor = append(w.lenFactor, float64(c.Len))
			w.logBase = append(w.logBase, logBase)
			if base == 0 || math.IsInf(base, 0) || base < 0x1p-1000 {
				base = 0
			}
			w.base = append(w.base, base)
		}
		if math.Abs(lambda) == 1 {
			return fmt.Errorf("%w: %q has no expanding multiplier", ErrMarginal, c.Itinerary)
		}
		w.prefix[c.Len] = len(w.length)
		w.zetaLen = append(w.zetaLen, int32(c.Len))
		w.zetaLogInvLambda = append(w.zetaLogInvLambda, -math.Log(math.Abs(lambda)))
		w.zetaAbsLambda = append(w.zetaAbsLambda, math.Abs(lambda))
		w.zetaSign = append(w.zetaSign, math.Copysign(1, lambda))
	}
	for n := 1; n <= maxLen; n++ {
		w.prefix[n] = max(w.prefix[n], w.prefix[n-1])
	}
	return nil
}

// setSums fills the orbit sums r·A_p and A_p with fresh slices, so that
// weights shared between expansions keep their own sums.
func (w *cycleWeights) setSums(sorted []Cycle, maxLen int, sum OrbitSum) {
	w.sum = make([]float64, 0, len(w.length))
	w.zetaSum = make([]float64, 0, len(sorted))
	for i, c := range sorted {
		var a float64
		switch sum {
		case ObservableSum:
			a = c.ObservableSum
		case LogMultiplier:
			a = -w.zetaLogInvLambda[i]
		}
		for r := 1; r*c.Len <= maxLen; r++ {
			w.sum = append(w.sum, float64(r)*a)
		}
		w.zetaSum = append(w.zetaSum, a)
	}
}

// traceWork holds scratch space for one evaluation.
type traceWork struct {
	mag, dmag []float64
	abs, dabs []float64
	err, derr []float64
}

func newTraceWork(maxLen int) *traceWork {
	return &traceWork{
		mag:  make([]float64, maxLen+1),
		dmag: make([]float64, maxLen+1),
		abs:  make([]float64, maxLen+1),
		dabs: make([]float64, maxLen+1),
		err:  make([]float64, maxLen+1),
		derr: make([]float64, maxLen+1),
	}
}

// tracesTo computes C_n = Σ_p n_p Σ_r δ_{n, r n_p} e^{rβA_p}/Π_i|1 − Λ_{p,i}^r|
// and ∂_β C_n (the same sum with an extra factor r A_p) for n ≤ maxLen.
// mag[n] and dmag[n] receive the round-off magnitudes of C_n and ∂_β C_n:
// each term t is good to about (d + 1 + |rβA_p|)·ε relative (d divisions,
// one multiplication and an exponential whose argument carries an error
// ε|rβA_p|), so mag[n] = Σ |t|(d + 1 + |rβA_p|) and ε·mag[n] is the floor
// of C_n; likewise for ∂_β C_n.
func (w *cycleWeights) tracesTo(traces, dtraces, mag, dmag []float64, beta float64, dim, maxLen int) {
	clear(traces[:maxLen+1])
	clear(dtraces[:maxLen+1])
	clear(mag[:maxLen+1])
	clear(dmag[:maxLen+1])
	ops := float64(dim + 1)
	for i, n := range w.length[:w.prefix[maxLen]] {
		if int(n) > maxLen {
			continue
		}
		var t float64
		if b := w.base[i]; b != 0 {
			t = w.lenFactor[i] * b
			if beta != 0 {
				t *= math.Exp(beta * w.sum[i])
			}
		} else {
			t = w.lenFactor[i] * math.Exp(w.logBase[i]+beta*w.sum[i])
		}
		dt := w.sum[i] * t
		rel := ops + math.Abs(beta*w.sum[i])
		traces[n] += t
		dtraces[n] += dt
		mag[n] += math.Abs(t) * rel
		dmag[n] += math.Abs(dt) * (rel + 1)
	}
}

// newtonRecursion turns traces into the coefficients of
// det(1 − zL) = 1 − Σ_n Q_n zⁿ by Q_n = (C_n − Σ_{k<n} C_{n−k} Q_k)/n,
// writing c_n = −Q_n (c_0 = 1), their β-derivatives by the product rule
// n Q'_n = C'_n − Σ_{k<n} (C'_{n−k} Q_k + C_{n−k} Q'_k), and round-off
// floors: ε times the magnitudes of the terms that cancel, plus the floors
// of the earlier coefficients carried through the recursion.
func newtonRecursion(coef, dcoef, floor, dfloor, traces, dtraces, traceMag, dtraceMag []float64, maxLen int) {
	coef[0], dcoef[0], floor[0], dfloor[0] = 1, 0, 0, 0
	// q, dq are Q_n = −c_n and Q'_n; err, derr their floors.
	for n := 1; n <= maxLen; n++ {
		q, dq := traces[n], dtraces[n]
		mag, dmag := traceMag[n], dtraceMag[n]
		var carried, dcarried float64
		for k := 1; k < n; k++ {
			qk, dqk := -coef[k], -dcoef[k]
			c, dc := traces[n-k], dtraces[n-k]
			q -= c * qk
			dq -= dc*qk + c*dqk
			mag += math.Abs(c * qk)
			dmag += math.Abs(dc*qk) + math.Abs(c*dqk)
			carried += math.Abs(c) * floor[k]
			dcarried += math.Abs(dc)*floor[k] + math.Abs(c)*dfloor[k]
		}
		fn := float64(n)
		coef[n], dcoef[n] = -q/fn, -dq/fn
		floor[n] = (epsilon*mag + carried) / fn
		dfloor[n] = (epsilon*dmag + dcarried) / fn
	}
}

// zetaTerm returns the weight of cycle i in 1/ζ_k without its power of z,
// t_p/(z^{n_p} Λ_p^k) = e^{βA_p} sign(Λ_p)^k / |Λ_p|^{k+1}, and a bound on its
// relative rounding error in units of ε. At β = 0 it is a power of the
// multiplier: one division for k = 0, math.Pow (binary powering, about
// two roundings per bit of k + 1) otherwise, so that it keeps full
// precision however large k is; an exponential ln-form would carry the
// error ε(k+1)ln|Λ_p| of its argument. At β ≠ 0 it is one exponential,
// whose argument x is rounded to ε|x|, kept in that form so that neither
// e^{βA_p} nor |Λ_p|^{k+1} overflows alone.
func (w *cycleWeights) zetaTerm(i int, beta float64, k int) (t, rel float64) {
	switch {
	case beta != 0:
		x := beta*w.zetaSum[i] + float64(k+1)*w.zetaLogInvLambda[i]
		t, rel = math.Exp(x), 2+math.Abs(x)
	case k == 0:
		t, rel = 1/w.zetaAbsLambda[i], 1
	default:
		t, rel = math.Pow(w.zetaAbsLambda[i], -float64(k+1)), float64(2*bits.Len(uint(k+1))+1)
	}
	if k%2 == 1 {
		t *= w.zetaSign[i]
	}
	return t, rel
}

// zetaTo multiplies out 1/ζ_k(z) = Π_p (1 − t_p/Λ_p^k), truncated at degree
// maxLen, with t_p = z^{n_p} e^{βA_p}/|Λ_p|, and, unless dcoef is nil, its
// β-derivative (∂_β t_p = A_p t_p).
//
// The floor of coefficient c_n is ε Σ_π |π| r_π over the products π of
// cycle weights that make it up, r_π counting the roundings of π: the
// relative errors of its factors (zetaTerm) and one multiplication and one
// addition per factor. The sums Σ|π| and Σ|π| r_π are accumulated
// alongside the coefficients (work.abs, work.err; work.dabs and work.derr
// for the derivative, whose factor A_p adds one rounding).
func (w *cycleWeights) zetaTo(coef, dcoef, floor, dfloor []float64, work *traceWork, beta float64, k, maxLen int) {
	abs, err := work.abs[:maxLen+1], work.err[:maxLen+1]
	clear(coef[:maxLen+1])
	clear(abs)
	clear(err)
	coef[0], abs[0] = 1, 1
	derivative := dcoef != nil
	var dabs, derr []float64
	if derivative {
		dabs, derr = work.dabs[:maxLen+1], work.derr[:maxLen+1]
		clear(dcoef[:maxLen+1])
		clear(dabs)
		clear(derr)
	}
	for i, m32 := range w.zetaLen {
		m := int(m32)
		if m > maxLen {
			break // sorted by length
		}
		t, rel := w.zetaTerm(i, beta, k)
		at := math.Abs(t)
		if at == 0 {
			continue // underflowed: no contribution in double precision
		}
		rel += 2
		if derivative {
			a := w.zetaSum[i]
			dt := a * t
			adt := math.Abs(dt)
			for n := maxLen; n >= m; n-- {
				dcoef[n] -= t*dcoef[n-m] + dt*coef[n-m]
				derr[n] += adt*(err[n-m]+(rel+1)*abs[n-m]) + at*(derr[n-m]+rel*dabs[n-m])
				dabs[n] += at*dabs[n-m] + adt*abs[n-m]
			}
		}
		for n := maxLen; n >= m; n-- {
			coef[n] -= t * coef[n-m]
			err[n] += at * (err[n-m] + rel*abs[n-m])
			abs[n] += at * abs[n-m]
		}
	}
	for n := 0; n <= maxLen; n++ {
		floor[n] = epsilon * err[n]
		if derivative {
			dfloor[n] = epsilon * derr[n]
		}
	}
}

// MaxLen returns the truncation length of the longest order.
func (e *Expansion) MaxLen() int { return e.maxLen }

// Beta returns β of the weight.
func (e *Expansion) Beta() float64 { return e.beta }

// Cycles returns the number of prime cycles used (length ≤ MaxLen).
func (e *Expansion) Cycles() int { return len(e.cycles) }

// Traces returns C_n = tr Lⁿ for n = 0…MaxLen (C_0 is unused and 0).
func (e *Expansion) Traces() []float64 { return slices.Clone(e.traces) }

// Coefficients returns c_0…c_MaxLen of the expanded function
// F(z) = Σ_n c_n zⁿ, c_0 = 1; for the spectral determinant c_n = −Q_n;
// for FactorizedDeterminant those of its factor 1/ζ_0 (ZetaCoefficients
// gives the others). The truncation at order N is c_0…c_N.
func (e *Expansion) Coefficients() []float64 { return slices.Clone(e.coef) }

// CoefficientFloors returns the round-off floors of Coefficients.
func (e *Expansion) CoefficientFloors() []float64 { return slices.Clone(e.floor) }

// Orders returns the expansion truncated at N = 1…MaxLen. Order.Value is
// the leading real eigenvalue λ_0.
func (e *Expansion) Orders() []Order {
	out := make([]Order, len(e.orders))
	for i, o := range e.orders {
		o.Eigenvalues = slices.Clone(o.Eigenvalues)
		o.EigenvalueFloors = slices.Clone(o.EigenvalueFloors)
		out[i] = o
	}
	return out
}

// reweighted returns the expansion of the same cycles with another weight.
func (e *Expansion) reweighted(beta float64, sum OrbitSum) (*Expansion, error) {
	if beta == e.beta && sum == e.sum {
		return e, nil
	}
	var orders []Order
	if beta == e.beta && beta == 0 {
		// At β = 0 the weights, hence the coefficients and zeros, do not
		// depend on the orbit sum.
		orders = e.orders
	}
	return newSortedExpansion(e.cycles, Settings{MaxLen: e.maxLen, Beta: beta, Sum: sum, Function: e.function, Eigs: e.eigs}, &e.weights, orders)
}
