package ulam

import (
	"errors"
	"fmt"
	"math"

	"crosspec/dynsys"
)

// Settings controls Assemble and Compute. The zero value, or a nil
// *Settings, means the defaults given beside each field.
type Settings struct {
	// Cells is the number of cells of the grid. Default 1024. In d ≥ 2
	// dimensions the grid has about Cells cells shaped as close to cubes
	// as the domain allows (ShapeFor), unless Shape is given.
	Cells int
	// Shape sets the cells per dimension exactly. Default nil (from Cells).
	Shape []int
	// Points, when positive, makes a map of d ≥ 2 dimensions assembled
	// from Points test points per cell, placed on a tensor grid of q^d
	// points at the centres of a q×…×q subdivision of the cell,
	// q = round(Points^(1/d)) (at least 1). Default 0: a 2D map is
	// assembled from piecewise-affine images of its cells (see
	// assembleAffine2D), which converges as the cells shrink where test
	// points do not; a map of d ≥ 3 dimensions from 16 test points.
	Points int
	// Observable is the a(x) of the weight w = exp(β a). Default
	// NoObservable (w = 1).
	Observable Observable
	// Beta is β. Default 0.
	Beta float64
	// Derivative asks for the matrix dP/dβ (entries ∫ a w) beside P.
	// Default false.
	Derivative bool
	// Restrict chooses the cells kept. Default RestrictAuto.
	Restrict Restriction
	// Laps controls the lap scan of a 1D map. Default nil (dynsys's
	// defaults: laps narrower than 1e-9 of the domain are left out).
	Laps *dynsys.LapSettings
	// Quadrature is the number of Gauss–Legendre nodes per preimage piece
	// for a non-constant weight (1D). Default 8.
	Quadrature int
}

func (s *Settings) withDefaults() Settings {
	var out Settings
	if s != nil {
		out = *s
	}
	if out.Cells <= 0 {
		out.Cells = 1024
	}
	if out.Points < 0 {
		out.Points = 0
	}
	if out.Quadrature <= 0 {
		out.Quadrature = 8
	}
	return out
}

// ErrTooLarge is returned when a grid would not fit in memory indices.
var ErrTooLarge = errors.New("ulam: grid too large")

// Assemble builds the Ulam transfer matrix of sys (see Matrix for the
// convention), restricted as Settings.Restrict says. A 1D map is assembled
// exactly from its laps, a 2D one from piecewise-affine images of its cells
// (or test points, Settings.Points), one of d ≥ 3 dimensions by test points.
func Assemble(sys *dynsys.System, settings *Settings) (*Matrix, error) {
	set := settings.withDefaults()
	g, err := gridFor(sys, &set)
	if err != nil {
		return nil, err
	}
	wt, err := newWeight(sys, set.Observable, set.Beta, set.Derivative)
	if err != nil {
		return nil, err
	}
	var m *Matrix
	switch {
	case sys.Dim() == 1:
		m, err = assemble1D(sys, g, wt, &set)
	case sys.Dim() == 2 && set.Points == 0:
		m, err = assembleAffine2D(sys, g, wt)
	default:
		if set.Points == 0 {
			set.Points = 16
		}
		m, err = assembleSampled(sys, g, wt, &set)
	}
	if err != nil {
		return nil, err
	}
	return m.Restrict(set.Restrict, sys.Closed), nil
}

func gridFor(sys *dynsys.System, set *Settings) (Grid, error) {
	shape := set.Shape
	if shape == nil {
		shape = ShapeFor(sys.Lo, sys.Hi, set.Cells)
	}
	if len(shape) != sys.Dim() {
		return Grid{}, fmt.Errorf("ulam: grid of %d dimensions for the %d-dimensional system %s", len(shape), sys.Dim(), sys.Name)
	}
	total := 1.0
	for _, m := range shape {
		if m < 1 {
			return Grid{}, fmt.Errorf("ulam: grid shape %v: counts must be positive", shape)
		}
		total *= float64(m)
	}
	if total > math.MaxInt32 {
		return Grid{}, fmt.Errorf("%w: %v is %.3g cells, more than the 2³¹−1 the matrix indices hold", ErrTooLarge, shape, total)
	}
	return NewGrid(sys.Lo, sys.Hi, shape), nil
}
