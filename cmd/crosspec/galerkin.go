package main

import (
	"context"
	"fmt"
	"time"

	"crosspec/dynsys"
	"crosspec/ulam"
	"crosspec/ulam/galerkin"
)

// discretization is the basis of the first path: plain Ulam (piecewise
// constants), piecewise Legendre polynomials of a degree, or a global
// Chebyshev basis.
type discretization struct {
	basis  galerkin.Basis
	degree int
}

// plain reports whether the discretization is Ulam's method itself.
func (d discretization) plain() bool { return d.basis == galerkin.Cells && d.degree == 0 }

func (d discretization) String() string {
	if d.basis == galerkin.Chebyshev {
		return "Chebyshev basis"
	}
	if d.degree == 0 {
		return "Ulam (piecewise constants)"
	}
	return fmt.Sprintf("piecewise polynomials of degree %d", d.degree)
}

func parseDiscretization(basis string, degree int) (discretization, error) {
	b, err := galerkin.ParseBasis(basis)
	if err != nil {
		return discretization{}, usagef("--basis %q: expected cells or chebyshev", basis)
	}
	if degree < 0 {
		return discretization{}, usagef("--degree %d: expected 0 or more", degree)
	}
	return discretization{basis: b, degree: degree}, nil
}

// runGalerkin computes q on one size of a higher-order basis: size is the
// number of cells (cells basis) or of Chebyshev points.
func runGalerkin(s *dynsys.System, q dynsys.Quantity, d discretization, size int, beta float64, solve *ulam.SolveSettings) (ulamRunJSON, galerkin.Result, error) {
	if s.Dim() != 1 {
		return ulamRunJSON{}, galerkin.Result{}, usagef("--degree and --basis chebyshev discretize 1D maps only; %s has dimension %d", s.Name, s.Dim())
	}
	set := &galerkin.Settings{Basis: d.basis, Degree: d.degree, Beta: beta}
	if d.basis == galerkin.Chebyshev {
		set.Size = size
	} else {
		set.Cells = size
	}
	start := time.Now()
	res, err := galerkin.Compute(s, q, set, solve)
	if err != nil {
		return ulamRunJSON{}, res, &numericalError{err}
	}
	run := ulamRunJSON{Cells: res.Dim, GridCells: size, NNZ: res.NNZ, Residuals: res.Residuals, Value: res.Value,
		Seconds: time.Since(start).Seconds(), MatVecs: res.Stats.MatVecs, Floor: res.Floor}
	for _, z := range res.Eigenvalues {
		run.Eigenvalues = append(run.Eigenvalues, jsonComplex{real(z), imag(z)})
	}
	return run, res, nil
}

// runGalerkinUntil is runGalerkin that returns errStopped at once when ctx
// is cancelled (Ctrl-C).
func runGalerkinUntil(ctx context.Context, s *dynsys.System, q dynsys.Quantity, d discretization, size int, beta float64, solve *ulam.SolveSettings) (ulamRunJSON, galerkin.Result, error) {
	type outcome struct {
		run ulamRunJSON
		res galerkin.Result
	}
	o, err := whileRunning(ctx, func() (outcome, error) {
		run, res, err := runGalerkin(s, q, d, size, beta, solve)
		return outcome{run, res}, err
	})
	return o.run, o.res, err
}
