package expr

import (
	"math/rand/v2"
	"testing"
)

// Results are kept in package variables so the compiler cannot drop the
// work.
var (
	benchSink  float64
	benchSlice []float64
)

const henonA, henonB = 1.4, 0.3

func henonProgram(b *testing.B, jacobian bool) *Program {
	srcs := []string{"1 - a*x^2 + y", "b*x"}
	nodes := mustParseAll(b, srcs...)
	if jacobian {
		var jac []*Node
		for _, f := range nodes {
			jac = append(jac, Diff(f, "x"), Diff(f, "y"))
		}
		nodes = jac
	}
	p, err := Compile(nodes, []string{"x", "y"}, map[string]float64{"a": henonA, "b": henonB})
	if err != nil {
		b.Fatal(err)
	}
	return p
}

func randomPoints(n, d int) []float64 {
	rng := rand.New(rand.NewPCG(7, 8))
	xs := make([]float64, n*d)
	for i := range xs {
		xs[i] = 3*rng.Float64() - 1.5
	}
	return xs
}

func reportPoints(b *testing.B, perOp int) {
	b.ReportMetric(float64(perOp)*float64(b.N)/b.Elapsed().Seconds(), "points/s")
}

func BenchmarkHenonEval(b *testing.B) {
	p := henonProgram(b, false)
	xs := randomPoints(1024, 2)
	dst := make([]float64, 2)
	for i := 0; b.Loop(); i++ {
		j := 2 * (i & 1023)
		p.Eval(dst, xs[j:j+2])
	}
	benchSink = dst[0]
	reportPoints(b, 1)
}

func BenchmarkHenonJacobianEval(b *testing.B) {
	p := henonProgram(b, true)
	xs := randomPoints(1024, 2)
	dst := make([]float64, 4)
	for i := 0; b.Loop(); i++ {
		j := 2 * (i & 1023)
		p.Eval(dst, xs[j:j+2])
	}
	benchSink = dst[0]
	reportPoints(b, 1)
}

func benchBatch(b *testing.B, p *Program, n int) {
	xs := randomPoints(n, p.NumVars())
	dst := make([]float64, n*p.NumOut())
	batch := p.NewBatch()
	for b.Loop() {
		batch.Eval(dst, xs)
	}
	benchSlice = dst
	reportPoints(b, n)
}

func BenchmarkHenonBatch1e6(b *testing.B)         { benchBatch(b, henonProgram(b, false), 1e6) }
func BenchmarkHenonBatch1e4(b *testing.B)         { benchBatch(b, henonProgram(b, false), 1e4) }
func BenchmarkHenonJacobianBatch1e6(b *testing.B) { benchBatch(b, henonProgram(b, true), 1e6) }

// BenchmarkHenonDirectGo1e6 is the reference: the Hénon map written
// directly in Go over the same row-major layout.
func BenchmarkHenonDirectGo1e6(b *testing.B) {
	const n = 1e6
	xs := randomPoints(n, 2)
	dst := make([]float64, 2*n)
	a, c := henonA, henonB
	for b.Loop() {
		henonDirect(dst, xs, a, c)
	}
	benchSlice = dst
	reportPoints(b, n)
}

func henonDirect(dst, xs []float64, a, b float64) {
	xs = xs[:len(dst)]
	for i := 0; i+1 < len(xs); i += 2 {
		x, y := xs[i], xs[i+1]
		dst[i] = 1 - a*x*x + y
		dst[i+1] = b * x
	}
}

func cubicProgram(b *testing.B) *Program {
	p, err := Compile(mustParseAll(b, "k*x*(1-x)*(1 + c*x)"), []string{"x"}, map[string]float64{"k": 5.2, "c": 0.3})
	if err != nil {
		b.Fatal(err)
	}
	return p
}

func BenchmarkCubicScalar(b *testing.B) {
	p := cubicProgram(b)
	x := 0.1
	for b.Loop() {
		x = p.Scalar(x)
		if x < 0 || x > 1 {
			x = 0.1
		}
	}
	benchSink = x
	reportPoints(b, 1)
}

func BenchmarkCubicBatch1e6(b *testing.B) { benchBatch(b, cubicProgram(b), 1e6) }

func BenchmarkHenonDirectGo1e4(b *testing.B) {
	const n = 1e4
	xs := randomPoints(n, 2)
	dst := make([]float64, 2*n)
	for b.Loop() {
		henonDirect(dst, xs, henonA, henonB)
	}
	benchSlice = dst
	reportPoints(b, n)
}
