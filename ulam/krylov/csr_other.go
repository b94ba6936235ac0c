//go:build !amd64

package krylov

func mulRows(dst, x []float64, rowPtr, col []int32, val []float64, lo, hi int) {
	mulRowsGo(dst, x, rowPtr, col, val, lo, hi)
}
