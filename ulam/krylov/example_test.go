package krylov_test

import (
	"fmt"

	"crosspec/ulam/krylov"
)

// ulamOpen applies the mass-transport Ulam matrix, on n equal cells
// (n a multiple of 4), of the open map with branches x ↦ 4x on [0, 1/4]
// and x ↦ 2x − 1 on [1/2, 1]: cell i of the first branch spreads its mass
// evenly over cells 4i…4i+3, cell n/2+i of the second over cells 2i, 2i+1,
// and the mass of (1/4, 1/2) escapes.
type ulamOpen struct{ n int }

func (u ulamOpen) Dim() int { return u.n }

func (u ulamOpen) Apply(dst, x []float64) {
	for j := range dst {
		dst[j] = x[j/4]/4 + x[u.n/2+j/2]/2
	}
}

// The leading eigenvalue of the Ulam matrix of a full-branch
// piecewise-linear map with branch points on cell edges is Σ 1/|Λ_b|,
// here 1/4 + 1/2, and the escape rate is −ln λ_0.
func ExampleEigs() {
	res, err := krylov.Eigs(ulamOpen{n: 4000}, nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("λ_0 = %.6g (%v)\n", real(res.Values[0]), res.Status)
	// Output:
	// λ_0 = 0.75 (converged)
}
