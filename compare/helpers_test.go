package compare

import (
	"math"
	"math/rand/v2"
)

// doublingCells returns 1024, 2048, …, last.
func doublingCells(last int) []int {
	var cells []int
	for n := 1024; n <= last; n *= 2 {
		cells = append(cells, n)
	}
	return cells
}

// lengths returns 1, 2, …, n.
func lengths(n int) []int {
	out := make([]int, n)
	for i := range out {
		out[i] = i + 1
	}
	return out
}

// sample evaluates f at each resolution.
func sample(res []int, f func(x float64) float64) []float64 {
	v := make([]float64, len(res))
	for i, r := range res {
		v[i] = f(float64(r))
	}
	return v
}

// Erratic Ulam families: v_N = L + s_N C a_N / N^order with random signs s_N
// and, by kind, a_N = 1 + 0.9 sin(kN) (the sequence the issue describes),
// a_N log-uniform over two decades (N·error varying by two orders of
// magnitude between neighbouring N, as measured on real runs), or
// a_N = (1 + 0.9 sin(kN)) ln N (the log N / N law made erratic). order 1/2
// mimics test-point Ulam in 2D (error ~ h = N^(−1/2)). L, C and k are drawn
// from a PCG generator seeded by seed, so every sequence is reproducible.
const (
	erraticSine = iota
	erraticTwoDecades
	erraticLog
	erraticKinds
)

func erraticUlam(kind int, seed uint64, last int, order float64) (cells []int, values []float64, limit float64) {
	rng := rand.New(rand.NewPCG(seed, 0x5eed))
	limit = 0.5 + rng.Float64()
	c := math.Pow(10, -1+2*rng.Float64())
	k := 0.1 + 3*rng.Float64()
	cells = doublingCells(last)
	for _, n := range cells {
		x := float64(n)
		sign := 1.0
		if rng.IntN(2) == 0 {
			sign = -1
		}
		var a float64
		switch kind {
		case erraticSine:
			a = 1 + 0.9*math.Sin(k*x)
		case erraticTwoDecades:
			a = math.Pow(10, -1+2*rng.Float64())
		case erraticLog:
			a = (1 + 0.9*math.Sin(k*x)) * math.Log(x)
		}
		values = append(values, limit+sign*c*a/math.Pow(x, order))
	}
	return cells, values, limit
}

// Synthetic cycle families, n = 1 … nmax: by kind, C exp(−a n² + b n)
// (super-exponential after a pre-asymptotic hump when b > 0), C1 q1^n +
// C2 q2^n (two geometric terms, beating when q2 ≈ −q1), and
// C exp(−a n² + b n) (1 + 0.3 sin(kn)) (super-exponential with a wobble).
const (
	cycleGauss = iota
	cycleTwoGeometric
	cycleWobbly
	cycleKinds
)

func syntheticCycles(kind int, seed uint64, nmax int) (orders []int, values []float64, limit float64) {
	rng := rand.New(rand.NewPCG(seed, 0xc1c1e))
	limit = 0.5 + rng.Float64()
	c := math.Pow(10, -1+2*rng.Float64())
	if rng.IntN(2) == 0 {
		c = -c
	}
	a := 0.03 + 0.27*rng.Float64()
	b := -1 + 2*rng.Float64()
	q1 := 0.1 + 0.5*rng.Float64()
	if rng.IntN(2) == 0 {
		q1 = -q1
	}
	q2 := q1 * (-0.9 + 1.8*rng.Float64())
	c2 := c * (-1 + 2*rng.Float64())
	k := 0.3 + 2*rng.Float64()
	orders = lengths(nmax)
	for _, n := range orders {
		x := float64(n)
		var e float64
		switch kind {
		case cycleGauss:
			e = c * math.Exp(-a*x*x+b*x)
		case cycleTwoGeometric:
			e = c*math.Pow(q1, x) + c2*math.Pow(q2, x)
		case cycleWobbly:
			e = c * math.Exp(-a*x*x+b*x) * (1 + 0.3*math.Sin(k*x))
		}
		values = append(values, limit+e)
	}
	return orders, values, limit
}

// checkBar reports whether the bar contains the truth and is at most
// MaxOverstatement times the true error floored at TrueErrorFloor: the
// acceptance rule of the package documentation.
func checkBar(e Estimate, truth float64) (contains, tight bool) {
	trueErr := math.Abs(e.Value - truth)
	contains = trueErr <= e.Error
	tight = e.Error <= MaxOverstatement*math.Max(trueErr, TrueErrorFloor(truth))
	return contains, tight
}
