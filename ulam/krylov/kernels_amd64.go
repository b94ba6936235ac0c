package krylov

// useFMA4 says whether the AVX2/FMA kernels of kernels_amd64.s may run:
// the processor has AVX2 and FMA and the operating system saves the YMM
// registers.
var useFMA4 = hasAVX2FMA()

func hasAVX2FMA() bool

// dots4x2Asm accumulates, over the first n rows (n a multiple of 4, n > 0),
// the fused multiply–adds of the four vectors at v0…v3 with x and with z
// in four lanes each (row i into lane i mod 4): out[8k+lane] for v_k·x,
// out[8k+4+lane] for v_k·z.
//
//go:noescape
func dots4x2Asm(v0, v1, v2, v3, x, z *float64, n int, out *[32]float64)

// axpy4x2Asm performs, for the first n rows (n a multiple of 4, n > 0),
// x[i] = fma(c[3], v3[i], fma(c[2], v2[i], fma(c[1], v1[i], fma(c[0], v0[i], x[i]))))
// and the same for z with c[4…7].
//
//go:noescape
func axpy4x2Asm(x, z *float64, n int, c *[8]float64, v0, v1, v2, v3 *float64)
