package galerkin

import (
	"math"
	"strconv"
	"testing"

	"crosspec/dynsys"
	"crosspec/ulam"
)

// digits returns −log10 of the relative error of λ_1 against Wirsing's
// value (E. Wirsing, Acta Arith. 24 (1974) 507–528; digits in OEIS
// A038517), capped at 17.
func digits(got float64) float64 {
	e := math.Abs(got-wirsing) / math.Abs(wirsing)
	if e == 0 {
		return 17
	}
	return min(17, -math.Log10(e))
}

// TestGaussDigitsTable logs the digits of the Gauss map's second
// eigenvalue reached against the matrix size with each basis (the table
// of the README) and checks that each basis gains digits with size and
// reaches the 12 (cells) and 10 (Chebyshev) at its largest size.
func TestGaussDigitsTable(t *testing.T) {
	if testing.Short() {
		t.Skip("table")
	}
	sys := lookup(t, "gauss")
	rows := []struct {
		set Settings
	}{
		{Settings{Cells: 8, Degree: 1}}, {Settings{Cells: 32, Degree: 1}},
		{Settings{Cells: 8, Degree: 3}}, {Settings{Cells: 32, Degree: 3}},
		{Settings{Cells: 8, Degree: 5}}, {Settings{Cells: 32, Degree: 5}},
		{Settings{Cells: 4, Degree: 9}}, {Settings{Cells: 8, Degree: 9}},
		{Settings{Basis: Chebyshev, Size: 10}}, {Settings{Basis: Chebyshev, Size: 20}},
		{Settings{Basis: Chebyshev, Size: 40}}, {Settings{Basis: Chebyshev, Size: 80}},
	}
	t.Logf("| basis | N | p | matrix size | nonzeros | λ_1 | digits |")
	t.Logf("|---|---|---|---|---|---|---|")
	last := map[Basis]float64{}
	first := map[Basis]float64{}
	for _, row := range rows {
		r, err := Compute(sys, dynsys.Eigenvalues, &row.set, &ulam.SolveSettings{Eigenvalues: 2})
		if err != nil {
			t.Fatal(err)
		}
		d := digits(real(r.Eigenvalues[1]))
		if _, ok := first[row.set.Basis]; !ok {
			first[row.set.Basis] = d
		}
		last[row.set.Basis] = d
		n, p := "", ""
		if row.set.Basis == Cells {
			n, p = itoa(row.set.Cells), itoa(row.set.Degree)
		}
		t.Logf("| %v | %s | %s | %d | %d | %.16f | %.1f |", row.set.Basis, n, p, r.Dim, r.NNZ, real(r.Eigenvalues[1]), d)
	}
	if last[Cells] < 12 || last[Chebyshev] < 10 || last[Cells] <= first[Cells] || last[Chebyshev] <= first[Chebyshev] {
		t.Errorf("digits: cells %.1f → %.1f, Chebyshev %.1f → %.1f", first[Cells], last[Cells], first[Chebyshev], last[Chebyshev])
	}
}

func itoa(n int) string {
	return strconv.Itoa(n)
}

var benchResult Result

func benchmarkGauss(b *testing.B, set Settings) {
	sys := lookup(b, "gauss")
	for b.Loop() {
		r, err := Compute(sys, dynsys.Eigenvalues, &set, &ulam.SolveSettings{Eigenvalues: 2})
		if err != nil {
			b.Fatal(err)
		}
		benchResult = r
	}
}

func BenchmarkGaussCells8Degree9(b *testing.B)  { benchmarkGauss(b, Settings{Cells: 8, Degree: 9}) }
func BenchmarkGaussCells32Degree5(b *testing.B) { benchmarkGauss(b, Settings{Cells: 32, Degree: 5}) }
func BenchmarkGaussChebyshev40(b *testing.B)    { benchmarkGauss(b, Settings{Basis: Chebyshev, Size: 40}) }
func BenchmarkGaussChebyshev80(b *testing.B)    { benchmarkGauss(b, Settings{Basis: Chebyshev, Size: 80}) }
