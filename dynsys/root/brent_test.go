package root

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func TestBrent(t *testing.T) {
	// Reference roots are closed forms (common practice, no source). The
	// tolerance is a few ulps: Brent stops when the bracket is 4 ulps wide.
	cases := []struct {
		name string
		f    func(float64) float64
		a, b float64
		want float64
		tol  float64
	}{
		{"sqrt2", func(x float64) float64 { return x*x - 2 }, 0, 2, math.Sqrt2, 4e-16},
		{"cos", math.Cos, 1, 2, math.Pi / 2, 4e-16},
		{"cubic flat", func(x float64) float64 { return (x - 0.3) * (x - 0.3) * (x - 0.3) }, 0, 1, 0.3, 1e-5},
		{"step", func(x float64) float64 {
			if x < 0.7 {
				return -1
			}
			return 1
		}, 0, 1, 0.7, 4e-16},
		{"exp", func(x float64) float64 { return math.Exp(x) - 5 }, -3, 10, math.Log(5), 4e-16},
	}
	for _, c := range cases {
		r, err := Brent(c.f, c.a, c.b, c.f(c.a), c.f(c.b), nil)
		if err != nil {
			t.Errorf("%s: %v", c.name, err)
			continue
		}
		if !r.Converged {
			t.Errorf("%s: not converged after %d evaluations", c.name, r.Evaluations)
		}
		if !scalar.EqualWithinAbsOrRel(r.X, c.want, c.tol, c.tol) {
			t.Errorf("%s: root %.17g, want %.17g", c.name, r.X, c.want)
		}
		if r.Lo > c.want+c.tol || r.Hi < c.want-c.tol {
			t.Errorf("%s: bracket [%g, %g] misses the root", c.name, r.Lo, r.Hi)
		}
	}
}

func TestBrentErrors(t *testing.T) {
	f := func(x float64) float64 { return x*x + 1 }
	if _, err := Brent(f, -1, 1, f(-1), f(1), nil); err != ErrNoBracket {
		t.Errorf("no bracket: got %v", err)
	}
	if _, err := Brent(f, -1, 1, math.NaN(), 1, nil); err != ErrNaN {
		t.Errorf("NaN: got %v", err)
	}
	g := func(x float64) float64 { return math.Exp(x) - 1.5 }
	r, err := Brent(g, 0, 1, g(0), g(1), &Settings{MaxIter: 1})
	if err != nil || r.Converged {
		t.Errorf("iteration limit: converged=%v err=%v", r.Converged, err)
	}
}
