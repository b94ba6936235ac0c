package expr

import (
	"math"
	"testing"
)

// FuzzParse checks that Parse never panics, that every formula it accepts
// prints in a form that parses back to the same tree, that derivatives do
// the same, and that compiling and evaluating (one point and a batch) do
// not panic and agree bit for bit.
func FuzzParse(f *testing.F) {
	for _, tc := range precedenceTests {
		f.Add(tc.src)
	}
	for _, tc := range syntaxErrorTests {
		f.Add(tc.src)
	}
	for _, tc := range diffRuleTests {
		f.Add(tc.src)
	}
	for _, tc := range agreementTests {
		for _, src := range tc.formulas {
			f.Add(src)
		}
	}
	f.Fuzz(func(t *testing.T, src string) {
		n, err := Parse(src)
		if err != nil {
			if _, ok := err.(*SyntaxError); !ok {
				t.Fatalf("Parse(%q) error %T, want *SyntaxError", src, err)
			}
			return
		}
		roundTrip(t, "formula", n)
		names := n.Names()
		vars := append([]string{"x"}, names...)
		if slicesContains(names, "x") {
			vars = names
		}
		formulas := []*Node{n}
		for _, v := range vars {
			d := Diff(n, v)
			roundTrip(t, "derivative by "+v, d)
			formulas = append(formulas, d)
		}
		_ = Kinks(n)
		p, err := Compile(formulas, vars, nil)
		if err != nil {
			t.Fatalf("Compile(%q): %v", src, err)
		}
		const points = 3
		xs := make([]float64, points*len(vars))
		for i := range xs {
			xs[i] = 0.25 + 0.5*float64(i)
		}
		batch := make([]float64, points*len(formulas))
		p.EvalBatch(batch, xs)
		one := make([]float64, len(formulas))
		for i := range points {
			x := xs[i*len(vars) : (i+1)*len(vars)]
			p.Eval(one, x)
			_ = p.Check(x)
			for k, v := range one {
				w := batch[i*len(formulas)+k]
				if math.Float64bits(v) != math.Float64bits(w) && !(math.IsNaN(v) && math.IsNaN(w)) {
					t.Fatalf("%q output %d at %v: Eval %v, EvalBatch %v", src, k, x, v, w)
				}
			}
		}
	})
}

func slicesContains(s []string, v string) bool {
	for _, x := range s {
		if x == v {
			return true
		}
	}
	return false
}

func roundTrip(t *testing.T, what string, n *Node) {
	t.Helper()
	s := n.String()
	again, err := Parse(s)
	if err != nil {
		t.Fatalf("%s %q does not parse back: %v", what, s, err)
	}
	if !Equal(n, again) {
		t.Fatalf("%s %q parses back to a different tree %q", what, s, again)
	}
}
