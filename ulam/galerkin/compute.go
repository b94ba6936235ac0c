package galerkin

import (
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"slices"

	"gonum.org/v1/gonum/mat"

	"crosspec/dynsys"
	"crosspec/ulam"
	"crosspec/ulam/krylov"
)

// Basis names the functions the transfer operator is projected on.
type Basis int

const (
	// Cells: Legendre polynomials of degree ≤ Degree on each of the cells
	// (a piecewise-polynomial Galerkin basis; Degree 0 is Ulam's method).
	Cells Basis = iota
	// Chebyshev: polynomials of degree < Size on the whole domain, by
	// collocation at Chebyshev points (analytic full-branch maps).
	Chebyshev
)

func (b Basis) String() string {
	switch b {
	case Cells:
		return "cells"
	case Chebyshev:
		return "chebyshev"
	}
	return fmt.Sprintf("Basis(%d)", int(b))
}

// ParseBasis returns the basis named s ("cells" or "chebyshev").
func ParseBasis(s string) (Basis, error) {
	switch s {
	case "cells":
		return Cells, nil
	case "chebyshev":
		return Chebyshev, nil
	}
	return 0, fmt.Errorf("galerkin: unknown basis %q (known: cells, chebyshev)", s)
}

// Settings controls the discretization. A nil *Settings or the zero value
// means the defaults beside each field.
type Settings struct {
	// Basis selects the basis. Default Cells.
	Basis Basis
	// Cells is the number N of equal cells of the Cells basis. Default 64.
	Cells int
	// Edges, if not nil, are the N+1 cell edges of the Cells basis, from
	// the domain's lower to its upper end, increasing (graded partitions,
	// see GradedEdges); they override Cells. Default nil.
	Edges []float64
	// Degree is the polynomial degree p on each cell. Default 0 (piecewise
	// constants: Ulam's matrix).
	Degree int
	// Size is the number n of Chebyshev points of the Chebyshev basis.
	// Default 64.
	Size int
	// Observable is the a(x) of the weight w = exp(β a). Default
	// ulam.NoObservable.
	Observable ulam.Observable
	// Beta is β. Default 0.
	Beta float64
	// Derivative asks for the matrix of dL/dβ (a·w in place of w) beside
	// the matrix. Default false.
	Derivative bool
	// Laps controls the lap scan. Default nil: dynsys's defaults.
	Laps *dynsys.LapSettings
	// Quadrature is the number of Gauss–Legendre nodes on each piece of a
	// cell mapped into one cell (Cells basis). Default Degree + 8, exact for
	// polynomial integrands of degree 2·Degree + 15.
	Quadrature int
	// TailNodes is the number of interpolation nodes of the tail model
	// for laps accumulating at an end of the domain. Default Degree + 12
	// (Cells), 24 (Chebyshev).
	TailNodes int
	// TailStart is the number of accumulating laps summed exactly before
	// the tail model takes over (Chebyshev basis; the Cells basis models
	// every lap inside the end cell). Default 64.
	TailStart int
}

func (s *Settings) withDefaults() Settings {
	var out Settings
	if s != nil {
		out = *s
	}
	if out.Cells <= 0 {
		out.Cells = 64
	}
	if out.Degree < 0 {
		out.Degree = 0
	}
	if out.Size <= 1 {
		out.Size = 64
	}
	if out.Quadrature <= 0 {
		out.Quadrature = out.Degree + 8
	}
	if out.TailNodes <= 0 {
		out.TailNodes = out.Degree + 12
		if out.Basis == Chebyshev {
			out.TailNodes = 24
		}
	}
	if out.TailStart <= 0 {
		out.TailStart = 64
	}
	return out
}

// Operator is a discretized transfer operator: CellMatrix or
// ChebyshevMatrix.
type Operator interface {
	krylov.Operator
	// NNZ returns the number of stored entries.
	NNZ() int
	// ApplyDerivative sets dst = (d/dβ) of the matrix times x.
	ApplyDerivative(dst, x []float64)
}

// Assemble builds the matrix of the settings' basis.
func Assemble(sys *dynsys.System, settings *Settings) (Operator, error) {
	set := settings.withDefaults()
	switch set.Basis {
	case Cells:
		return AssembleCells(sys, &set)
	case Chebyshev:
		return AssembleChebyshev(sys, &set)
	}
	panic(fmt.Sprintf("galerkin: unknown basis %d", int(set.Basis)))
}

// Density is the (conditionally) invariant density found by Compute,
// normalised to integral 1.
type Density struct {
	// Edges and Coef describe it on the Cells basis: on cell j it is
	// Σ_b Coef[j(p+1)+b] φ_{j,b}.
	Edges  []float64
	Degree int
	Coef   []float64
	// Points and Values describe it on the Chebyshev basis: the values at
	// the points, interpolated by the barycentric formula.
	Points, Values []float64
	bw             []float64
}

// At returns the density at x in the domain.
func (d *Density) At(x float64) float64 {
	if d.Points != nil {
		ell := make([]float64, len(d.Points))
		lagrangeTo(ell, d.Points, d.bw, x)
		var s float64
		for k, v := range ell {
			s += v * d.Values[k]
		}
		return s
	}
	j := cellOf(d.Edges, x)
	nb := d.Degree + 1
	h := d.Edges[j+1] - d.Edges[j]
	basis := make([]float64, nb)
	legendreTo(basis, 2*(x-d.Edges[j])/h-1, h)
	var s float64
	for b := range nb {
		s += d.Coef[j*nb+b] * basis[b]
	}
	return s
}

// Result is what Compute returns.
type Result struct {
	// Quantity is what Value estimates.
	Quantity dynsys.Quantity
	// Value is the estimate of Quantity.
	Value float64
	// Eigenvalues are the leading eigenvalues of the matrix (at the
	// quantity's weight), by decreasing modulus, a complex pair adjacent.
	Eigenvalues []complex128
	// Residuals are their relative residuals.
	Residuals []float64
	// Basis, Dim and NNZ describe the matrix (for the dimension, the one at
	// the root).
	Basis Basis
	Dim   int
	NNZ   int
	// Matrix is that matrix: *CellMatrix or *ChebyshevMatrix.
	Matrix Operator
	// Derivative is dλ_0/dβ for mean and lyapunov; zero otherwise.
	Derivative float64
	// Density is the leading eigenfunction of the transfer operator,
	// normalised to integral 1; nil unless the quantity needs the leading
	// eigenvectors or ulam.SolveSettings.Density is set.
	Density *Density
	// Assemblies counts the matrices built.
	Assemblies int
	// Stats sums the work of all eigen-solves.
	Stats krylov.Stats
	// Status is krylov.Converged when every solve converged.
	Status krylov.Status
	// Floor is the round-off floor of Value for the global Chebyshev
	// basis up to denseLimit points and the quantities drawn from
	// eigenvalues alone (eigenvalues, escape rate, pressure, decay rate):
	// the change of Value that the rounding of the matrix and of its dense
	// eigen-solve can cause (chebyshevFloors); zero where it is not
	// estimated.
	Floor float64
}

// ErrLeading is returned when the eigenvalue of largest modulus is not
// real and positive, as the leading eigenvalue of a positive operator must
// be: a sign that the basis is too coarse for the map.
var ErrLeading = errors.New("galerkin: the eigenvalue of largest modulus is not real and positive")

// Compute estimates quantity q of the 1D map sys with the basis of
// settings, as ulam.Compute does with Ulam's matrix (DESIGN.md section 4):
// eigenvalues and pressure at the weight exp(β a) with a the system's
// observable; escape rate −ln λ_0; mean d ln λ_0/dβ = ⟨u, M' v⟩/(λ_0⟨u, v⟩)
// with u, v the left and right leading eigenvectors of the matrix M and
// M' = dM/dβ; lyapunov the same with a = ln |f'|; dimension the root s of
// λ_0 = 1 for the weight |f'|^(1−s) (Brent's method on [0, 1]); decay rate
// −ln |λ_1/λ_0|. The leading eigenvalue is checked to be real and
// positive (ErrLeading) for every quantity but the eigenvalues.
func Compute(sys *dynsys.System, q dynsys.Quantity, settings *Settings, solve *ulam.SolveSettings) (Result, error) {
	set := settings.withDefaults()
	var sv ulam.SolveSettings
	if solve != nil {
		sv = *solve
	}
	if sv.Eigenvalues <= 0 {
		sv.Eigenvalues = 1
	}
	if q == dynsys.DecayRate && sv.Eigenvalues < 2 {
		sv.Eigenvalues = 2
	}
	res := Result{Quantity: q, Basis: set.Basis, Status: krylov.Converged}
	if sys.Dim() != 1 {
		return res, fmt.Errorf("galerkin: %s has dimension %d; the Galerkin bases are for 1D maps", sys.Name, sys.Dim())
	}
	needPair := sv.Density
	switch q {
	case dynsys.Eigenvalues, dynsys.Pressure, dynsys.DecayRate:
		if sys.HasObservable() && set.Beta != 0 {
			set.Observable = ulam.SystemObservable
		}
	case dynsys.EscapeRate:
		set.Observable, set.Beta = ulam.NoObservable, 0
	case dynsys.Mean:
		if !sys.HasObservable() {
			return res, fmt.Errorf("galerkin: the mean needs an observable, and system %s defines none", sys.Name)
		}
		set.Observable, set.Derivative = ulam.SystemObservable, true
		needPair = true
	case dynsys.Lyapunov:
		set.Observable, set.Derivative = ulam.LogExpansion, true
		needPair = true
	case dynsys.Dimension:
		return computeDimension(sys, set, sv, res)
	default:
		return res, fmt.Errorf("galerkin: unknown quantity %q", q)
	}
	m, err := Assemble(sys, &set)
	if err != nil {
		return res, err
	}
	res.setMatrix(m)
	res.Assemblies = 1
	if err := res.eigen(m, sv); err != nil {
		return res, err
	}
	lambda0 := res.Eigenvalues[0]
	if q != dynsys.Eigenvalues && (imag(lambda0) != 0 || !(real(lambda0) > 0)) {
		return res, fmt.Errorf("%w: %s: %v", ErrLeading, sys.Name, lambda0)
	}
	res.Value = ulam.SpectrumValue(q, res.Eigenvalues)
	if cm, ok := m.(*ChebyshevMatrix); ok && cm.Dim() <= denseLimit {
		// Up to the size solved densely anyway: the condition numbers
		// cost another dense solve. A floor mat.Eigen could not give
		// (NaN) is no floor.
		if f := valueFloor(q, res.Eigenvalues, chebyshevFloors(cm, res.Eigenvalues[:min(2, len(res.Eigenvalues))])); f > 0 && !math.IsInf(f, 0) {
			res.Floor = f
		}
	}
	if needPair {
		if err := res.leading(m, sv, set); err != nil {
			return res, err
		}
		if q == dynsys.Mean || q == dynsys.Lyapunov {
			res.Value = res.Derivative / real(lambda0)
		}
	}
	return res, nil
}

func (res *Result) setMatrix(m Operator) {
	res.Matrix, res.Dim, res.NNZ = m, m.Dim(), m.NNZ()
}

// denseLimit is the matrix size up to which the eigenvalues are found
// densely (krylov.Settings.Dense, gonum's mat.Eigen): for p > 0 the
// subleading eigenvalues are ill-conditioned (the basis mixes smooth
// modes with jumps at the cell edges), and a dense solve errs by
// condition·ε rather than condition·Tol.
const denseLimit = 1200

func krylovSettings(sv ulam.SolveSettings, k int) *krylov.Settings {
	return &krylov.Settings{Wanted: k, Tol: sv.Tol, SubspaceSize: sv.SubspaceSize, MaxRestarts: sv.MaxRestarts, DenseSize: denseLimit}
}

func tailLaps(m Operator) int {
	switch m := m.(type) {
	case *CellMatrix:
		return m.TailLaps
	case *ChebyshevMatrix:
		return m.TailLaps
	}
	return 0
}

// eigen computes the leading eigenvalues of m into res.
func (res *Result) eigen(m Operator, sv ulam.SolveSettings) error {
	k := min(sv.Eigenvalues, m.Dim())
	var r krylov.Result
	var err error
	if cm, ok := m.(*CellMatrix); ok {
		// Split into irreducible blocks: see the package documentation.
		r, err = krylov.EigsSparse(cm, krylovSettings(sv, k))
	} else {
		r, err = krylov.Eigs(m, krylovSettings(sv, k))
	}
	res.addStats(r.Stats, r.Status)
	res.Eigenvalues, res.Residuals = r.Values, r.Residuals
	if err != nil {
		return fmt.Errorf("galerkin: matrix of size %d, %d nonzeros: %w", m.Dim(), m.NNZ(), err)
	}
	return nil
}

func transposeOf(m Operator) krylov.Operator {
	switch m := m.(type) {
	case *CellMatrix:
		return m.Transpose()
	case *ChebyshevMatrix:
		return m.Transpose()
	}
	panic("galerkin: unknown matrix type")
}

// leading computes the leading left and right eigenvectors, the density
// and dλ_0/dβ into res.
func (res *Result) leading(m Operator, sv ulam.SolveSettings, set Settings) error {
	var pair krylov.LeadingPair
	var err error
	if cm, ok := m.(*CellMatrix); ok {
		// Split into irreducible blocks, as for the eigenvalues.
		pair, err = krylov.LeadingSparse(cm, krylovSettings(sv, 1))
	} else {
		pair, err = krylov.Leading(m, transposeOf(m), krylovSettings(sv, 1))
	}
	res.addStats(pair.Stats, krylov.Converged)
	if err != nil {
		if errors.Is(err, krylov.ErrNotConverged) {
			res.Status = krylov.IterationLimit
		}
		return fmt.Errorf("galerkin: matrix of size %d: leading eigenvectors: %w", m.Dim(), err)
	}
	u, v := pair.Left, pair.Right
	if set.Derivative {
		mv := make([]float64, m.Dim())
		m.ApplyDerivative(mv, v)
		// Accurately: plain sums of long positive vectors err like εn.
		res.Derivative = krylov.Dot(u, mv)
	}
	// The density: the left eigenvector of K holds the Legendre
	// coefficients (K is the transpose of the transfer operator's
	// matrix); the right eigenvector of A holds point values.
	switch mm := m.(type) {
	case *CellMatrix:
		nb := mm.Degree + 1
		var total float64
		for j := 0; j+1 < len(mm.Edges); j++ {
			total += u[j*nb] * math.Sqrt(mm.Edges[j+1]-mm.Edges[j])
		}
		coef := slices.Clone(u)
		for i := range coef {
			coef[i] /= total
		}
		res.Density = &Density{Edges: mm.Edges, Degree: mm.Degree, Coef: coef}
	case *ChebyshevMatrix:
		n := mm.Dim()
		lo, hi := mm.Points[n-1], mm.Points[0]
		cc := clenshawCurtis(n, lo, hi)
		var total float64
		for i := range v {
			total += cc[i] * v[i]
		}
		vals := slices.Clone(v)
		for i := range vals {
			vals[i] /= total
		}
		_, bw := chebyshevPoints(lo, hi, n)
		res.Density = &Density{Points: mm.Points, Values: vals, bw: bw}
	}
	return nil
}

// clenshawCurtis returns the Clenshaw–Curtis weights of the n
// Chebyshev–Lobatto points of [lo, hi] (C. W. Clenshaw and A. R. Curtis,
// Numer. Math. 2 (1960) 197–205 (from memory)), computed by integrating
// the Lagrange polynomials through their cosine series.
func clenshawCurtis(n int, lo, hi float64) []float64 {
	N := n - 1
	w := make([]float64, n)
	for k := range n {
		theta := math.Pi * float64(k) / float64(N)
		s := 0.0
		for j := 0; j <= N/2; j++ {
			b := 2.0
			if j == 0 || 2*j == N {
				b = 1
			}
			s += b / float64(1-4*j*j) * math.Cos(2*float64(j)*theta)
		}
		c := 2.0
		if k == 0 || k == N {
			c = 1
		}
		w[k] = c / float64(N) * s * 0.5 * (hi - lo)
	}
	return w
}

func (res *Result) addStats(s krylov.Stats, status krylov.Status) {
	res.Stats.Add(s)
	if status != krylov.Converged {
		res.Status = status
	}
}

// computeDimension finds the root s of ln λ_0(s) = 0 for the weight
// |f'|^(1−s) by Brent's method on [0, 1].
func computeDimension(sys *dynsys.System, set Settings, sv ulam.SolveSettings, res Result) (Result, error) {
	set.Observable, set.Derivative = ulam.LogExpansion, false
	var last Result
	value, err := ulam.BowenRoot(func(s float64) (float64, error) {
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
		r.setMatrix(m)
		last = r
		l0 := r.Eigenvalues[0]
		if imag(l0) != 0 || !(real(l0) > 0) {
			return 0, fmt.Errorf("%w: %s at s = %g: %v", ErrLeading, sys.Name, s, l0)
		}
		return math.Log(real(l0)), nil
	})
	if err != nil {
		return res, fmt.Errorf("galerkin: %s: %w", sys.Name, err)
	}
	res.Value = value
	res.Eigenvalues, res.Residuals = last.Eigenvalues, last.Residuals
	res.setMatrix(last.Matrix)
	if sv.Density {
		if err := res.leading(res.Matrix, sv, set); err != nil {
			return res, err
		}
	}
	return res, nil
}

// chebyshevFloors returns, for each of the given eigenvalues of the dense
// matrix A of m, the change that rounding can cause in it: κ_k nu‖A‖_F,
// with κ_k = ‖x‖‖y‖/|yᴴx| its condition number (right and left
// eigenvectors from gonum's mat.Eigen), u = 2⁻⁵³, and nu‖A‖_F the size of the
// rounding errors of A's entries (sums over n collocation points and the
// laps) and of a backward-stable dense eigen-solve (common practice, no
// source). The collocation matrices are far from normal (the Lagrange
// basis is far from the monomials), so κ_k of a subleading eigenvalue is
// often 10^3–10^7, and the decay rate's floor well above ε. NaN entries
// where mat.Eigen fails.
func chebyshevFloors(m *ChebyshevMatrix, values []complex128) []float64 {
	n := m.Dim()
	a := mat.NewDense(n, n, slices.Clone(m.Val))
	out := make([]float64, len(values))
	var eig mat.Eigen
	if !eig.Factorize(a, mat.EigenBoth) {
		for i := range out {
			out[i] = math.NaN()
		}
		return out
	}
	all := eig.Values(nil)
	var left, right mat.CDense
	eig.LeftVectorsTo(&left)
	eig.VectorsTo(&right)
	scale := float64(n) * 0x1p-53 * mat.Norm(a, 2)
	for k, v := range values {
		j := 0
		for i, w := range all {
			if cmplx.Abs(w-v) < cmplx.Abs(all[j]-v) {
				j = i
			}
		}
		var xx, yy float64
		var yx complex128
		for i := range n {
			x, y := right.At(i, j), left.At(i, j)
			xx += real(x * cmplx.Conj(x))
			yy += real(y * cmplx.Conj(y))
			yx += cmplx.Conj(y) * x
		}
		out[k] = math.Sqrt(xx*yy) / cmplx.Abs(yx) * scale
	}
	return out
}

// valueFloor carries the floors of λ_0 (and λ_1) to the quantity q drawn
// from them: λ_0 itself for eigenvalues, δλ_0/λ_0 for the escape rate and
// the pressure (logarithms), δλ_0/|λ_0| + δλ_1/|λ_1| for the decay rate;
// zero for the other quantities.
func valueFloor(q dynsys.Quantity, values []complex128, floors []float64) float64 {
	switch q {
	case dynsys.Eigenvalues:
		return floors[0]
	case dynsys.EscapeRate, dynsys.Pressure:
		return floors[0] / cmplx.Abs(values[0])
	case dynsys.DecayRate:
		if len(floors) < 2 {
			return 0
		}
		return floors[0]/cmplx.Abs(values[0]) + floors[1]/cmplx.Abs(values[1])
	}
	return 0
}
