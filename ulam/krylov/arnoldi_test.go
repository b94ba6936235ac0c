package krylov

import (
	"math"
	"testing"
)

// TestDelayedArnoldi checks the decomposition built by one expansion cycle
// with the delayed second Gram–Schmidt pass (firstStep, pendingStep,
// finishCycle) directly: the basis V_{m+1} is orthonormal and
// A V_m = V_{m+1} H, entry by entry. The diagonal operator with four
// distinct values has a Krylov space of dimension 4, so its expansion
// breaks down and continues with fresh directions.
//
// Tolerance: classical Gram–Schmidt applied twice keeps ‖I − VᵀV‖ at a
// modest multiple of the unit round-off ε (L. Giraud, J. Langou and
// M. Rozložník, Comput. Math. Appl. 50 (2005) 1069–1075; from memory),
// and each entry of A V − V H is a sum of m + 1 products whose rounding
// errors are bounded by about (m + n)·ε·‖A‖ (common practice, no source);
// with n = 3000, m = 30 that is below 1e-12·‖A‖, which we take as the
// bound for both.
func TestDelayedArnoldi(t *testing.T) {
	const n, m = 3000, 30
	diag := make(diagonal, n)
	for i := range diag {
		diag[i] = float64(1 + i%4)
	}
	for _, tc := range []struct {
		name       string
		op         Operator
		breakdowns bool
	}{
		{"random sparse", randomSparse(n, 5, 3), false},
		{"four distinct values", diag, true},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c, err := validate(tc.op, &Settings{Wanted: 3, SubspaceSize: m, MaxSubspaceSize: m})
			if err != nil {
				t.Fatal(err)
			}
			s := newSolver(tc.op, c)
			s.basis = newBasis(n, m+1, m+1)
			fillRandom(s.basis.col(0), 1)
			scale(1/math.Sqrt(Dot(s.basis.col(0), s.basis.col(0))), s.basis.col(0))
			if err := s.firstStep(0); err != nil {
				t.Fatal(err)
			}
			for j := 1; j < m; j++ {
				if err := s.pendingStep(j); err != nil {
					t.Fatal(err)
				}
			}
			if err := s.finishCycle(); err != nil {
				t.Fatal(err)
			}
			if got := s.stats.Breakdowns > 0; got != tc.breakdowns {
				t.Errorf("breakdowns %d, want some: %v", s.stats.Breakdowns, tc.breakdowns)
			}
			const tol = 1e-12
			worst := 0.0
			for i := range m + 1 {
				for j := range m + 1 {
					want := 0.0
					if i == j {
						want = 1
					}
					worst = max(worst, math.Abs(Dot(s.basis.col(i), s.basis.col(j))-want))
				}
			}
			if worst > tol {
				t.Errorf("‖I − VᵀV‖_max = %.3g, want ≤ %g", worst, tol)
			}
			av := make([]float64, n)
			worst = 0
			for j := range m {
				tc.op.Apply(av, s.basis.col(j))
				for i := range m + 1 {
					h := s.h[i*m+j]
					if i > j+1 && h != 0 {
						t.Fatalf("H[%d,%d] = %v below the subdiagonal", i, j, h)
					}
					col := s.basis.col(i)
					for r := range n {
						av[r] -= h * col[r]
					}
				}
				worst = max(worst, math.Sqrt(Dot(av, av)))
			}
			if worst > tol*s.norm {
				t.Errorf("max_j ‖A v_j − V h_j‖ = %.3g, want ≤ %g·‖A‖ = %.3g", worst, tol, tol*s.norm)
			}
		})
	}
}
