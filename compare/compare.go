package compare

import (
	"fmt"
	"math"
)

// Verdict is the outcome of comparing the two paths.
type Verdict int

const (
	// Agree: the values differ by at most AgreeWithin combined errors.
	Agree Verdict = iota
	// Inconclusive: between AgreeWithin and DisagreeBeyond combined
	// errors, or an error bar is missing (infinite or NaN).
	Inconclusive
	// Disagree: the values differ by more than DisagreeBeyond combined
	// errors.
	Disagree
)

// AgreeWithin and DisagreeBeyond are the thresholds of Compare on the
// discrepancy |a − b| / sqrt(e_a² + e_b²). With error bars meant to contain
// the truth, 2 leaves room for bars that are somewhat too small; beyond 5 the
// bars would have to be wrong by a factor the calibration does not show
// (common practice, no source).
const (
	AgreeWithin    = 2.0
	DisagreeBeyond = 5.0
)

var verdictNames = [...]string{Agree: "agree", Inconclusive: "inconclusive", Disagree: "disagree"}

func (v Verdict) String() string {
	if v < 0 || int(v) >= len(verdictNames) {
		return fmt.Sprintf("Verdict(%d)", int(v))
	}
	return verdictNames[v]
}

// Comparison is the result of Compare.
type Comparison struct {
	Verdict Verdict
	// Discrepancy is |a − b| / sqrt(e_a² + e_b²): the distance between the
	// two values in units of their combined error, the errors being added
	// in quadrature as for independent errors (the two paths share nothing
	// but the system). It is 0 when the values are equal, +Inf when they
	// differ and both errors are zero, NaN when a value or an error is NaN
	// or an error is infinite.
	Discrepancy float64
	// Reasons says in words why the verdict is not Agree, and notes every
	// path whose status is a stagnation (Status.Stagnated), whatever the
	// verdict.
	Reasons []string
}

// Compare compares the estimates of the same quantity by the two paths: they
// agree when |a − b| ≤ 2 e, disagree when |a − b| > 5 e, and the comparison
// is inconclusive in between, where e = sqrt(e_a² + e_b²) is the combined
// error. It is ComparePaths for Ulam's method (whose steps are erratic by
// nature) against the cycle expansion.
func Compare(ulam, cycles Estimate) Comparison {
	return ComparePaths(Path{Name: "ulam", Estimate: ulam, Erratic: true}, Path{Name: "cycles", Estimate: cycles})
}

// Path is one method's estimate, named for the reasons a Comparison gives.
type Path struct {
	Name     string
	Estimate Estimate
	// Erratic says that irregular steps are the method's nature (plain
	// Ulam), so an Irregular status does not leave its estimate
	// unconfirmed.
	Erratic bool
}

// ComparePaths compares two methods' estimates of the same quantity by the
// rule of Compare.
func ComparePaths(a, b Path) Comparison {
	var c Comparison
	for _, p := range []Path{a, b} {
		if p.Estimate.Status.Stagnated() {
			c.Reasons = append(c.Reasons, fmt.Sprintf("%s path stopped with status %q: %s", p.Name, p.Estimate.Status, p.Estimate.Reason))
		}
	}
	ea, eb := a.Estimate, b.Estimate
	diff := math.Abs(ea.Value - eb.Value)
	combined := math.Hypot(ea.Error, eb.Error)
	switch {
	case math.IsNaN(diff) || math.IsNaN(combined) || math.IsInf(combined, 0):
		c.Discrepancy = math.NaN()
		c.Verdict = Inconclusive
		c.Reasons = append(c.Reasons, fmt.Sprintf("no comparison possible: %s %v ± %v, %s %v ± %v",
			a.Name, ea.Value, ea.Error, b.Name, eb.Value, eb.Error))
		return c
	case diff == 0:
		c.Discrepancy = 0
	default:
		c.Discrepancy = diff / combined // +Inf when combined == 0
	}
	switch {
	case c.Discrepancy <= AgreeWithin:
		c.Verdict = Agree
	case c.Discrepancy <= DisagreeBeyond:
		c.Verdict = Inconclusive
		c.Reasons = append(c.Reasons, fmt.Sprintf("the values differ by %.3g, %.3g times the combined error %.3g: more than %g, not more than %g",
			diff, c.Discrepancy, combined, AgreeWithin, DisagreeBeyond))
	default:
		c.Verdict = Disagree
		c.Reasons = append(c.Reasons, fmt.Sprintf("the values differ by %.3g, %.3g times the combined error %.3g (more than %g)",
			diff, c.Discrepancy, combined, DisagreeBeyond))
	}
	for _, p := range []Path{a, b} {
		if unconverged(p.Estimate.Status, !p.Erratic) {
			c.Unconfirmed(fmt.Sprintf("the %s path has not converged (status %q), so agreement within its error bar %.3g does not confirm the value", p.Name, p.Estimate.Status, p.Estimate.Error))
		}
	}
	if c.Verdict != Agree {
		larger, name := ea.Error, a.Name
		if eb.Error > larger {
			larger, name = eb.Error, b.Name
		}
		c.Reasons = append(c.Reasons, fmt.Sprintf("the larger error bar is the %s path's (%.3g); %s %s (%s), %s %s (%s)",
			name, larger, a.Name, FormatUncertainty(ea.Value, ea.Error), ea.Status, b.Name, FormatUncertainty(eb.Value, eb.Error), eb.Status))
	}
	return c
}

// unconverged reports whether a status leaves an estimate unconfirmed: a
// plateau, an oscillation, no convergence or too few points on any path,
// and irregular steps on a path that converges regularly by nature, as
// cycle expansions of hyperbolic maps do (an irregular sequence there means
// missing cycles, pruning or marginal orbits). Plain Ulam estimates are
// irregular by nature and stay confirmable.
func unconverged(s Status, regular bool) bool {
	switch s {
	case Converged, RoundOffFloor:
		return false
	case Irregular:
		return regular
	}
	return true
}

// Unrefuted downgrades a disagreement to Inconclusive for the given
// reason, which is added to Reasons whatever the verdict: callers use it
// where the two paths may legitimately estimate different things but an
// agreement still confirms, such as the subleading eigenvalue of
// piecewise polynomials, which may be a jump mode's, against that of a
// cycle expansion.
func (c *Comparison) Unrefuted(reason string) {
	if c.Verdict == Disagree {
		c.Verdict = Inconclusive
	}
	c.Reasons = append(c.Reasons, reason)
}

// Incomparable makes the verdict Inconclusive, whatever it was, for the
// given reason, which is added to Reasons: callers use it where the two
// paths need not estimate the same thing, such as the subleading
// eigenvalue of a discontinuous basis and that of a cycle expansion, so
// that neither their agreement nor their disagreement means anything.
func (c *Comparison) Incomparable(reason string) {
	c.Verdict = Inconclusive
	c.Reasons = append(c.Reasons, reason)
}

// Unconfirmed downgrades an agreement to Inconclusive for the given
// reason, which is added to Reasons whatever the verdict: callers use it
// for diagnostics the estimates do not carry, such as a cycle expansion
// whose coefficients decay no faster than geometrically.
func (c *Comparison) Unconfirmed(reason string) {
	if c.Verdict == Agree {
		c.Verdict = Inconclusive
	}
	c.Reasons = append(c.Reasons, reason)
}
