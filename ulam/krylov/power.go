package krylov

import "math"

// The leading eigenvalue alone (Wanted = 1, SubspaceSize left at its
// default) is first sought by power steps x ← A x/‖A x‖, monitored for
// their convergence factor, and handed to Krylov–Schur when that factor
// shows a second eigenvalue close to the first in modulus.
//
// Why: the Krylov polynomial p of degree t that best separates λ_0 from
// the other eigenvalues, min max_{z ∈ D} |p(z)|/|p(λ_0)|, is z^t when the
// others fill a disc D centred at 0 (maximum principle; common practice, no
// source), and the spurious eigenvalues of Ulam matrices crowd in such a
// disc (seen on the test matrices here). A Krylov subspace then saves no
// mat-vecs over powers of A, and each of its steps sweeps the whole basis
// two or three times, while a power step sweeps two vectors at most once.
const (
	// powerMaxFactor is the convergence factor above which power steps
	// give way to Krylov–Schur, which can separate λ_0 from an eigenvalue
	// close to it outside the disc. At 0.8 twelve digits take 124 power
	// steps. The value is a judgement, not a measured optimum.
	powerMaxFactor = 0.8

	// powerMinSteps power steps are checked before the factor is judged
	// (it is measured since the last check at least powerWindow steps
	// ago). Ulam matrices of open systems are far from normal: on the
	// logistic repeller the residual stays near 0.75‖A‖ for 8 steps, while
	// the mass of cells that escape within a few steps is flushed, then
	// falls by a factor of about 0.3 a step.
	powerMinSteps = 16
	powerWindow   = 4

	// powerMaxSteps bounds the power phase whatever the factor looks like.
	powerMaxSteps = 400
)

// powerState is the outcome of the power phase.
type powerState struct {
	converged bool
	value     float64
	residual  float64   // ‖A x − θ x‖, x of unit norm
	vector    []float64 // unit x, the start of Krylov–Schur when not converged
}

// power runs power steps from x (of unit norm; x and y are overwritten).
// It returns when the Rayleigh quotient θ = x̂ᵀA x̂ of the current unit
// iterate x̂ = x/‖x‖ has residual ‖A x̂ − θ x̂‖ ≤ Tol·‖A‖, or when the
// observed convergence factor exceeds powerMaxFactor.
//
// A check costs one fused sweep over x and y = A x forming xᵀx, xᵀy, yᵀy
// and ‖y − θ' x‖², θ' the Rayleigh quotient of the previous check. As
// x̂ᵀ(A x̂ − θ x̂) = 0, ‖A x̂ − θ x̂‖² = ‖A x̂ − θ' x̂‖² − (θ − θ')², which has
// no damaging cancellation while θ − θ' is no larger than the residual; a
// residual found below the tolerance this way is confirmed by an explicit
// sweep before it is accepted. The first powerMinSteps steps are all
// checked; then, from the factor measured, checks are skipped for a third of
// the steps the residual is predicted to need, so most power steps cost a
// mat-vec alone. The iterates are not normalised between
// checks: their growth over the skipped steps is bounded to 2^±128.
func (s *solver) power(x, y []float64) (powerState, error) {
	type check struct {
		step     int
		residual float64
	}
	var (
		theta     float64 // Rayleigh quotient of the last check
		checks    []check
		nextCheck = 1
		partial   = make([]float64, 4*((len(x)+blockRows-1)/blockRows))
	)
	for step := 1; ; step++ {
		s.op.Apply(y, x)
		s.stats.MatVecs++
		s.stats.PowerSteps++
		if step < nextCheck {
			x, y = y, x
			continue
		}
		forBlocks(len(x), func(_, blk, lo, hi int) {
			var xx, xy, yy, rr float64
			xb := x[lo:hi]
			yb := y[lo:hi]
			yb = yb[:len(xb)]
			for i, xi := range xb {
				yi := yb[i]
				r := yi - theta*xi
				xx += xi * xi
				xy += xi * yi
				yy += yi * yi
				rr += r * r
			}
			p := partial[4*blk : 4*blk+4]
			p[0], p[1], p[2], p[3] = xx, xy, yy, rr
		})
		var xx, xy, yy, rr float64
		for blk := 0; blk < len(partial); blk += 4 {
			xx += partial[blk]
			xy += partial[blk+1]
			yy += partial[blk+2]
			rr += partial[blk+3]
		}
		if math.IsNaN(yy+rr+xx) || math.IsInf(yy+rr+xx, 0) || xx == 0 {
			return powerState{}, errNonFinite
		}
		yNorm := math.Sqrt(yy)
		// Quantities of the unit iterate x̂ = x/‖x‖.
		gain := math.Sqrt(yy / xx) // ‖A x̂‖
		if s.c.norm == 0 {
			s.norm = max(s.norm, gain)
		}
		shift := xy/xx - theta
		residual := math.Sqrt(max(0, rr/xx-shift*shift))
		theta = xy / xx
		if residual <= s.c.tol*s.norm {
			residual = math.Sqrt(shiftedNorm2(y, x, theta) / xx)
			if residual <= s.c.tol*s.norm {
				scale(1/math.Sqrt(xx), x)
				return powerState{converged: true, value: theta, residual: residual, vector: x}, nil
			}
		}
		if yy == 0 {
			// A x = 0 and the tolerance is 0: let Krylov–Schur decide.
			scale(1/math.Sqrt(xx), x)
			return powerState{vector: x, value: theta}, nil
		}
		checks = append(checks, check{step, residual})
		nextCheck = step + 1
		if step >= powerMinSteps {
			// The factor per step since the last check at least
			// powerWindow steps ago.
			old := checks[0]
			for _, c := range checks {
				if c.step <= step-powerWindow {
					old = c
				}
			}
			factor := math.Pow(residual/old.residual, 1/float64(step-old.step))
			if !(factor <= powerMaxFactor) || step >= powerMaxSteps || s.stats.PowerSteps >= s.c.maxRestarts {
				// y/‖y‖ is the better start.
				scale(1/yNorm, y)
				return powerState{vector: y, value: theta}, nil
			}
			// The next check comes after a third of the steps the
			// residual is predicted to need to reach the tolerance: the
			// factor, measured early, may still be mixed with transients.
			predicted := math.Log(s.c.tol*s.norm/residual) / math.Log(factor)
			skip := int(predicted / 3)
			if g := math.Abs(math.Log2(gain)); g > 0 {
				skip = min(skip, int(128/g))
			}
			nextCheck = step + max(1, min(skip, powerMaxSteps-step))
		}
		if yNorm > 0x1p128 || yNorm < 0x1p-128 {
			scale(1/yNorm, y)
		}
		x, y = y, x
	}
}

// shiftedNorm2 returns ‖y − θ x‖², summed per row block in block order.
func shiftedNorm2(y, x []float64, theta float64) float64 {
	partial := make([]float64, (len(x)+blockRows-1)/blockRows)
	forBlocks(len(x), func(_, blk, lo, hi int) {
		var sum float64
		for i := lo; i < hi; i++ {
			r := y[i] - theta*x[i]
			sum += r * r
		}
		partial[blk] = sum
	})
	var sum float64
	for _, p := range partial {
		sum += p
	}
	return sum
}
