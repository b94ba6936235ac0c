package expr

import (
	"errors"
	"testing"
)

func TestKinks(t *testing.T) {
	type kink struct {
		fn   string
		col  int
		kind KinkKind
		arg  string
		zero string
	}
	for _, tc := range []struct {
		src  string
		want []kink
	}{
		{"x^2 + sin(x)", nil},
		{"abs(x - 1)", []kink{{"abs", 1, KinkZero, "x - 1", "x - 1"}}},
		{"2*floor(3*x)", []kink{{"floor", 3, KinkInteger, "3*x", "sin(3*pi*x)"}}},
		{"mod(2*x, 1)", []kink{{"mod", 1, KinkInteger, "2*x", "sin(2*pi*x)"}}},
		{"1/x - floor(1/x)", []kink{{"floor", 7, KinkInteger, "1/x", "sin(pi/x)"}}},
		{"min(x, y) + max(x, -2)", []kink{{"min", 1, KinkZero, "x - y", "x - y"}, {"max", 13, KinkZero, "x + 2", "x + 2"}}},
		{"(x < 0.5)*2*x + (x >= 0.5)*(2*x - 1)", []kink{{"<", 4, KinkZero, "x - 0.5", "x - 0.5"}, {">=", 20, KinkZero, "x - 0.5", "x - 0.5"}}},
		{"x <= y", []kink{{"<=", 3, KinkZero, "x - y", "x - y"}}},
		{"y > abs(x)", []kink{{"abs", 5, KinkZero, "x", "x"}, {">", 3, KinkZero, "y - abs(x)", "y - abs(x)"}}},
	} {
		n, err := Parse(tc.src)
		if err != nil {
			t.Fatal(err)
		}
		got := Kinks(n)
		if len(got) != len(tc.want) {
			t.Errorf("Kinks(%s) = %d kinks, want %d", tc.src, len(got), len(tc.want))
			continue
		}
		for i, k := range got {
			w := tc.want[i]
			if k.Func != w.fn || k.Col != w.col || k.Kind != w.kind || k.Arg.String() != w.arg || k.Zero.String() != w.zero {
				t.Errorf("Kinks(%s)[%d] = {%s %d %d %s %s}, want %v", tc.src, i, k.Func, k.Col, k.Kind, k.Arg, k.Zero, w)
			}
		}
	}
	// The derivative of abs turns into comparisons that keep the column of
	// the abs they came from.
	n, err := Parse("3 + abs(x - 1)")
	if err != nil {
		t.Fatal(err)
	}
	for _, k := range Kinks(Diff(n, "x")) {
		if k.Col != 5 {
			t.Errorf("kink %s of the derivative at column %d, want 5", k.Func, k.Col)
		}
	}
}

func TestCheck(t *testing.T) {
	for _, tc := range []struct {
		src  string
		vars []string
		at   []float64
		fn   string // "" for no kink
		col  int
	}{
		{"abs(x - 1)", []string{"x"}, []float64{1}, "abs", 1},
		{"abs(x - 1)", []string{"x"}, []float64{1.5}, "", 0},
		{"1/x - floor(1/x)", []string{"x"}, []float64{0.25}, "floor", 7},
		{"1/x - floor(1/x)", []string{"x"}, []float64{0.3}, "", 0},
		{"mod(2*x, 1)", []string{"x"}, []float64{0.5}, "mod", 1},
		{"mod(2*x, 1)", []string{"x"}, []float64{0.7}, "", 0},
		{"min(x, y)", []string{"x", "y"}, []float64{0.3, 0.3}, "min", 1},
		{"max(x, y)", []string{"x", "y"}, []float64{0.3, 0.4}, "", 0},
		{"(x < 0.5)*2*x + (x >= 0.5)*(2*x - 1)", []string{"x"}, []float64{0.5}, "<", 4},
	} {
		// The formula is the second output, after a smooth first one.
		p, err := Compile(mustParseAll(t, "x", tc.src), tc.vars, nil)
		if err != nil {
			t.Fatal(err)
		}
		err = p.Check(tc.at)
		var nd *NoDerivativeError
		switch {
		case tc.fn == "" && err != nil:
			t.Errorf("Check(%s at %v) = %v, want nil", tc.src, tc.at, err)
		case tc.fn != "" && !errors.As(err, &nd):
			t.Errorf("Check(%s at %v) = %v, want a *NoDerivativeError", tc.src, tc.at, err)
		case tc.fn != "" && (nd.Func != tc.fn || nd.Col != tc.col || nd.Output != 1):
			t.Errorf("Check(%s at %v) = %+v, want %s at column %d of formula 1", tc.src, tc.at, nd, tc.fn, tc.col)
		}
	}
}
