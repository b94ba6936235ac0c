package ulam

import (
	"fmt"
	"math"

	"crosspec/dynsys"
)

// Observable names the function a(x) of the weight w(x) = exp(β a(x)).
type Observable int

const (
	// NoObservable: a = 0, so w = 1 whatever β (the plain transfer
	// operator).
	NoObservable Observable = iota
	// SystemObservable: a is the observable of the system file.
	SystemObservable
	// LogExpansion: a = ln |f'(x)| for a 1D map, ln |det Df(x)| in d
	// dimensions (the Lyapunov exponent's observable; with β = 1 − s the
	// weight |f'|^(1−s) of the dimension quantity).
	LogExpansion
)

// weight evaluates w = exp(β a) and a·w at points of the phase space.
type weight struct {
	sys  *dynsys.System
	obs  Observable
	beta float64
	// uniform is true when w = 1 and no derivative is wanted: entries are
	// exact lengths.
	uniform bool
	deriv   bool
	jac     []float64 // scratch for d-dimensional Jacobians (per worker copy)
}

func newWeight(sys *dynsys.System, obs Observable, beta float64, deriv bool) (weight, error) {
	switch obs {
	case NoObservable, LogExpansion:
	case SystemObservable:
		if !sys.HasObservable() {
			return weight{}, fmt.Errorf("ulam: system %s defines no observable", sys.Name)
		}
	default:
		panic(fmt.Sprintf("ulam: unknown observable %d", int(obs)))
	}
	if math.IsNaN(beta) || math.IsInf(beta, 0) {
		return weight{}, fmt.Errorf("ulam: invalid β %v", beta)
	}
	w := weight{sys: sys, obs: obs, beta: beta, deriv: deriv}
	w.uniform = !deriv && (obs == NoObservable || beta == 0)
	return w, nil
}

// clone returns a copy with its own scratch space, for one goroutine.
func (w weight) clone() weight {
	d := w.sys.Dim()
	w.jac = make([]float64, d*d)
	return w
}

// observable1 returns a(x) of a 1D map; buf has length 1.
func (w *weight) observable1(x float64, buf []float64) float64 {
	switch w.obs {
	case SystemObservable:
		buf[0] = x
		return w.sys.Observable(buf)
	case LogExpansion:
		return math.Log(math.Abs(w.sys.DF(x)))
	}
	return 0
}

// at returns w(x) and a(x)·w(x) at a point of a d-dimensional system.
func (w *weight) at(x []float64) (float64, float64) {
	var a float64
	switch w.obs {
	case SystemObservable:
		a = w.sys.Observable(x)
	case LogExpansion:
		w.sys.Jacobian(w.jac, x)
		a = math.Log(math.Abs(det(w.jac, len(x))))
	default:
		return 1, 0
	}
	v := math.Exp(w.beta * a)
	return v, a * v
}

// det returns the determinant of the d×d row-major matrix m (d ≤ 3 in
// closed form, else by Gaussian elimination with partial pivoting on a
// copy).
func det(m []float64, d int) float64 {
	switch d {
	case 1:
		return m[0]
	case 2:
		return m[0]*m[3] - m[1]*m[2]
	case 3:
		return m[0]*(m[4]*m[8]-m[5]*m[7]) - m[1]*(m[3]*m[8]-m[5]*m[6]) + m[2]*(m[3]*m[7]-m[4]*m[6])
	}
	a := append([]float64(nil), m...)
	result := 1.0
	for c := range d {
		p := c
		for r := c + 1; r < d; r++ {
			if math.Abs(a[r*d+c]) > math.Abs(a[p*d+c]) {
				p = r
			}
		}
		if a[p*d+c] == 0 {
			return 0
		}
		if p != c {
			for k := range d {
				a[p*d+k], a[c*d+k] = a[c*d+k], a[p*d+k]
			}
			result = -result
		}
		result *= a[c*d+c]
		for r := c + 1; r < d; r++ {
			f := a[r*d+c] / a[c*d+c]
			for k := c; k < d; k++ {
				a[r*d+k] -= f * a[c*d+k]
			}
		}
	}
	return result
}
