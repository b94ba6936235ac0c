package ulam

import (
	"fmt"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"crosspec/dynsys"
)

// productSystems are a 2D product map F(x, y) = (f(x), g(y)) with the
// observable a = x and its two factors, as TOML: the skew-tent repeller in
// x (slopes 4 and −2) and the middle-thirds Cantor map in y, the catalog's
// skew-cantor with an observable.
const productSystems = `
name = "skew-cantor-x"
description = "test: skew-cantor with the observable x"
vars = ["x", "y"]
map = ["min(4*x, 2*(1 - x))", "3*y - 2*(y >= 0.5)"]
domain = [[0.0, 1.0], [0.0, 1.0]]
observable = "x"
---
name = "skew-tent-x"
description = "test: the x factor"
vars = ["x"]
map = ["min(4*x, 2*(1 - x))"]
domain = [[0.0, 1.0]]
observable = "x"
---
name = "cantor-y"
description = "test: the y factor"
vars = ["y"]
map = ["3*y - 2*(y >= 0.5)"]
domain = [[0.0, 1.0]]
`

func parseProduct(t *testing.T) (prod, fx, gy *dynsys.System) {
	t.Helper()
	var sys [3]*dynsys.System
	for k, text := range strings.Split(productSystems, "---\n") {
		s, err := dynsys.Parse(fmt.Sprintf("product%d.toml", k), []byte(text), nil)
		if err != nil {
			t.Fatal(err)
		}
		sys[k] = s
	}
	return sys[0], sys[1], sys[2]
}

// denseEntries returns the entries vals (Val or Derivative) of the matrix
// as a map from (grid row, grid column) to value.
func denseEntries(m *Matrix, vals []float64) map[[2]int]float64 {
	e := map[[2]int]float64{}
	for i := range m.Dim() {
		for k := m.RowPtr[i]; k < m.RowPtr[i+1]; k++ {
			e[[2]int{m.Cells[i], m.Col[k]}] = vals[k]
		}
	}
	return e
}

// TestAffine2DProduct compares the 2D assembly of a product map with the
// Kronecker product of its factors' matrices from the exact 1D assembly:
// cell (i0, i1) sends the fraction P_f[i0][j0]·P_g[i1][j1] of itself into
// cell (j0, j1), because the part of a rectangle that lands in a rectangle
// is a product of interval lengths (common practice, no source). Both
// factors are piecewise affine, and where the map is not affine on a cell
// (the kink of the tent, the jump of the Cantor map) the cell's image
// escapes, so the piecewise-affine images are exact and the entries agree
// to round-off: positions in cell units carry about M·ε, so 1e-12 is far
// above what the method leaves. That holds on grids whose lines pass
// through the breaks 1/4, 1/3, 1/2, 2/3 and on grids where they do not. The
// leading eigenvalue is then (1/4 + 1/2)(1/3 + 1/3) = 1/2, the catalog's
// reference (product rule, common practice, no source), to the solver's
// 1e-12.
//
// With the weight w = exp(β x), the 2D assembly interpolates w linearly on
// each triangle, which on these triangles is the chord of e^{βx} over the
// cell's x-interval: off by at most β² e^{|β|} h²/8 (the interpolation
// error bound h²/8 times the largest second derivative, common practice,
// no source), and a·w = x e^{βx} by at most (β² + 2|β|) e^{|β|} h²/8, times
// the fraction of the cell involved (at most 1). The 1D factor integrates w by Gauss–Legendre
// quadrature, exact to round-off.
func TestAffine2DProduct(t *testing.T) {
	prod, fx, gy := parseProduct(t)
	const beta = 0.7
	for _, shape := range [][2]int{{12, 9}, {64, 81}, {37, 41}, {100, 100}} {
		for _, weighted := range []bool{false, true} {
			set2 := &Settings{Shape: shape[:], Restrict: RestrictNone}
			setF := &Settings{Cells: shape[0], Restrict: RestrictNone}
			tol, tolD := 1e-12, 0.0
			if weighted {
				set2.Observable, set2.Beta, set2.Derivative = SystemObservable, beta, true
				setF.Observable, setF.Beta, setF.Derivative = SystemObservable, beta, true
				h := 1 / float64(shape[0])
				tol += beta * beta * math.Exp(beta) * h * h / 8
				tolD = 1e-12 + (beta*beta+2*beta)*math.Exp(beta)*h*h/8
			}
			m, err := Assemble(prod, set2)
			if err != nil {
				t.Fatal(err)
			}
			mf, err := Assemble(fx, setF)
			if err != nil {
				t.Fatal(err)
			}
			mg, err := Assemble(gy, &Settings{Cells: shape[1], Restrict: RestrictNone})
			if err != nil {
				t.Fatal(err)
			}
			got := denseEntries(m, m.Val)
			want := map[[2]int]float64{}
			var gotD, wantD map[[2]int]float64
			if weighted {
				gotD, wantD = denseEntries(m, m.Derivative), map[[2]int]float64{}
			}
			for ef, vf := range denseEntries(mf, mf.Val) {
				for eg, vg := range denseEntries(mg, mg.Val) {
					key := [2]int{ef[0]*shape[1] + eg[0], ef[1]*shape[1] + eg[1]}
					want[key] = vf * vg
				}
			}
			if weighted {
				for ef, vf := range denseEntries(mf, mf.Derivative) {
					for eg, vg := range denseEntries(mg, mg.Val) {
						wantD[[2]int{ef[0]*shape[1] + eg[0], ef[1]*shape[1] + eg[1]}] = vf * vg
					}
				}
			}
			name := fmt.Sprintf("%dx%d weighted %v", shape[0], shape[1], weighted)
			compareEntries(t, name, got, want, tol)
			if weighted {
				compareEntries(t, name+" dP/dβ", gotD, wantD, tolD)
			}
		}
		r, err := Compute(prod, dynsys.Eigenvalues, &Settings{Shape: shape[:]}, nil)
		if err != nil {
			t.Fatal(err)
		}
		if got := real(r.Eigenvalues[0]); !scalar.EqualWithinAbs(got, 0.5, 1e-12) {
			t.Errorf("%v: λ_0 = %.17g, want 1/2 (product rule)", shape, got)
		}
	}
}

// TestAffine2DJump does the same for a closed product map with a jump
// inside the box, F(x, y) = (3x mod 1, tent(y)), against the exact 1D
// matrices of its factors. A triangle across the jump x = 1/3 or 2/3 is
// cut into four up to affineMaxDepth = D times, and a triangle at that
// depth goes whole to the cell of its centroid's image. A line crosses at
// most 2·2^D of a cell's 4^D squares of side h/2^D, four triangles of
// area 4^−D/2 (in cells) each at most: at most 2^(1−D) of the cell is
// misplaced, so the entries of the rows of those cells are within 2^(1−D)
// of the product, the others exact to round-off. Rows sum to 1: for a closed
// map every piece stays in the box. The grid 37×41 puts the jumps inside
// cells (not on the midpoints of halved cells); 36×41 puts them on edges.
func TestAffine2DJump(t *testing.T) {
	parse := func(text string) *dynsys.System {
		s, err := dynsys.Parse("jump.toml", []byte(text), nil)
		if err != nil {
			t.Fatal(err)
		}
		return s
	}
	prod := parse(`name = "jump"
description = "test: 3x mod 1 times the tent map"
vars = ["x", "y"]
map = ["mod(3*x, 1)", "1 - abs(1 - 2*y)"]
domain = [[0.0, 1.0], [0.0, 1.0]]
closed = true
`)
	fx := parse(`name = "jump-x"
description = "test: the x factor"
vars = ["x"]
map = ["mod(3*x, 1)"]
domain = [[0.0, 1.0]]
closed = true
`)
	gy := open(t, "tent")
	for _, shape := range [][2]int{{36, 41}, {37, 41}} {
		m, err := Assemble(prod, &Settings{Shape: shape[:], Restrict: RestrictNone})
		if err != nil {
			t.Fatal(err)
		}
		mf, err := Assemble(fx, &Settings{Cells: shape[0], Restrict: RestrictNone})
		if err != nil {
			t.Fatal(err)
		}
		mg, err := Assemble(gy, &Settings{Cells: shape[1], Restrict: RestrictNone})
		if err != nil {
			t.Fatal(err)
		}
		// Whether the grid row's cell lies across x = 1/3 or 2/3.
		isAcross := func(row int) bool {
			i0 := row / shape[1]
			lo, hi := float64(i0)/float64(shape[0]), float64(i0+1)/float64(shape[0])
			return lo < 1.0/3 && hi > 1.0/3 || lo < 2.0/3 && hi > 2.0/3
		}
		split := func(e map[[2]int]float64) (across, off map[[2]int]float64) {
			across, off = map[[2]int]float64{}, map[[2]int]float64{}
			for k, v := range e {
				if isAcross(k[0]) {
					across[k] = v
				} else {
					off[k] = v
				}
			}
			return across, off
		}
		want := map[[2]int]float64{}
		for ef, vf := range denseEntries(mf, mf.Val) {
			for eg, vg := range denseEntries(mg, mg.Val) {
				want[[2]int{ef[0]*shape[1] + eg[0], ef[1]*shape[1] + eg[1]}] = vf * vg
			}
		}
		across, smooth := split(want)
		gotAcross, gotSmooth := split(denseEntries(m, m.Val))
		name := fmt.Sprintf("3x mod 1 × tent on %dx%d", shape[0], shape[1])
		compareEntries(t, name+", cells off the jumps", gotSmooth, smooth, 1e-12)
		compareEntries(t, name+", cells across a jump", gotAcross, across, math.Ldexp(1, 1-affineMaxDepth))
		for i := range m.Dim() {
			sum := 0.0
			for k := m.RowPtr[i]; k < m.RowPtr[i+1]; k++ {
				sum += m.Val[k]
			}
			if math.Abs(sum-1) > 1e-13 {
				t.Errorf("%s: row %d sums to %.17g", name, i, sum)
			}
		}
	}
}

func compareEntries(t *testing.T, name string, got, want map[[2]int]float64, tol float64) {
	t.Helper()
	worst, at := 0.0, [2]int{}
	for k, v := range want {
		if d := math.Abs(got[k] - v); d > worst {
			worst, at = d, k
		}
	}
	for k, v := range got {
		if _, ok := want[k]; !ok && math.Abs(v) > worst {
			worst, at = math.Abs(v), k
		}
	}
	if worst > tol {
		t.Errorf("%s: entry %v = %.17g, Kronecker product %.17g (off by %.3g, allowed %.3g)", name, at, got[at], want[at], worst, tol)
	}
}

// TestAffine2DSmoothProduct checks the clipping for a smooth map, whose
// images fall anywhere in the grid. For a product map F(x, y) = (f(x),
// g(y)) the affine map through the images of a triangle's corners (two of
// which share an x, two a y) is the product of the chords of f and g over
// the cell's sides, so the 2D matrix must be the Kronecker product of the
// factors' chord matrices: C_ij = |[f(x_i), f(x_{i+1})] ∩ B_j| / |f(x_{i+1})
// − f(x_i)|, computed here in closed form. The logistic repellers 6x(1−x)
// and 5y(1−y) on a 37×29 grid bend a cell by at most 12h²/8 (0.04 cells), so
// no triangle is cut; the cell over each fold maps out of the box. Entries
// agree to 1e-8: images within 1e-9 of a cell edge are put on it (snap),
// which moves a fraction by a few 1e-9 at most.
func TestAffine2DSmoothProduct(t *testing.T) {
	text := `name = "logistic-product"
description = "test: product of two logistic repellers"
vars = ["x", "y"]
map = ["6*x*(1 - x)", "5*y*(1 - y)"]
domain = [[0.0, 1.0], [0.0, 1.0]]
`
	prod, err := dynsys.Parse("logistic-product.toml", []byte(text), nil)
	if err != nil {
		t.Fatal(err)
	}
	shape := [2]int{37, 29}
	m, err := Assemble(prod, &Settings{Shape: shape[:], Restrict: RestrictNone})
	if err != nil {
		t.Fatal(err)
	}
	chords := func(f func(float64) float64, n int) map[[2]int]float64 {
		c := map[[2]int]float64{}
		for i := range n {
			a, b := f(float64(i)/float64(n)), f(float64(i+1)/float64(n))
			lo, hi := math.Min(a, b), math.Max(a, b)
			if hi == lo {
				continue
			}
			for j := range n {
				if o := math.Min(hi, float64(j+1)/float64(n)) - math.Max(lo, float64(j)/float64(n)); o > 0 {
					c[[2]int{i, j}] = o / (hi - lo)
				}
			}
		}
		return c
	}
	cf := chords(func(x float64) float64 { return 6 * x * (1 - x) }, shape[0])
	cg := chords(func(y float64) float64 { return 5 * y * (1 - y) }, shape[1])
	want := map[[2]int]float64{}
	for ef, vf := range cf {
		for eg, vg := range cg {
			want[[2]int{ef[0]*shape[1] + eg[0], ef[1]*shape[1] + eg[1]}] = vf * vg
		}
	}
	compareEntries(t, "6x(1−x) × 5y(1−y) on 37×29", denseEntries(m, m.Val), want, 1e-8)
}
