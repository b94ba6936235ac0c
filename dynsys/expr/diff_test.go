package expr

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

const eps = 0x1p-52 // float64 machine epsilon

// diffRuleTests exercise every derivative rule. Each formula is sampled
// at random points of the box lo..hi (one interval per variable) and
// differentiated with respect to every variable.
var diffRuleTests = []struct {
	name    string
	src     string
	vars    []string
	lo, hi  []float64
	params  map[string]float64
	printed string // Diff with respect to vars[0], as the user sees it
}{
	{"polynomial", "x^3 - 2*x", []string{"x"}, []float64{-2}, []float64{2}, nil, "3*x^2 - 2"},
	{"negation", "-x^2", []string{"x"}, []float64{-2}, []float64{2}, nil, "-2*x"},
	{"constant power", "x^a", []string{"x"}, []float64{0.5}, []float64{2}, map[string]float64{"a": 2.5}, "a*x^(a - 1)"},
	{"reciprocal power", "x^-1", []string{"x"}, []float64{0.5}, []float64{2}, nil, "-x^-2"},
	{"square root power", "x^0.5", []string{"x"}, []float64{0.5}, []float64{2}, nil, "0.5*x^-0.5"},
	{"exponential base 2", "2^x", []string{"x"}, []float64{-1}, []float64{2}, nil, "2^x*log(2)"},
	{"exponential base e", "e^(2*x)", []string{"x"}, []float64{-1}, []float64{1}, nil, "2*e^(2*x)"},
	{"general power", "x^y", []string{"x", "y"}, []float64{0.5, -1}, []float64{2, 2}, nil, "y*x^(y - 1)"},
	{"self power", "x^x", []string{"x"}, []float64{0.5}, []float64{2}, nil, "x^x*(log(x) + 1)"},
	{"product", "x*y^2", []string{"x", "y"}, []float64{-1, -1}, []float64{1, 1}, nil, "y^2"},
	{"quotient", "x/y", []string{"x", "y"}, []float64{-1, 0.5}, []float64{1, 2}, nil, "1/y"},
	{"reciprocal", "1/x", []string{"x"}, []float64{0.5}, []float64{2}, nil, "-1/x^2"},
	{"sin", "sin(x*y)", []string{"x", "y"}, []float64{-2, -2}, []float64{2, 2}, nil, "cos(x*y)*y"},
	{"cos", "cos(x^2)", []string{"x"}, []float64{-2}, []float64{2}, nil, "-2*sin(x^2)*x"},
	{"tan", "tan(x)", []string{"x"}, []float64{-1}, []float64{1}, nil, "1/cos(x)^2"},
	{"exp", "exp(-x^2)", []string{"x"}, []float64{-2}, []float64{2}, nil, "-2*exp(-x^2)*x"},
	{"log", "log(x)*x", []string{"x"}, []float64{0.5}, []float64{3}, nil, "1 + log(x)"},
	{"sqrt", "sqrt(1 + x^2)", []string{"x"}, []float64{-2}, []float64{2}, nil, "2*x/(2*sqrt(1 + x^2))"},
	{"abs", "abs(x - 1)", []string{"x"}, []float64{0}, []float64{2}, nil, "(x - 1 > 0) - (x - 1 < 0)"},
	{"floor", "floor(3*x) + x^2", []string{"x"}, []float64{0}, []float64{2}, nil, "2*x"},
	{"sinh", "sinh(2*x)", []string{"x"}, []float64{-1}, []float64{1}, nil, "2*cosh(2*x)"},
	{"cosh", "cosh(x)", []string{"x"}, []float64{-1}, []float64{1}, nil, "sinh(x)"},
	{"tanh", "tanh(x)", []string{"x"}, []float64{-2}, []float64{2}, nil, "1 - tanh(x)^2"},
	{"atan", "atan(x^2)", []string{"x"}, []float64{-2}, []float64{2}, nil, "2*x/(1 + (x^2)^2)"},
	{"mod", "mod(3*x, y)", []string{"x", "y"}, []float64{0, 0.5}, []float64{2, 1.5}, nil, "3"},
	{"min", "min(x, y^2)", []string{"x", "y"}, []float64{0, -1}, []float64{1, 1}, nil, "x <= y^2"},
	{"max", "max(x, y^2)", []string{"x", "y"}, []float64{0, -1}, []float64{1, 1}, nil, "x >= y^2"},
	{"comparisons", "(x < 0.5)*2*x + (x >= 0.5)*(2*x - 1)", []string{"x"}, []float64{0}, []float64{1}, nil, "2*(x < 0.5) + 2*(x >= 0.5)"},
	{"Gauss map", "1/x - floor(1/x)", []string{"x"}, []float64{0.2}, []float64{1}, nil, "-1/x^2"},
	{"cubic map", "k*x*(1-x)*(1 + c*x)", []string{"x"}, []float64{0}, []float64{1}, map[string]float64{"k": 5.2, "c": 0.3},
		"(k*(1 - x) - k*x)*(1 + c*x) + k*x*(1 - x)*c"},
}

// nearKink reports whether a kink of f lies between x−w and x+w along
// variable j, where a finite difference would straddle it.
func nearKink(t *testing.T, f *Node, vars []string, params map[string]float64, x []float64, j int, w float64) bool {
	for _, k := range Kinks(f) {
		p, err := Compile([]*Node{k.Arg}, vars, params)
		if err != nil {
			t.Fatalf("compiling kink argument %s: %v", k.Arg, err)
		}
		lo, hi := append([]float64(nil), x...), append([]float64(nil), x...)
		lo[j] -= w
		hi[j] += w
		var a, b [1]float64
		p.Eval(a[:], lo)
		p.Eval(b[:], hi)
		if k.Kind == KinkZero && math.Signbit(a[0]) != math.Signbit(b[0]) ||
			k.Kind == KinkInteger && math.Floor(a[0]) != math.Floor(b[0]) {
			return true
		}
	}
	return false
}

func TestDiffRules(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, tc := range diffRuleTests {
		f, err := Parse(tc.src)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		fp, err := Compile([]*Node{f}, tc.vars, tc.params)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		if got := Diff(f, tc.vars[0]).String(); got != tc.printed {
			t.Errorf("%s: Diff(%s) prints %q, want %q", tc.name, tc.src, got, tc.printed)
		}
		eval := func(x []float64) float64 {
			var y [1]float64
			fp.Eval(y[:], x)
			return y[0]
		}
		for j, name := range tc.vars {
			df := Diff(f, name)
			if again, err := Parse(df.String()); err != nil || !Equal(again, df) {
				t.Errorf("%s: derivative %q does not round-trip: %v", tc.name, df, err)
			}
			dp, err := Compile([]*Node{df}, tc.vars, tc.params)
			if err != nil {
				t.Fatalf("%s: compiling d/d%s = %s: %v", tc.name, name, df, err)
			}
			checked := 0
			for range 20 {
				x := make([]float64, len(tc.vars))
				for i := range x {
					x[i] = tc.lo[i] + (tc.hi[i]-tc.lo[i])*rng.Float64()
				}
				// Central difference with step h = ε^(1/3)·max(1, |x|),
				// the step that balances its two errors: truncation
				// h²/6·|f'''| and round-off ≤ δ·F/h, where F bounds |f|
				// near x and δ = 16ε bounds the relative error of one
				// evaluation of these short formulas (a few roundings,
				// each ≤ ε/2, with library functions accurate to ~1 ulp).
				// f''' is estimated by the third divided difference at
				// step s = 1e-2, which equals f''' somewhere within 2s of
				// x; a factor 2 allows for its variation over that
				// interval. Points whose stencil straddles a kink are
				// skipped (the finite difference is meaningless there).
				h := math.Cbrt(eps) * math.Max(1, math.Abs(x[j]))
				const s = 1e-2
				if nearKink(t, f, tc.vars, tc.params, x, j, 2*s) {
					continue
				}
				at := func(dx float64) float64 {
					y := append([]float64(nil), x...)
					y[j] += dx
					return eval(y)
				}
				fd := (at(h) - at(-h)) / (2 * h)
				third := (at(2*s) - 2*at(s) + 2*at(-s) - at(-2*s)) / (2 * s * s * s)
				bigF := math.Max(math.Abs(at(h)), math.Abs(at(-h)))
				tol := 2*h*h/6*math.Abs(third) + 16*eps*bigF/h
				checked++
				var exact [1]float64
				dp.Eval(exact[:], x)
				if !scalar.EqualWithinAbsOrRel(fd, exact[0], tol, 0) {
					t.Errorf("%s: d/d%s %s at %v = %v, central difference %v (tolerance %.3g)",
						tc.name, name, df, x, exact[0], fd, tol)
				}
			}
			if checked < 10 {
				t.Errorf("%s: d/d%s checked at %d points only; the others straddled kinks", tc.name, name, checked)
			}
		}
	}
}

// TestDiffHenon checks the Jacobian of the Hénon map x' = 1 − a x² + y,
// y' = b x against the hand-derived [[−2 a x, 1], [b, 0]] (elementary
// algebra, common practice, no source).
func TestDiffHenon(t *testing.T) {
	var maps []*Node
	for _, src := range []string{"1 - a*x^2 + y", "b*x"} {
		n, err := Parse(src)
		if err != nil {
			t.Fatal(err)
		}
		maps = append(maps, n)
	}
	vars := []string{"x", "y"}
	want := [][]string{{"-2*a*x", "1"}, {"b", "0"}}
	var jac []*Node
	for i, f := range maps {
		for j, v := range vars {
			d := Diff(f, v)
			if d.String() != want[i][j] {
				t.Errorf("d(%s)/d%s = %s, want %s", f, v, d, want[i][j])
			}
			jac = append(jac, d)
		}
	}
	const a, b = 1.4, 0.3
	p, err := Compile(jac, vars, map[string]float64{"a": a, "b": b})
	if err != nil {
		t.Fatal(err)
	}
	rng := rand.New(rand.NewPCG(3, 4))
	for range 100 {
		x, y := 4*rng.Float64()-2, 4*rng.Float64()-2
		var got [4]float64
		p.Eval(got[:], []float64{x, y})
		// Same operations in the same order as the compiled tree:
		// exact agreement.
		exact := [4]float64{-2 * a * x, 1, b, 0}
		if got != exact {
			t.Errorf("Hénon Jacobian at (%v, %v) = %v, want %v", x, y, got, exact)
		}
	}
}

// TestDiffLogistic checks d/dx A x (1 − x) = A (1 − 2x) (elementary
// algebra, common practice, no source).
func TestDiffLogistic(t *testing.T) {
	f, err := Parse("A*x*(1-x)")
	if err != nil {
		t.Fatal(err)
	}
	const A = 4.5
	p, err := Compile([]*Node{Diff(f, "x")}, []string{"x"}, map[string]float64{"A": A})
	if err != nil {
		t.Fatal(err)
	}
	for _, x := range []float64{0, 0.1, 0.25, 0.5, 1 - 1/A, 0.9, 1} {
		got, want := p.Scalar(x), A*(1-2*x)
		// The tree computes A(1 − x) − A x: each product and the
		// difference round once, an absolute error ≤ 2·ε·A.
		if !scalar.EqualWithinAbsOrRel(got, want, 2*eps*A, 0) {
			t.Errorf("logistic derivative at %v = %v, want %v", x, got, want)
		}
	}
	// Fixed-point multipliers of the logistic repeller: A at x = 0 and
	// 2 − A at x = 1 − 1/A (elementary algebra, common practice, no
	// source); 1 − 1/A rounds, so allow a few ε·A.
	if got := p.Scalar(0); got != A {
		t.Errorf("multiplier at 0 = %v, want %v", got, A)
	}
	if got := p.Scalar(1 - 1/A); !scalar.EqualWithinAbsOrRel(got, 2-A, 4*eps*A, 0) {
		t.Errorf("multiplier at 1 - 1/A = %v, want %v", got, 2-A)
	}
}
