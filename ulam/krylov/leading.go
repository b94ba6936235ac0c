package krylov

import (
	"errors"
	"fmt"
	"math"
)

// LeadingPair is the leading eigenvalue λ_0 of A with its right and left
// eigenvectors, normalised for first-order perturbation theory:
//
//	A v = λ_0 v,   Aᵀ u = λ_0 u,   ⟨u, v⟩ = 1,
//
// so that dλ_0/dβ = ⟨u, (dA/dβ) v⟩ for a family A(β).
type LeadingPair struct {
	// Value is the two-sided Rayleigh quotient ⟨u, A v⟩/⟨u, v⟩, whose
	// error is of second order in the errors of u and v.
	Value float64

	// Right is v, of unit 2-norm with its first entry of largest modulus
	// positive (so a Perron vector is nonnegative). Only the product of
	// the scales of u and v is fixed: (c u, v/c) is as good a pair.
	Right []float64

	// Left is u, scaled so that ⟨u, v⟩ = 1.
	Left []float64

	// Condition is the condition number ‖u‖‖v‖/|⟨u, v⟩| = ‖u‖ of λ_0: a
	// perturbation E of A moves λ_0 by at most about Condition·‖E‖.
	Condition float64

	// RightResidual and LeftResidual are the relative residuals
	// ‖A v − λ v‖/(‖A‖‖v‖) and ‖Aᵀu − λ u‖/(‖A‖‖u‖) of the two solves.
	RightResidual, LeftResidual float64

	// Stats sums the work of both solves and of the Rayleigh quotient.
	Stats Stats
}

var (
	// ErrComplexLeading is returned by Leading when the eigenvalue of
	// largest modulus is not real.
	ErrComplexLeading = errors.New("krylov: leading eigenvalue is not real")

	// ErrLeadingMismatch is returned by Leading when the solves with A and
	// Aᵀ find different leading eigenvalues, as happens when several
	// eigenvalues share the largest modulus, or when the left and right
	// vectors are orthogonal (a defective leading eigenvalue).
	ErrLeadingMismatch = errors.New("krylov: leading eigenvalue is not isolated")
)

// Leading computes the leading (largest-modulus) eigenvalue of op and its
// right and left eigenvectors; opT must apply the transpose of op. The
// settings apply to both solves (Vectors is implied; Wanted may exceed 1
// to help the iteration, only the first value is used). On non-convergence
// it returns the pair reached and an error matching ErrNotConverged.
func Leading(op, opT Operator, s *Settings) (LeadingPair, error) {
	n := op.Dim()
	if opT.Dim() != n {
		panic(fmt.Sprintf("krylov: transposed operator dimension %d, want %d", opT.Dim(), n))
	}
	var set Settings
	if s != nil {
		set = *s
	}
	set.Vectors = true
	right, errRight := Eigs(op, &set)
	return leadingFrom(right, errRight, op, opT, set)
}

// leadingFrom is Leading given the solve with A already made (right, with
// vectors, and its error), by the settings set (Vectors set).
func leadingFrom(right Result, errRight error, op, opT Operator, set Settings) (LeadingPair, error) {
	n := op.Dim()
	if errRight != nil && !errors.Is(errRight, ErrNotConverged) {
		return LeadingPair{}, errRight
	}
	left, errLeft := Eigs(opT, &set)
	if errLeft != nil && !errors.Is(errLeft, ErrNotConverged) {
		return LeadingPair{}, errLeft
	}
	if imag(right.Values[0]) != 0 || imag(left.Values[0]) != 0 {
		return LeadingPair{}, ErrComplexLeading
	}
	v := right.Vectors[0]
	u := left.Vectors[0]
	uv := Dot(u, v)
	pair := LeadingPair{
		Right:         v,
		Left:          u,
		RightResidual: right.Residuals[0],
		LeftResidual:  left.Residuals[0],
	}
	pair.Stats = right.Stats
	pair.Stats.Add(left.Stats)
	pair.Stats.MatVecs++ // A v for the two-sided Rayleigh quotient below

	// u and v have unit norm, so 1/|⟨u, v⟩| is the condition number.
	tol := set.Tol
	if tol == 0 {
		tol = 1e-12
	}
	lambdaRight, lambdaLeft := real(right.Values[0]), real(left.Values[0])
	cond := 1 / math.Abs(uv)
	// Both values carry an error of about cond·tol·‖A‖; values further
	// apart than √tol (relative) belong to different eigenvalues.
	if uv == 0 || math.Abs(lambdaRight-lambdaLeft) > max(math.Sqrt(tol), 100*cond*tol)*math.Abs(lambdaRight) {
		return LeadingPair{}, fmt.Errorf("%w: %v from the operator, %v from its transpose, condition number %.3g",
			ErrLeadingMismatch, lambdaRight, lambdaLeft, cond)
	}
	scale(1/uv, u)
	pair.Condition = math.Sqrt(Dot(u, u))
	av := make([]float64, n)
	op.Apply(av, v)
	pair.Value = Dot(u, av) / Dot(u, v)
	if errRight != nil {
		return pair, errRight
	}
	return pair, errLeft
}
