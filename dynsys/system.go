package dynsys

import (
	"fmt"
	"math"

	"crosspec/dynsys/expr"
)

// Param is one named parameter of a system and its value.
type Param struct {
	Name  string
	Value float64
}

// Reference is a value of a quantity known from outside the project, with
// its source, as carried by catalog systems (`[[reference]]` tables of a
// system file).
type Reference struct {
	// Quantity is the quantity the value belongs to.
	Quantity Quantity
	// Index is the eigenvalue index k for Eigenvalues (0 = leading).
	Index int
	// Beta is the inverse temperature β of a Pressure or weighted
	// Eigenvalues reference.
	Beta float64
	// Value is the known value.
	Value float64
	// Source names where the value is published: author, venue, year; or
	// "common practice, no source"; "from memory" where that is the case.
	Source string
}

// System is a map f on a box domain with its exact Jacobian and optional
// observable. Its methods are safe for concurrent use.
type System struct {
	// Name is the short name used in tables.
	Name string
	// Description says what the system is, in a sentence.
	Description string
	// File is where the system came from: a file path, or "catalog:NAME".
	File string
	// Content is the text of the system file, for run manifests.
	Content []byte
	// Vars names the coordinates, one a dimension.
	Vars []string
	// Params are the parameters after overrides, sorted by name.
	Params []Param
	// Lo and Hi are the corners of the domain box.
	Lo, Hi []float64
	// Closed reports whether the domain is declared invariant.
	Closed bool
	// Breaks are lap boundaries of a 1D map given by the file.
	Breaks []float64
	// SymbolsText is the formula that names a point's region (d ≥ 2); empty
	// if none.
	SymbolsText string
	// Forbidden lists the itineraries that never occur (pruning).
	Forbidden []string
	// References are the known values of this system's quantities.
	References []Reference

	mapNodes  []*expr.Node
	jacNodes  []*expr.Node // row-major, ∂f_i/∂x_j at i*d+j
	obsNode   *expr.Node
	gradNodes []*expr.Node
	symNode   *expr.Node

	mapProg, jacProg, obsProg, gradProg, symProg *expr.Program
	kinks                                        []lapKink
}

// Dim returns the dimension d of the phase space.
func (s *System) Dim() int { return len(s.Vars) }

// Map writes f(x) into dst. Both have length d.
func (s *System) Map(dst, x []float64) {
	s.check("Map", dst, x)
	s.mapProg.Eval(dst, x)
}

// MapBatch writes f of the n points in xs (n×d, row-major) into dst (n×d,
// row-major). It does not allocate once warmed up and is safe for concurrent
// use.
func (s *System) MapBatch(dst, xs []float64) {
	if len(dst) != len(xs) || len(xs)%s.Dim() != 0 {
		panic(fmt.Sprintf("dynsys: MapBatch: lengths %d and %d for dimension %d", len(dst), len(xs), s.Dim()))
	}
	s.mapProg.EvalBatch(dst, xs)
}

// Jacobian writes the d×d Jacobian Df(x) into dst, row-major:
// dst[i*d+j] = ∂f_i/∂x_j.
func (s *System) Jacobian(dst, x []float64) {
	d := s.Dim()
	if len(dst) != d*d || len(x) != d {
		panic(fmt.Sprintf("dynsys: Jacobian: lengths %d and %d for dimension %d", len(dst), len(x), d))
	}
	s.jacProg.Eval(dst, x)
}

// F returns f(x) of a 1D map.
func (s *System) F(x float64) float64 { return s.mapProg.Scalar(x) }

// DF returns f'(x) of a 1D map.
func (s *System) DF(x float64) float64 { return s.jacProg.Scalar(x) }

// HasObservable reports whether the system defines an observable a(x).
func (s *System) HasObservable() bool { return s.obsNode != nil }

// Observable returns a(x); zero when the system has none.
func (s *System) Observable(x []float64) float64 {
	if s.obsProg == nil {
		return 0
	}
	var out [1]float64
	s.obsProg.Eval(out[:], x)
	return out[0]
}

// ObservableGradient writes the gradient of a at x into dst (length d);
// zeros when the system has no observable.
func (s *System) ObservableGradient(dst, x []float64) {
	s.check("ObservableGradient", dst, x)
	if s.gradProg == nil {
		clear(dst)
		return
	}
	s.gradProg.Eval(dst, x)
}

// HasSymbols reports whether the system file names regions by a symbols
// formula (d ≥ 2).
func (s *System) HasSymbols() bool { return s.symNode != nil }

// Symbol returns the region index of x given by the symbols formula,
// rounded to the nearest integer; -1 when the system has none or the value
// is not finite.
func (s *System) Symbol(x []float64) int {
	if s.symProg == nil {
		return -1
	}
	var out [1]float64
	s.symProg.Eval(out[:], x)
	if math.IsNaN(out[0]) || math.IsInf(out[0], 0) {
		return -1
	}
	return int(math.Round(out[0]))
}

// Inside reports whether x lies in the closed domain box.
func (s *System) Inside(x []float64) bool {
	for i, v := range x {
		if !(v >= s.Lo[i] && v <= s.Hi[i]) {
			return false
		}
	}
	return true
}

// Param returns the value of the named parameter.
func (s *System) Param(name string) (float64, bool) {
	for _, p := range s.Params {
		if p.Name == name {
			return p.Value, true
		}
	}
	return 0, false
}

// MapFormulas returns the map's formulas in canonical form.
func (s *System) MapFormulas() []string { return nodeStrings(s.mapNodes) }

// JacobianFormulas returns the Jacobian's entries in canonical form,
// row-major.
func (s *System) JacobianFormulas() []string { return nodeStrings(s.jacNodes) }

// ObservableFormula returns the observable in canonical form, or "".
func (s *System) ObservableFormula() string {
	if s.obsNode == nil {
		return ""
	}
	return s.obsNode.String()
}

// GradientFormulas returns the gradient of the observable in canonical
// form, or nil.
func (s *System) GradientFormulas() []string { return nodeStrings(s.gradNodes) }

// Known returns the references of quantity q.
func (s *System) Known(q Quantity) []Reference {
	var out []Reference
	for _, r := range s.References {
		if r.Quantity == q {
			out = append(out, r)
		}
	}
	return out
}

func nodeStrings(nodes []*expr.Node) []string {
	if nodes == nil {
		return nil
	}
	out := make([]string, len(nodes))
	for i, n := range nodes {
		out[i] = n.String()
	}
	return out
}

func (s *System) check(method string, dst, x []float64) {
	if d := s.Dim(); len(dst) != d || len(x) != d {
		panic(fmt.Sprintf("dynsys: %s: lengths %d and %d for dimension %d", method, len(dst), len(x), d))
	}
}
