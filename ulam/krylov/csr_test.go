package krylov

import (
	"maps"
	"math"
	"math/rand/v2"
	"runtime"
	"slices"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// randomPattern returns an n×n matrix in CSR form with row lengths
// 0…maxRow (empty rows included), sorted distinct columns and values of
// both signs over several decades, from a fixed seed.
func randomPattern(n, maxRow int, seed uint64) *csrArrays {
	rng := rand.New(rand.NewPCG(seed, 3))
	m := &csrArrays{RowPtr: make([]int, 1, n+1)}
	for range n {
		cols := map[int]bool{}
		for range rng.IntN(maxRow + 1) {
			cols[rng.IntN(n)] = true
		}
		for _, j := range slices.Sorted(maps.Keys(cols)) {
			m.Col = append(m.Col, j)
			m.Val = append(m.Val, rng.NormFloat64()*math.Pow(10, float64(rng.IntN(7)-3)))
		}
		m.RowPtr = append(m.RowPtr, len(m.Col))
	}
	return m
}

type csrArrays struct {
	RowPtr, Col []int
	Val         []float64
}

// TestMatVec checks CSRIndex.MulVec against gonum's dense product (the
// reference library) to the rounding bound of a sum of r products,
// about r ε Σ|a_ij x_j| (common practice, no source), and checks that
// the kernel in use (assembly on amd64) gives the bytes of the Go loop
// mulRowsGo for every block of rows and every core count.
func TestMatVec(t *testing.T) {
	for _, c := range []struct{ n, maxRow int }{{1, 1}, {7, 0}, {50, 3}, {300, 12}, {70000, 4}} {
		m := randomPattern(c.n, c.maxRow, uint64(c.n))
		idx := NewCSRIndex(m.RowPtr, m.Col)
		x := make([]float64, c.n)
		for i := range x {
			x[i] = math.Sin(float64(i)) + 0.5
		}
		got := make([]float64, c.n)
		idx.MulVec(got, x, m.Val)

		want := make([]float64, c.n)
		mulRowsGo(want, x, idx.rowPtr, idx.col, m.Val, 0, c.n)
		for i := range want {
			if math.Float64bits(got[i]) != math.Float64bits(want[i]) {
				t.Fatalf("n = %d: row %d: MulVec %v, Go loop %v", c.n, i, got[i], want[i])
			}
		}
		// Blocks of rows, as the parallel split cuts them.
		part := make([]float64, c.n)
		for lo := 0; lo < c.n; lo += 1 + c.n/5 {
			hi := min(c.n, lo+1+c.n/5)
			mulRows(part, x, idx.rowPtr, idx.col, m.Val, lo, hi)
			mulRows(part, x, idx.rowPtr, idx.col, m.Val, hi, hi) // empty: writes nothing
		}
		for i := range want {
			if math.Float64bits(part[i]) != math.Float64bits(want[i]) {
				t.Fatalf("n = %d: row %d by blocks: %v, want %v", c.n, i, part[i], want[i])
			}
		}
		old := runtime.GOMAXPROCS(1)
		one := make([]float64, c.n)
		idx.MulVec(one, x, m.Val)
		runtime.GOMAXPROCS(old)
		for i := range want {
			if math.Float64bits(one[i]) != math.Float64bits(want[i]) {
				t.Fatalf("n = %d: row %d on one core: %v, want %v", c.n, i, one[i], want[i])
			}
		}

		if c.n > 1000 {
			continue // the dense reference would be large
		}
		d := mat.NewDense(c.n, c.n, nil)
		for i := range c.n {
			for k := m.RowPtr[i]; k < m.RowPtr[i+1]; k++ {
				d.Set(i, m.Col[k], m.Val[k])
			}
		}
		var ref mat.VecDense
		ref.MulVec(d, mat.NewVecDense(c.n, x))
		for i := range c.n {
			var abs float64
			for k := m.RowPtr[i]; k < m.RowPtr[i+1]; k++ {
				abs += math.Abs(m.Val[k] * x[m.Col[k]])
			}
			r := float64(m.RowPtr[i+1] - m.RowPtr[i])
			if bound := 2 * r * 0x1p-52 * abs; math.Abs(got[i]-ref.AtVec(i)) > bound {
				t.Errorf("n = %d: row %d: %v, dense %v (bound %.3g)", c.n, i, got[i], ref.AtVec(i), bound)
			}
		}
	}
}

// TestCSRIndexChecks: malformed patterns are refused when the index is
// made, before any kernel reads with them.
func TestCSRIndexChecks(t *testing.T) {
	for _, c := range []struct {
		name        string
		rowPtr, col []int
	}{
		{"no row pointers", nil, nil},
		{"column outside", []int{0, 1, 2}, []int{1, 2}},
		{"negative column", []int{0, 1, 2}, []int{1, -1}},
		{"decreasing pointers", []int{0, 2, 1, 2}, []int{0, 1}},
		{"pointers end early", []int{0, 1, 1}, []int{0, 1}},
	} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("%s: no panic", c.name)
				}
			}()
			NewCSRIndex(c.rowPtr, c.col)
		}()
	}
}
