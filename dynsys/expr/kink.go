package expr

// KinkKind says how a kink's argument locates the points where a
// derivative does not exist.
type KinkKind uint8

const (
	// KinkZero: no derivative where Arg = 0 (abs, min, max, comparisons).
	KinkZero KinkKind = iota
	// KinkInteger: a jump where Arg is an integer (floor, mod).
	KinkInteger
)

// A Kink is a place where a formula has no derivative: a corner of abs,
// min or max, a jump of floor, mod or a comparison.
//
//	function      Kind         Arg         Zero
//	abs(u)        KinkZero     u           u
//	min(a, b)     KinkZero     a - b       a - b
//	max(a, b)     KinkZero     a - b       a - b
//	a < b, ...    KinkZero     a - b       a - b
//	floor(u)      KinkInteger  u           sin(pi*u)
//	mod(x, m)     KinkInteger  x/m         sin(pi*x/m)
//
// (Arg and Zero are simplified as Diff simplifies, so mod(2*x, 1) has Arg
// 2*x and Zero sin(2*pi*x).)
//
// Zero is a continuous function that vanishes exactly at the kinks and
// changes sign across each simple one, so a caller can bracket kinks by
// sign changes of Zero and bisect. For the jumps of floor and mod, Arg is
// the better tool when it is monotone on an interval: the jumps are where
// Arg crosses the integers between its values at the ends, and Arg − k = 0
// can be solved for each such k without the rounding of sin(pi*·) at large
// arguments.
type Kink struct {
	Func string // "abs", "min", "max", "floor", "mod", "<", "<=", ">" or ">="
	Col  int    // column of the function name or comparison in the formula
	Kind KinkKind
	Arg  *Node
	Zero *Node
}

// Kinks returns the kinks of n, in the order of a left-to-right walk of the
// tree (operands before their operator). A derivative tree from Diff has
// its own kinks: the comparisons that abs, min and max turn into, carrying
// the columns of the functions they came from.
//
// Kinks lists the piecewise constructs only. Singularities of the smooth
// functions (1/u, log(u) and sqrt(u) at u = 0, tan at its poles) are not
// kinks; evaluation there gives ±Inf or NaN.
func Kinks(n *Node) []Kink {
	var kinks []Kink
	var walk func(*Node)
	walk = func(n *Node) {
		for _, a := range n.Args {
			walk(a)
		}
		d := &differ{col: n.Col}
		switch {
		case n.Op.isComparison():
			arg := d.sub(n.Args[0], n.Args[1])
			kinks = append(kinks, Kink{Func: symbol[n.Op], Col: n.Col, Kind: KinkZero, Arg: arg, Zero: arg})
		case n.Op == OpCall:
			switch n.Name {
			case "abs":
				kinks = append(kinks, Kink{Func: n.Name, Col: n.Col, Kind: KinkZero, Arg: n.Args[0], Zero: n.Args[0]})
			case "min", "max":
				arg := d.sub(n.Args[0], n.Args[1])
				kinks = append(kinks, Kink{Func: n.Name, Col: n.Col, Kind: KinkZero, Arg: arg, Zero: arg})
			case "floor", "mod":
				arg := n.Args[0]
				if n.Name == "mod" {
					arg = d.div(n.Args[0], n.Args[1])
				}
				zero := d.call("sin", d.mul(&Node{Op: OpConst, Name: "pi", Value: constants["pi"], Col: n.Col}, arg))
				kinks = append(kinks, Kink{Func: n.Name, Col: n.Col, Kind: KinkInteger, Arg: arg, Zero: zero})
			}
		}
	}
	walk(n)
	return kinks
}
