#include "textflag.h"

// func mulRowsAsm(dst, x *float64, rowPtr, col *int32, val *float64, lo, hi int)
//
// For each row i in [lo, hi): dst[i] = Σ_k val[k]·x[col[k]] over
// k in [rowPtr[i], rowPtr[i+1]), summed from 0 in entry order with one
// rounded product and one rounded sum per entry (MULSD, ADDSD), exactly
// as the Go loop mulRowsGo (csr.go) does. The caller guarantees the indices.
TEXT ·mulRowsAsm(SB), NOSPLIT, $0-56
	MOVQ dst+0(FP), DI
	MOVQ x+8(FP), SI
	MOVQ rowPtr+16(FP), R8
	MOVQ col+24(FP), R9
	MOVQ val+32(FP), R10
	MOVQ lo+40(FP), CX
	MOVQ hi+48(FP), DX
	CMPQ CX, DX
	JGE  done
	MOVLQSX (R8)(CX*4), AX // k = rowPtr[lo]

row:
	MOVLQSX 4(R8)(CX*4), BX // end = rowPtr[i+1]
	XORPS   X0, X0          // sum = +0
	CMPQ    AX, BX
	JGE     store

entry:
	MOVLQSX (R9)(AX*4), R11 // j = col[k]
	MOVSD   (R10)(AX*8), X1 // val[k]
	MULSD   (SI)(R11*8), X1 // val[k]·x[j]
	ADDSD   X1, X0
	INCQ    AX
	CMPQ    AX, BX
	JLT     entry

store:
	MOVSD X0, (DI)(CX*8)
	INCQ  CX
	CMPQ  CX, DX
	JLT   row

done:
	RET
