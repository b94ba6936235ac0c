package compare

import (
	"fmt"
	"math"
)

// Status says how a sequence of estimates ended. Every status other than
// Converged is a kind of stagnation or a lack of data that the comparison
// reports in words; none of them is hidden.
type Status int

const (
	// Converged: the estimates converge regularly; Value is extrapolated
	// (Richardson in the cell size for Ulam, the predicted tail of the
	// differences for cycles) and Error comes from the consistency of the
	// extrapolation.
	Converged Status = iota
	// Irregular: the estimates approach a limit but without a stable
	// observed order (plain Ulam in one dimension, test-point Ulam in two)
	// or with differences of erratic sign (cycles). Value is the last
	// estimate and Error is built from the spread of the last estimates.
	Irregular
	// RoundOffFloor: the successive differences have reached the level of
	// floating-point round-off. Value is the mean of the estimates on the
	// floor and Error the floor level.
	RoundOffFloor
	// Plateau: the differences stopped decreasing at a level far above
	// round-off (for cycles: missing cycles in the search). Error is never
	// below the level of the plateau.
	Plateau
	// Oscillating: the differences alternate in sign without decaying
	// (marginal cycles, pruning). Value is the midpoint of the last two
	// estimates and Error SpreadFactor times half the recent swing.
	Oscillating
	// NotConverging: the last differences are the largest so far or
	// about as large; the sequence has not started to converge (more
	// cycle lengths or cells needed). Value is the last estimate and Error
	// the spread of the recent estimates, a lower bound at best.
	NotConverging
	// TooFewPoints: fewer estimates than Settings.MinPoints; Value is the
	// last estimate and Error the spread of what there is (infinite with a
	// single estimate).
	TooFewPoints
)

var statusNames = [...]string{
	Converged:     "converged",
	Irregular:     "irregular",
	RoundOffFloor: "round-off floor",
	Plateau:       "plateau",
	Oscillating:   "oscillating",
	NotConverging: "not converging",
	TooFewPoints:  "too few points",
}

func (s Status) String() string {
	if s < 0 || int(s) >= len(statusNames) {
		return fmt.Sprintf("Status(%d)", int(s))
	}
	return statusNames[s]
}

// Stagnated reports whether s is one of the statuses that mean the sequence
// stopped improving above round-off or never had enough points to judge:
// every status but Converged, Irregular and RoundOffFloor (a sequence at
// its round-off floor has converged as far as double precision goes).
func (s Status) Stagnated() bool {
	return s != Converged && s != Irregular && s != RoundOffFloor
}

// Estimate is the result of analysing one sequence of estimates of the same
// quantity.
//
// Error is meant as a bar that contains the true value: |Value − truth| ≤
// Error is the design goal, with Error no more than about 100 times the true
// error (see Calibrate). It is neither a standard deviation nor a rigorous
// bound; it is "1-sigma-ish" in the sense that the comparison treats two
// bars as consistent when the values lie within twice their combined size.
type Estimate struct {
	// Value is the extrapolated value (or the last estimate when no
	// extrapolation is trusted, see Status).
	Value float64
	// Error is the error bar of Value.
	Error float64
	// Last is the last raw estimate of the sequence.
	Last float64
	// Order is the observed rate of convergence: for Ulam the algebraic
	// order p in error ~ C N^(−p) with N the number of cells (p = 1 for
	// plain 1D Ulam up to a logarithm; in d dimensions the order in the cell
	// side h = N^(−1/d) is d·p); for cycles the decay rate ρ of the last
	// successive differences, |v_{n+1} − v_n| ~ exp(−ρ n) locally, in
	// natural-log units per unit of cycle length. NaN when it could not be
	// measured.
	Order float64
	// Status says how the sequence ended; Reason says it in words.
	Status Status
	Reason string
	// Used is the resolution the estimate rests on: the number of cells or
	// the cycle length of the last estimate used, or, for RoundOffFloor, the
	// first one on the floor.
	Used int
}

// Settings controls the analysis of a sequence. The zero value, or a nil
// *Settings, means the documented defaults.
type Settings struct {
	// MinPoints is the number of estimates below which the status is
	// TooFewPoints. Default 4: two local orders (Ulam) or two decay rates
	// and one back-test (cycles) are the least from which a trend can be
	// judged.
	MinPoints int

	// SpreadPoints is the number K of trailing estimates whose spread
	// max_i |v_i − v_last| makes the error bar when no extrapolation is
	// trusted (Irregular, NotConverging, TooFewPoints). The last
	// SpreadPoints − 1 local orders of an Ulam sequence judge its
	// stability, and the spread of their Richardson values makes the error
	// bar of the extrapolation. Default 4.
	SpreadPoints int

	// SpreadFactor multiplies every spread-based error. Default 2,
	// calibrated on erratic synthetic Ulam sequences (see the coverage
	// table in the tests and the package documentation).
	SpreadFactor float64

	// OrderTolerance is the largest absolute spread of the last local
	// algebraic orders for which the Ulam order counts as stable and
	// Richardson extrapolation is used. Default 0.25.
	OrderTolerance float64

	// MinOrder and MaxOrder bound the plausible algebraic orders of Ulam
	// sequences; a local order outside counts as unstable. Defaults 0.25
	// and 8.
	MinOrder, MaxOrder float64

	// RoundOff is the relative level, with respect to the largest
	// magnitude of the estimates, below which successive differences count
	// as round-off. Default 1e-13: each estimate comes out of an
	// eigenvalue or root computation whose relative error is a modest
	// multiple of the machine epsilon 2.2e-16 (a few hundred at most for
	// well-conditioned problems).
	RoundOff float64

	// StallRatio is the per-step decrease of the differences above which
	// they count as not decreasing (Plateau, Oscillating): the larger
	// difference in the second half of the last StallWindow differences
	// divided by the larger one in the first half, per step, at least
	// StallRatio. Default 0.7 (less than 0.15 decades per step).
	StallRatio float64

	// StallWindow is the number of trailing differences examined for a
	// stall. Default 4.
	StallWindow int

	// TailFactor multiplies the error of the predicted tail of a cycle
	// expansion (see Cycles). Default 3.
	TailFactor float64

	// FitPoints is the number of trailing successive differences of a cycle
	// expansion to which the decay trend of ln|d| is fitted. Default 5.
	FitPoints int

	// SolverTol is the relative residual at which the eigen-solves behind
	// Ulam estimates stopped (ulam.SolveSettings.Tol). A leading
	// eigenvalue of these nonnegative matrices is well conditioned (κ =
	// 1.06–1.11 on the catalog's repellers, 1 for a closed map), so each
	// estimate carries a relative error up to about SolverTol and two
	// differ by up to twice that: Ulam's round-off level is at least
	// 2·SolverTol. Default 1e-12, the solvers' default.
	SolverTol float64

	// NonMonotone says that the differences of a cycle expansion decay
	// non-monotonically, as those of maps of dimension d ≥ 2 do as a rule
	// (a later difference may exceed an earlier one), so that no fit to
	// the past differences bounds the next: Cycles then makes the error
	// of a Converged or Irregular estimate at least TailFactor times the
	// last difference, the sum of differences to come if the next is as
	// large as the last and the rest shrink by 2/3 a step on average.
	// Default false.
	NonMonotone bool
}

func (s *Settings) withDefaults() Settings {
	var out Settings
	if s != nil {
		out = *s
	}
	if out.MinPoints <= 0 {
		out.MinPoints = 4
	}
	if out.SpreadPoints <= 1 {
		out.SpreadPoints = 4
	}
	if !(out.SpreadFactor > 0) {
		out.SpreadFactor = 2
	}
	if !(out.OrderTolerance > 0) {
		out.OrderTolerance = 0.25
	}
	if !(out.MinOrder > 0) {
		out.MinOrder = 0.25
	}
	if !(out.MaxOrder > out.MinOrder) {
		out.MaxOrder = 8
	}
	if !(out.RoundOff > 0) {
		out.RoundOff = 1e-13
	}
	if !(out.StallRatio > 0 && out.StallRatio < 1) {
		out.StallRatio = 0.7
	}
	if out.StallWindow < 2 {
		out.StallWindow = 4
	}
	if !(out.TailFactor > 0) {
		out.TailFactor = 3
	}
	if out.FitPoints < 2 {
		out.FitPoints = 5
	}
	if !(out.SolverTol > 0) {
		out.SolverTol = 1e-12
	}
	return out
}

// minError is the smallest error bar ever reported for values of magnitude
// scale: four units of round-off, the error of representing the value and
// of the one or two operations that produced it.
func minError(scale float64) float64 {
	return 4 * epsilon * scale
}

// epsilon is the machine epsilon of float64, 2^−52.
const epsilon = 0x1p-52

// dropNonFinite removes the pairs whose value is NaN or infinite and says
// which ones it dropped.
func dropNonFinite(res []int, values []float64) ([]int, []float64, string) {
	var keptRes []int
	var keptVal []float64
	var dropped []int
	for i, v := range values {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			dropped = append(dropped, res[i])
			continue
		}
		keptRes = append(keptRes, res[i])
		keptVal = append(keptVal, v)
	}
	if len(dropped) == 0 {
		return res, values, ""
	}
	return keptRes, keptVal, fmt.Sprintf("dropped %d non-finite estimates (at %v); ", len(dropped), dropped)
}

// checkShape panics when the resolutions and values do not pair up or the
// resolutions are not positive and strictly increasing.
func checkShape(fn, what string, res []int, values []float64) {
	if len(res) != len(values) {
		panic(fmt.Sprintf("compare: %s: %d %s but %d values", fn, len(res), what, len(values)))
	}
	for i, r := range res {
		if r <= 0 {
			panic(fmt.Sprintf("compare: %s: %s[%d] = %d is not positive", fn, what, i, r))
		}
		if i > 0 && r <= res[i-1] {
			panic(fmt.Sprintf("compare: %s: %s not strictly increasing at index %d", fn, what, i))
		}
	}
}

// maxAbs returns the largest magnitude in x.
func maxAbs(x []float64) float64 {
	m := 0.0
	for _, v := range x {
		m = math.Max(m, math.Abs(v))
	}
	return m
}

// spread returns max_i |x_i − ref| over x.
func spread(x []float64, ref float64) float64 {
	m := 0.0
	for _, v := range x {
		m = math.Max(m, math.Abs(v-ref))
	}
	return m
}

// tail returns the last k elements of x (all of x when it is shorter).
func tail(x []float64, k int) []float64 {
	if k > len(x) {
		k = len(x)
	}
	return x[len(x)-k:]
}

// roundOffFloor looks for the round-off floor: the first index i such that
// every difference from d[i] on is at most level. It returns −1 when the last
// difference is above the level.
func roundOffFloor(d []float64, level float64) int {
	start := -1
	for i := len(d) - 1; i >= 0; i-- {
		if math.Abs(d[i]) > level {
			break
		}
		start = i
	}
	return start
}

// floorEstimate builds the estimate for a sequence whose differences from
// d[start] on are at round-off: the value is the mean of the estimates on the
// floor, values[start:], and the error the larger of the floor's extent
// times the spread factor and the minimum error.
func floorEstimate(res []int, values []float64, start int, set Settings, scale, level float64, path string) Estimate {
	floor := values[start:]
	mean := 0.0
	for _, v := range floor {
		mean += v
	}
	mean /= float64(len(floor))
	lo, hi := floor[0], floor[0]
	for _, v := range floor {
		lo = math.Min(lo, v)
		hi = math.Max(hi, v)
	}
	err := math.Max(set.SpreadFactor*(hi-lo), minError(scale))
	return Estimate{
		Value:  mean,
		Error:  err,
		Last:   values[len(values)-1],
		Order:  math.NaN(),
		Status: RoundOffFloor,
		Reason: fmt.Sprintf("%s: successive differences at round-off (≤ %.1e) from %d on; value is the mean of %d estimates on the floor",
			path, level, res[start], len(floor)),
		Used: res[start],
	}
}
