//go:build !amd64

package krylov

var useFMA4 = false

func dots4x2Asm(v0, v1, v2, v3, x, z *float64, n int, out *[32]float64) {
	panic("krylov: no vector kernels on this architecture")
}

func axpy4x2Asm(x, z *float64, n int, c *[8]float64, v0, v1, v2, v3 *float64) {
	panic("krylov: no vector kernels on this architecture")
}
