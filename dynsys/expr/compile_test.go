package expr

import (
	"errors"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"
)

func mustParseAll(t testing.TB, srcs ...string) []*Node {
	t.Helper()
	var nodes []*Node
	for _, src := range srcs {
		n, err := Parse(src)
		if err != nil {
			t.Fatalf("Parse(%q): %v", src, err)
		}
		nodes = append(nodes, n)
	}
	return nodes
}

// agreementTests are programs whose evaluation paths must agree bit for
// bit: every path computes each operation by the same floating-point
// expression (see apply).
var agreementTests = []struct {
	name     string
	formulas []string
	vars     []string
	params   map[string]float64
}{
	{"Hénon map", []string{"1 - a*x^2 + y", "b*x"}, []string{"x", "y"}, map[string]float64{"a": 1.4, "b": 0.3}},
	{"Hénon Jacobian", []string{"-2*a*x", "1", "b", "0"}, []string{"x", "y"}, map[string]float64{"a": 1.4, "b": 0.3}},
	{"cubic map", []string{"k*x*(1-x)*(1 + c*x)"}, []string{"x"}, map[string]float64{"k": 5.2, "c": 0.3}},
	{"Gauss map", []string{"1/x - floor(1/x)"}, []string{"x"}, nil},
	{"doubling map", []string{"mod(2*x, 1)"}, []string{"x"}, nil},
	{"every operation", []string{
		"sin(x) + cos(y) - tan(z)/2 + exp(-x^2)*log(1 + y^2) + sqrt(abs(z))",
		"floor(3*x) + sinh(y) - cosh(z) + tanh(x*y) + atan(z)^3 + x^-1",
		"mod(x, y) + min(x, z) - max(y, 2) + (x < y) + (y <= z) - (x > 0.5) - (0.5 >= z)",
		"x^y + 2^z + (x*y)^0.5 + pi*e - 3 - x/y/z + 2/(z+3) - 1 + x*2 + 3*y + z/4",
		"x", "-y", "2", "1 - 3*(x*y) + y", "y - 2*(x*y)", "0.5 + x*y*z",
	}, []string{"x", "y", "z"}, nil},
	{"constant only", []string{"2*pi"}, []string{"x"}, nil},
	{"variable only", []string{"x"}, []string{"x"}, nil},
}

func TestEvalPathsAgree(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, tc := range agreementTests {
		p, err := Compile(mustParseAll(t, tc.formulas...), tc.vars, tc.params)
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		d, m := p.NumVars(), p.NumOut()
		// Not a multiple of the block length, so the last block is short.
		const n = 3*blockLen + 17
		xs := make([]float64, n*d)
		for i := range xs {
			xs[i] = 4*rng.Float64() - 2
		}
		xs[0] = 0.5 // lands on comparisons and kinks
		batch := make([]float64, n*m)
		p.EvalBatch(batch, xs)
		own := make([]float64, n*m)
		p.NewBatch().Eval(own, xs)
		one := make([]float64, m)
		for i := range n {
			p.Eval(one, xs[i*d:i*d+d])
			for k := range m {
				same := func(a, b float64) bool {
					return math.Float64bits(a) == math.Float64bits(b) || math.IsNaN(a) && math.IsNaN(b)
				}
				if !same(one[k], batch[i*m+k]) || !same(one[k], own[i*m+k]) {
					t.Errorf("%s: formula %d at %v: Eval %v, EvalBatch %v, Batch.Eval %v",
						tc.name, k, xs[i*d:i*d+d], one[k], batch[i*m+k], own[i*m+k])
				}
				if d == 1 && m == 1 && !same(one[0], p.Scalar(xs[i])) {
					t.Errorf("%s at %v: Eval %v, Scalar %v", tc.name, xs[i], one[0], p.Scalar(xs[i]))
				}
			}
		}
	}
}

// TestEvalValues checks compiled values against the same maps written in
// Go, operation for operation (closed form: exact agreement).
func TestEvalValues(t *testing.T) {
	const a, b = 1.4, 0.3
	p, err := Compile(mustParseAll(t, "1 - a*x^2 + y", "b*x"), []string{"x", "y"}, map[string]float64{"a": a, "b": b})
	if err != nil {
		t.Fatal(err)
	}
	var got [2]float64
	for _, pt := range [][2]float64{{0, 0}, {0.5, -0.25}, {-1.2, 0.7}} {
		x, y := pt[0], pt[1]
		p.Eval(got[:], pt[:])
		if want := [2]float64{1 - a*x*x + y, b * x}; got != want {
			t.Errorf("Hénon map at %v = %v, want %v", pt, got, want)
		}
	}
	// mod(x, m) = x − m·floor(x/m) has the sign of m (the definition in
	// DESIGN.md section 5), unlike math.Mod.
	q, err := Compile(mustParseAll(t, "mod(x, 1)", "mod(x, -1)"), []string{"x"}, nil)
	if err != nil {
		t.Fatal(err)
	}
	q.Eval(got[:], []float64{-0.25})
	if got != [2]float64{0.75, -0.25} {
		t.Errorf("mod(-0.25, ±1) = %v, want [0.75 -0.25]", got)
	}
}

func TestCompileErrors(t *testing.T) {
	nodes := mustParseAll(t, "1 - a*x^2 + y", "b*x + z")
	_, err := Compile(nodes, []string{"x", "y"}, map[string]float64{"a": 1.4, "b": 0.3})
	var ne *NameError
	if !errors.As(err, &ne) {
		t.Fatalf("Compile with unknown z: %v, want a *NameError", err)
	}
	if ne.Name != "z" || ne.Col != 7 || ne.Output != 1 || !slices.Equal(ne.Known, []string{"a", "b", "x", "y"}) {
		t.Errorf("NameError = %+v", ne)
	}
	if want := `expr: formula 2, column 7: unknown name "z" (defined: a, b, x, y)`; err.Error() != want {
		t.Errorf("message %q, want %q", err, want)
	}
	for _, tc := range []struct {
		vars   []string
		params map[string]float64
		want   string
	}{
		{[]string{"x", "x"}, nil, `variable "x" is listed twice`},
		{[]string{"x"}, map[string]float64{"x": 1}, `"x" is both a variable and a parameter`},
		{[]string{"e"}, nil, `variable "e" is a reserved name`},
		{[]string{"x"}, map[string]float64{"sin": 1}, `parameter "sin" is a reserved name`},
	} {
		_, err := Compile(mustParseAll(t, "x"), tc.vars, tc.params)
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("Compile(vars %v, params %v) = %v, want %q", tc.vars, tc.params, err, tc.want)
		}
	}
}

func TestSharedSubtrees(t *testing.T) {
	// The two outputs share x*y and 1 - x*y: the batch code computes each
	// once (x*y, then 1 - x*y fused with nothing, then the two results).
	p, err := Compile(mustParseAll(t, "sin(1 - x*y)", "cos(1 - x*y)"), []string{"x", "y"}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if got := len(p.batch.code); got != 4 {
		t.Errorf("batch code has %d instructions, want 4 (x*y, 1 - x*y, sin, cos)", got)
	}
}

func TestAllocs(t *testing.T) {
	p, err := Compile(mustParseAll(t, "1 - a*x^2 + y", "b*x"), []string{"x", "y"}, map[string]float64{"a": 1.4, "b": 0.3})
	if err != nil {
		t.Fatal(err)
	}
	s, err := Compile(mustParseAll(t, "k*x*(1-x)*(1 + c*x)"), []string{"x"}, map[string]float64{"k": 5.2, "c": 0.3})
	if err != nil {
		t.Fatal(err)
	}
	x, dst := []float64{0.1, 0.2}, make([]float64, 2)
	xs, ys := make([]float64, 2*1000), make([]float64, 2*1000)
	b := p.NewBatch()
	var sink float64
	for _, tc := range []struct {
		name string
		f    func()
	}{
		{"Eval", func() { p.Eval(dst, x) }},
		{"Scalar", func() { sink += s.Scalar(0.3) }},
		{"Check", func() { _ = s.Check(x[:1]) }},
		{"Batch.Eval", func() { b.Eval(ys, xs) }},
		{"EvalBatch", func() { p.EvalBatch(ys, xs) }},
	} {
		if allocs := testing.AllocsPerRun(100, tc.f); allocs != 0 {
			t.Errorf("%s allocates %v times per call", tc.name, allocs)
		}
	}
	_ = sink
}
