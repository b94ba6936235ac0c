package krylov

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/lapack"
	"gonum.org/v1/gonum/lapack/gonum"
)

var lapackImpl gonum.Implementation

// schurForm is the real Schur factorisation H = Q T Qᵀ of the m×m
// Rayleigh quotient of a Krylov–Schur decomposition, with T upper
// quasi-triangular in standard form (2×2 blocks for complex conjugate pairs)
// and Q orthogonal. Both are row-major with leading dimension m.
type schurForm struct {
	m    int
	t, q []float64
	tau  []float64
	wr   []float64
	wi   []float64
	work []float64
}

func newSchurForm(m int) *schurForm {
	f := &schurForm{
		m:   m,
		t:   make([]float64, m*m),
		q:   make([]float64, m*m),
		tau: make([]float64, max(1, m-1)),
		wr:  make([]float64, m),
		wi:  make([]float64, m),
	}
	query := make([]float64, 1)
	lwork := max(3*m, 1)
	lapackImpl.Dgehrd(m, 0, m-1, f.t, m, f.tau, query, -1)
	lwork = max(lwork, int(query[0]))
	lapackImpl.Dorghr(m, 0, m-1, f.q, m, f.tau, query, -1)
	lwork = max(lwork, int(query[0]))
	lapackImpl.Dhseqr(lapack.EigenvaluesAndSchur, lapack.SchurOrig, m, 0, m-1, f.t, m, f.wr, f.wi, f.q, m, query, -1)
	lwork = max(lwork, int(query[0]))
	f.work = make([]float64, lwork)
	return f
}

var errSchur = errors.New("krylov: the QR algorithm failed on the projected matrix")

// factor computes the Schur form of the leading m×m block of the row-major
// matrix h with leading dimension ldh: a Hessenberg reduction (Dgehrd,
// Dorghr) followed by the QR algorithm (Dhseqr), because after a restart the
// Rayleigh quotient is no longer Hessenberg.
func (f *schurForm) factor(h []float64, ldh int) error {
	m := f.m
	for i := range m {
		copy(f.t[i*m:(i+1)*m], h[i*ldh:i*ldh+m])
	}
	lapackImpl.Dgehrd(m, 0, m-1, f.t, m, f.tau, f.work, len(f.work))
	copy(f.q, f.t)
	lapackImpl.Dorghr(m, 0, m-1, f.q, m, f.tau, f.work, len(f.work))
	for i := 2; i < m; i++ {
		for j := 0; j < i-1; j++ {
			f.t[i*m+j] = 0
		}
	}
	if lapackImpl.Dhseqr(lapack.EigenvaluesAndSchur, lapack.SchurOrig, m, 0, m-1, f.t, m, f.wr, f.wi, f.q, m, f.work, len(f.work)) > 0 {
		return errSchur
	}
	return nil
}

// blockSize returns 2 if a 2×2 block (a complex conjugate pair) starts at
// row i of T, else 1.
func (f *schurForm) blockSize(i int) int {
	if i+1 < f.m && f.t[(i+1)*f.m+i] != 0 {
		return 2
	}
	return 1
}

// eigenvalue returns the eigenvalue of the diagonal block starting at row
// i, the one with positive imaginary part for a 2×2 block in standard form
// [a b; c a], whose eigenvalues are a ± i √|b c|.
func (f *schurForm) eigenvalue(i int) complex128 {
	m := f.m
	a := f.t[i*m+i]
	if f.blockSize(i) == 1 {
		return complex(a, 0)
	}
	im := math.Sqrt(math.Abs(f.t[i*m+i+1])) * math.Sqrt(math.Abs(f.t[(i+1)*m+i]))
	return complex(a, im)
}

// sortTop moves the diagonal blocks of largest modulus to the top of T by
// orthogonal swaps (Dtrexc, which keeps a pair's 2×2 block together and
// updates Q), until the first count rows are sorted by decreasing modulus;
// ties go to the larger real part, then to the block found first. If a swap
// is refused as too ill-conditioned the sort stops there: the
// decomposition stays exact, only the order is imperfect.
func (f *schurForm) sortTop(count int) {
	m := f.m
	for pos := 0; pos < min(count, m); pos += f.blockSize(pos) {
		best := pos
		bestValue := f.eigenvalue(pos)
		bestModulus := cmplxAbs(bestValue)
		for i := pos + f.blockSize(pos); i < m; i += f.blockSize(i) {
			v := f.eigenvalue(i)
			if mod := cmplxAbs(v); mod > bestModulus || (mod == bestModulus && real(v) > real(bestValue)) {
				best, bestValue, bestModulus = i, v, mod
			}
		}
		if best == pos {
			continue
		}
		if _, _, ok := lapackImpl.Dtrexc(lapack.UpdateSchur, m, f.t, m, f.q, m, best, pos, f.work); !ok {
			return
		}
	}
}

// ritzVectors returns the right eigenvectors Y of the leading kk×kk block
// of T (Dtrevc3), kk×kk row-major, in LAPACK's real layout: a real
// eigenvalue's vector in one column, a pair's vector for the eigenvalue with
// positive imaginary part as real and imaginary parts in two adjacent
// columns. Because T is quasi-triangular, [Y; 0] are eigenvectors of T.
func (f *schurForm) ritzVectors(kk int) []float64 {
	y := make([]float64, kk*kk)
	work := make([]float64, max(1, 3*kk))
	lapackImpl.Dtrevc3(lapack.EVRight, lapack.EVAll, nil, kk, f.t, f.m, nil, 1, y, kk, kk, work, len(work))
	return y
}

func cmplxAbs(z complex128) float64 { return math.Hypot(real(z), imag(z)) }
