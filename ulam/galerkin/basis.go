package galerkin

import (
	"fmt"
	"math"
	"slices"

	"crosspec/dynsys"
	"crosspec/ulam"
)

// legendreTo writes the orthonormal Legendre functions
// sqrt((2a+1)/h) P_a(t), a = 0 … len(dst)−1, of a cell of width h at the
// local coordinate t ∈ [−1, 1] into dst (Bonnet's recurrence).
func legendreTo(dst []float64, t, h float64) {
	p0, p1 := 1.0, t
	for a := range dst {
		var v float64
		switch a {
		case 0:
			v = p0
		case 1:
			v = p1
		default:
			fa := float64(a)
			p0, p1 = p1, ((2*fa-1)*t*p1-(fa-1)*p0)/fa
			v = p1
		}
		dst[a] = v * math.Sqrt((2*float64(a)+1)/h)
	}
}

// weight evaluates w = exp(β a) and a at points of a 1D map.
type weight struct {
	sys  *dynsys.System
	obs  ulam.Observable
	beta float64
	buf  [1]float64
}

func newWeight(sys *dynsys.System, obs ulam.Observable, beta float64) (weight, error) {
	switch obs {
	case ulam.NoObservable, ulam.LogExpansion:
	case ulam.SystemObservable:
		if !sys.HasObservable() {
			return weight{}, fmt.Errorf("galerkin: system %s defines no observable", sys.Name)
		}
	default:
		panic(fmt.Sprintf("galerkin: unknown observable %d", int(obs)))
	}
	if math.IsNaN(beta) || math.IsInf(beta, 0) {
		return weight{}, fmt.Errorf("galerkin: invalid β %v", beta)
	}
	return weight{sys: sys, obs: obs, beta: beta}, nil
}

// at returns w(x) and a(x).
func (w *weight) at(x float64) (float64, float64) {
	var a float64
	switch w.obs {
	case ulam.SystemObservable:
		w.buf[0] = x
		a = w.sys.Observable(w.buf[:])
	case ulam.LogExpansion:
		a = math.Log(math.Abs(w.sys.DF(x)))
	default:
		return 1, 0
	}
	if w.beta == 0 {
		return 1, a
	}
	return math.Exp(w.beta * a), a
}

// cellOf returns the index of the cell [edges[i], edges[i+1]] holding y,
// clamped to the grid.
func cellOf(edges []float64, y float64) int {
	i, _ := slices.BinarySearch(edges, y)
	// edges[i−1] < y ≤ edges[i]
	return min(max(i-1, 0), len(edges)-2)
}
