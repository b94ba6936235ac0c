package compare

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/stat"
)

// Ulam analyses a sequence of Ulam estimates values[i] computed on partitions
// of cells[i] cells (cells strictly increasing, typically doubling). It
// measures the observed algebraic order, extrapolates in the cell size when
// the order is stable and attaches an error bar; see the package
// documentation for the model. Ulam panics if the lengths differ or cells is
// not positive and strictly increasing. Non-finite values are dropped and
// the drop is reported in Reason.
func Ulam(cells []int, values []float64, s *Settings) Estimate {
	checkShape("Ulam", "cells", cells, values)
	set := s.withDefaults()
	cells, values, note := dropNonFinite(cells, values)
	est := ulam(cells, values, set)
	est.Reason = note + est.Reason
	return est
}

func ulam(cells []int, values []float64, set Settings) Estimate {
	n := len(values)
	if n == 0 {
		return Estimate{Value: math.NaN(), Error: math.Inf(1), Last: math.NaN(), Order: math.NaN(),
			Status: TooFewPoints, Reason: "ulam: no estimates"}
	}
	last := values[n-1]
	scale := maxAbs(values)
	if n == 1 {
		return Estimate{Value: last, Error: math.Inf(1), Last: last, Order: math.NaN(),
			Status: TooFewPoints, Reason: "ulam: a single estimate has no error bar", Used: cells[0]}
	}
	d := differences(values)
	// A single tiny difference between two Ulam estimates is more often a
	// crossing of an erratic sequence than the floor: demand two. The
	// floor is that of the eigen-solves' stopping test (Settings.SolverTol).
	level := math.Max(set.RoundOff, 2*set.SolverTol) * scale
	if start := roundOffFloor(d, level); start >= 0 && start <= len(d)-2 {
		return floorEstimate(cells, values, start, set, scale, level, "ulam")
	}
	spreadErr := math.Max(set.SpreadFactor*spread(tail(values, set.SpreadPoints), last), minError(scale))
	if n < set.MinPoints {
		return Estimate{Value: last, Error: spreadErr, Last: last, Order: logLogOrder(cells, d),
			Status: TooFewPoints, Used: cells[n-1],
			Reason: fmt.Sprintf("ulam: %d estimates, at least %d needed to judge the convergence; error from their spread", n, set.MinPoints)}
	}

	h := make([]float64, n)
	for i, c := range cells {
		h[i] = 1 / float64(c)
	}
	// Local orders p[j] and Richardson values r[j] of the three-point fits
	// v = L + C h^p through points j, j+1, j+2.
	p := make([]float64, n-2)
	r := make([]float64, n-2)
	for j := range p {
		p[j] = localOrder(h[j], h[j+1], h[j+2], d[j], d[j+1])
		r[j] = math.NaN()
		if !math.IsNaN(p[j]) {
			r[j] = richardson(h[j+1], h[j+2], values[j+1], values[j+2], p[j])
		}
	}
	window := min(set.SpreadPoints-1, len(p))
	stable, why := stableOrder(tail(p, window), set)
	rs := tail(r, window)
	if stable {
		// Richardson must make the sequence more consistent: its values,
		// which share the last point, must spread less than the raw
		// estimates they come from. An erratic sequence whose local orders
		// agree by chance fails this.
		raw := tail(values, window+1)
		if !(spread(rs, rs[len(rs)-1]) < spread(raw[:len(raw)-1], raw[len(raw)-1])) {
			stable = false
			why = "Richardson extrapolations spread as much as the raw estimates"
		}
	}
	if !stable {
		return Estimate{Value: last, Error: spreadErr, Last: last, Order: logLogOrder(cells, d),
			Status: Irregular, Used: cells[n-1],
			Reason: fmt.Sprintf("ulam: %s; value is the last estimate, error from the spread of the last %d estimates",
				why, min(set.SpreadPoints, n))}
	}
	value := rs[len(rs)-1]
	err := math.Max(set.SpreadFactor*spread(rs, value), minError(scale))
	return Estimate{Value: value, Error: err, Last: last, Order: p[len(p)-1], Status: Converged,
		Used: cells[n-1],
		Reason: fmt.Sprintf("ulam: stable order %.3g over the last %d triples; Richardson extrapolation in 1/N, error from the spread of the last %d extrapolations",
			p[len(p)-1], window, window)}
}

// differences returns d[i] = v[i+1] − v[i].
func differences(v []float64) []float64 {
	if len(v) < 2 {
		return nil
	}
	d := make([]float64, len(v)-1)
	for i := range d {
		d[i] = v[i+1] - v[i]
	}
	return d
}

// localOrder returns the order p of the fit v = L + C h^p through three
// points with cell sizes h0 > h1 > h2 and differences d0 = v1 − v0,
// d1 = v2 − v1, or NaN when no positive order fits (differences of opposite
// signs or a ratio outside the range of orders 1e-3…40). With x = h1/h0 and
// y = h2/h1 the order solves d0/d1 = (1 − x^p) / (x^p (1 − y^p)), which is
// r^p for a constant refinement ratio r = 1/x = 1/y; the right-hand side
// increases with p and the root is found by bisection.
func localOrder(h0, h1, h2, d0, d1 float64) float64 {
	if d0 == 0 || d1 == 0 || (d0 > 0) != (d1 > 0) {
		return math.NaN()
	}
	target := d0 / d1
	x, y := h1/h0, h2/h1
	g := func(p float64) float64 {
		xp := math.Pow(x, p)
		return (1 - xp) / (xp * (1 - math.Pow(y, p)))
	}
	lo, hi := 1e-3, 40.0
	if target < g(lo) || target > g(hi) {
		return math.NaN()
	}
	for range 200 {
		mid := 0.5 * (lo + hi)
		if g(mid) < target {
			lo = mid
		} else {
			hi = mid
		}
		if hi-lo <= 1e-12*hi {
			break
		}
	}
	return 0.5 * (lo + hi)
}

// richardson returns the limit h → 0 of v = L + C h^p through the points
// (h0, v0) and (h1, v1): L = v1 + (v1 − v0) h1^p / (h0^p − h1^p)
// (L. F. Richardson, Phil. Trans. R. Soc. A 210 (1911) 307–357; common
// practice).
func richardson(h0, h1, v0, v1, p float64) float64 {
	xp := math.Pow(h1/h0, p)
	return v1 + (v1-v0)*xp/(1-xp)
}

// stableOrder reports whether the local orders p are all defined, plausible
// and within set.OrderTolerance of each other, and if not, why.
func stableOrder(p []float64, set Settings) (bool, string) {
	if len(p) < 2 {
		return false, "too few local orders to judge stability"
	}
	lo, hi := math.Inf(1), math.Inf(-1)
	for _, q := range p {
		if math.IsNaN(q) {
			return false, "successive differences change sign or do not shrink: no stable order"
		}
		if q < set.MinOrder || q > set.MaxOrder {
			return false, fmt.Sprintf("local order %.3g outside [%g, %g]", q, set.MinOrder, set.MaxOrder)
		}
		lo = math.Min(lo, q)
		hi = math.Max(hi, q)
	}
	if hi-lo > set.OrderTolerance {
		return false, fmt.Sprintf("local orders vary from %.3g to %.3g", lo, hi)
	}
	return true, ""
}

// logLogOrder returns the mean algebraic order of an irregular sequence: minus
// the least-squares slope of ln|d_i| against ln N at the geometric middle
// sqrt(N_i N_{i+1}) of each difference (gonum stat.LinearRegression). Zero
// differences are left out; NaN when fewer than two remain.
func logLogOrder(cells []int, d []float64) float64 {
	var x, y []float64
	for i, di := range d {
		if di == 0 {
			continue
		}
		x = append(x, 0.5*(math.Log(float64(cells[i]))+math.Log(float64(cells[i+1]))))
		y = append(y, math.Log(math.Abs(di)))
	}
	if len(x) < 2 {
		return math.NaN()
	}
	_, slope := stat.LinearRegression(x, y, nil, false)
	return -slope
}
