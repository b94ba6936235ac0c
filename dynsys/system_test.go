package dynsys

import (
	"math"
	"math/rand/v2"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

func TestCatalogLoads(t *testing.T) {
	entries, err := Catalog()
	if err != nil {
		t.Fatal(err)
	}
	if len(entries) < 10 {
		t.Errorf("catalog has %d systems, want at least 10", len(entries))
	}
	for _, e := range entries {
		s, err := Lookup(e.Name, nil)
		if err != nil {
			t.Fatal(err)
		}
		if s.Description == "" {
			t.Errorf("%s: no description", e.Name)
		}
		for _, r := range s.References {
			if r.Source == "" {
				t.Errorf("%s: reference for %s without source", e.Name, r.Quantity)
			}
		}
	}
	demo, err := Lookup("stirred-loop", nil)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(demo.Description, "INVENTED") {
		t.Errorf("demo system must say it is invented: %q", demo.Description)
	}
}

func TestJacobianHandDerived(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	// Hénon map: Jacobian [[−2 a x, 1], [b, 0]]; logistic: f' = A (1 − 2x).
	// Elementary algebra (common practice, no source). The compiled
	// derivative evaluates the same products in at most a different order,
	// so a few ulps is the tolerance.
	henon, err := Lookup("henon", nil)
	if err != nil {
		t.Fatal(err)
	}
	a, _ := henon.Param("a")
	b, _ := henon.Param("b")
	jac := make([]float64, 4)
	for range 100 {
		x := []float64{3*rng.Float64() - 1.5, rng.Float64() - 0.5}
		henon.Jacobian(jac, x)
		want := []float64{-2 * a * x[0], 1, b, 0}
		for i := range want {
			if !scalar.EqualWithinAbsOrRel(jac[i], want[i], 1e-15, 1e-15) {
				t.Fatalf("henon Jacobian at %v: %v, want %v", x, jac, want)
			}
		}
		y := make([]float64, 2)
		henon.Map(y, x)
		if !scalar.EqualWithinAbsOrRel(y[0], 1-a*x[0]*x[0]+x[1], 1e-15, 1e-15) || y[1] != b*x[0] {
			t.Fatalf("henon map at %v: %v", x, y)
		}
	}
	logistic, err := Lookup("logistic-repeller", map[string]float64{"A": 4.7})
	if err != nil {
		t.Fatal(err)
	}
	for range 100 {
		x := rng.Float64()
		if got, want := logistic.DF(x), 4.7*(1-2*x); !scalar.EqualWithinAbsOrRel(got, want, 1e-14, 1e-14) {
			t.Fatalf("logistic f'(%g) = %g, want %g", x, got, want)
		}
	}
}

func TestOverrides(t *testing.T) {
	s, err := Lookup("logistic-repeller", map[string]float64{"A": 5})
	if err != nil {
		t.Fatal(err)
	}
	if got := s.F(0.5); got != 1.25 {
		t.Errorf("f(1/2) with A = 5: %g, want 1.25", got)
	}
	if _, err := Lookup("logistic-repeller", map[string]float64{"B": 5}); err == nil || !strings.Contains(err.Error(), "defined: A") {
		t.Errorf("unknown override: %v", err)
	}
	if _, err := Lookup("logistic-repeller", map[string]float64{"A": math.NaN()}); err == nil {
		t.Error("NaN override accepted")
	}
}

// TestLaps checks the laps against their closed forms (elementary algebra,
// common practice, no source). Critical points and kinks are found by
// Brent's method to a bracket of a few ulps, hence the tolerance 1e-15.
func TestLaps(t *testing.T) {
	type lap struct{ lo, hi, flo, fhi float64 }
	k, c := 5.2, 0.3
	stirredCrit := (-(2 - 2*c) + math.Sqrt((2-2*c)*(2-2*c)+12*c)) / (6 * c)
	stirredMax := k * stirredCrit * (1 - stirredCrit) * (1 + c*stirredCrit)
	cases := []struct {
		name string
		want []lap
	}{
		{"doubling", []lap{{0, 0.5, 0, 1}, {0.5, 1, 0, 1}}},
		{"logistic-repeller", []lap{{0, 0.5, 0, 1.5}, {0.5, 1, 1.5, 0}}},
		{"logistic4", []lap{{0, 0.5, 0, 1}, {0.5, 1, 1, 0}}},
		{"tent", []lap{{0, 0.5, 0, 1}, {0.5, 1, 1, 0}}},
		{"skew-tent-repeller", []lap{{0, 1.0 / 3, 0, 4.0 / 3}, {1.0 / 3, 1, 4.0 / 3, 0}}},
		{"cantor", []lap{{0, 0.5, 0, 1.5}, {0.5, 1, -0.5, 1}}},
		{"stirred-loop", []lap{{0, stirredCrit, 0, stirredMax}, {stirredCrit, 1, stirredMax, 0}}},
	}
	const tol = 1e-15
	for _, tc := range cases {
		s, err := Lookup(tc.name, nil)
		if err != nil {
			t.Fatal(err)
		}
		ls, err := s.Laps(nil)
		if err != nil {
			t.Fatal(err)
		}
		if len(ls.Laps) != len(tc.want) || ls.ExcludedLength != 0 {
			t.Errorf("%s: laps %+v, excluded %v; want %v", tc.name, ls.Laps, ls.Excluded, tc.want)
			continue
		}
		for i, w := range tc.want {
			g := ls.Laps[i]
			for _, pair := range [][2]float64{{g.Lo, w.lo}, {g.Hi, w.hi}, {g.FLo, w.flo}, {g.FHi, w.fhi}} {
				if !scalar.EqualWithinAbsOrRel(pair[0], pair[1], tol, tol) {
					t.Errorf("%s lap %d: %+v, want %+v", tc.name, i, g, w)
					break
				}
			}
			if g.Increasing != (w.fhi > w.flo) {
				t.Errorf("%s lap %d: wrong orientation", tc.name, i)
			}
		}
	}
}

// TestGaussLaps checks the laps [1/(k+1), 1/k] of x → 1/x mod 1, each
// mapped onto [0, 1] decreasingly, and that what is left out is an
// interval [0, ε] whose length is reported.
func TestGaussLaps(t *testing.T) {
	s, err := Lookup("gauss", nil)
	if err != nil {
		t.Fatal(err)
	}
	ls, err := s.Laps(&LapSettings{MinWidth: 1e-7})
	if err != nil {
		t.Fatal(err)
	}
	n := len(ls.Laps)
	if n < 1000 {
		t.Fatalf("only %d laps", n)
	}
	for i, l := range ls.Laps {
		k := math.Round(1 / l.Hi)
		// 1/k and 1/(k+1) are rounded once; Brent brackets them to a few
		// ulps.
		if !scalar.EqualWithinAbsOrRel(l.Hi, 1/k, 0, 1e-15) || !scalar.EqualWithinAbsOrRel(l.Lo, 1/(k+1), 0, 1e-15) {
			t.Fatalf("lap %d: [%v, %v], want [1/%v, 1/%v]", i, l.Lo, l.Hi, k+1, k)
		}
		if l.Increasing || l.FLo != 1 || l.FHi != 0 {
			t.Fatalf("lap %d: image %v → %v, want 1 → 0", i, l.FLo, l.FHi)
		}
		if i > 0 && ls.Laps[i-1].Hi != l.Lo {
			t.Fatalf("gap between laps %d and %d", i-1, i)
		}
	}
	if len(ls.Excluded) != 1 || ls.Excluded[0].Lo != 0 || ls.Excluded[0].Hi != ls.Laps[0].Lo {
		t.Errorf("excluded %v, first lap %+v", ls.Excluded, ls.Laps[0])
	}
	if ls.ExcludedLength <= 0 || ls.ExcludedLength > 1e-3 {
		t.Errorf("excluded length %g", ls.ExcludedLength)
	}
}

func TestPreimage(t *testing.T) {
	// Inverse branches of A x (1 − x): x = (1 ∓ sqrt(1 − 4y/A))/2
	// (elementary algebra, common practice, no source). Brent's bracket is
	// a few ulps of x.
	s, err := Lookup("logistic-repeller", nil)
	if err != nil {
		t.Fatal(err)
	}
	ls, err := s.Laps(nil)
	if err != nil {
		t.Fatal(err)
	}
	for _, y := range []float64{0, 1e-9, 0.1, 0.5, 0.9, 1, 1.5} {
		r := math.Sqrt(1 - 4*y/6)
		for i, want := range []float64{(1 - r) / 2, (1 + r) / 2} {
			x, ok := s.Preimage(ls.Laps[i], y)
			if !ok || !scalar.EqualWithinAbsOrRel(x, want, 2e-16, 1e-15) {
				t.Errorf("preimage of %g on lap %d: %v (%v), want %v", y, i, x, ok, want)
			}
		}
	}
	if _, ok := s.Preimage(ls.Laps[0], 1.6); ok {
		t.Error("preimage of 1.6 found, but the image is [0, 1.5]")
	}
}

func TestParseErrors(t *testing.T) {
	// Each malformed file produces one error naming the line and what was
	// expected (the command-line test runs the larger corpus in testdata/).
	cases := []struct{ src, want string }{
		{"vars = [\"x\"]\nmap = [\"2*x\"]\ndomain = [[1.0, 0.0]]\n", "system file t.toml:3: domain[0] (x): expected lo < hi"},
		{"vars = [\"x\"]\nmap = [\"2*q\"]\ndomain = [[0.0, 1.0]]\n", `system file t.toml:2: map[0] (x') "2*q": unknown name "q" (defined: x; constants: pi, e)`},
		{"vars = [\"x\"]\nmap = [\"2*x\"]\ndomain = [[0.0, 1.0]]\nclosed = true\n", "system file t.toml:4: closed = true, but the map sends"},
	}
	for _, c := range cases {
		_, err := Parse("t.toml", []byte(c.src), nil)
		if err == nil || !strings.HasPrefix(err.Error(), c.want) {
			t.Errorf("got %v\nwant prefix %s", err, c.want)
		}
		if err != nil && strings.Contains(err.Error(), "\n") {
			t.Errorf("error spans lines: %q", err)
		}
	}
}

func FuzzParse(f *testing.F) {
	for _, name := range CatalogNames() {
		data, _ := CatalogFile(name)
		f.Add(data)
	}
	f.Add([]byte("vars = [\"x\"]\nmap = [\"mod(\"]\ndomain = [[0, 1]]\n"))
	f.Add([]byte("vars = []\n"))
	f.Add([]byte("vars = [\"x\", \"y\"]\nmap = [\"y\", \"x\"]\ndomain = [[0, 1], [0, 1]]\nclosed = true\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		s, err := Parse("fuzz.toml", data, nil)
		if err != nil {
			if strings.Contains(err.Error(), "\n") {
				t.Errorf("multi-line error %q", err)
			}
			return
		}
		if s.Dim() == 1 && len(data) < 2000 {
			_, _ = s.Laps(&LapSettings{Grid: 64})
		}
	})
}
