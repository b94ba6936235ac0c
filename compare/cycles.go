package compare

import (
	"fmt"
	"math"
)

// Cycles analyses a sequence of cycle-expansion estimates values[i]
// truncated at cycle length orders[i] (orders strictly increasing,
// typically 1, 2, …, n). It measures the decay of the successive
// differences, predicts the tail of the differences still to come, and
// detects the round-off floor, plateaus and oscillations; see the package
// documentation for the model. Cycles panics if the lengths differ or orders
// is not positive and strictly increasing. Non-finite values are dropped and
// the drop is reported in Reason.
func Cycles(orders []int, values []float64, s *Settings) Estimate {
	checkShape("Cycles", "orders", orders, values)
	return fastSequence(cycleWords, orders, values, s)
}

// CyclesWithFloors is Cycles for estimates whose round-off floors are
// known: floors[i] is the change of values[i] that the rounding errors of
// its computation can cause (as the cycle expansion reports for every
// truncation). The rounding noise of a zero z of a truncated determinant
// grows with the length like ε|z|^n, so for a zero far from the origin
// (a subleading eigenvalue, the decay rate) the estimates converge to the
// floor and then drift with the noise, which the model of Cycles would
// read as a stall or as irregular signs. So the sequence ends at the
// first estimate v_i whose change d = |v_i − v_{i−1}| from the previous
// one is within the floors of the two (the later ones differ by noise
// alone): v_i is reported, Status RoundOffFloor, with the error max(d,
// f_i, f_{i−1}, min(d + f_i, t)), t = d_{i−1} r/(1 − r), r =
// d_{i−1}/d_{i−2}, the geometric tail of the changes to come after v_{i−1}
// (d_{i−1} when r ≥ 1; d + f_i alone with fewer than two changes before),
// the bound of the cycle expansion's own estimate (cycles, AtFloor). The
// floors bound the rounding noise and are often far above it, so v_i, the
// noisier of the two, and both floors keep the bar honest (v_{i−1} with
// its own floor was 281 times too wide for the doubling map's decay rate
// in the calibration). Without such a pair it is Cycles. floors may be
// nil (Cycles); values and floors that are not finite, and floors that
// are not positive, are skipped when looking for the end. It panics if
// the lengths differ.
func CyclesWithFloors(orders []int, values, floors []float64, s *Settings) Estimate {
	checkShape("CyclesWithFloors", "orders", orders, values)
	return withFloors("CyclesWithFloors", "length", Cycles, orders, values, floors, s)
}

// GalerkinWithFloors is Galerkin for estimates whose round-off floors are
// known (galerkin.Result.Floor of the global Chebyshev basis, where a
// subleading eigenvalue's condition number makes the floor of a decay rate
// 1e-10 or more): the sequence ends where two sizes agree within their
// floors, as in CyclesWithFloors. floors may be nil, and a zero floor is
// no floor.
func GalerkinWithFloors(steps []int, values, floors []float64, s *Settings) Estimate {
	checkShape("GalerkinWithFloors", "steps", steps, values)
	return withFloors("GalerkinWithFloors", "step", Galerkin, steps, values, floors, s)
}

// withFloors is the at-floor estimate of CyclesWithFloors, or analyse when
// no two estimates agree within their floors.
func withFloors(name, unit string, analyse func([]int, []float64, *Settings) Estimate, orders []int, values, floors []float64, s *Settings) Estimate {
	if floors == nil {
		return analyse(orders, values, s)
	}
	if len(floors) != len(values) {
		panic(fmt.Sprintf("compare: %s: %d values but %d floors", name, len(values), len(floors)))
	}
	idx, j := floorCut(values, floors)
	if j < 0 {
		return analyse(orders, values, s)
	}
	i, prev := idx[j], idx[j-1]
	change := func(k int) float64 { return math.Abs(values[idx[k]] - values[idx[k-1]]) }
	d := change(j)
	// The truncation error left: at most d + f_i (v_i is within f_i of its
	// truncation, which is no further from the limit than v_prev's), or
	// the geometric tail of the changes after v_prev predicted by the last
	// two changes before, whichever is smaller.
	tail := d + floors[i]
	if j >= 3 {
		last, before := change(j-1), change(j-2)
		if r := last / before; r < 1 {
			tail = math.Min(tail, last*r/(1-r))
		} else {
			tail = math.Min(tail, last)
		}
	}
	scale := 0.0
	for _, k := range idx {
		scale = math.Max(scale, math.Abs(values[k]))
	}
	return Estimate{
		Value: values[i], Error: max(d, floors[i], floors[prev], tail, minError(scale)), Last: values[len(values)-1],
		Order: math.NaN(), Status: RoundOffFloor, Used: orders[i],
		Reason: fmt.Sprintf("%s %d and %d agree within their round-off floors (%.2g and %.2g): the value at %s %d, error the larger of their difference, their floors and the tail the changes before predict",
			unit, orders[prev], orders[i], floors[prev], floors[i], unit, orders[i]),
	}
}

// floorCut returns the indices of the finite estimates (a finite value
// with a positive, finite floor) and the position j in that list of the
// first whose change from the one before is within the floors of the two,
// or −1 when there is none.
func floorCut(values, floors []float64) ([]int, int) {
	var idx []int
	for i := range values {
		if math.IsNaN(values[i]) || math.IsInf(values[i], 0) || !(floors[i] > 0) || math.IsInf(floors[i], 0) {
			continue
		}
		idx = append(idx, i)
		if j := len(idx) - 1; j > 0 {
			prev := idx[j-1]
			if math.Abs(values[i]-values[prev]) <= math.Max(floors[i], floors[prev]) {
				return idx, j
			}
		}
	}
	return idx, -1
}

// Galerkin analyses the estimates of a higher-order discretization
// (piecewise polynomials or a global spectral basis) over a sequence of
// sizes, steps[i] the index of the size (1, 2, …). Such bases converge
// fast and regularly: exponentially in the size of a spectral basis, like
// h^(p+1) or faster for piecewise polynomials, so over a doubling or
// evenly stepped sequence of sizes the differences decay at least
// geometrically in the step, and the model of Cycles applies on the
// index; only the diagnoses of a stall differ (spurious eigenvalues of the
// basis, a floor of the quadrature or tail model, instead of missing
// cycles). Galerkin panics as Cycles does.
func Galerkin(steps []int, values []float64, s *Settings) Estimate {
	checkShape("Galerkin", "steps", steps, values)
	return fastSequence(galerkinWords, steps, values, s)
}

// pathWords names a fast-converging path in its reasons, and the likely
// causes of its stalls.
type pathWords struct {
	name        string // prefix of the reasons
	sequence    string // what converges
	alternating string // cause of differences alternating without decay
	plateau     string // cause of differences stopping far above round-off
}

var (
	cycleWords    = pathWords{"cycles", "the expansion", "marginal cycles or pruning", "missing cycles?"}
	galerkinWords = pathWords{"galerkin", "the discretization", "spurious eigenvalues of the basis?", "spurious eigenvalues, or a floor of the quadrature or tail model?"}
)

func fastSequence(w pathWords, orders []int, values []float64, s *Settings) Estimate {
	set := s.withDefaults()
	orders, values, note := dropNonFinite(orders, values)
	est := cycles(w, orders, values, set)
	if n := len(values); set.NonMonotone && n >= 2 && (est.Status == Converged || est.Status == Irregular) {
		// On the skew-cantor expansion to length 5 the fitted bar was
		// 1.8e-4 for an error of 5.3e-4: the next difference (5.4e-4)
		// exceeded the last (4.3e-4).
		if last := set.TailFactor * math.Abs(values[n-1]-values[n-2]); last > est.Error {
			est.Error = last
			est.Reason += fmt.Sprintf("; error raised to %g times the last difference (differences that decay non-monotonically)", set.TailFactor)
		}
	}
	est.Reason = note + est.Reason
	return est
}

func cycles(w pathWords, orders []int, values []float64, set Settings) Estimate {
	n := len(values)
	if n == 0 {
		return Estimate{Value: math.NaN(), Error: math.Inf(1), Last: math.NaN(), Order: math.NaN(),
			Status: TooFewPoints, Reason: w.name + ": no estimates"}
	}
	last := values[n-1]
	scale := maxAbs(values)
	if n == 1 {
		return Estimate{Value: last, Error: math.Inf(1), Last: last, Order: math.NaN(),
			Status: TooFewPoints, Reason: w.name + ": a single estimate has no error bar", Used: orders[0]}
	}
	d := differences(values)
	if start := roundOffFloor(d, set.RoundOff*scale); start >= 0 {
		return floorEstimate(orders, values, start, set, scale, set.RoundOff*scale, w.name)
	}
	minErr := minError(scale)
	if n < set.MinPoints {
		return Estimate{Value: last, Error: math.Max(set.SpreadFactor*spread(values, last), minErr), Last: last,
			Order: math.NaN(), Status: TooFewPoints, Used: orders[n-1],
			Reason: fmt.Sprintf("%s: %d estimates, at least %d needed to judge the convergence; error from their spread", w.name, n, set.MinPoints)}
	}

	if est, stalled := stall(w, orders, values, d, set); stalled {
		est.Error = math.Max(est.Error, minErr)
		return est
	}

	// Fit the trend of ln|d| over the last differences, back-test the fit
	// on the two windows before, and sum the predicted future differences.
	step := float64(orders[n-1] - orders[n-2])
	spreadErr := math.Max(set.SpreadFactor*spread(tail(values, set.SpreadPoints), last), minErr)
	irregular := func(order float64, why string) Estimate {
		return Estimate{Value: last, Error: spreadErr, Last: last, Order: order, Status: Irregular,
			Used: orders[n-1], Reason: w.name + ": " + why + "; value is the last estimate, error from the spread of the last estimates"}
	}
	for _, di := range tail(d, set.FitPoints) {
		if di == 0 {
			return irregular(math.NaN(), "a difference in the fitted window is exactly zero")
		}
	}
	if largest := maxAbs(d); !(math.Abs(d[len(d)-1]) <= 0.1*largest) {
		return Estimate{Value: last, Error: spreadErr, Last: last, Order: math.NaN(), Status: NotConverging,
			Used: orders[n-1],
			Reason: fmt.Sprintf("%s: the last difference %.2g is not a decade below the largest %.2g: %s has not settled into its asymptotic decay; value is the last estimate, error from the spread of the last estimates",
				w.name, math.Abs(d[len(d)-1]), largest, w.sequence)}
	}
	trend := fitDecay(tail(d, set.FitPoints))
	order := trend.rate / step
	if !(trend.rate > 0) {
		return irregular(order, "the differences do not decrease on average over the last steps")
	}
	miss := 0.0
	for back := 1; back <= 2; back++ {
		if len(d)-back < 2 {
			break
		}
		earlier := fitDecay(tail(d[:len(d)-back], set.FitPoints))
		miss = math.Max(miss, math.Abs(earlier.predict(1)-math.Log(math.Abs(d[len(d)-back]))))
	}

	// Signs: the ratio d[i+1]/d[i] keeps its sign over the last two steps
	// (monotone or alternating convergence), or the sign is unpredictable.
	L := len(d) - 1
	sign1 := math.Copysign(1, d[L]*d[L-1])
	sign2 := math.Copysign(1, d[L-1]*d[L-2])
	first := math.Copysign(1, d[L]) * sign1
	predicted, ok1 := trend.tail(first, sign1, 0)
	slower, ok2 := trend.tail(first, sign1, miss)
	if !ok1 || !ok2 {
		return irregular(order, fmt.Sprintf("decay rate %.3g per step too unsteady to predict the tail (back-test miss %.3g in ln|d|)", trend.rate, miss))
	}
	tailErr := math.Abs(slower - predicted)
	if sign1 != sign2 {
		// Whatever the signs, |v_∞ − v_n| ≤ Σ_{k>n} |d_k|, which the
		// back-tested decay of |d| bounds: the spread of the last
		// estimates adds only the size of old differences (cycle
		// expansions of maps of dimension ≥ 2, whose coefficients decay
		// non-monotonically, are irregular in sign as a rule: the product
		// of the skew tent and the Cantor map at length 8 is 8.9e-8 off
		// ln 2, with a bar of 6.8e-7 so and 1.1e-3 with the spread).
		bound, ok := trend.tail(1, 1, miss)
		if !ok {
			return irregular(order, fmt.Sprintf("signs irregular and decay rate %.3g per step too unsteady to bound the tail (back-test miss %.3g in ln|d|)", trend.rate, miss))
		}
		return Estimate{Value: last, Error: math.Max(set.TailFactor*bound, minErr), Last: last, Order: order,
			Status: Irregular, Used: orders[n-1],
			Reason: fmt.Sprintf("%s: differences decay (rate %.3g per step) but their signs are irregular; value is the last estimate, error %g times the predicted sum of the sizes of the differences to come",
				w.name, trend.rate, set.TailFactor)}
	}
	// A last difference within a decade of the round-off level carries a
	// rounding error of its own size: the fitted decay cannot be trusted
	// to extrapolate below it, so the error bar is at least that
	// difference.
	errBar := math.Max(set.TailFactor*tailErr, minErr)
	if lastDiff := math.Abs(d[L]); lastDiff <= 10*set.RoundOff*scale {
		errBar = math.Max(errBar, lastDiff)
	}
	return Estimate{Value: last + predicted, Error: errBar, Last: last, Order: order,
		Status: Converged, Used: orders[n-1],
		Reason: fmt.Sprintf("%s: differences decay at rate %.3g per step (rate growing by %.3g per step); tail of the future differences added, error from the back-tested miss %.3g in ln|d|",
			w.name, trend.rate, trend.growth, miss)}
}

// decayTrend is a least-squares fit ln|d_k| ≈ c0 + c1 k + c2 k² of the
// magnitudes of the last m differences, k = 0…m−1, with c2 ≤ 0: a concave
// trend (c2 < 0) is super-geometric convergence, as for exp(−a n²), a
// linear one geometric convergence.
type decayTrend struct {
	c0, c1, c2 float64
	m          int
	// rate = −(c1 + 2 c2 (m−1)) is the decay rate per step at the last
	// difference; growth = −2 c2 its increase per step.
	rate, growth float64
}

// fitDecay fits the trend to the magnitudes of d (at least two, none zero).
// It fits a parabola when there are at least four differences and keeps it
// when it is concave; otherwise it fits a line to the last three.
func fitDecay(d []float64) decayTrend {
	y := make([]float64, len(d))
	for i, di := range d {
		y[i] = math.Log(math.Abs(di))
	}
	var t decayTrend
	if len(y) >= 4 {
		t.c0, t.c1, t.c2 = fitPoly(y, 2)
	}
	if len(y) < 4 || t.c2 > 0 {
		start := max(0, len(y)-3)
		c0, c1, _ := fitPoly(y[start:], 1)
		// Shift the line so that k counts from the start of d.
		t.c0, t.c1, t.c2 = c0-c1*float64(start), c1, 0
	}
	t.m = len(y)
	t.rate = -(t.c1 + 2*t.c2*float64(t.m-1))
	t.growth = -2 * t.c2
	return t
}

// predict returns the fitted ln|d| k steps after the last fitted difference.
func (t decayTrend) predict(k int) float64 {
	x := float64(t.m - 1 + k)
	return t.c0 + t.c1*x + t.c2*x*x
}

// tail sums the predicted future differences Σ_{k≥1} first·sign^(k−1)·
// exp(predict(k) + k·slack): the fitted magnitudes, made to decay more slowly
// by slack per step, with the sign of the first one and the sign pattern of
// the last ratio. It reports false when the slowed series does not
// converge, or when a term of it is larger than the last fitted
// difference: a concave trend slowed by a slack above its rate predicts
// differences that grow for a while before they fall, no tail of a
// decaying sequence (the skew-cantor expansion to length 7 got a bar of
// 7e22 from one).
func (t decayTrend) tail(first, sign, slack float64) (float64, bool) {
	if t.growth == 0 {
		// Geometric series: ratio exp(−rate + slack).
		q := math.Exp(-t.rate + slack)
		if !(q < 1) {
			return 0, false
		}
		a := first * math.Exp(t.predict(1)+slack)
		return a / (1 - sign*q), true
	}
	sum := 0.0
	s := first
	top := t.predict(0)
	for k := 1; k <= 100000; k++ {
		ln := t.predict(k) + float64(k)*slack
		if ln > top {
			return 0, false
		}
		term := s * math.Exp(ln)
		if sum+term == sum {
			return sum, true
		}
		sum += term
		s *= sign
	}
	return sum, false
}

// fitPoly returns the least-squares coefficients c0, c1, c2 of a polynomial
// of the given degree (1 or 2; c2 = 0 for degree 1) through the points
// (k, y[k]), k = 0…len(y)−1, from the normal equations in the centred
// variable k − mean(k), which keeps them well conditioned for the handful of
// points used here.
func fitPoly(y []float64, degree int) (c0, c1, c2 float64) {
	m := len(y)
	mid := 0.5 * float64(m-1)
	// Sums of powers of u = k − mid, and of y·u^j.
	var s [5]float64
	var r [3]float64
	for k, yk := range y {
		u := float64(k) - mid
		p := 1.0
		for j := 0; j <= 4; j++ {
			s[j] += p
			if j <= 2 {
				r[j] += yk * p
			}
			p *= u
		}
	}
	var b0, b1, b2 float64
	if degree == 1 || m < 3 {
		b1 = r[1] / s[2]
		b0 = r[0] / s[0]
	} else {
		// Odd sums vanish for the symmetric u: s1 = s3 = 0.
		b1 = r[1] / s[2]
		det := s[0]*s[4] - s[2]*s[2]
		b0 = (r[0]*s[4] - r[2]*s[2]) / det
		b2 = (s[0]*r[2] - s[2]*r[0]) / det
	}
	// Back from u = k − mid to k.
	c0 = b0 - b1*mid + b2*mid*mid
	c1 = b1 - 2*b2*mid
	c2 = b2
	return c0, c1, c2
}

// stall reports whether the last set.StallWindow differences do not
// decrease, and if so returns the Oscillating estimate (their signs
// alternate), the Plateau estimate (the earlier differences were more than
// ten times larger: the sequence had converged, then stopped) or the
// NotConverging estimate.
func stall(words pathWords, orders []int, values, d []float64, set Settings) (Estimate, bool) {
	w := min(set.StallWindow, len(d))
	if w < 2 {
		return Estimate{}, false
	}
	win := tail(d, w)
	half := w / 2
	first, second := maxAbs(win[:half]), maxAbs(win[half:])
	perStep := math.Pow(second/first, 1/(0.5*float64(w)))
	if !(perStep >= set.StallRatio) {
		return Estimate{}, false
	}
	n := len(values)
	last := values[n-1]
	level := maxAbs(win)
	recent := tail(values, w+1)
	order := -math.Log(perStep) / float64(orders[n-1]-orders[n-2])
	alternating := true
	for i := 1; i < len(win); i++ {
		if win[i]*win[i-1] >= 0 {
			alternating = false
		}
	}
	if alternating {
		lo, hi := recent[0], recent[0]
		for _, v := range recent {
			lo, hi = math.Min(lo, v), math.Max(hi, v)
		}
		return Estimate{Value: 0.5 * (values[n-1] + values[n-2]), Error: set.SpreadFactor * 0.5 * (hi - lo), Last: last,
			Order: order, Status: Oscillating, Used: orders[n-1],
			Reason: fmt.Sprintf("%s: the last %d differences alternate in sign without decaying (about %.2g per step, level %.2g): %s; value is the midpoint of the last two estimates",
				words.name, w, perStep, level, words.alternating)}, true
	}
	err := math.Max(set.SpreadFactor*spread(recent, last), level)
	if before := d[:len(d)-w]; !(maxAbs(before) > 10*level) {
		return Estimate{Value: last, Error: err, Last: last, Order: order, Status: NotConverging, Used: orders[n-1],
			Reason: fmt.Sprintf("%s: the last %d differences (about %.2g) are not smaller than the earlier ones by a decade: %s has not started to converge; value is the last estimate, error from the recent spread",
				words.name, w, level, words.sequence)}, true
	}
	return Estimate{Value: last, Error: err, Last: last,
		Order: order, Status: Plateau, Used: orders[n-1],
		Reason: fmt.Sprintf("%s: the last %d differences stopped decreasing at about %.2g (per step ×%.2g), far above round-off: %s; value is the last estimate, error not below the plateau level",
			words.name, w, level, perStep, words.plateau)}, true
}
