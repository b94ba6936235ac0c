// Package dynsys describes the dynamical systems that crosspec studies: maps
// f: D → R^d on a box domain D, given by formulas in a small language
// (package dynsys/expr), with exact Jacobians obtained by symbolic
// differentiation, an optional observable a(x) and its gradient, and for 1D
// maps the monotone laps on which the inverse branches live.
//
// A System is loaded from a TOML system file (DESIGN.md section 5) or from the
// built-in catalog (Catalog, Lookup), which carries every test problem of the
// project together with its published check values and their sources.
//
// A point mapped outside D has escaped (an open system); a closed system keeps
// D invariant, which Load checks on a grid of probe points. Both
// computational paths of crosspec, Ulam's method and the periodic-orbit
// expansions, stand on this package alone.
//
// Laps of a 1D map. The domain [lo, hi] is cut at the critical points of f
// (sign changes of f', found by a bracketed root finder to full precision),
// at the points where f or f' jump (located through the kinks of the formula:
// the arguments of abs, floor, mod, min, max and the comparisons) and at the
// breaks the system file gives. Between two cuts f is continuous and strictly
// monotone; each lap is extended continuously to its closed interval, so that
// the doubling map x → 2x mod 1 has the laps [0, 1/2] with image [0, 1] and
// [1/2, 1] with image [0, 1] (the convention of P. Gaspard, Chaos,
// Scattering and Statistical Mechanics, Cambridge UP, 1998). A map with
// infinitely many laps (the Gauss map x → 1/x mod 1) has its laps narrower
// than a tolerance left out; the measure of what is left out is reported.
package dynsys
