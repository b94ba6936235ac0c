package krylov

import (
	"math"
	"math/big"
	"math/rand/v2"
	"runtime"
	"testing"

	"gonum.org/v1/gonum/floats"
)

// cancellingDot returns vectors of length 2m whose inner product cancels:
// the second half repeats the first with y negated and x perturbed in its
// last bits, so that xᵀy is far smaller than |x|ᵀ|y| (condition numbers
// up to about 10^8 here); the magnitudes span 2^±20.
func cancellingDot(m int, seed uint64) (x, y []float64) {
	rng := rand.New(rand.NewPCG(seed, 11))
	x, y = make([]float64, 2*m), make([]float64, 2*m)
	for i := range m {
		x[i] = math.Ldexp(rng.Float64()+0.5, rng.IntN(41)-20)
		y[i] = math.Ldexp(rng.Float64()+0.5, rng.IntN(41)-20)
		x[m+i] = x[i] * (1 + (rng.Float64()-0.5)*1e-8)
		y[m+i] = -y[i]
	}
	rng.Shuffle(2*m, func(i, j int) { x[i], x[j], y[i], y[j] = x[j], x[i], y[j], y[i] })
	return x, y
}

// exactDot returns xᵀy and |x|ᵀ|y| computed exactly with math/big (the
// products of doubles are exact in 106 bits, and 1024 bits hold every sum
// of these magnitudes and lengths), rounded to float64 once.
func exactDot(x, y []float64) (dot, abs float64) {
	s, a := new(big.Float).SetPrec(1024), new(big.Float).SetPrec(1024)
	p := new(big.Float).SetPrec(1024)
	for i := range x {
		p.SetFloat64(x[i])
		p.Mul(p, new(big.Float).SetFloat64(y[i]))
		s.Add(s, p)
		a.Add(a, p.Abs(p))
	}
	dot, _ = s.Float64()
	abs, _ = a.Float64()
	return dot, abs
}

// TestDot checks Dot against the exact inner product (math/big) within the
// bound u|xᵀy| + γ_n²|x|ᵀ|y| of Dot2 in Ogita, Rump and Oishi, SIAM J.
// Sci. Comput. 26 (2005) 1955–1988 (u = 2⁻⁵³, γ_n = nu/(1 − nu); the bound
// as recalled from memory), plus
// u|xᵀy| for the rounding of the exact value to float64 in exactDot;
// lengths from one to several row blocks, so that the blocks' partial sums
// are combined too. The result must not depend on the number of cores.
// The cases are hard: a plain sum misses the same bound on some of them.
func TestDot(t *testing.T) {
	const u = 0x1p-53
	plainMissed := false
	for _, m := range []int{1, 7, 500, blockRows/2 + 3, 3*blockRows + 17} {
		for seed := range uint64(3) {
			x, y := cancellingDot(m, seed)
			want, abs := exactDot(x, y)
			n := float64(len(x))
			gamma := n * u / (1 - n*u)
			bound := 2*u*math.Abs(want) + gamma*gamma*abs
			got := Dot(x, y)
			if math.Abs(got-want) > bound {
				t.Errorf("length %d, seed %d: Dot = %.17g, exact %.17g: error %.3g above the bound %.3g",
					len(x), seed, got, want, math.Abs(got-want), bound)
			}
			if math.Abs(floats.Dot(x, y)-want) > bound {
				plainMissed = true
			}
			prev := runtime.GOMAXPROCS(1)
			one := Dot(x, y)
			runtime.GOMAXPROCS(prev)
			if math.Float64bits(one) != math.Float64bits(got) {
				t.Errorf("length %d, seed %d: Dot %.17g on one core, %.17g on %d", len(x), seed, one, got, prev)
			}
		}
	}
	if !plainMissed {
		t.Error("a plain sum met the bound on every case: the cases do not test compensation")
	}
}

// TestDotLengths checks that Dot refuses vectors of different lengths.
func TestDotLengths(t *testing.T) {
	defer func() {
		if recover() == nil {
			t.Error("Dot of lengths 3 and 2 did not panic")
		}
	}()
	Dot([]float64{1, 2, 3}, []float64{1, 2})
}
