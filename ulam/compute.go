package ulam

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/cmplx"

	"crosspec/dynsys"
	"crosspec/dynsys/root"
	"crosspec/ulam/krylov"
)

// SolveSettings controls the eigen-solves of Compute. The zero value means
// the defaults beside each field.
type SolveSettings struct {
	// Eigenvalues is the number k of leading eigenvalues reported.
	// Default 1 (2 for the decay rate).
	Eigenvalues int
	// Tol is the relative residual ‖P x − λ x‖ ≤ Tol·‖P‖ at which an
	// eigenpair counts as converged. Default 1e-12.
	Tol float64
	// SubspaceSize and MaxRestarts are passed to the Krylov solver.
	// Default 0: its defaults.
	SubspaceSize, MaxRestarts int
	// Density asks for the leading left eigenvector, the (conditionally)
	// invariant density, whatever the quantity. Default false.
	Density bool
}

// Result is what Compute returns for one grid.
type Result struct {
	// Quantity is what Value estimates.
	Quantity dynsys.Quantity
	// Value is the estimate of Quantity.
	Value float64
	// Eigenvalues are the leading eigenvalues of P (at the quantity's
	// weight), by decreasing modulus.
	Eigenvalues []complex128
	// Residuals are their relative residuals.
	Residuals []float64
	// Matrix is the transfer matrix the eigenvalues belong to (for the
	// dimension, the one at the root).
	Matrix *Matrix
	// Density is the leading left eigenvector divided by the cell measure
	// and normalised to integral 1, one value per kept cell; nil unless
	// the quantity needs it or SolveSettings.Density is set, and nil with
	// DensityErr set when it was asked for by SolveSettings.Density alone
	// and the leading eigenvalue is not isolated (krylov.ErrLeadingMismatch:
	// several invariant measures, no unique density).
	Density []float64
	// DensityErr says why Density is nil although it was asked for.
	DensityErr error
	// Derivative is dλ_0/dβ for mean and lyapunov; zero otherwise.
	Derivative float64
	// Assemblies counts the matrices built (more than one for the
	// dimension's root search).
	Assemblies int
	// Stats sums the work of all eigen-solves.
	Stats krylov.Stats
	// Status is krylov.Converged when every solve converged.
	Status krylov.Status
}

// Compute estimates quantity q of sys on the grid of settings
// (DESIGN.md section 4): eigenvalues and pressure of P at the weight
// exp(β a) with a the system's observable; escape rate −ln λ_0 of the
// unweighted P; mean ⟨a⟩ = d ln λ_0/dβ = ⟨u, P' v⟩/(λ_0 ⟨u, v⟩) with u, v
// the left and right leading eigenvectors and P' = dP/dβ; lyapunov the
// same with a = ln |f'|; dimension the root s of λ_0 = 1 for the weight
// |f'|^(1−s) (by Brent's method on ln λ_0(s) over [0, 1], the
// Jacobian being absorbed by the change of variables, DESIGN.md section 3);
// decay rate −ln |λ_1/λ_0|.
func Compute(sys *dynsys.System, q dynsys.Quantity, settings *Settings, solve *SolveSettings) (Result, error) {
	return ComputeContext(context.Background(), sys, q, settings, solve)
}

// ComputeContext is Compute, stopping with the context's error when ctx is
// cancelled: it looks between its steps (assembly, eigen-solve,
// eigenvectors, each eigen-solve of the dimension's root search), so it
// returns within one step.
func ComputeContext(ctx context.Context, sys *dynsys.System, q dynsys.Quantity, settings *Settings, solve *SolveSettings) (Result, error) {
	if err := stopped(ctx); err != nil {
		return Result{Quantity: q}, err
	}
	set := settings.withDefaults()
	var sv SolveSettings
	if solve != nil {
		sv = *solve
	}
	if sv.Eigenvalues <= 0 {
		sv.Eigenvalues = 1
	}
	if q == dynsys.DecayRate && sv.Eigenvalues < 2 {
		sv.Eigenvalues = 2
	}
	res := Result{Quantity: q, Status: krylov.Converged}
	needPair := sv.Density
	switch q {
	case dynsys.Eigenvalues, dynsys.Pressure, dynsys.DecayRate:
		if sys.HasObservable() && set.Beta != 0 {
			set.Observable = SystemObservable
		}
	case dynsys.EscapeRate:
		set.Observable, set.Beta = NoObservable, 0
	case dynsys.Mean:
		if !sys.HasObservable() {
			return res, fmt.Errorf("ulam: the mean needs an observable, and system %s defines none", sys.Name)
		}
		set.Observable, set.Derivative = SystemObservable, true
		needPair = true
	case dynsys.Lyapunov:
		if sys.Dim() != 1 {
			return res, fmt.Errorf("ulam: the Lyapunov exponent is computed for 1D maps only (%s has dimension %d)", sys.Name, sys.Dim())
		}
		set.Observable, set.Derivative = LogExpansion, true
		needPair = true
	case dynsys.Dimension:
		if sys.Dim() != 1 {
			return res, fmt.Errorf("ulam: the dimension is computed for 1D maps only (%s has dimension %d)", sys.Name, sys.Dim())
		}
		return computeDimension(ctx, sys, set, sv, res)
	default:
		return res, fmt.Errorf("ulam: unknown quantity %q", q)
	}
	m, err := Assemble(sys, &set)
	if err != nil {
		return res, err
	}
	res.Matrix = m
	res.Assemblies = 1
	if err := stopped(ctx); err != nil {
		return res, err
	}
	if err := res.eigen(m, sv); err != nil {
		return res, err
	}
	lambda0 := res.Eigenvalues[0]
	res.Value = SpectrumValue(q, res.Eigenvalues)
	if needPair {
		if err := stopped(ctx); err != nil {
			return res, err
		}
	}
	if needPair {
		pairQuantity := q == dynsys.Mean || q == dynsys.Lyapunov
		if err := res.leading(m, sv); err != nil {
			if pairQuantity || !errors.Is(err, krylov.ErrLeadingMismatch) {
				return res, err
			}
			// Only the density was asked for: the quantity stands
			// without it.
			res.DensityErr = err
		}
		if q == dynsys.Mean || q == dynsys.Lyapunov {
			res.Value = res.Derivative / real(lambda0)
		}
	}
	if q != dynsys.Eigenvalues && imag(lambda0) != 0 {
		return res, fmt.Errorf("ulam: %s: the leading eigenvalue %v is not real", sys.Name, lambda0)
	}
	if (q == dynsys.EscapeRate || q == dynsys.Pressure) && !(real(lambda0) > 0) {
		return res, fmt.Errorf("ulam: %s: leading eigenvalue %v: no mass survives on this grid", sys.Name, real(lambda0))
	}
	return res, nil
}

// stopped returns the context's error once it is done, without waiting.
func stopped(ctx context.Context) error {
	select {
	case <-ctx.Done():
		return ctx.Err()
	default:
		return nil
	}
}

func (sv SolveSettings) krylov(k int) *krylov.Settings {
	return &krylov.Settings{Wanted: k, Tol: sv.Tol, SubspaceSize: sv.SubspaceSize, MaxRestarts: sv.MaxRestarts}
}

// ErrEmpty is returned when the restriction leaves no cell.
var ErrEmpty = errors.New("ulam: no cell carries the dynamics on this grid")

// eigen computes the leading eigenvalues of m into res.
func (res *Result) eigen(m *Matrix, sv SolveSettings) error {
	if m.Dim() == 0 {
		return ErrEmpty
	}
	k := min(sv.Eigenvalues, m.Dim())
	r, err := krylov.EigsSparse(m, sv.krylov(k))
	res.addStats(r.Stats, r.Status)
	res.Eigenvalues, res.Residuals = r.Values, r.Residuals
	if err != nil {
		return fmt.Errorf("ulam: %d cells, %d nonzeros: %w", m.Dim(), m.NNZ(), err)
	}
	return nil
}

// Eigenvalues returns the k eigenvalues of m of largest modulus and their
// relative residuals, as Compute finds them (krylov.EigsSparse, with the
// solver settings of sv), for a matrix Compute returned.
func (m *Matrix) Eigenvalues(k int, sv *SolveSettings) ([]complex128, []float64, error) {
	var s SolveSettings
	if sv != nil {
		s = *sv
	}
	var res Result
	s.Eigenvalues = k
	err := res.eigen(m, s)
	return res.Eigenvalues, res.Residuals, err
}

// leading computes the left and right leading eigenvectors of m, the
// density and dλ_0/dβ into res.
func (res *Result) leading(m *Matrix, sv SolveSettings) error {
	pair, err := krylov.LeadingSparse(m, sv.krylov(1))
	res.addStats(pair.Stats, krylov.Converged)
	if err != nil {
		if errors.Is(err, krylov.ErrNotConverged) {
			res.Status = krylov.IterationLimit
		}
		return fmt.Errorf("ulam: %d cells, %d nonzeros: leading eigenvectors: %w", m.Dim(), m.NNZ(), err)
	}
	u, v := pair.Left, pair.Right
	// ⟨u, v⟩ = 1 from the solver; P' v projected on u.
	if m.Derivative != nil {
		pv := make([]float64, m.Dim())
		m.ApplyDerivative(pv, v)
		// Accurately: plain sums of long positive vectors err like εn.
		res.Derivative = krylov.Dot(u, pv)
	}
	// The left eigenvector holds the cells' masses (ρ ← Pᵀρ).
	var total float64
	for _, x := range u {
		total += x
	}
	cell := m.Grid.CellMeasure()
	res.Density = make([]float64, len(u))
	for i, x := range u {
		res.Density[i] = x / (total * cell)
	}
	return nil
}

func (res *Result) addStats(s krylov.Stats, status krylov.Status) {
	res.Stats.Add(s)
	if status != krylov.Converged {
		res.Status = status
	}
}

// computeDimension finds the root s of ln λ_0(s) = 0 for the weight
// |f'|^(1−s) by Brent's method on [0, 1].
func computeDimension(ctx context.Context, sys *dynsys.System, set Settings, sv SolveSettings, res Result) (Result, error) {
	set.Observable, set.Derivative = LogExpansion, false
	var last Result
	value, err := BowenRoot(func(s float64) (float64, error) {
		if err := stopped(ctx); err != nil {
			return 0, err
		}
		set.Beta = 1 - s
		m, err := Assemble(sys, &set)
		res.Assemblies++
		if err != nil {
			return 0, err
		}
		r := Result{Status: krylov.Converged}
		if err := r.eigen(m, sv); err != nil {
			return 0, err
		}
		res.addStats(r.Stats, r.Status)
		r.Matrix = m
		last = r
		return math.Log(real(r.Eigenvalues[0])), nil
	})
	if err != nil {
		return res, fmt.Errorf("ulam: %s: %w", sys.Name, err)
	}
	res.Value = value
	res.Eigenvalues, res.Residuals, res.Matrix = last.Eigenvalues, last.Residuals, last.Matrix
	if sv.Density {
		if err := res.leading(res.Matrix, sv); err != nil {
			return res, err
		}
	}
	return res, nil
}

// BowenRoot returns the root s in [0, 1] of Bowen's equation
// ln λ_0(s) = 0, where logLambda(s) computes ln λ_0 of the operator with
// the weight |f'|^(1−s) (DESIGN.md section 3), by Brent's method to 1e-13.
// A closed map, whose λ_0(1) = 1, has dimension 1. The last call of
// logLambda is at the returned root, so a caller that keeps the last
// eigen-solve keeps the one at the root. An error of logLambda stops the
// search and is returned.
func BowenRoot(logLambda func(s float64) (float64, error)) (float64, error) {
	var failure error
	f := func(s float64) float64 {
		g, err := logLambda(s)
		if err != nil {
			failure = err
			return math.NaN()
		}
		return g
	}
	// s = 1 first: a closed system's root is there, and s = 0 may be out
	// of reach (a weight |f'|^(1−s) with infinitely many laps diverges).
	g1 := f(1)
	if failure != nil {
		return 0, failure
	}
	if math.Abs(g1) <= 1e-12 {
		return 1, nil
	}
	g0 := f(0)
	if failure != nil {
		return 0, failure
	}
	r, err := root.Brent(f, 0, 1, g0, g1, &root.Settings{AbsTol: 1e-13})
	if failure != nil {
		return 0, failure
	}
	if err != nil {
		return 0, fmt.Errorf("dimension: ln λ_0(s) = %.6g at s = 0 and %.6g at s = 1 do not bracket a root: %w", g0, g1, err)
	}
	if f(r.X); failure != nil {
		return 0, failure
	}
	return r.X, nil
}

// SpectrumValue returns the quantity q that follows from the leading
// eigenvalues alone (DESIGN.md section 4): λ_0 for Eigenvalues, −ln λ_0
// for EscapeRate, ln λ_0 for Pressure, −ln |λ_1/λ_0| for DecayRate (which
// needs two eigenvalues); zero for the quantities that need eigenvectors
// or a root search (mean, Lyapunov exponent, dimension).
func SpectrumValue(q dynsys.Quantity, eigenvalues []complex128) float64 {
	lambda0 := eigenvalues[0]
	switch q {
	case dynsys.Eigenvalues:
		return real(lambda0)
	case dynsys.EscapeRate:
		return -math.Log(real(lambda0))
	case dynsys.Pressure:
		return math.Log(real(lambda0))
	case dynsys.DecayRate:
		return -math.Log(cmplx.Abs(eigenvalues[1]) / cmplx.Abs(lambda0))
	}
	return 0
}
