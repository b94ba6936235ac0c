package cycles

import (
	"fmt"
	"math"
	"math/cmplx"
)

// Status says how a sequence of estimates over truncation lengths ended.
type Status int

const (
	// Improving means the estimates still improved at the longest length:
	// the value is that of the longest length and the error the last
	// change, an overestimate when convergence is faster than geometric.
	Improving Status = iota
	// AtFloor means the estimates reached the round-off floor: the change
	// to the next length was no larger than the floor. The value is taken
	// before the floor was reached and the error is the larger of that
	// change and the floor.
	AtFloor
	// Stalled means the changes stopped decreasing above the round-off
	// floor, or the expansion coefficients stopped decreasing faster than
	// geometrically: the symptom of missing cycles, pruning, marginal
	// cycles or a system that is not hyperbolic. The value is the last one
	// before the stall and the error is not to be trusted.
	Stalled
	// TooShort means fewer than two lengths gave an estimate, so there is
	// no error estimate (Error is +Inf).
	TooShort
)

func (s Status) String() string {
	switch s {
	case Improving:
		return "improving"
	case AtFloor:
		return "at-floor"
	case Stalled:
		return "stalled"
	case TooShort:
		return "too-short"
	}
	return fmt.Sprintf("Status(%d)", int(s))
}

// Estimate is the value chosen from a sequence over truncation lengths.
type Estimate struct {
	// Value is the estimate at truncation length Len.
	Value float64
	// Len is the truncation length whose value is reported.
	Len int
	// Error is the estimated error of Value: the change to the next length
	// (or the last change), at least the round-off floor.
	Error float64
	// Floor is the round-off floor of Value.
	Floor float64
	// Status says why the sequence was cut at Len.
	Status Status
}

// EigenvalueEstimate is the estimate of one eigenvalue λ_k.
type EigenvalueEstimate struct {
	Value  complex128
	Len    int
	Error  float64
	Floor  float64
	Status Status
}

// chooseEstimate walks a sequence of values v_i at lengths lens[i], with
// round-off floors f_i, and stops where it stops improving. Lengths with no
// value (NaN) are skipped. With d_i = |v_i − v_{i−1}| between successive
// values:
//   - d_i ≤ max(f_i, f_{i−1}): the last two values agree to round-off;
//     v_{i−1} is reported (it has the smaller floor), Status AtFloor,
//     error max(d_i, f_{i−1}, min(d_i + f_i, d_{i−1} r/(1 − r))) with
//     r = d_{i−1}/d_{i−2} (the geometric tail of the changes to come;
//     d_{i−1} when r ≥ 1);
//   - d_i ≥ d_{i−1} and d_{i+1} ≥ d_{i−1}: the changes stopped decreasing
//     above the floor at two successive lengths (one larger change is
//     allowed, as low orders often oscillate before converging); v_{i−1}
//     is reported, Status Stalled, error max(d_i, d_{i+1});
//   - otherwise the walk goes on; at the end v_last is reported, Status
//     Improving, error d_last.
func chooseEstimate(vals []complex128, floors []float64, lens []int) EigenvalueEstimate {
	var idx []int
	for i, v := range vals {
		if !cmplx.IsNaN(v) {
			idx = append(idx, i)
		}
	}
	if len(idx) == 0 {
		return EigenvalueEstimate{Value: cmplx.NaN(), Error: math.Inf(1), Floor: math.Inf(1), Status: TooShort}
	}
	at := func(j int) EigenvalueEstimate {
		i := idx[j]
		return EigenvalueEstimate{Value: vals[i], Len: lens[i], Floor: floors[i]}
	}
	change := func(j int) float64 { return cmplx.Abs(vals[idx[j]] - vals[idx[j-1]]) }
	est := at(0)
	est.Error, est.Status = math.Inf(1), TooShort
	best := math.Inf(1) // smallest change so far
	for j := 1; j < len(idx); j++ {
		d := change(j)
		if d <= math.Max(floors[idx[j]], floors[idx[j-1]]) {
			est = at(j - 1)
			// v_j is within f_j of its own truncation, so the error of
			// v_{j−1} is at most d + f_j; when f_j is large, the rate
			// r = d_{j−1}/d_{j−2} of the last two changes predicts it
			// better: the geometric tail d_{j−1} r/(1 − r) of the changes
			// still to come (an overestimate for faster convergence).
			bound := d + floors[idx[j]]
			if j >= 3 {
				last, before := change(j-1), change(j-2)
				if r := last / before; r < 1 {
					bound = min(bound, last*r/(1-r))
				} else {
					bound = min(bound, last)
				}
			}
			est.Status, est.Error = AtFloor, max(d, floors[idx[j-1]], bound)
			return est
		}
		if d >= best {
			if j+1 < len(idx) && change(j+1) >= best && change(j+1) > math.Max(floors[idx[j+1]], floors[idx[j]]) {
				est = at(j - 1)
				est.Status, est.Error = Stalled, math.Max(d, change(j+1))
				return est
			}
		} else {
			best = d
		}
		est = at(j)
		est.Status, est.Error = Improving, d
	}
	return est
}

func realEstimate(vals, floors []float64, lens []int) Estimate {
	c := make([]complex128, len(vals))
	for i, v := range vals {
		c[i] = complex(v, 0)
		if math.IsNaN(v) {
			c[i] = cmplx.NaN()
		}
	}
	e := chooseEstimate(c, floors, lens)
	return Estimate{Value: real(e.Value), Len: e.Len, Error: e.Error, Floor: e.Floor, Status: e.Status}
}

// Diagnostics describes the decay of the expansion coefficients.
type Diagnostics struct {
	// Checked is true for the spectral determinant (also when it is
	// FactorizedDeterminant: the check then runs on the Newton
	// coefficients of the same cycles), whose coefficients
	// decay faster than geometrically for a complete set of cycles of a
	// smooth hyperbolic map (like Λ^{−n²/2}). The coefficients of a
	// dynamical zeta function decay only geometrically in general, so
	// they are not checked.
	Checked bool
	// FloorLen is the first length n whose coefficient |c_n| is no larger
	// than its round-off floor (0 if none): from there on the coefficients
	// are round-off noise.
	FloorLen int
	// Stalled is true when, above the round-off floor, the coefficients
	// stopped decreasing (|c_n| ≥ |c_{n−1}|) or a ratio r_s(n) =
	// |c_n/c_{n−s}|, s = 1 or 2, stopped decreasing at two successive
	// lengths (r_s(n) ≥ r_s(n−1) ≥ r_s(n−2)); StallLen is that n. This is
	// what missing cycles do: dropping cycle p divides the determinant by
	// Π_k (1 − t_p/Λ_p^k), which leaves its zeros alone but adds poles,
	// so the coefficients decay only geometrically and the zeros
	// converge only geometrically (or not at all, past the poles). A
	// geometric tail whose ratio approaches its limit from above escapes
	// this check; the eigenvalue estimates then show it as slow
	// convergence (Status Improving with a large Error).
	//
	// For maps of dimension d ≥ 2 the coefficients of a complete set
	// still decay faster than geometrically (like exp(−c n^{1+1/d})), but
	// not monotonically: the horseshoe x' = 10 − x² − y, y' = x has |c_n| =
	// 2.2e-6, 3.5e-7, 1.3e-8, 1.2e-12, 1.3e-12, 4.4e-14 at n = 5…10, where the
	// ratio tests above fire although its search is complete. There the
	// check asks only that the envelope max(|c_n|, |c_{n−1}|) keep
	// decreasing from one pair of lengths to the next: it flags a stall
	// (the Hénon map's coefficients, which do not decay), not the
	// geometric tail of one missing cycle, which a dozen fluctuating
	// coefficients cannot tell apart; the search's own count checks cover
	// completeness there.
	Stalled  bool
	StallLen int
}

// Diagnostics returns the coefficient-decay check of the expansion. For
// FactorizedDeterminant it checks the coefficients of the Newton
// determinant of the same cycles: the product of the factors has them,
// while each factor alone decays only geometrically.
func (e *Expansion) Diagnostics() Diagnostics {
	if e.checkCoef == nil {
		return diagnose(e.coef, e.floor, false, e.dim)
	}
	return diagnose(e.checkCoef, e.checkFloor, true, e.dim)
}

// diagnose finds the floor length of the coefficients and, if checked,
// tests them for the faster-than-geometric decay of a determinant of a
// map of dimension dim.
func diagnose(coef, floor []float64, checked bool, dim int) Diagnostics {
	var d Diagnostics
	maxLen := len(coef) - 1
	for n := 1; n <= maxLen; n++ {
		if math.Abs(coef[n]) <= floor[n] {
			d.FloorLen = n
			break
		}
	}
	if !checked {
		return d
	}
	d.Checked = true
	last := maxLen
	if d.FloorLen > 0 {
		last = d.FloorLen - 1
	}
	if dim >= 2 {
		envelope := func(n int) float64 { return max(math.Abs(coef[n]), math.Abs(coef[n-1])) }
		for n := 3; n <= last; n++ {
			if envelope(n) >= envelope(n-2) {
				d.Stalled, d.StallLen = true, n
				break
			}
		}
		return d
	}
	// ratio(n, s) = |c_n/c_{n−s}|; steps s = 1, 2 catch missing cycles of
	// length 1 and 2, whose geometric tails alternate with period 2.
	ratio := func(n, s int) float64 { return math.Abs(coef[n] / coef[n-s]) }
	for n := 2; n <= last && !d.Stalled; n++ {
		if ratio(n, 1) >= 1 {
			d.Stalled, d.StallLen = true, n
		}
		for s := 1; s <= 2 && !d.Stalled; s++ {
			if n >= 3*s+1 && ratio(n, s) >= ratio(n-1, s) && ratio(n-1, s) >= ratio(n-2, s) {
				d.Stalled, d.StallLen = true, n
			}
		}
	}
	return d
}

// EigenvalueEstimates returns the estimates of the k leading eigenvalues
// λ_0…λ_{k−1} (k ≤ MaxLen), each followed over the lengths at which the
// truncated function has that many zeros, by its rank in modulus. A
// Stalled coefficient check (Diagnostics) marks every estimate Stalled.
func (e *Expansion) EigenvalueEstimates(k int) []EigenvalueEstimate {
	if k < 0 || k > e.maxLen {
		panic("cycles: EigenvalueEstimates count out of range")
	}
	diag := e.Diagnostics()
	out := make([]EigenvalueEstimate, k)
	for j := range k {
		var vals []complex128
		var floors []float64
		var lens []int
		for _, o := range e.orders {
			if len(o.Eigenvalues) <= j {
				if vals != nil {
					vals = append(vals, cmplx.NaN())
					floors = append(floors, math.Inf(1))
					lens = append(lens, o.MaxLen)
				}
				continue
			}
			vals = append(vals, o.Eigenvalues[j])
			floors = append(floors, o.EigenvalueFloors[j])
			lens = append(lens, o.MaxLen)
		}
		out[j] = chooseEstimate(vals, floors, lens)
		if diag.Stalled {
			out[j].Status = Stalled
		}
	}
	return out
}
