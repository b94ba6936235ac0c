package expr

import (
	"math"
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

// batchShapeTests are formula lists over x and y that between them take
// every instruction form and kernel of the batch interpreter: the fused
// affine forms, the loops for equal strides (as many formulas as
// variables), the loops for different strides, copies of variables and of
// earlier results, outputs read by later values, and constant outputs
// filled by column or by row.
var batchShapeTests = []struct {
	name     string
	formulas []string
}{
	{"affine of a square", []string{"1 - 1.5*x^2", "0.5*y^2 + 2"}},
	{"affine of a product by itself", []string{"1 - x*x*1.5", "0.5*(y*y) + 2 + x"}},
	{"affine", []string{"2 - 3*x", "y*0.25 - 1"}},
	{"affine plus", []string{"2 - 0.5*x^2 + y", "3*y - 1 + x"}},
	{"affine of a product plus", []string{"1 - 3*(x*y) + y", "x - 2*(x*y)"}},
	{"unary", []string{"-x", "y^2"}},
	{"cube and function", []string{"x^3", "sin(y)"}},
	{"variable and constant", []string{"x + 2", "y - 3"}},
	{"product and quotient by a constant", []string{"x*4", "y/3"}},
	{"constant and variable", []string{"2 + x", "2 - y"}},
	{"constant times and over", []string{"3*x", "3/y"}},
	{"sum and difference", []string{"x + y", "x - y"}},
	{"product and quotient", []string{"x*y", "x/y"}},
	{"comparisons", []string{"x < y", "min(x, 0.5) + (y >= 0)"}},
	{"swapped variables", []string{"y", "x"}},
	{"same formula twice", []string{"x*y + 1", "x*y + 1"}},
	{"output used later", []string{"x*y", "1 - 2*(x*y)"}},
	{"two constants", []string{"1", "-2"}},
	{"Jacobian with constants", []string{"-2.8*x", "1", "0.3", "0"}},
	{"three formulas, two constants", []string{"x*y - 1", "2", "0"}},
}

// TestBatchShapes checks that the batch interpreter agrees bit for bit
// with Eval for every instruction form, with the rows of points and of
// results at equal and at different strides, and in place (dst starting
// at xs[0], which EvalBatch allows when m <= d).
func TestBatchShapes(t *testing.T) {
	same := func(a, b float64) bool {
		return math.Float64bits(a) == math.Float64bits(b) || math.IsNaN(a) && math.IsNaN(b)
	}
	for _, tc := range batchShapeTests {
		nodes := mustParseAll(t, tc.formulas...)
		// x and y alone, then with unused variables so that the point
		// rows are wider than the result rows.
		for _, vars := range [][]string{{"x", "y"}, {"x", "y", "z"}, {"x", "y", "z", "w"}, {"w", "x", "y", "z", "v"}} {
			p, err := Compile(nodes, vars, nil)
			if err != nil {
				t.Fatalf("%s: %v", tc.name, err)
			}
			d, m := p.NumVars(), p.NumOut()
			const n = 2*blockLen + 5
			xs := randomPoints(n, d)
			xs[0], xs[1] = 0.5, 0.5 // on the comparisons
			got := make([]float64, n*m)
			p.EvalBatch(got, xs)
			want := make([]float64, m)
			for i := range n {
				p.Eval(want, xs[i*d:i*d+d])
				for k := range m {
					if !same(got[i*m+k], want[k]) {
						t.Errorf("%s over %v: formula %d at %v: EvalBatch %v, Eval %v",
							tc.name, vars, k, xs[i*d:i*d+d], got[i*m+k], want[k])
					}
				}
			}
			if m > d {
				continue
			}
			p.EvalBatch(xs[:n*m], xs)
			for i := range got {
				if !same(xs[i], got[i]) {
					t.Errorf("%s over %v: in place, value %d is %v, want %v", tc.name, vars, i, xs[i], got[i])
				}
			}
		}
	}
}
