package galerkin

import (
	"fmt"
	"math"

	"crosspec/dynsys"
)

// ChebyshevMatrix is the collocation matrix of the transfer operator of a
// 1D map on the n Chebyshev–Lobatto points y_i of the whole domain:
//
//	A_ik = (L ℓ_k)(y_i) = Σ_{x: f(x) = y_i} w(x) ℓ_k(x)/|f'(x)|,
//
// with ℓ_k the Lagrange polynomials of the points. A acts on the values of
// a density at the points (it is the transfer operator on polynomials of
// degree < n, in the nodal basis), so its leading right eigenvector is the
// (conditionally) invariant density at the points.
type ChebyshevMatrix struct {
	// Points are the y_i, decreasing: y_i = c + r cos(πi/(n−1)).
	Points []float64
	// Val is A, row-major; Derivative is dA/dβ (a·w in place of w), or nil.
	Val        []float64
	Derivative []float64
	// ExcludedLength is the length of the domain whose laps were left out
	// and not covered by the tail model.
	ExcludedLength float64
	// TailLaps counts the laps whose contribution came from the tail model.
	TailLaps int
	// TailCheck is the relative error of the tail rule on a sum known in
	// closed form (see the package documentation); zero without a tail.
	TailCheck float64
	// transposed marks the operator returned by Transpose.
	transposed bool
}

// Dim returns n.
func (m *ChebyshevMatrix) Dim() int { return len(m.Points) }

// NNZ returns n², the entries of the dense matrix.
func (m *ChebyshevMatrix) NNZ() int { return len(m.Val) }

// Apply sets dst = A x (Aᵀ x for a transposed matrix). It implements
// krylov.Operator.
func (m *ChebyshevMatrix) Apply(dst, x []float64) { m.mulVec(dst, x, m.Val) }

// ApplyDerivative sets dst = (dA/dβ) x.
func (m *ChebyshevMatrix) ApplyDerivative(dst, x []float64) {
	if m.Derivative == nil {
		panic("galerkin: matrix assembled without its derivative")
	}
	m.mulVec(dst, x, m.Derivative)
}

// Transpose returns an operator applying Aᵀ (sharing the arrays).
func (m *ChebyshevMatrix) Transpose() *ChebyshevMatrix {
	t := *m
	t.transposed = !m.transposed
	return &t
}

func (m *ChebyshevMatrix) mulVec(dst, x, val []float64) {
	n := m.Dim()
	if len(dst) != n || len(x) != n {
		panic(fmt.Sprintf("galerkin: mat-vec with vectors of length %d and %d, want %d", len(dst), len(x), n))
	}
	if m.transposed {
		clear(dst)
		for i := range n {
			xi := x[i]
			for k, v := range val[i*n : (i+1)*n] {
				dst[k] += v * xi
			}
		}
		return
	}
	for i := range n {
		var s float64
		for k, v := range val[i*n : (i+1)*n] {
			s += v * x[k]
		}
		dst[i] = s
	}
}

// chebyshevPoints returns the n Chebyshev–Lobatto points of [lo, hi] and
// their barycentric weights (−1)^k, halved at the ends (J.-P. Berrut and
// L. N. Trefethen, SIAM Rev. 46 (2004) 501–517 (from memory)).
func chebyshevPoints(lo, hi float64, n int) (pts, bw []float64) {
	pts, bw = make([]float64, n), make([]float64, n)
	for k := range n {
		pts[k] = 0.5*(lo+hi) + 0.5*(hi-lo)*math.Cos(math.Pi*float64(k)/float64(n-1))
		bw[k] = 1
		if k%2 == 1 {
			bw[k] = -1
		}
	}
	pts[0], pts[n-1] = hi, lo
	bw[0] *= 0.5
	bw[n-1] *= 0.5
	return pts, bw
}

// lagrangeTo writes ℓ_k(x), k = 0 … n−1, into dst by the barycentric formula.
func lagrangeTo(dst, pts, bw []float64, x float64) {
	for k, p := range pts {
		if x == p {
			clear(dst)
			dst[k] = 1
			return
		}
	}
	var den float64
	for k, p := range pts {
		dst[k] = bw[k] / (x - p)
		den += dst[k]
	}
	for k := range dst {
		dst[k] /= den
	}
}

// AssembleChebyshev builds the collocation matrix of a 1D map on Size
// Chebyshev points of its domain.
func AssembleChebyshev(sys *dynsys.System, settings *Settings) (*ChebyshevMatrix, error) {
	set := settings.withDefaults()
	if sys.Dim() != 1 {
		return nil, fmt.Errorf("galerkin: %s has dimension %d; the Galerkin bases are for 1D maps", sys.Name, sys.Dim())
	}
	wt, err := newWeight(sys, set.Observable, set.Beta)
	if err != nil {
		return nil, err
	}
	ls, err := sys.Laps(set.Laps)
	if err != nil {
		return nil, err
	}
	n := set.Size
	lo, hi := sys.Lo[0], sys.Hi[0]
	pts, bw := chebyshevPoints(lo, hi, n)
	m := &ChebyshevMatrix{Points: pts, Val: make([]float64, n*n), ExcludedLength: ls.ExcludedLength}
	if set.Derivative {
		m.Derivative = make([]float64, n*n)
	}
	ell := make([]float64, n)

	// A lap end where |f'| one ulp inside is below sqrtEps times the
	// lap's mean slope is a critical point (there |f'| ~ ε times the
	// slope): 1/|f'| is unbounded and the basis does not apply.
	const sqrtEps = 0x1p-26

	// addLap adds scale times lap l's contributions to every row whose
	// point lies in the lap's image.
	addLap := func(l dynsys.Lap, scale, shift float64) error {
		_, ya, _, yb, ok := sys.ClipLap(l, lo, hi)
		if !ok {
			return nil
		}
		ymin, ymax := min(ya, yb), max(ya, yb)
		for i, y := range pts {
			if y < ymin || y > ymax {
				continue
			}
			x, ok := sys.Preimage(l, y)
			if !ok {
				return fmt.Errorf("galerkin: %s: no preimage of %g on the lap [%g, %g]", sys.Name, y, l.Lo, l.Hi)
			}
			// At a lap end (the preimage of an end of the lap's image)
			// f' and the weight are the lap's one-sided limits: taken one
			// ulp inside, where a kink's formula (the tent map's
			// abs(1 − 2x) at 1/2) already follows the lap's branch, while
			// at a critical point f' is still at round-off. The basis
			// functions are evaluated at x itself (which may be a node).
			xd := x
			if x <= l.Lo {
				xd = math.Nextafter(l.Lo, l.Hi)
			} else if x >= l.Hi {
				xd = math.Nextafter(l.Hi, l.Lo)
			}
			df := sys.DF(xd)
			if slope := math.Abs(l.FHi-l.FLo) / (l.Hi - l.Lo); !(math.Abs(df) > sqrtEps*slope) {
				return fmt.Errorf("galerkin: %s: the Chebyshev basis needs |f'| > 0 at every preimage of the points, f'(%g) = %g (a critical point)", sys.Name, xd, df)
			}
			w, obs := wt.at(xd)
			c := scale * w / math.Abs(df)
			if math.IsNaN(c) || math.IsInf(c, 0) {
				return fmt.Errorf("galerkin: %s: weight %g at the preimage %g of a point", sys.Name, w, xd)
			}
			lagrangeTo(ell, pts, bw, x)
			row := m.Val[i*n : (i+1)*n]
			for k, v := range ell {
				row[k] += c * v
			}
			if m.Derivative != nil {
				drow := m.Derivative[i*n : (i+1)*n]
				for k, v := range ell {
					drow[k] += c * (obs + shift) * v
				}
			}
		}
		return nil
	}

	inRun := map[int]bool{}
	for _, atLo := range []bool{true, false} {
		r := findRun(ls, lo, hi, map[bool]float64{true: hi, false: lo}[atLo], atLo)
		if r == nil {
			continue
		}
		// The laps of rank < first are summed exactly, the rest by the
		// tail model.
		first := min(set.TailStart, len(r.laps)/2)
		for _, li := range r.laps[first:] {
			inRun[li] = true
		}
		rule, shifts, covered, err := r.model(sys, ls, first, set)
		if err != nil {
			return nil, err
		}
		for k, rk := range rule.ranks {
			if err := addLap(ls.Laps[r.laps[rk]], rule.weights[k], shifts[k]); err != nil {
				return nil, err
			}
		}
		m.TailCheck = max(m.TailCheck, rule.check)
		m.TailLaps += len(r.laps) - first
		m.ExcludedLength -= covered
	}
	m.ExcludedLength = max(m.ExcludedLength, 0)
	for li, l := range ls.Laps {
		if inRun[li] {
			continue
		}
		if err := addLap(l, 1, 0); err != nil {
			return nil, err
		}
	}
	return m, nil
}
