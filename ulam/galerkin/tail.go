package galerkin

import (
	"math"

	"gonum.org/v1/gonum/integrate/quad"

	"crosspec/dynsys"
)

// run is a sequence of laps accumulating at an end of the domain (the
// Gauss map's laps [1/(k+1), 1/k] at 0): laps[r] is the lap of rank r,
// counted from the outermost one, all with the same image. nu0 is the
// natural index of rank 0, estimated as D/W − 1 from the distance D of
// its far end to the accumulation point and its width W (exact for
// branches 1/(ν + y), f = c/x + const near the accumulation point).
type run struct {
	laps []int
	nu0  float64
	// atLo tells whether the laps accumulate at the lower end.
	atLo bool
	acc  float64 // accumulation point
}

// index returns the natural index estimated from the geometry of lap l.
func (r *run) index(l dynsys.Lap) float64 {
	if r.atLo {
		return (l.Hi-r.acc)/(l.Hi-l.Lo) - 1
	}
	return (r.acc-l.Lo)/(l.Hi-l.Lo) - 1
}

// findRun returns the run of laps between the excluded interval at the
// domain end (lo if atLo, else hi) and the point limit, or nil when there
// is no excluded interval there or the laps do not follow the 1/x pattern
// the tail model assumes.
func findRun(ls dynsys.LapSet, lo, hi, limit float64, atLo bool) *run {
	const minLaps = 64
	r := &run{atLo: atLo}
	var edge float64
	found := false
	for _, e := range ls.Excluded {
		if atLo && e.Lo <= lo {
			edge, found = e.Hi, true
		}
		if !atLo && e.Hi >= hi {
			edge, found = e.Lo, true
		}
	}
	if !found {
		return nil
	}
	if atLo {
		r.acc = lo
		// Laps from the excluded edge outwards, inside [edge, limit].
		var inner []int
		for i, l := range ls.Laps {
			if l.Lo >= edge && l.Hi <= limit {
				inner = append(inner, i)
			}
		}
		for k := len(inner) - 1; k >= 0; k-- {
			r.laps = append(r.laps, inner[k])
		}
	} else {
		r.acc = hi
		for i, l := range ls.Laps {
			if l.Hi <= edge && l.Lo >= limit {
				r.laps = append(r.laps, i)
			}
		}
	}
	if len(r.laps) < minLaps {
		return nil
	}
	// Keep the innermost laps that share the innermost lap's image.
	last := ls.Laps[r.laps[len(r.laps)-1]]
	start := len(r.laps) - 1
	for start > 0 {
		l := ls.Laps[r.laps[start-1]]
		if l.FLo != last.FLo || l.FHi != last.FHi {
			break
		}
		start--
	}
	r.laps = r.laps[start:]
	if len(r.laps) < minLaps {
		return nil
	}
	r.nu0 = r.index(ls.Laps[r.laps[0]])
	// The index must grow by one a lap, up to the round-off of the
	// narrowest laps' widths.
	for _, k := range []int{len(r.laps) / 4, len(r.laps) / 2, len(r.laps) - 1} {
		if math.Abs(r.index(ls.Laps[r.laps[k]])-(r.nu0+float64(k))) > 0.25 {
			return nil
		}
	}
	return r
}

// tailRule returns the ranks r_m and weights s_m of a rule
//
//	Σ_{r ≥ first} a(ν0 + r) ≈ Σ_m s_m a(ν0 + r_m)
//
// for contributions a(n) = n^(−2) G(1/n) with G smooth on [0, 1/(ν0+first)]:
// G is interpolated at the ranks nearest to the Chebyshev points of t = 1/n
// on [1/(ν0+last), 1/(ν0+first)] (last the highest rank the lap scan
// resolved), and the interpolant is summed over all n = ν0 + r, r ≥ first:
// s_m = n_m² Σ_r n_r^(−2) ℓ_m(1/n_r), with ℓ_m the Lagrange polynomials.
// The sum runs directly over 10⁵ ranks and by the midpoint Euler–Maclaurin
// formula beyond, Σ_{n ≥ c+½} n^(−2) ℓ(1/n) = ∫_0^{1/c} ℓ(t) dt + F'(c)/24 + …,
// F(n) = n^(−2) ℓ(1/n), whose neglected terms are O(c^(−5)).
func tailRule(nu0 float64, first, last, nodes int) (ranks []int, weights []float64, check float64) {
	// The rule is checked on a(n) = 1/((n+y)(n+y+1)), whose tail sums are
	// 1/(ν+y) (a telescoping sum) and which has the analytic structure of
	// the contributions (G(t) = 1/((1+yt)(1+(y+1)t)), poles at t ≤ −1/2).
	// A rule whose snapped nodes spoil it (too many nodes crowding the
	// integers near 1/ν) is replaced by one with fewer nodes; the best
	// one is kept, with its relative error on the check as check.
	nuFirst := nu0 + float64(first)
	check = math.Inf(1)
	for m := nodes; m >= 4; m-- {
		rk, w := tailRuleNodes(nu0, first, last, m)
		worst := 0.0
		for _, y := range []float64{0, 1} {
			var s float64
			for k, r := range rk {
				n := nu0 + float64(r) + y
				s += w[k] / (n * (n + 1))
			}
			worst = max(worst, math.Abs(s*(nuFirst+y)-1))
		}
		if worst < check {
			ranks, weights, check = rk, w, worst
		}
		if worst <= 1e-13 {
			break
		}
	}
	return ranks, weights, check
}

func tailRuleNodes(nu0 float64, first, last, nodes int) (ranks []int, weights []float64) {
	tHi := 1 / (nu0 + float64(first))
	seen := map[int]bool{}
	for m := range nodes {
		t := 0.5 * tHi * (1 + math.Cos(math.Pi*(float64(m)+0.5)/float64(nodes)))
		r := first + last
		if t > 0 {
			r = int(math.Round(1/t - nu0))
		}
		r = min(max(r, first), last)
		if !seen[r] {
			seen[r] = true
			ranks = append(ranks, r)
		}
	}
	M := len(ranks)
	ts := make([]float64, M)
	for m, r := range ranks {
		ts[m] = 1 / (nu0 + float64(r))
	}
	// Barycentric weights in the variable scaled to the interval.
	half := 0.5 * tHi
	bw := make([]float64, M)
	for m := range M {
		prod := 1.0
		for k := range M {
			if k != m {
				prod *= (ts[m] - ts[k]) / half
			}
		}
		bw[m] = 1 / prod
	}
	lagrange := func(dst []float64, t float64) {
		var den float64
		for m := range M {
			if t == ts[m] {
				clear(dst)
				dst[m] = 1
				return
			}
		}
		for m := range M {
			dst[m] = bw[m] / ((t - ts[m]) / half)
			den += dst[m]
		}
		for m := range M {
			dst[m] /= den
		}
	}
	sums := make([]float64, M)
	ell := make([]float64, M)
	const direct = 100000
	for r := first; r < first+direct; r++ {
		n := nu0 + float64(r)
		lagrange(ell, 1/n)
		for m := range M {
			sums[m] += ell[m] / (n * n)
		}
	}
	c := nu0 + float64(first+direct) - 0.5
	qx, qw := make([]float64, M), make([]float64, M)
	quad.Legendre{}.FixedLocations(qx, qw, 0, 1/c)
	for q := range qx {
		lagrange(ell, qx[q])
		for m := range M {
			sums[m] += qw[q] * ell[m]
		}
	}
	// F'(c)/24 with F(n) ≈ ℓ(1/n)/n²: −2ℓ(1/c)/(24c³), the ℓ' term being
	// smaller by 1/c.
	lagrange(ell, 1/c)
	for m := range M {
		sums[m] -= ell[m] / (12 * c * c * c)
	}
	weights = make([]float64, M)
	for m := range M {
		n := 1 / ts[m]
		weights[m] = sums[m] * n * n
	}
	return ranks, weights
}
