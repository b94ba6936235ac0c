// Package root finds roots of continuous functions of one variable inside a
// bracket [a, b] where the function changes sign.
//
// Brent computes the root by Brent's method, which combines bisection with
// inverse quadratic interpolation and the secant step: it never leaves the
// bracket, it converges superlinearly on smooth functions and it is never
// slower than bisection by more than a small factor. The algorithm is the one
// published in R. P. Brent, Algorithms for Minimization without Derivatives,
// Prentice-Hall, 1973, chapter 4 (procedure zero).
//
// Both computational paths of crosspec stand on it: the monotone laps of a 1D
// map are cut at the roots of f', Ulam's method needs the preimages of cell
// edges and the cycle search inverts each lap.
package root
