// Package expr is the formula language of crosspec: it parses the formulas
// of a system file, differentiates them symbolically to give exact
// Jacobians, and compiles them to fast evaluation of one point or of many.
//
// # Language
//
// A formula is built from
//
//   - numbers: 2, 0.5, .5, 1., 1e-3, 2.5E+4;
//   - names of variables and parameters: a letter or "_" followed by
//     letters, digits and "_";
//   - the constants pi and e;
//   - the operators, loosest first:
//     comparisons < <= > >= (value 1 when true, 0 when false; they do not
//     chain), then + and -, then * and /, then unary minus, then ^ (power,
//     right-associative); so -x^2 is -(x^2), 2^3^2 is 2^9 = 512, and 2^-1
//     is 2^(-1); parentheses group;
//   - the functions sin cos tan exp log sqrt abs floor sinh cosh tanh atan
//     of one argument, and of two: mod(x, m) = x − m·floor(x/m) (the
//     result has the sign of m, unlike math.Mod), min(a, b) (a if a <= b,
//     else b) and max(a, b) (a if a >= b, else b).
//
// Function names and constants are reserved (see Reserved): a system may
// not use them for its variables or parameters. There is no implicit
// multiplication: 2x is an error, 2*x is meant.
//
// Parse returns a *SyntaxError for malformed text, with the column and
// what was expected there. Node.String prints the canonical form, which
// parses back to the same tree.
//
// # Derivatives
//
// Diff applies the rules of calculus, (u v)' = u'v + u v', (u/v)' = u'/v −
// u v'/v², (u^c)' = c u^(c−1) u' for u^c with c free of the variable,
// (u^v)' = u^v (v' log u + v u'/u) otherwise, and the chain rule with
// sin' = cos, cos' = −sin, tan' = 1/cos², exp' = exp, log' = 1/u,
// sqrt' = 1/(2 sqrt), sinh' = cosh, cosh' = sinh, tanh' = 1 − tanh²,
// atan' = 1/(1 + u²). The piecewise functions get derivatives written in
// the language itself:
//
//	abs(u)'    = ((u > 0) - (u < 0))*u'
//	floor(u)'  = 0
//	mod(x, m)' = x' - m'*floor(x/m)
//	min(a, b)' = (a <= b)*a' + (a > b)*b'
//	max(a, b)' = (a >= b)*a' + (a < b)*b'
//	(a < b)'   = 0 (and the same for <=, >, >=)
//
// Each of them has points without a derivative (a corner or a jump);
// Kinks lists them with their column and a function that vanishes there,
// and Program.Check reports a point that sits exactly on one. The results
// of Diff are simplified (zero and unit terms removed, exact arithmetic on
// numbers folded, numeric factors gathered in front) so that they read
// well when printed.
//
// # Evaluation
//
// Compile resolves names to variable slots or folds them (parameters,
// constants, and every subtree of constants) and merges identical
// subtrees. A Program evaluates its formulas at one point (Eval, and
// Scalar for a 1D map) through a tree of closures, or at many points
// (EvalBatch, Batch.Eval) through a vectorised interpreter: each
// instruction runs over a block of 256 points held in columns, so that
// instruction dispatch is paid once per block and the inner loops are
// plain arithmetic on arrays. Powers with exponents 2, 3, −1 and 1/2
// compile to multiplication, division and square root. All evaluation
// paths compute each operation by the same floating-point expression, so
// they agree bit for bit.
//
// The language and its rules are common practice (no source); the
// derivative rules are those of any calculus text.
package expr
