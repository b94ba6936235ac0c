package ulam

import "testing"

// TestMatVecBadIndex: a column outside the matrix is refused before any
// kernel reads with it (see also krylov's TestCSRIndexChecks).
func TestMatVecBadIndex(t *testing.T) {
	m := &Matrix{RowPtr: []int{0, 1, 2}, Col: []int{1, 2}, Val: []float64{1, 1}}
	defer func() {
		if recover() == nil {
			t.Error("no panic for column index 2 of a 2×2 matrix")
		}
	}()
	m.Apply(make([]float64, 2), make([]float64, 2))
}
