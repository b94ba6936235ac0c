package galerkin

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"

	"crosspec/dynsys"
	"crosspec/ulam"
)

// run is a sequence of laps accumulating at an end of the domain (the
// Gauss map's laps [1/(k+1), 1/k] at 0): laps[r] is the lap of rank r,
// counted from the outermost one, all with the same image. nu0 is the
// natural index of rank 0, estimated as D/W − 1 from the distance D of
// its far end to the accumulation point and its width W (exact for
// branches 1/(ν + y), f = c/x + const near the accumulation point).
type run struct {
	laps []int
	nu0  float64
	// atLo tells whether the laps accumulate at the lower end.
	atLo bool
	acc  float64 // accumulation point
}

// index returns the natural index estimated from the geometry of lap l.
func (r *run) index(l dynsys.Lap) float64 {
	if r.atLo {
		return (l.Hi-r.acc)/(l.Hi-l.Lo) - 1
	}
	return (r.acc-l.Lo)/(l.Hi-l.Lo) - 1
}

// findRun returns the run of laps between the excluded interval at the
// domain end (lo if atLo, else hi) and the point limit, or nil when there
// is no excluded interval there or the laps do not follow the 1/x pattern
// the tail model assumes.
func findRun(ls dynsys.LapSet, lo, hi, limit float64, atLo bool) *run {
	const minLaps = 64
	r := &run{atLo: atLo}
	var edge float64
	found := false
	for _, e := range ls.Excluded {
		if atLo && e.Lo <= lo {
			edge, found = e.Hi, true
		}
		if !atLo && e.Hi >= hi {
			edge, found = e.Lo, true
		}
	}
	if !found {
		return nil
	}
	if atLo {
		r.acc = lo
		// Laps from the excluded edge outwards, inside [edge, limit].
		var inner []int
		for i, l := range ls.Laps {
			if l.Lo >= edge && l.Hi <= limit {
				inner = append(inner, i)
			}
		}
		for k := len(inner) - 1; k >= 0; k-- {
			r.laps = append(r.laps, inner[k])
		}
	} else {
		r.acc = hi
		for i, l := range ls.Laps {
			if l.Hi <= edge && l.Lo >= limit {
				r.laps = append(r.laps, i)
			}
		}
	}
	if len(r.laps) < minLaps {
		return nil
	}
	// Keep the innermost laps that share the innermost lap's image.
	last := ls.Laps[r.laps[len(r.laps)-1]]
	start := len(r.laps) - 1
	for start > 0 {
		l := ls.Laps[r.laps[start-1]]
		if l.FLo != last.FLo || l.FHi != last.FHi {
			break
		}
		start--
	}
	r.laps = r.laps[start:]
	if len(r.laps) < minLaps {
		return nil
	}
	r.nu0 = r.index(ls.Laps[r.laps[0]])
	// The index must grow by one a lap, up to the round-off of the
	// narrowest laps' widths.
	for _, k := range []int{len(r.laps) / 4, len(r.laps) / 2, len(r.laps) - 1} {
		if math.Abs(r.index(ls.Laps[r.laps[k]])-(r.nu0+float64(k))) > 0.25 {
			return nil
		}
	}
	return r
}

// tailRule is a quadrature rule over the laps of a run, ranks ≥ first:
//
//	Σ_{r ≥ first} a(ν0 + r)   ≈ Σ_m weights[m]·a(ν0 + ranks[m]),
//	Σ_{r ≥ first} ln(n)·a(n)  ≈ Σ_m logWeights[m]·a(ν0 + ranks[m]),
//
// n = ν0 + r, for contributions a(n) = n^(−P) G(1/n) with G smooth on
// [0, 1/(ν0+first)]. P = 2 for a bounded weight (a lap of a simple pole has
// width ~ n^(−2)); the weight |f'|^β grows like n^(2β) there, so P = 2 − 2β.
// The logarithmic rule serves the derivative in β of that weight,
// ln |f'| = 2 ln n + (smooth in 1/n) on lap n.
type tailRule struct {
	ranks      []int
	weights    []float64
	logWeights []float64
	// check is the relative error of the rule on sums known in closed form.
	check float64
}

// ErrTailDiverges is returned when the weight grows so fast toward an
// accumulation point of laps that the sum over the laps diverges
// (P ≤ 1, i.e. |f'|^β with β ≥ 1/2 for a simple pole): the transfer
// operator is then unbounded.
var ErrTailDiverges = errors.New("galerkin: the weight grows too fast where the laps accumulate: the sum over the laps diverges")

// newTailRule builds the rule: G is interpolated at the ranks nearest to
// the Chebyshev points of t = 1/n on [0, 1/(ν0+first)] (last the highest
// rank the lap scan resolved), and the interpolant is summed over all
// n = ν0 + r, r ≥ first: s_m = n_m^P Σ_r n_r^(−P) ℓ_m(1/n_r), and s'_m
// the same with ln n_r inside, ℓ_m the Lagrange polynomials. The sums run
// directly over 10⁵ ranks and beyond by the midpoint Euler–Maclaurin
// formula, Σ_{n ≥ c+½} F(n) = ∫_c^∞ F(n) dn + F'(c)/24 + O(F”'(c)), with
// F(n) = n^(−P) (ln n)^L ℓ(1/n) (L = 0, 1) and the integral
// ∫_0^{1/c} t^(P−2) (−ln t)^L ℓ(t) dt taken exactly for a polynomial fit
// of ℓ on [0, 1/c] (moments of t^(P−2) (−ln t)^L in closed form).
//
// The rule is checked on the telescoping sums
//
//	Σ_{n ≥ ν} [(n+y)^(1−P) − (n+y+1)^(1−P)] = (ν+y)^(1−P),
//	Σ_{n ≥ ν} [ln(n+y)(n+y)^(1−P) − ln(n+y+1)(n+y+1)^(1−P)] = ln(ν+y)(ν+y)^(1−P),
//
// y = 0, 1, whose terms have the analytic structure of the contributions
// (n^(−P) H(1/n), and ln n·n^(−P) H(1/n) + n^(−P) K(1/n), singular only
// at t ≤ −1/2). A rule whose snapped nodes spoil it (nodes crowding the
// integers near 1/ν) is replaced by one with fewer nodes; the best one is
// kept.
func newTailRule(nu0 float64, first, last, nodes int, power float64) (tailRule, error) {
	if !(power > 1) {
		return tailRule{}, fmt.Errorf("%w (lap contributions fall like n^(−%.3g))", ErrTailDiverges, power)
	}
	nuFirst := nu0 + float64(first)
	best := tailRule{check: math.Inf(1)}
	for m := nodes; m >= 4; m-- {
		r := tailRuleNodes(nu0, first, last, m, power)
		worst := 0.0
		for _, y := range []float64{0, 1} {
			var s, sl float64
			for k, rk := range r.ranks {
				n := nu0 + float64(rk)
				u := n + y
				// u^(1−P) − (u+1)^(1−P) without cancellation, and the
				// logarithmic term less ln n times it.
				a1 := -math.Pow(u, 1-power) * math.Expm1((1-power)*math.Log1p(1/u))
				a2 := math.Log1p(y/n)*math.Pow(u, 1-power) - math.Log1p((y+1)/n)*math.Pow(u+1, 1-power)
				s += r.weights[k] * a1
				sl += r.logWeights[k]*a1 + r.weights[k]*a2
			}
			u := nuFirst + y
			want := math.Pow(u, 1-power)
			worst = max(worst, math.Abs(s/want-1))
			if lw := math.Log(u) * want; lw != 0 {
				worst = max(worst, math.Abs(sl/lw-1))
			}
		}
		if worst < best.check {
			best = r
			best.check = worst
		}
		if worst <= 1e-13 {
			break
		}
	}
	return best, nil
}

func tailRuleNodes(nu0 float64, first, last, nodes int, power float64) tailRule {
	tHi := 1 / (nu0 + float64(first))
	seen := map[int]bool{}
	var ranks []int
	for m := range nodes {
		t := 0.5 * tHi * (1 + math.Cos(math.Pi*(float64(m)+0.5)/float64(nodes)))
		r := first + last
		if t > 0 {
			r = int(math.Round(1/t - nu0))
		}
		r = min(max(r, first), last)
		if !seen[r] {
			seen[r] = true
			ranks = append(ranks, r)
		}
	}
	M := len(ranks)
	ts := make([]float64, M)
	for m, r := range ranks {
		ts[m] = 1 / (nu0 + float64(r))
	}
	// Barycentric weights in the variable scaled to the interval.
	half := 0.5 * tHi
	bw := make([]float64, M)
	for m := range M {
		prod := 1.0
		for k := range M {
			if k != m {
				prod *= (ts[m] - ts[k]) / half
			}
		}
		bw[m] = 1 / prod
	}
	lagrange := func(dst []float64, t float64) {
		var den float64
		for m := range M {
			if t == ts[m] {
				clear(dst)
				dst[m] = 1
				return
			}
		}
		for m := range M {
			dst[m] = bw[m] / ((t - ts[m]) / half)
			den += dst[m]
		}
		for m := range M {
			dst[m] /= den
		}
	}
	sums := make([]float64, M)
	logSums := make([]float64, M)
	ell := make([]float64, M)
	const direct = 100000
	for r := first; r < first+direct; r++ {
		n := nu0 + float64(r)
		lagrange(ell, 1/n)
		f := math.Pow(n, -power)
		fl := f * math.Log(n)
		for m := range M {
			sums[m] += ell[m] * f
			logSums[m] += ell[m] * fl
		}
	}
	c := nu0 + float64(first+direct) - 0.5
	// ∫_0^T t^α (−ln t)^L ℓ_m(t) dt, T = 1/c, α = P − 2 > −1: each ℓ_m is
	// fitted on [0, T] by a polynomial Σ_k e_k (t/T)^k through Chebyshev
	// points (ℓ_m is analytic on a disc of radius ~ 1/ν0 ≫ T, so the fit
	// errs by about (ν0·T)^(fitDegree+1)), whose moments are T^(α+1)/d and
	// T^(α+1)(−ln T/d + 1/d²), d = α+k+1.
	const fitDegree = 8
	T, alpha := 1/c, power-2
	vals := mat.NewDense(fitDegree+1, M, nil)
	vander := mat.NewDense(fitDegree+1, fitDegree+1, nil)
	for q := 0; q <= fitDegree; q++ {
		u := 0.5 * (1 + math.Cos(math.Pi*(float64(q)+0.5)/float64(fitDegree+1)))
		lagrange(ell, T*u)
		vals.SetRow(q, ell)
		for k := 0; k <= fitDegree; k++ {
			vander.Set(q, k, math.Pow(u, float64(k)))
		}
	}
	var coef mat.Dense
	if err := coef.Solve(vander, vals); err != nil {
		panic("galerkin: singular fit of the tail interpolant: " + err.Error())
	}
	scale := math.Pow(T, alpha+1)
	for k := 0; k <= fitDegree; k++ {
		d := alpha + float64(k) + 1
		mom, logMom := scale/d, scale*(-math.Log(T)/d+1/(d*d))
		for m := range M {
			sums[m] += coef.At(k, m) * mom
			logSums[m] += coef.At(k, m) * logMom
		}
	}
	// F'(c)/24 with F(n) ≈ n^(−P) (ln n)^L ℓ(1/n); the ℓ' term is smaller
	// by 1/c.
	lagrange(ell, 1/c)
	cp := math.Pow(c, -power-1) / 24
	for m := range M {
		sums[m] -= power * cp * ell[m]
		logSums[m] += (1 - power*math.Log(c)) * cp * ell[m]
	}
	r := tailRule{ranks: ranks, weights: make([]float64, M), logWeights: make([]float64, M)}
	for m := range M {
		np := math.Pow(1/ts[m], power)
		r.weights[m] = sums[m] * np
		r.logWeights[m] = logSums[m] * np
	}
	return r
}

// model returns the tail rule for the laps of rank ≥ first of run r and
// the weight of the settings, the shifts of its derivative integrals
// (logShifts), and the length of the domain's excluded end that the model
// covers (to be taken off the excluded length).
func (r *run) model(sys *dynsys.System, ls dynsys.LapSet, first int, set Settings) (rule tailRule, shifts []float64, covered float64, err error) {
	rule, err = newTailRule(r.nu0, first, len(r.laps)-1, set.TailNodes, tailPower(set.Observable, set.Beta))
	if err != nil {
		return rule, nil, 0, fmt.Errorf("%w (%s at β = %g)", err, sys.Name, set.Beta)
	}
	lo, hi := sys.Lo[0], sys.Hi[0]
	for _, e := range ls.Excluded {
		if (r.atLo && e.Lo <= lo) || (!r.atLo && e.Hi >= hi) {
			covered += e.Hi - e.Lo
		}
	}
	return rule, logShifts(set.Observable, r.nu0, rule), covered, nil
}

// tailPower returns the exponent P of the lap contributions n^(−P) G(1/n)
// for the weight exp(β a): 2 − 2β for a = ln |f'| (|f'| grows like n² on
// the laps of a simple pole), 2 for an observable bounded there.
func tailPower(obs ulam.Observable, beta float64) float64 {
	if obs == ulam.LogExpansion {
		return 2 - 2*beta
	}
	return 2
}

// logShifts returns, per node of the rule, what to add to a(x) in the
// derivative integrals of the sample laps so that the weighted sum treats
// the logarithm of a = ln |f'| = 2 ln n + g(x) (g smooth in 1/n on lap n):
// Σ_n d(n) = Σ_n [d(n) − 2 ln n·c(n)] + 2 Σ_n ln n·c(n)
//
//	≈ Σ_m s_m d(n_m) + Σ_m (2 s'_m − 2 ln n_m·s_m) c(n_m),
//
// d and c a lap's derivative and plain integrals, s, s' the rule's weights;
// the shift is 2(s'_m/s_m − ln n_m). Zero for other observables.
func logShifts(obs ulam.Observable, nu0 float64, rule tailRule) []float64 {
	shifts := make([]float64, len(rule.ranks))
	if obs != ulam.LogExpansion {
		return shifts
	}
	for m, r := range rule.ranks {
		if rule.weights[m] != 0 {
			shifts[m] = 2 * (rule.logWeights[m]/rule.weights[m] - math.Log(nu0+float64(r)))
		}
	}
	return shifts
}
