package ulam

import (
	"fmt"
	"math"
	"slices"
	"testing"

	"crosspec/dynsys"
)

// TestGridPreimages checks gridPreimages, the assembly's fast path for the
// preimages of cell edges, against Brent's method (System.Preimage) on
// every edge met by every lap, for catalog maps and a few maps written for
// the test: smooth laps of several curvatures, laps reaching a critical
// point (the logistic map at 4 and the sine map, where the inverse branch
// has a square-root singularity and the safeguard must hand steps to the
// bracketed solver), linear laps (Cantor map: the cubic is exact) and a
// steep exponential lap.
//
// Tolerance: both methods return a root of the floating-point residual
// f(x) − y. Where |f'| is not small the computed residual changes sign
// within an ulp or two of x, so the two agree within 4 ulps of x (a few
// roundings of f, none amplified). Near a critical point f'(x) → 0 and the
// computed residual is round-off over an interval of x of width about
// ε|y|/|f'(x)|, where both methods are equally right; there the residual of
// our point is checked instead: 4ε·max(1, |y|), a few roundings of the
// formula (common practice, no source).
func TestGridPreimages(t *testing.T) {
	written := []struct{ name, formula, params string }{
		{"sine", "a*sin(pi*x)", "a = 1.0"},
		{"sine-open", "a*sin(pi*x)", "a = 1.7"},
		{"cubic-open", "a*x*(1 - x)*(1 + c*x)", "a = 5.5\nc = 0.8"},
		{"exp-lap", "(exp(k*x) - 1)/(exp(k) - 1)", "k = 7.0"},
		{"bumpy-circle", "mod(3*x + 0.2*sin(2*pi*x), 1)", ""},
	}
	var systems []*dynsys.System
	for _, name := range []string{"logistic-repeller", "logistic4", "gauss", "cantor", "stirred-loop"} {
		systems = append(systems, open(t, name))
	}
	for _, w := range written {
		src := fmt.Sprintf("name = %q\nvars = [\"x\"]\nmap = [%q]\ndomain = [[0.0, 1.0]]\n[params]\n%s\n", w.name, w.formula, w.params)
		s, err := dynsys.Parse(w.name+".toml", []byte(src), nil)
		if err != nil {
			t.Fatal(err)
		}
		systems = append(systems, s)
	}
	for _, s := range systems {
		ls, err := s.Laps(&dynsys.LapSettings{MinWidth: 1e-3})
		if err != nil {
			t.Fatal(err)
		}
		sv := newSolver1D(s)
		for _, cells := range []int{300, 2187, 100003} {
			g := NewGrid(s.Lo, s.Hi, []int{cells})
			checked := 0
			for _, l := range ls.Laps {
				u0, f0, u1, f1, ok := s.ClipLap(l, s.Lo[0], s.Hi[0])
				if !ok {
					continue
				}
				jFirst, jLast := g.firstEdgeAbove(min(f0, f1)), g.lastEdgeBelow(max(f0, f1))
				var ys []float64
				for j := jFirst; j <= jLast; j++ {
					ys = append(ys, g.Edge(0, j))
				}
				if !l.Increasing {
					for a, b := 0, len(ys)-1; a < b; a, b = a+1, b-1 {
						ys[a], ys[b] = ys[b], ys[a]
					}
				}
				got := make([]float64, len(ys))
				sv.gridPreimages(got, ys, u0, u1, f0, f1, l)
				for k, y := range ys {
					want, ok := s.Preimage(l, y)
					if !ok {
						t.Fatalf("%s: no preimage of %g", s.Name, y)
					}
					ulp := math.Nextafter(math.Abs(want), math.Inf(1)) - math.Abs(want)
					if math.Abs(got[k]-want) > 4*ulp && math.Abs(s.F(got[k])-y) > 4*eps*max(1, math.Abs(y)) {
						t.Errorf("%s, %d cells: lap [%g, %g]: preimage of %.17g: %.17g, Brent %.17g", s.Name, cells, l.Lo, l.Hi, y, got[k], want)
						break
					}
					if k > 0 && got[k] < got[k-1] {
						t.Errorf("%s, %d cells: preimages out of order at %d", s.Name, cells, k)
						break
					}
				}
				checked += len(ys)
			}
			if checked == 0 {
				t.Errorf("%s, %d cells: no targets checked", s.Name, cells)
			}
			t.Logf("%s, %d cells: %d coarse steps kept, %d bracketed", s.Name, cells, sv.accepted, sv.rejected)
			if cells > 10000 && sv.accepted <= sv.rejected {
				// The fine grid must exercise the continuation itself.
				t.Errorf("%s, %d cells: only %d of %d coarse steps kept", s.Name, cells, sv.accepted, sv.accepted+sv.rejected)
			}
			sv.accepted, sv.rejected = 0, 0
		}
	}
}

// TestCubicInStep checks the re-expanded cubic of gridPreimages on cubics
// p(s) = α + βs + γs² + δs³ sampled at the nodes s = 0 … 3: interpolation
// reproduces a cubic, so x_o + r(c_1 + r(c_2 + r c_3)) must equal
// p(o + r) and c_1 + r(2c_2 + 3r c_3) must equal p'(o + r) (closed form),
// to the round-off of a few operations on numbers of the size of the
// node values and differences: 16ε relative to the largest term.
func TestCubicInStep(t *testing.T) {
	for _, p := range [][4]float64{{0.1, 0.3, -0.02, 0.004}, {0.789, -0.25, 0.0031, -7e-5}, {-2, 1, 0, 0}, {5, 0, 0, 1e-3}} {
		at := func(s float64) float64 { return p[0] + s*(p[1]+s*(p[2]+s*p[3])) }
		slope := func(s float64) float64 { return p[1] + s*(2*p[2]+3*s*p[3]) }
		scale := math.Abs(p[0]) + 3*math.Abs(p[1]) + 9*math.Abs(p[2]) + 27*math.Abs(p[3])
		for o := range 3 {
			c1, c2, c3 := cubicInStep(at(0), at(1), at(2), at(3), o)
			for _, r := range []float64{0, 1.0 / 32, 0.25, 0.5, 31.0 / 32, 1} {
				got := at(float64(o)) + r*(c1+r*(c2+r*c3))
				if want := at(float64(o) + r); math.Abs(got-want) > 16*eps*scale {
					t.Errorf("cubic %v, o=%d, r=%g: %.17g, want %.17g", p, o, r, got, want)
				}
				gotSlope := c1 + r*(2*c2+3*r*c3)
				if want := slope(float64(o) + r); math.Abs(gotSlope-want) > 16*eps*scale {
					t.Errorf("cubic %v, o=%d, r=%g: slope %.17g, want %.17g", p, o, r, gotSlope, want)
				}
			}
		}
	}
}

// TestAssemble1DAgainstBreakpoints checks the exact 1D assembly (uniform
// weight: the preimage continuation, the sweep over source cells on
// increasing and decreasing laps, the merge of rows shared by two laps and
// the ordered placement of the blocks) against a computation of the same
// matrix from its definition: on each lap, clipped to the part mapped into
// the domain, the breakpoints are the cell edges and the preimages of the
// target edges by Brent's method (System.Preimage); each interval between
// two consecutive breakpoints lies in one source cell i and maps into one
// target cell j (the cell of the image of its midpoint), and adds its
// length over the cell width to P_ij. Grids of several blocks
// (blockCells) and maps without critical points inside the domain kept.
//
// Tolerance: every breakpoint of both computations is within 4 ulps of
// the exact one (TestGridPreimages), so an entry made of at most two
// pieces (a cell shared by two laps) differs by at most 16 ulps of the
// largest |x| over the cell width h; entries the one computation leaves
// out must be below that in the other (an ulp-sized piece where a
// preimage falls on a cell edge).
func TestAssemble1DAgainstBreakpoints(t *testing.T) {
	written := map[string]string{
		"sine-open":    "name = \"sine-open\"\nvars = [\"x\"]\nmap = [\"1.7*sin(pi*x)\"]\ndomain = [[0.0, 1.0]]\n",
		"cubic-open":   "name = \"cubic-open\"\nvars = [\"x\"]\nmap = [\"5.5*x*(1 - x)*(1 + 0.8*x)\"]\ndomain = [[0.0, 1.0]]\n",
		"bumpy-circle": "name = \"bumpy-circle\"\nvars = [\"x\"]\nmap = [\"mod(3*x + 0.2*sin(2*pi*x), 1)\"]\ndomain = [[0.0, 1.0]]\nclosed = true\n",
	}
	for _, name := range []string{"logistic-repeller", "stirred-loop", "cantor", "tent", "doubling", "skew-tent-repeller", "sine-open", "cubic-open", "bumpy-circle"} {
		var s *dynsys.System
		if src, ok := written[name]; ok {
			var err error
			if s, err = dynsys.Parse(name+".toml", []byte(src), nil); err != nil {
				t.Fatal(err)
			}
		} else {
			s = open(t, name)
		}
		for _, cells := range []int{5003, 20011} {
			m, err := Assemble(s, &Settings{Cells: cells, Restrict: RestrictNone})
			if err != nil {
				t.Fatal(err)
			}
			g := m.Grid
			h := g.Width(0)
			want := breakpointMatrix(t, s, g)
			scale := max(math.Abs(g.Lo[0]), math.Abs(g.Hi[0]))
			tol := 16 * scale * eps / h
			got := map[[2]int]float64{}
			for i := range m.Dim() {
				for k := m.RowPtr[i]; k < m.RowPtr[i+1]; k++ {
					got[[2]int{i, m.Col[k]}] = m.Val[k]
				}
			}
			bad := 0
			for ij, v := range got {
				if w := want[ij]; math.Abs(v-w) > tol {
					bad++
					if bad <= 3 {
						t.Errorf("%s, %d cells: P[%d][%d] = %.17g, from the breakpoints %.17g", name, cells, ij[0], ij[1], v, w)
					}
				}
			}
			for ij, w := range want {
				if _, ok := got[ij]; !ok && w > tol {
					bad++
					if bad <= 3 {
						t.Errorf("%s, %d cells: P[%d][%d] missing, from the breakpoints %.17g", name, cells, ij[0], ij[1], w)
					}
				}
			}
			if len(got) == 0 {
				t.Errorf("%s, %d cells: empty matrix", name, cells)
			}
		}
	}
}

// breakpointMatrix computes the uniform-weight Ulam matrix of a 1D map
// from its definition, as TestAssemble1DAgainstBreakpoints describes.
func breakpointMatrix(t *testing.T, s *dynsys.System, g Grid) map[[2]int]float64 {
	ls, err := s.Laps(nil)
	if err != nil {
		t.Fatal(err)
	}
	lo, hi := g.Lo[0], g.Hi[0]
	n := g.Shape[0]
	h := g.Width(0)
	out := map[[2]int]float64{}
	for _, l := range ls.Laps {
		xa, ya, xb, yb, ok := s.ClipLap(l, lo, hi)
		if !ok {
			continue
		}
		points := []float64{xa, xb}
		for i := g.firstEdgeAbove(xa); i <= g.lastEdgeBelow(xb); i++ {
			points = append(points, g.Edge(0, i))
		}
		for j := g.firstEdgeAbove(min(ya, yb)); j <= g.lastEdgeBelow(max(ya, yb)); j++ {
			x, ok := s.Preimage(l, g.Edge(0, j))
			if !ok {
				t.Fatalf("%s: no preimage of edge %d on lap [%g, %g]", s.Name, j, l.Lo, l.Hi)
			}
			points = append(points, min(max(x, xa), xb))
		}
		slices.Sort(points)
		for k := 1; k < len(points); k++ {
			a, b := points[k-1], points[k]
			if !(b > a) {
				continue
			}
			mid := 0.5 * (a + b)
			i := g.lastEdgeBelow(mid)
			j := g.lastEdgeBelow(min(max(s.F(mid), lo), hi))
			if i < 0 || i >= n || j < 0 || j >= n {
				continue
			}
			out[[2]int{i, j}] += (b - a) / h
		}
	}
	return out
}
