package cycles

import (
	"fmt"
	"math"
)

// CurvePoint is the leading eigenvalue of the weighted operator at one β,
// from the expansion truncated at the longest length.
type CurvePoint struct {
	Beta float64
	// Leading is λ_0(β) and Pressure P(β) = ln λ_0(β).
	Leading, Pressure float64
	// Floor is the round-off floor of Leading.
	Floor float64
}

// LeadingCurve follows the leading eigenvalue λ_0(β) of the expansion of
// the cycles along betas. The cycle weights e^{βA_p}/Π|1 − Λ^r| are
// positive for every β, so the leading eigenvalue is the Perron root of a
// positive operator: a simple real positive eigenvalue of largest modulus,
// which varies continuously (indeed analytically) with β. At every β it is
// therefore the largest real positive zero of the truncated expansion, and
// reweighting the same expansion keeps every point on that branch; P(β) =
// ln λ_0(β) is the pressure curve. settings gives the truncation, function
// and orbit sum; its Beta is ignored. An error is returned at a β where
// the truncation has no real positive zero.
func LeadingCurve(cycles []Cycle, betas []float64, settings *Settings) ([]CurvePoint, error) {
	var s Settings
	if settings != nil {
		s = *settings
	}
	if len(betas) == 0 {
		return nil, nil
	}
	s.Beta = betas[0]
	e, err := NewExpansion(cycles, &s)
	if err != nil {
		return nil, err
	}
	out := make([]CurvePoint, 0, len(betas))
	for i, beta := range betas {
		if i > 0 {
			if e, err = e.reweighted(beta, s.Sum); err != nil {
				return nil, err
			}
		}
		orders := e.Orders()
		last := orders[len(orders)-1]
		k := leadingIndex(last.Eigenvalues)
		if k < 0 || !(real(last.Eigenvalues[k]) > 0) {
			return out, fmt.Errorf("cycles: no real positive leading eigenvalue at β = %g (length %d)", beta, last.MaxLen)
		}
		l := real(last.Eigenvalues[k])
		out = append(out, CurvePoint{Beta: beta, Leading: l, Pressure: math.Log(l), Floor: last.EigenvalueFloors[k]})
	}
	return out, nil
}
