package expr

import (
	"math"
	"slices"
	"strconv"
	"strings"
)

// Op is the kind of a syntax tree node.
type Op uint8

// The node kinds. Binary operators have two Args (left, right), OpNeg has
// one, OpCall has as many as its function takes.
const (
	OpNum       Op = iota // number literal; Value holds it
	OpConst               // named constant pi or e; Name and Value hold it
	OpName                // variable or parameter; Name holds it
	OpNeg                 // -Args[0]
	OpAdd                 // Args[0] + Args[1]
	OpSub                 // Args[0] - Args[1]
	OpMul                 // Args[0] * Args[1]
	OpDiv                 // Args[0] / Args[1]
	OpPow                 // Args[0] ^ Args[1]
	OpLess                // Args[0] < Args[1], 1 or 0
	OpLessEq              // Args[0] <= Args[1], 1 or 0
	OpGreater             // Args[0] > Args[1], 1 or 0
	OpGreaterEq           // Args[0] >= Args[1], 1 or 0
	OpCall                // Name(Args...)
)

// symbol gives the spelling of the binary operators.
var symbol = [...]string{
	OpAdd: "+", OpSub: "-", OpMul: "*", OpDiv: "/", OpPow: "^",
	OpLess: "<", OpLessEq: "<=", OpGreater: ">", OpGreaterEq: ">=",
}

// isComparison reports whether op is one of < <= > >=.
func (op Op) isComparison() bool { return op >= OpLess && op <= OpGreaterEq }

// isBinary reports whether op has two operands written around a symbol.
func (op Op) isBinary() bool { return op >= OpAdd && op <= OpGreaterEq }

// A Node is one node of a formula's syntax tree. Trees built by Parse and
// Diff are treated as immutable: Diff shares unchanged subtrees of its input
// with its result, so a caller must not modify a Node after building it.
type Node struct {
	Op    Op
	Value float64 // OpNum, OpConst
	Name  string  // OpName, OpConst, OpCall
	Args  []*Node // operands
	// Col is the 1-based column (counted in characters) in the source
	// formula of the token that made this node: the operator symbol of a
	// binary node, the minus sign of a negation, the name of a call.
	// Nodes built by Diff carry the column of the node whose derivative
	// rule created them, so kinks of a derivative point at the source.
	Col int
}

// function describes one built-in function.
type function struct {
	arity int
	eval1 func(float64) float64 // one-argument functions
}

// functions lists the built-in functions by name.
var functions = map[string]function{
	"sin": {1, math.Sin}, "cos": {1, math.Cos}, "tan": {1, math.Tan},
	"exp": {1, math.Exp}, "log": {1, math.Log}, "sqrt": {1, math.Sqrt},
	"abs": {1, math.Abs}, "floor": {1, math.Floor},
	"sinh": {1, math.Sinh}, "cosh": {1, math.Cosh}, "tanh": {1, math.Tanh},
	"atan": {1, math.Atan},
	"mod":  {2, nil}, "min": {2, nil}, "max": {2, nil},
}

// constants lists the named constants.
var constants = map[string]float64{"pi": math.Pi, "e": math.E}

// Reserved returns, sorted, the names a system may not use for a variable
// or a parameter: the constants pi and e and the function names.
func Reserved() []string {
	names := make([]string, 0, len(functions)+len(constants))
	for name := range functions {
		names = append(names, name)
	}
	for name := range constants {
		names = append(names, name)
	}
	slices.Sort(names)
	return names
}

// IsReserved reports whether name is a constant or a function name.
func IsReserved(name string) bool {
	_, isFunc := functions[name]
	_, isConst := constants[name]
	return isFunc || isConst
}

// functionNames returns the sorted function names, for error messages.
func functionNames() string {
	names := make([]string, 0, len(functions))
	for name := range functions {
		names = append(names, name)
	}
	slices.Sort(names)
	return strings.Join(names, ", ")
}

// Names returns, sorted and without repeats, the variable and parameter
// names n references; constants and function names are not included.
func (n *Node) Names() []string {
	var names []string
	var walk func(*Node)
	walk = func(n *Node) {
		if n.Op == OpName {
			names = append(names, n.Name)
		}
		for _, a := range n.Args {
			walk(a)
		}
	}
	walk(n)
	slices.Sort(names)
	return slices.Compact(names)
}

// Equal reports whether a and b are the same tree: same kinds, names,
// values (compared bit for bit) and operands. Columns are ignored.
func Equal(a, b *Node) bool {
	if a.Op != b.Op || a.Name != b.Name || len(a.Args) != len(b.Args) ||
		math.Float64bits(a.Value) != math.Float64bits(b.Value) {
		return false
	}
	for i := range a.Args {
		if !Equal(a.Args[i], b.Args[i]) {
			return false
		}
	}
	return true
}

// Precedence levels, loosest first. A node printed where an operand of a
// higher level is required gets parentheses.
const (
	levelAny = iota
	levelCompare
	levelSum
	levelProduct
	levelUnary
	levelPower
	levelAtom
)

// level returns the precedence level of n as printed.
func (n *Node) level() int {
	switch n.Op {
	case OpNum:
		if math.Signbit(n.Value) {
			return levelUnary // printed with a leading minus
		}
		return levelAtom
	case OpNeg:
		return levelUnary
	case OpAdd, OpSub:
		return levelSum
	case OpMul, OpDiv:
		return levelProduct
	case OpPow:
		return levelPower
	case OpLess, OpLessEq, OpGreater, OpGreaterEq:
		return levelCompare
	}
	return levelAtom
}

// String returns n in canonical form, with the fewest parentheses that keep
// its structure: Parse(n.String()) gives a tree Equal to n for every tree
// built by Parse or Diff. Sums, differences and comparisons are spaced
// ("1 - a*x^2 + y"); numbers print in the shortest form that reads back to
// the same float64.
func (n *Node) String() string {
	var b strings.Builder
	n.write(&b)
	return b.String()
}

// write appends the canonical form of n to b.
func (n *Node) write(b *strings.Builder) {
	switch n.Op {
	case OpNum:
		b.WriteString(strconv.FormatFloat(n.Value, 'g', -1, 64))
	case OpConst, OpName:
		b.WriteString(n.Name)
	case OpNeg:
		b.WriteByte('-')
		n.Args[0].writeAt(b, levelUnary)
	case OpCall:
		b.WriteString(n.Name)
		b.WriteByte('(')
		for i, a := range n.Args {
			if i > 0 {
				b.WriteString(", ")
			}
			a.write(b)
		}
		b.WriteByte(')')
	default:
		var left, right int
		sep := ""
		switch lv := n.level(); lv {
		case levelSum:
			left, right, sep = levelSum, levelProduct, " "
		case levelProduct:
			left, right = levelProduct, levelUnary
		case levelPower:
			left, right = levelAtom, levelUnary
		case levelCompare:
			left, right, sep = levelSum, levelSum, " "
		}
		n.Args[0].writeAt(b, left)
		b.WriteString(sep)
		b.WriteString(symbol[n.Op])
		b.WriteString(sep)
		n.Args[1].writeAt(b, right)
	}
}

// writeAt writes n where an operand of at least level min is required.
func (n *Node) writeAt(b *strings.Builder, min int) {
	if n.level() >= min {
		n.write(b)
		return
	}
	b.WriteByte('(')
	n.write(b)
	b.WriteByte(')')
}
