package compare

import (
	"fmt"
	"math"
)

// Advice recommends resolutions for a target accuracy.
type Advice struct {
	// CycleLength is the smallest cycle length whose estimated error is
	// below the tolerance, 0 if none.
	CycleLength int
	// CellsNeeded is the partition size at which plain Ulam estimates
	// would reach the tolerance at the observed order, +Inf when no order
	// could be measured.
	CellsNeeded float64
	// Notes explains how the numbers were obtained and what limits them.
	Notes []string
}

// DefaultTolerance is the tolerance Advise uses when given tol ≤ 0 or NaN.
const DefaultTolerance = 1e-8

// Advise recommends a truncation length and a partition size for the
// absolute tolerance tol, from the sequences analysed by CyclesWithFloors
// (cycleFloors may be nil) and Ulam with default settings; the lengths
// past the round-off cut of CyclesWithFloors are not candidates.
//
// Cycle length: the estimated error of the truncation at length n is
// |v_n − V| + E, with V ± E the extrapolated cycle value; the smallest
// computed length with error below tol is chosen. When none is and the
// expansion converged, the fitted decay of the differences is extended past
// the last length: the first length whose predicted remaining tail is below
// tol is returned with a note saying it is a prediction. Past-the-data
// predictions are made for Converged sequences only.
//
// Cells: the raw Ulam error at the last partition, ε = max(|v_last − V|, E)
// with V ± E the Ulam estimate, scaled as ε (N_last/N)^p with the observed
// order p: N = N_last (ε/tol)^(1/p). When the Ulam estimates are at their
// round-off floor (exact up to rounding), it is the first partition on the
// floor if the floor's error is below tol, +Inf if not.
//
// s holds the settings of both analyses (nil: the defaults), as the caller
// used them for its estimates. With s.NonMonotone no length is predicted
// past the data: steps that may grow before they shrink cannot be
// extrapolated.
func Advise(cells []int, ulamValues []float64, orders []int, cycleValues, cycleFloors []float64, tol float64, s *Settings) Advice {
	if !(tol > 0) {
		tol = DefaultTolerance
	}
	var a Advice
	cyc := CyclesWithFloors(orders, cycleValues, cycleFloors, s)
	ul := Ulam(cells, ulamValues, s)
	nonMonotone := s != nil && s.NonMonotone
	if cycleFloors != nil {
		if idx, j := floorCut(cycleValues, cycleFloors); j >= 0 {
			orders, cycleValues = orders[:idx[j]+1], cycleValues[:idx[j]+1]
		}
	}

	orders, cycleValues, _ = dropNonFinite(orders, cycleValues)
	for i, v := range cycleValues {
		if math.Abs(v-cyc.Value)+cyc.Error < tol {
			a.CycleLength = orders[i]
			a.Notes = append(a.Notes, fmt.Sprintf("cycles: length %d is within %.3g of the extrapolated value %s",
				orders[i], math.Abs(v-cyc.Value)+cyc.Error, FormatUncertainty(cyc.Value, cyc.Error)))
			break
		}
	}
	if a.CycleLength == 0 {
		if n, ok := predictLength(orders, cycleValues, cyc, tol); ok && !nonMonotone {
			a.CycleLength = n
			a.Notes = append(a.Notes, fmt.Sprintf("cycles: no computed length reaches %.3g; the fitted decay predicts length %d (a prediction past the data)", tol, n))
		} else {
			a.Notes = append(a.Notes, fmt.Sprintf("cycles: no length reaches %.3g (%s: %s)", tol, cyc.Status, cyc.Reason))
		}
	}

	a.CellsNeeded = math.Inf(1)
	if len(cells) > 0 && len(cells) == len(ulamValues) {
		last := float64(ul.Used)
		eps := math.Max(math.Abs(ul.Last-ul.Value), ul.Error)
		p := ul.Order
		if ul.Status == RoundOffFloor {
			// Exact up to rounding from ul.Used on (a piecewise-linear
			// map with its breakpoints on the grid): no order to extend.
			if ul.Error < tol {
				a.CellsNeeded = last
				a.Notes = append(a.Notes, fmt.Sprintf("ulam: the estimates agree to round-off from %d cells on (error %.3g): that partition reaches %.3g",
					ul.Used, ul.Error, tol))
			} else {
				a.Notes = append(a.Notes, fmt.Sprintf("ulam: the estimates agree to round-off from %d cells on, but their error %.3g is above %.3g: no partition size reaches it",
					ul.Used, ul.Error, tol))
			}
		} else if p > 0 && !math.IsInf(p, 0) && eps > 0 && !math.IsInf(eps, 0) && last > 0 {
			a.CellsNeeded = last * math.Pow(eps/tol, 1/p)
			a.Notes = append(a.Notes, fmt.Sprintf("ulam: error %.3g at %d cells, observed order %.3g (%s): about %.3g cells for %.3g",
				eps, ul.Used, p, ul.Status, a.CellsNeeded, tol))
		} else {
			a.Notes = append(a.Notes, fmt.Sprintf("ulam: no usable order of convergence (%s: %s)", ul.Status, ul.Reason))
		}
	}
	return a
}

// predictLength extends the fitted decay of the differences of a converged
// cycle sequence past its last length and returns the first length whose
// predicted remaining tail, with its uncertainty, is below tol.
func predictLength(orders []int, values []float64, est Estimate, tol float64) (int, bool) {
	if est.Status != Converged || len(values) < 3 {
		return 0, false
	}
	set := (*Settings)(nil).withDefaults()
	d := differences(values)
	trend := fitDecay(tail(d, set.FitPoints))
	step := orders[len(orders)-1] - orders[len(orders)-2]
	for k := 1; k <= 200; k++ {
		// Remaining tail after k more steps: Σ_{j>k} |d| predicted.
		rest := 0.0
		for j := k + 1; j <= k+200; j++ {
			term := math.Exp(trend.predict(j))
			rest += term
			if term < 1e-3*rest {
				break
			}
		}
		if set.TailFactor*rest < tol {
			return orders[len(orders)-1] + k*step, true
		}
	}
	return 0, false
}
