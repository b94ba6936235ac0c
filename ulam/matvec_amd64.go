package ulam

// mulRowsAsm is mulRowsGo in assembly (matvec_amd64.s): the same
// operations in the same order, so the same bytes, without the bounds
// checks and loop bookkeeping that made the Go loop compute-bound (4.1 ms
// a 10⁶-cell mat-vec on one core against 1.8 ms for the same loop in C,
// measured 2026-12-02). The caller checks the indices once, when the
// compact index is made (compactIndex).
//
//go:noescape
func mulRowsAsm(dst, x *float64, rowPtr, col *int32, val *float64, lo, hi int)

func mulRows(dst, x []float64, rowPtr, col []int32, val []float64, lo, hi int) {
	if lo >= hi {
		return
	}
	mulRowsAsm(&dst[0], &x[0], &rowPtr[0], colBase(col), valBase(val), lo, hi)
}

// colBase and valBase return the address of the first element, or nil for
// an empty slice (a matrix without nonzeros, whose rows read nothing).
func colBase(c []int32) *int32 {
	if len(c) == 0 {
		return nil
	}
	return &c[0]
}

func valBase(v []float64) *float64 {
	if len(v) == 0 {
		return nil
	}
	return &v[0]
}
