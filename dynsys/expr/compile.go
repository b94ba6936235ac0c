package expr

import (
	"fmt"
	"math"
	"slices"
	"strings"
	"sync"
)

// A NameError reports a name that is neither a variable, a parameter nor a
// constant. Known lists, sorted, the variables and parameters that are
// defined, so the message can suggest them.
type NameError struct {
	Output int // index of the formula in the list given to Compile
	Name   string
	Col    int // 1-based column of the name in its formula
	Known  []string
}

func (e *NameError) Error() string {
	return fmt.Sprintf("expr: formula %d, column %d: unknown name %q (defined: %s)",
		e.Output+1, e.Col, e.Name, strings.Join(e.Known, ", "))
}

// code is an operation of the compiled program.
type code uint8

const (
	cConst code = iota
	cVar
	cNeg
	cSquare // a*a, from a^2
	cCube   // a*a*a, from a^3
	cRecip  // 1/a, from a^-1
	cAbs
	cSqrt // also a^0.5
	cFloor
	cFunc // unary library function unary[fn]
	cAdd
	cSub
	cMul
	cDiv
	cPow // math.Pow
	cLess
	cLessEq
	cGreater
	cGreaterEq
	cMin // a if a <= b, else b
	cMax // a if a >= b, else b
	cMod // a - b*floor(a/b)
)

// isUnary reports whether c takes one operand.
func (c code) isUnary() bool { return c >= cNeg && c <= cFunc }

// unary lists the library functions evaluated through cFunc.
var unary = []struct {
	name string
	f    func(float64) float64
}{
	{"sin", math.Sin}, {"cos", math.Cos}, {"tan", math.Tan}, {"exp", math.Exp},
	{"log", math.Log}, {"sinh", math.Sinh}, {"cosh", math.Cosh},
	{"tanh", math.Tanh}, {"atan", math.Atan},
}

// apply evaluates one operation. Every evaluation path (constant folding,
// Eval, Scalar, the batch interpreter) computes each operation by the same
// floating-point expression as here, so all paths agree bit for bit.
// Explicit float64 conversions forbid fused multiply-adds.
func apply(c code, fn uint8, a, b float64) float64 {
	switch c {
	case cNeg:
		return -a
	case cSquare:
		return a * a
	case cCube:
		return float64(a*a) * a
	case cRecip:
		return 1 / a
	case cAbs:
		return math.Abs(a)
	case cSqrt:
		return math.Sqrt(a)
	case cFloor:
		return math.Floor(a)
	case cFunc:
		return unary[fn].f(a)
	case cAdd:
		return a + b
	case cSub:
		return a - b
	case cMul:
		return a * b
	case cDiv:
		return a / b
	case cPow:
		return math.Pow(a, b)
	case cLess:
		return boolValue(a < b)
	case cLessEq:
		return boolValue(a <= b)
	case cGreater:
		return boolValue(a > b)
	case cGreaterEq:
		return boolValue(a >= b)
	case cMin:
		if a <= b {
			return a
		}
		return b
	case cMax:
		if a >= b {
			return a
		}
		return b
	case cMod:
		return a - float64(b*math.Floor(a/b))
	}
	panic("expr: unknown operation")
}

func boolValue(t bool) float64 {
	if t {
		return 1
	}
	return 0
}

// value is one node of the compiled expression DAG: identical subtrees of
// all formulas of a program share one value.
type value struct {
	code code
	fn   uint8   // cFunc: index into unary
	a, b int32   // operand value ids
	c    float64 // cConst: the constant; cVar: unused
	v    int     // cVar: variable index
}

// dag holds the values of a program in topological order (operands before
// their users), with hash-consing so that equal values are stored once.
type dag struct {
	values []value
	index  map[valueKey]int32
}

func (g *dag) intern(v value) int32 {
	if v.code != cConst && v.code != cVar {
		// Operations whose operands are all constants fold to a constant.
		a := g.values[v.a]
		if v.code.isUnary() {
			if a.code == cConst {
				v = value{code: cConst, c: apply(v.code, v.fn, a.c, 0)}
			}
		} else if b := g.values[v.b]; a.code == cConst && b.code == cConst {
			v = value{code: cConst, c: apply(v.code, v.fn, a.c, b.c)}
		}
	}
	// Constants are keyed by their bits, so 0 and -0 stay apart and NaNs
	// merge.
	key := valueKey{v.code, v.fn, v.a, v.b, math.Float64bits(v.c), v.v}
	if id, ok := g.index[key]; ok {
		return id
	}
	id := int32(len(g.values))
	g.values = append(g.values, v)
	g.index[key] = id
	return id
}

// valueKey identifies a value for hash-consing.
type valueKey struct {
	code  code
	fn    uint8
	a, b  int32
	cbits uint64
	v     int
}

func (g *dag) constant(c float64) int32 { return g.intern(value{code: cConst, c: c}) }

// compiler lowers syntax trees into the dag.
type compiler struct {
	g      dag
	vars   map[string]int
	params map[string]float64
	output int
}

// nameError builds the error for an unknown name.
func (cp *compiler) nameError(n *Node) error {
	known := make([]string, 0, len(cp.vars)+len(cp.params))
	for name := range cp.vars {
		known = append(known, name)
	}
	for name := range cp.params {
		known = append(known, name)
	}
	slices.Sort(known)
	return &NameError{Output: cp.output, Name: n.Name, Col: n.Col, Known: known}
}

var binaryCodes = map[Op]code{
	OpAdd: cAdd, OpSub: cSub, OpMul: cMul, OpDiv: cDiv, OpPow: cPow,
	OpLess: cLess, OpLessEq: cLessEq, OpGreater: cGreater, OpGreaterEq: cGreaterEq,
}

func (cp *compiler) lower(n *Node) (int32, error) {
	g := &cp.g
	switch n.Op {
	case OpNum, OpConst:
		return g.constant(n.Value), nil
	case OpName:
		if i, ok := cp.vars[n.Name]; ok {
			return g.intern(value{code: cVar, v: i}), nil
		}
		if c, ok := cp.params[n.Name]; ok {
			return g.constant(c), nil
		}
		if c, ok := constants[n.Name]; ok {
			return g.constant(c), nil
		}
		return 0, cp.nameError(n)
	}
	args := make([]int32, len(n.Args))
	for i, a := range n.Args {
		var err error
		if args[i], err = cp.lower(a); err != nil {
			return 0, err
		}
	}
	switch n.Op {
	case OpNeg:
		return g.intern(value{code: cNeg, a: args[0]}), nil
	case OpPow:
		if e := g.values[args[1]]; e.code == cConst && g.values[args[0]].code != cConst {
			switch e.c {
			case 1:
				return args[0], nil
			case 2:
				return g.intern(value{code: cSquare, a: args[0]}), nil
			case 3:
				return g.intern(value{code: cCube, a: args[0]}), nil
			case -1:
				return g.intern(value{code: cRecip, a: args[0]}), nil
			case 0.5:
				return g.intern(value{code: cSqrt, a: args[0]}), nil
			}
		}
		return g.intern(value{code: cPow, a: args[0], b: args[1]}), nil
	case OpCall:
		switch n.Name {
		case "abs":
			return g.intern(value{code: cAbs, a: args[0]}), nil
		case "sqrt":
			return g.intern(value{code: cSqrt, a: args[0]}), nil
		case "floor":
			return g.intern(value{code: cFloor, a: args[0]}), nil
		case "min":
			return g.intern(value{code: cMin, a: args[0], b: args[1]}), nil
		case "max":
			return g.intern(value{code: cMax, a: args[0], b: args[1]}), nil
		case "mod":
			return g.intern(value{code: cMod, a: args[0], b: args[1]}), nil
		}
		for i, u := range unary {
			if u.name == n.Name {
				return g.intern(value{code: cFunc, fn: uint8(i), a: args[0]}), nil
			}
		}
		panic(fmt.Sprintf("expr: Compile: unknown function %q", n.Name))
	}
	if c, ok := binaryCodes[n.Op]; ok {
		return g.intern(value{code: c, a: args[0], b: args[1]}), nil
	}
	panic(fmt.Sprintf("expr: Compile: unknown node kind %d", n.Op))
}

// A Program evaluates m compiled formulas over d variables. It is
// immutable after Compile, so all of its methods are safe for concurrent
// use by many goroutines; a Batch is the one piece of mutable state and
// belongs to one goroutine.
type Program struct {
	d, m     int
	formulas []*Node
	g        dag
	outputs  []int32
	eval     []func([]float64) float64 // one closure tree per output
	scalar   func(float64) float64     // d = m = 1 only
	kinks    [][]compiledKink          // per output
	batch    batchCode
	pool     sync.Pool // of *Batch, for EvalBatch
}

// compiledKink is a Kink with its argument compiled.
type compiledKink struct {
	Kink
	arg func([]float64) float64
}

// Compile compiles formulas over the variables vars (x[i] is vars[i]),
// folding the parameters and the constants into the code, and folding
// every subtree whose operands are all constant. Identical subtrees shared
// by several formulas are evaluated once by the batch interpreter.
//
// An unknown name returns a *NameError. A variable or parameter that is a
// reserved name, a repeated variable, or a name that is both a variable and
// a parameter returns an error.
func Compile(formulas []*Node, vars []string, params map[string]float64) (*Program, error) {
	cp := &compiler{g: dag{index: make(map[valueKey]int32)}, vars: make(map[string]int), params: params}
	for i, name := range vars {
		if IsReserved(name) {
			return nil, fmt.Errorf("expr: variable %q is a reserved name", name)
		}
		if _, dup := cp.vars[name]; dup {
			return nil, fmt.Errorf("expr: variable %q is listed twice", name)
		}
		if _, dup := params[name]; dup {
			return nil, fmt.Errorf("expr: %q is both a variable and a parameter", name)
		}
		cp.vars[name] = i
	}
	for name := range params {
		if IsReserved(name) {
			return nil, fmt.Errorf("expr: parameter %q is a reserved name", name)
		}
	}
	p := &Program{d: len(vars), m: len(formulas), formulas: formulas}
	for k, f := range formulas {
		if f == nil {
			panic("expr: Compile: nil formula")
		}
		cp.output = k
		id, err := cp.lower(f)
		if err != nil {
			return nil, err
		}
		p.outputs = append(p.outputs, id)
	}
	sliceVar := func(i int) func([]float64) float64 { return func(x []float64) float64 { return x[i] } }
	memo := make(map[int32]func([]float64) float64)
	for _, id := range p.outputs {
		p.eval = append(p.eval, buildClosure(&cp.g, id, sliceVar, memo))
	}
	if p.d == 1 && p.m == 1 {
		p.scalar = buildClosure(&cp.g, p.outputs[0],
			func(int) func(float64) float64 { return func(x float64) float64 { return x } },
			make(map[int32]func(float64) float64))
	}
	p.kinks = make([][]compiledKink, p.m)
	for k, f := range formulas {
		for _, kink := range Kinks(f) {
			// The kink arguments use only names the formula itself uses,
			// which all resolved above.
			cp.output = k
			id, err := cp.lower(kink.Arg)
			if err != nil {
				return nil, err
			}
			arg := buildClosure(&cp.g, id, sliceVar, memo)
			p.kinks[k] = append(p.kinks[k], compiledKink{kink, arg})
		}
	}
	p.g = cp.g
	p.batch = compileBatch(&p.g, p.outputs)
	p.pool.New = func() any { return p.NewBatch() }
	return p, nil
}

// NumVars returns d, the number of variables a point has.
func (p *Program) NumVars() int { return p.d }

// NumOut returns m, the number of formulas the program evaluates.
func (p *Program) NumOut() int { return p.m }

// Eval evaluates the m formulas at the point x (len d) into dst (len m).
// It does not allocate.
func (p *Program) Eval(dst, x []float64) {
	if len(x) != p.d || len(dst) != p.m {
		panic(fmt.Sprintf("expr: Eval: len(dst), len(x) = %d, %d, want %d, %d", len(dst), len(x), p.m, p.d))
	}
	for k, f := range p.eval {
		dst[k] = f(x)
	}
}

// Scalar evaluates a program of one formula over one variable at x. It is
// the fast path for 1D maps and panics for any other program.
func (p *Program) Scalar(x float64) float64 {
	if p.scalar == nil {
		panic(fmt.Sprintf("expr: Scalar needs 1 variable and 1 formula, program has %d and %d", p.d, p.m))
	}
	return p.scalar(x)
}

// A NoDerivativeError reports a point where a formula has no derivative:
// it sits exactly on a kink (see Kinks) of function Func at column Col of
// formula Output.
type NoDerivativeError struct {
	Output  int
	Formula string // the formula in canonical form
	Func    string
	Col     int
}

func (e *NoDerivativeError) Error() string {
	return fmt.Sprintf("expr: formula %d (%s) has no derivative here: %s at column %d is at a kink",
		e.Output+1, e.Formula, e.Func, e.Col)
}

// Check reports whether the point x (len d) sits exactly on a kink of one
// of the program's formulas, where the derivative does not exist: it
// returns a *NoDerivativeError for the first such kink (formulas in order,
// kinks in the order of Kinks), or nil. A kink argument that evaluates to
// NaN does not count as a kink.
func (p *Program) Check(x []float64) error {
	if len(x) != p.d {
		panic(fmt.Sprintf("expr: Check: len(x) = %d, want %d", len(x), p.d))
	}
	for k, kinks := range p.kinks {
		for _, kink := range kinks {
			a := kink.arg(x)
			if kink.Kind == KinkZero && a == 0 || kink.Kind == KinkInteger && a == math.Floor(a) {
				return &NoDerivativeError{Output: k, Formula: p.formulas[k].String(), Func: kink.Func, Col: kink.Col}
			}
		}
	}
	return nil
}

// buildClosure returns a closure tree computing value id of g, with the
// variables loaded by leaf. E is []float64 for Eval and float64 for
// Scalar; each instantiation is compiled separately. Operations with a
// constant operand get closures that hold the constant, saving a call.
func buildClosure[E any](g *dag, id int32, leaf func(int) func(E) float64, memo map[int32]func(E) float64) func(E) float64 {
	if f, ok := memo[id]; ok {
		return f
	}
	v := g.values[id]
	var f func(E) float64
	switch {
	case v.code == cConst:
		c := v.c
		f = func(E) float64 { return c }
	case v.code == cVar:
		f = leaf(v.v)
	case v.code.isUnary():
		f = unaryClosure(v, buildClosure(g, v.a, leaf, memo))
	default:
		a, b := g.values[v.a], g.values[v.b]
		switch {
		case b.code == cConst:
			f = binaryConstRight(v.code, buildClosure(g, v.a, leaf, memo), b.c)
		case a.code == cConst:
			f = binaryConstLeft(v.code, a.c, buildClosure(g, v.b, leaf, memo))
		default:
			f = binaryClosure(v.code, buildClosure(g, v.a, leaf, memo), buildClosure(g, v.b, leaf, memo))
		}
	}
	memo[id] = f
	return f
}

func unaryClosure[E any](v value, a func(E) float64) func(E) float64 {
	switch v.code {
	case cNeg:
		return func(x E) float64 { return -a(x) }
	case cSquare:
		return func(x E) float64 { t := a(x); return t * t }
	case cCube:
		return func(x E) float64 { t := a(x); return float64(t*t) * t }
	case cRecip:
		return func(x E) float64 { return 1 / a(x) }
	case cAbs:
		return func(x E) float64 { return math.Abs(a(x)) }
	case cSqrt:
		return func(x E) float64 { return math.Sqrt(a(x)) }
	case cFloor:
		return func(x E) float64 { return math.Floor(a(x)) }
	}
	fn := unary[v.fn].f
	return func(x E) float64 { return fn(a(x)) }
}

func binaryConstRight[E any](c code, a func(E) float64, b float64) func(E) float64 {
	switch c {
	case cAdd:
		return func(x E) float64 { return a(x) + b }
	case cSub:
		return func(x E) float64 { return a(x) - b }
	case cMul:
		return func(x E) float64 { return a(x) * b }
	case cDiv:
		return func(x E) float64 { return a(x) / b }
	case cLess:
		return func(x E) float64 { return boolValue(a(x) < b) }
	case cLessEq:
		return func(x E) float64 { return boolValue(a(x) <= b) }
	case cGreater:
		return func(x E) float64 { return boolValue(a(x) > b) }
	case cGreaterEq:
		return func(x E) float64 { return boolValue(a(x) >= b) }
	}
	return func(x E) float64 { return apply(c, 0, a(x), b) }
}

func binaryConstLeft[E any](c code, a float64, b func(E) float64) func(E) float64 {
	switch c {
	case cAdd:
		return func(x E) float64 { return a + b(x) }
	case cSub:
		return func(x E) float64 { return a - b(x) }
	case cMul:
		return func(x E) float64 { return a * b(x) }
	case cDiv:
		return func(x E) float64 { return a / b(x) }
	}
	return func(x E) float64 { return apply(c, 0, a, b(x)) }
}

func binaryClosure[E any](c code, a, b func(E) float64) func(E) float64 {
	switch c {
	case cAdd:
		return func(x E) float64 { return a(x) + b(x) }
	case cSub:
		return func(x E) float64 { return a(x) - b(x) }
	case cMul:
		return func(x E) float64 { return a(x) * b(x) }
	case cDiv:
		return func(x E) float64 { return a(x) / b(x) }
	}
	return func(x E) float64 { return apply(c, 0, a(x), b(x)) }
}
