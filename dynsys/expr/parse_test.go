package expr

import (
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// sexpr prints n fully parenthesised, in prefix form, so tests can check
// the structure a formula parses to independently of String.
func sexpr(n *Node) string {
	switch n.Op {
	case OpNum:
		return fmt.Sprint(n.Value)
	case OpConst, OpName:
		return n.Name
	case OpNeg:
		return "(neg " + sexpr(n.Args[0]) + ")"
	}
	head := n.Name
	if n.Op != OpCall {
		head = symbol[n.Op]
	}
	parts := []string{head}
	for _, a := range n.Args {
		parts = append(parts, sexpr(a))
	}
	return "(" + strings.Join(parts, " ") + ")"
}

// precedenceTests pin down the grammar of DESIGN.md section 5 (our own
// specification; the precedences and the right-associative power follow
// common practice, no source). value is the formula's value at x = 3,
// y = 2 (a = 0.5 is a parameter), computed by hand.
var precedenceTests = []struct {
	src       string
	tree      string
	canonical string
	value     float64
}{
	{"1 - a*x^2 + y", "(+ (- 1 (* a (^ x 2))) y)", "1 - a*x^2 + y", 1 - 0.5*9 + 2},
	{"-x^2", "(neg (^ x 2))", "-x^2", -9},
	{"(-x)^2", "(^ (neg x) 2)", "(-x)^2", 9},
	{"2^3^2", "(^ 2 (^ 3 2))", "2^3^2", 512},
	{"(2^3)^2", "(^ (^ 2 3) 2)", "(2^3)^2", 64},
	{"2^-1", "(^ 2 -1)", "2^-1", 0.5},
	{"2^-x", "(^ 2 (neg x))", "2^-x", 0.125},
	{"-2^2", "(neg (^ 2 2))", "-2^2", -4},
	{"(-2)^2", "(^ -2 2)", "(-2)^2", 4},
	{"-2", "-2", "-2", -2},
	{"- -2", "2", "2", 2},
	{"--x", "(neg (neg x))", "--x", 3},
	{"a - -y", "(- a (neg y))", "a - -y", 2.5},
	{"x*-y", "(* x (neg y))", "x*-y", -6},
	{"-x*y", "(* (neg x) y)", "-x*y", -6},
	{"-(x*y)", "(neg (* x y))", "-(x*y)", -6},
	{"x - y - 1", "(- (- x y) 1)", "x - y - 1", 0},
	{"x - (y - 1)", "(- x (- y 1))", "x - (y - 1)", 2},
	{"x/y/2", "(/ (/ x y) 2)", "x/y/2", 0.75},
	{"x/(y/2)", "(/ x (/ y 2))", "x/(y/2)", 3},
	{"x/y*2", "(* (/ x y) 2)", "x/y*2", 3},
	{"k*x*(1-x)*(1 + c*x)", "(* (* (* k x) (- 1 x)) (+ 1 (* c x)))", "k*x*(1 - x)*(1 + c*x)", 2 * 3 * (1 - 3) * (1 + 0.25*3)},
	{"mod(2*x, 1.25)", "(mod (* 2 x) 1.25)", "mod(2*x, 1.25)", 1},
	{"min(x, y) + max(x, -y)", "(+ (min x y) (max x (neg y)))", "min(x, y) + max(x, -y)", 5},
	{"1/x - floor(1/x)", "(- (/ 1 x) (floor (/ 1 x)))", "1/x - floor(1/x)", 1.0 / 3},
	{"x < y", "(< x y)", "x < y", 0},
	{"x >= y + 1", "(>= x (+ y 1))", "x >= y + 1", 1},
	{"(x > y)*2 + (x <= y)", "(+ (* (> x y) 2) (<= x y))", "(x > y)*2 + (x <= y)", 2},
	{"(x < y) < 1", "(< (< x y) 1)", "(x < y) < 1", 1},
	{"sin(pi/2) + e", "(+ (sin (/ pi 2)) e)", "sin(pi/2) + e", 1 + math.E},
	{" \t x\n+\ty ", "(+ x y)", "x + y", 5},
	{"1e-3*x", "(* 0.001 x)", "0.001*x", 0.003},
	{".5*x", "(* 0.5 x)", "0.5*x", 1.5},
	{"1.*x", "(* 1 x)", "1*x", 3},
	{"2.5E+2 + x", "(+ 250 x)", "250 + x", 253},
	{"1e21*x", "(* 1e+21 x)", "1e+21*x", 3e21},
	{"x_1 + y", "(+ x_1 y)", "x_1 + y", 5},
	{"sqrt(abs(-x))^3", "(^ (sqrt (abs (neg x))) 3)", "sqrt(abs(-x))^3", math.Pow(math.Sqrt(3), 3)},
}

func TestParsePrecedence(t *testing.T) {
	for _, tc := range precedenceTests {
		n, err := Parse(tc.src)
		if err != nil {
			t.Errorf("Parse(%q): %v", tc.src, err)
			continue
		}
		if got := sexpr(n); got != tc.tree {
			t.Errorf("Parse(%q) = %s, want %s", tc.src, got, tc.tree)
		}
		if got := n.String(); got != tc.canonical {
			t.Errorf("Parse(%q).String() = %q, want %q", tc.src, got, tc.canonical)
		}
		again, err := Parse(n.String())
		if err != nil || !Equal(n, again) {
			t.Errorf("round trip of %q through %q: %v, tree %v", tc.src, n.String(), err, again)
		}
		vars := []string{"x", "y"}
		params := map[string]float64{"a": 0.5, "k": 2, "c": 0.25}
		if strings.Contains(tc.src, "x_1") {
			vars = []string{"x_1", "y"}
		}
		p, err := Compile([]*Node{n}, vars, params)
		if err != nil {
			t.Errorf("Compile(%q): %v", tc.src, err)
			continue
		}
		var got [1]float64
		p.Eval(got[:], []float64{3, 2})
		// Hand-computed values; the tolerance of 4 ulp covers the
		// few roundings of the formulas with inexact operations.
		if !scalar.EqualWithinAbsOrRel(got[0], tc.value, 0, 4*0x1p-52) {
			t.Errorf("%q at x=3, y=2: %v, want %v", tc.src, got[0], tc.value)
		}
	}
}

func TestNames(t *testing.T) {
	n, err := Parse("k*x*(1 - x) + sin(pi*y) + e^k + mod(x, m)")
	if err != nil {
		t.Fatal(err)
	}
	got := strings.Join(n.Names(), ",")
	if want := "k,m,x,y"; got != want {
		t.Errorf("Names() = %s, want %s", got, want)
	}
	for _, name := range []string{"pi", "e", "sin", "mod", "atan"} {
		if !IsReserved(name) {
			t.Errorf("IsReserved(%q) = false", name)
		}
	}
	if IsReserved("x") {
		t.Error(`IsReserved("x") = true`)
	}
	if got := len(Reserved()); got != 17 {
		t.Errorf("len(Reserved()) = %d, want 15 functions + 2 constants", got)
	}
}

// syntaxErrorTests lists malformed formulas with the column and message a
// user should see.
var syntaxErrorTests = []struct {
	src string
	col int
	msg string
}{
	{"", 1, `expected a number, a name, "-" or "(", found end of formula`},
	{"1 +", 4, `expected a number, a name, "-" or "(", found end of formula`},
	{"1 + * 2", 5, `expected a number, a name, "-" or "(", found "*"`},
	{"(1 + 2", 7, `expected ")" to close "(" opened at column 1, found end of formula`},
	{"x*(y + (1 - x)", 15, `expected ")" to close "(" opened at column 3, found end of formula`},
	{"1 + 2)", 6, `found ")" with no matching "("`},
	{"2 3", 3, `expected an operator or end of formula, found number 3`},
	{"2x", 2, `expected an operator or end of formula, found name "x"`},
	{"sin x", 5, `expected "(" after function name "sin", found name "x"`},
	{"sin(x", 6, `expected ")" to close sin( opened at column 4, found end of formula`},
	{"min(x 1)", 7, `expected "," or ")" to close min( opened at column 4, found number 1`},
	{"mod(x)", 6, `mod takes 2 arguments, found 1`},
	{"mod(x, 1, 2)", 9, `mod takes 2 arguments, found a further ","`},
	{"abs(x, 1)", 6, `abs takes 1 argument, found a further ","`},
	{"foo(x)", 1, `unknown function "foo" (functions: abs, atan, cos, cosh, exp, floor, log, max, min, mod, sin, sinh, sqrt, tan, tanh)`},
	{"pi(2)", 1, `"pi" is a constant, not a function`},
	{"x < y < 1", 7, `comparisons do not chain: add parentheses, as in (a < b) < c`},
	{"x $ y", 3, `unexpected character "$"`},
	{"x == y", 3, `unexpected character "=": the language has no equality; comparisons are <, <=, >, >=`},
	{"αx", 1, `unexpected character "α"`},
	{"x + \xff", 5, `invalid UTF-8 byte`},
	{"1e999", 1, `number 1e999 is out of range`},
	{"x + .", 5, `expected a digit before or after "."`},
	{"1e+", 4, `expected the digits of an exponent`},
	{"()", 2, `expected a number, a name, "-" or "(", found ")"`},
	{"x^", 3, `expected a number, a name, "-" or "(", found end of formula`},
	{"min(,1)", 5, `expected a number, a name, "-" or "(", found ","`},
	{"x + y,", 6, `expected an operator or end of formula, found ","`},
	{strings.Repeat("(", 1001) + "x" + strings.Repeat(")", 1001), 1001, `formula nested more than 1000 deep`},
}

func TestSyntaxErrors(t *testing.T) {
	for _, tc := range syntaxErrorTests {
		n, err := Parse(tc.src)
		var se *SyntaxError
		if !errors.As(err, &se) {
			t.Errorf("Parse(%q) = %v, %v; want a *SyntaxError", tc.src, n, err)
			continue
		}
		if se.Col != tc.col || se.Msg != tc.msg || se.Formula != tc.src {
			t.Errorf("Parse(%q): column %d %q, want column %d %q", tc.src, se.Col, se.Msg, tc.col, tc.msg)
		}
		if want := fmt.Sprintf("expr: column %d: %s", tc.col, tc.msg); se.Error() != want {
			t.Errorf("Parse(%q).Error() = %q, want %q", tc.src, se.Error(), want)
		}
	}
}
