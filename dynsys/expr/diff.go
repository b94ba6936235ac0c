package expr

import (
	"fmt"
	"math"
)

// Diff returns the derivative of n with respect to the variable name, as a
// simplified tree that prints readably and parses back (every other name is
// held constant). The rules are the usual ones of calculus; see the package
// documentation for the rules of the piecewise functions, whose derivatives
// are written in the language itself with comparisons. Where a piecewise
// function has no derivative (see Kinks) the tree gives the one-sided value
// its comparisons select.
//
// The result may share subtrees with n.
func Diff(n *Node, name string) *Node {
	d := &differ{name: name}
	return d.diff(n)
}

// differ carries the variable of differentiation and the column given to
// the nodes a rule creates.
type differ struct {
	name string
	col  int
}

func (d *differ) diff(n *Node) *Node {
	switch n.Op {
	case OpNum, OpConst:
		d.col = n.Col
		return d.num(0)
	case OpName:
		d.col = n.Col
		if n.Name == d.name {
			return d.num(1)
		}
		return d.num(0)
	case OpLess, OpLessEq, OpGreater, OpGreaterEq:
		// Piecewise constant: zero away from equality (a kink, see Kinks).
		d.col = n.Col
		return d.num(0)
	}
	du := make([]*Node, len(n.Args))
	for i, a := range n.Args {
		du[i] = d.diff(a)
	}
	d.col = n.Col
	switch n.Op {
	case OpNeg:
		return d.neg(du[0])
	case OpAdd:
		return d.add(du[0], du[1])
	case OpSub:
		return d.sub(du[0], du[1])
	case OpMul:
		u, v := n.Args[0], n.Args[1]
		return d.add(d.mul(du[0], v), d.mul(u, du[1]))
	case OpDiv:
		// (u/v)' = u'/v - u v'/v^2
		u, v := n.Args[0], n.Args[1]
		return d.sub(d.div(du[0], v), d.div(d.mul(u, du[1]), d.pow(v, d.num(2))))
	case OpPow:
		return d.diffPow(n, du[0], du[1])
	case OpCall:
		return d.diffCall(n, du)
	}
	panic(fmt.Sprintf("expr: Diff: unknown node kind %d", n.Op))
}

// diffPow differentiates u^v.
func (d *differ) diffPow(n, du, dv *Node) *Node {
	u, v := n.Args[0], n.Args[1]
	if isNum(dv, 0) {
		// (u^c)' = c u^(c-1) u'
		return d.mul(d.mul(v, d.pow(u, d.sub(v, d.num(1)))), du)
	}
	if u.Op == OpConst && u.Name == "e" {
		return d.mul(n, dv)
	}
	if isNum(du, 0) {
		// (c^v)' = c^v log(c) v'
		return d.mul(n, d.mul(dv, d.call("log", u)))
	}
	// (u^v)' = u^v (v' log(u) + v u'/u)
	return d.mul(n, d.add(d.mul(dv, d.call("log", u)), d.div(d.mul(v, du), u)))
}

// diffCall differentiates a built-in function by the chain rule.
func (d *differ) diffCall(n *Node, du []*Node) *Node {
	u := n.Args[0]
	chain := func(outer *Node) *Node { return d.mul(outer, du[0]) }
	switch n.Name {
	case "sin":
		return chain(d.call("cos", u))
	case "cos":
		return chain(d.neg(d.call("sin", u)))
	case "tan":
		return d.div(du[0], d.pow(d.call("cos", u), d.num(2)))
	case "exp":
		return chain(n)
	case "log":
		return d.div(du[0], u)
	case "sqrt":
		return d.div(du[0], d.mul(d.num(2), n))
	case "abs":
		// abs(u)' = ((u > 0) - (u < 0)) u'
		return chain(d.sub(d.cmp(OpGreater, u, d.num(0)), d.cmp(OpLess, u, d.num(0))))
	case "floor":
		return d.num(0)
	case "sinh":
		return chain(d.call("cosh", u))
	case "cosh":
		return chain(d.call("sinh", u))
	case "tanh":
		return chain(d.sub(d.num(1), d.pow(n, d.num(2))))
	case "atan":
		return d.div(du[0], d.add(d.num(1), d.pow(u, d.num(2))))
	case "mod":
		// mod(x, m) = x - m floor(x/m), so mod' = x' - m' floor(x/m).
		return d.sub(du[0], d.mul(du[1], d.call("floor", d.div(u, n.Args[1]))))
	case "min":
		// min(a, b)' = (a <= b) a' + (a > b) b'
		a, b := n.Args[0], n.Args[1]
		return d.add(d.mul(d.cmp(OpLessEq, a, b), du[0]), d.mul(d.cmp(OpGreater, a, b), du[1]))
	case "max":
		// max(a, b)' = (a >= b) a' + (a < b) b'
		a, b := n.Args[0], n.Args[1]
		return d.add(d.mul(d.cmp(OpGreaterEq, a, b), du[0]), d.mul(d.cmp(OpLess, a, b), du[1]))
	}
	panic(fmt.Sprintf("expr: Diff: unknown function %q", n.Name))
}

// The constructors below build simplified nodes: numbers combine when the
// result is exact (so 1/3 stays a quotient and prints as one), zero and
// unit terms vanish, numeric factors of a product gather in front, and
// signs move into a leading numeric factor.

func isNum(n *Node, v float64) bool { return n.Op == OpNum && n.Value == v }

func (d *differ) num(v float64) *Node { return &Node{Op: OpNum, Value: v, Col: d.col} }

func (d *differ) node(op Op, args ...*Node) *Node { return &Node{Op: op, Args: args, Col: d.col} }

func (d *differ) call(name string, args ...*Node) *Node {
	return &Node{Op: OpCall, Name: name, Args: args, Col: d.col}
}

func (d *differ) cmp(op Op, a, b *Node) *Node { return d.node(op, a, b) }

// exactSum returns a+b and whether it is exact (the TwoSum error is zero).
func exactSum(a, b float64) (float64, bool) {
	s := a + b
	bb := s - a
	err := (a - (s - bb)) + (b - bb)
	return s, err == 0 && !math.IsInf(s, 0) && !math.IsNaN(s)
}

// exactProduct returns a*b and whether it is exact.
func exactProduct(a, b float64) (float64, bool) {
	p := a * b
	return p, math.FMA(a, b, -p) == 0 && !math.IsInf(p, 0) && !math.IsNaN(p)
}

func (d *differ) neg(a *Node) *Node {
	switch a.Op {
	case OpNum:
		return d.num(-a.Value)
	case OpNeg:
		return a.Args[0]
	case OpSub:
		return d.node(OpSub, a.Args[1], a.Args[0])
	case OpMul, OpDiv:
		if lead := leadingNum(a); lead != nil {
			return replaceLeading(a, &Node{Op: OpNum, Value: -lead.Value, Col: lead.Col})
		}
	}
	return d.node(OpNeg, a)
}

// leadingNum returns the leftmost factor of a product or quotient chain if
// it is a number.
func leadingNum(a *Node) *Node {
	for a.Op == OpMul || a.Op == OpDiv {
		a = a.Args[0]
	}
	if a.Op == OpNum {
		return a
	}
	return nil
}

// replaceLeading returns a copy of the chain a with its leftmost factor
// replaced by lead.
func replaceLeading(a, lead *Node) *Node {
	if a.Op != OpMul && a.Op != OpDiv {
		return lead
	}
	return &Node{Op: a.Op, Args: []*Node{replaceLeading(a.Args[0], lead), a.Args[1]}, Col: a.Col}
}

func (d *differ) add(a, b *Node) *Node {
	switch {
	case isNum(a, 0):
		return b
	case isNum(b, 0):
		return a
	case a.Op == OpNum && b.Op == OpNum:
		if s, ok := exactSum(a.Value, b.Value); ok {
			return d.num(s)
		}
	case b.Op == OpNum && b.Value < 0:
		return d.node(OpSub, a, d.num(-b.Value))
	case b.Op == OpNeg:
		return d.sub(a, b.Args[0])
	case a.Op == OpNeg:
		return d.sub(b, a.Args[0])
	case b.Op == OpMul || b.Op == OpDiv:
		// a + (−c)*u prints as a − c*u.
		if lead := leadingNum(b); lead != nil && lead.Value < 0 {
			return d.node(OpSub, a, replaceLeading(b, &Node{Op: OpNum, Value: -lead.Value, Col: lead.Col}))
		}
	}
	return d.node(OpAdd, a, b)
}

func (d *differ) sub(a, b *Node) *Node {
	switch {
	case isNum(b, 0):
		return a
	case isNum(a, 0):
		return d.neg(b)
	case a.Op == OpNum && b.Op == OpNum:
		if s, ok := exactSum(a.Value, -b.Value); ok {
			return d.num(s)
		}
	case b.Op == OpNum && b.Value < 0:
		return d.node(OpAdd, a, d.num(-b.Value))
	case b.Op == OpNeg:
		return d.add(a, b.Args[0])
	case Equal(a, b):
		return d.num(0)
	}
	return d.node(OpSub, a, b)
}

func (d *differ) mul(a, b *Node) *Node {
	if isNum(a, 0) || isNum(b, 0) {
		return d.num(0)
	}
	// (1/w)*b = b/w, so that x*(1/x) cancels.
	if a.Op == OpDiv && isNum(a.Args[0], 1) {
		return d.div(b, a.Args[1])
	}
	if b.Op == OpDiv && isNum(b.Args[0], 1) {
		return d.div(a, b.Args[1])
	}
	// Gather the factors of both sides (through nested products and
	// negations), multiply the numbers among them exactly, and rebuild a
	// left-to-right product with the number in front.
	coef := 1.0
	var factors, inexact []*Node
	var gather func(*Node)
	gather = func(n *Node) {
		switch n.Op {
		case OpMul:
			gather(n.Args[0])
			gather(n.Args[1])
		case OpNeg:
			coef = -coef
			gather(n.Args[0])
		case OpNum:
			if p, ok := exactProduct(coef, n.Value); ok {
				coef = p
			} else {
				inexact = append(inexact, n)
			}
		default:
			factors = append(factors, n)
		}
	}
	gather(a)
	gather(b)
	factors = append(inexact, factors...)
	var prod *Node
	for _, f := range factors {
		if prod == nil {
			prod = f
		} else {
			prod = d.node(OpMul, prod, f)
		}
	}
	switch {
	case prod == nil:
		return d.num(coef)
	case coef == 1:
		return prod
	case coef == -1:
		return d.neg(prod)
	}
	return d.withCoef(coef, prod)
}

// withCoef returns coef*prod, the number becoming the leftmost factor.
func (d *differ) withCoef(coef float64, prod *Node) *Node {
	if prod.Op == OpMul {
		return d.node(OpMul, d.withCoef(coef, prod.Args[0]), prod.Args[1])
	}
	return d.node(OpMul, d.num(coef), prod)
}

func (d *differ) div(a, b *Node) *Node {
	switch {
	case isNum(a, 0):
		return d.num(0)
	case isNum(b, 1):
		return a
	case isNum(b, -1):
		return d.neg(a)
	case a.Op == OpNum && b.Op == OpNum:
		q := a.Value / b.Value
		if math.FMA(q, b.Value, -a.Value) == 0 && !math.IsInf(q, 0) && !math.IsNaN(q) {
			return d.num(q)
		}
	case a.Op == OpNeg:
		return d.neg(d.div(a.Args[0], b))
	case Equal(a, b):
		return d.num(1)
	}
	return d.node(OpDiv, a, b)
}

func (d *differ) pow(a, b *Node) *Node {
	switch {
	case isNum(b, 1):
		return a
	case isNum(b, 0):
		return d.num(1)
	case isNum(a, 1):
		return d.num(1)
	case a.Op == OpNum && b.Op == OpNum && b.Value == math.Trunc(b.Value) && b.Value > 0 && b.Value <= 64:
		p := 1.0
		for range int(b.Value) {
			var ok bool
			if p, ok = exactProduct(p, a.Value); !ok {
				return d.node(OpPow, a, b)
			}
		}
		return d.num(p)
	}
	return d.node(OpPow, a, b)
}
