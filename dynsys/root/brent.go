package root

import (
	"errors"
	"math"
)

// ErrNoBracket is returned when f(a) and f(b) have the same strict sign.
var ErrNoBracket = errors.New("root: f(a) and f(b) do not bracket a root")

// ErrNaN is returned when the function returns NaN inside the bracket.
var ErrNaN = errors.New("root: function returned NaN")

// Settings controls Brent. A nil *Settings means the defaults.
type Settings struct {
	// AbsTol is the absolute tolerance on the root. Default 0, which asks
	// for full double precision: the iteration stops when the bracket is
	// as narrow as 4 ulps of the root.
	AbsTol float64
	// MaxIter bounds the number of function evaluations. Default 200.
	MaxIter int
}

// Result is what Brent returns.
type Result struct {
	// X is the best estimate of the root; F is f(X).
	X, F float64
	// Lo and Hi bracket the root at the end of the iteration.
	Lo, Hi float64
	// Evaluations is the number of calls of f.
	Evaluations int
	// Converged reports whether the bracket reached the tolerance (or an
	// exact zero was hit) before MaxIter evaluations.
	Converged bool
}

// Brent finds a root of f in [a, b]. fa and fb must be f(a) and f(b) (they
// are passed in because callers usually have them already); they must not
// have the same strict sign. If either is exactly zero, that end is returned.
func Brent(f func(float64) float64, a, b, fa, fb float64, settings *Settings) (Result, error) {
	absTol, maxIter := 0.0, 200
	if settings != nil {
		if settings.AbsTol > 0 {
			absTol = settings.AbsTol
		}
		if settings.MaxIter > 0 {
			maxIter = settings.MaxIter
		}
	}
	if math.IsNaN(fa) || math.IsNaN(fb) {
		return Result{}, ErrNaN
	}
	if fa == 0 {
		return Result{X: a, F: 0, Lo: a, Hi: a, Converged: true}, nil
	}
	if fb == 0 {
		return Result{X: b, F: 0, Lo: b, Hi: b, Converged: true}, nil
	}
	if (fa > 0) == (fb > 0) {
		return Result{}, ErrNoBracket
	}
	const eps = 0x1p-52
	c, fc := a, fa
	d := b - a
	e := d
	evals := 0
	for {
		if (fb > 0) == (fc > 0) {
			c, fc = a, fa
			d = b - a
			e = d
		}
		if math.Abs(fc) < math.Abs(fb) {
			a, b, c = b, c, b
			fa, fb, fc = fb, fc, fb
		}
		tol := 2*eps*math.Abs(b) + 0.5*absTol
		if absTol == 0 {
			tol = 2 * eps * math.Abs(b)
			if tol == 0 {
				tol = math.SmallestNonzeroFloat64
			}
		}
		m := 0.5 * (c - b)
		if math.Abs(m) <= tol || fb == 0 {
			lo, hi := b, c
			if lo > hi {
				lo, hi = hi, lo
			}
			return Result{X: b, F: fb, Lo: lo, Hi: hi, Evaluations: evals, Converged: true}, nil
		}
		if evals >= maxIter {
			lo, hi := b, c
			if lo > hi {
				lo, hi = hi, lo
			}
			return Result{X: b, F: fb, Lo: lo, Hi: hi, Evaluations: evals}, nil
		}
		if math.Abs(e) < tol || math.Abs(fa) <= math.Abs(fb) {
			d = m
			e = m
		} else {
			s := fb / fa
			var p, q float64
			if a == c {
				p = 2 * m * s
				q = 1 - s
			} else {
				q0 := fa / fc
				r := fb / fc
				p = s * (2*m*q0*(q0-r) - (b-a)*(r-1))
				q = (q0 - 1) * (r - 1) * (s - 1)
			}
			if p > 0 {
				q = -q
			} else {
				p = -p
			}
			if 2*p < math.Min(3*m*q-math.Abs(tol*q), math.Abs(e*q)) {
				e = d
				d = p / q
			} else {
				d = m
				e = m
			}
		}
		a, fa = b, fb
		if math.Abs(d) > tol {
			b += d
		} else if m > 0 {
			b += tol
		} else {
			b -= tol
		}
		fb = f(b)
		evals++
		if math.IsNaN(fb) {
			return Result{X: b, F: fb, Evaluations: evals}, ErrNaN
		}
	}
}
