package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// TestUlamGolden renders the Ulam path's table for the skew tent repeller
// on grids its branch points fall on, where λ_0 = 1/4 + 1/2 exactly (full-
// branch piecewise-linear map, common practice, no source).
func TestUlamGolden(t *testing.T) {
	code, stdout, stderr := runCLI("ulam", "skew-tent-repeller", "--cells", "12,120,1200", "--eigs", "2")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	golden(t, "ulam-skew-tent-repeller.txt", stdout)
}

// TestUlamJSON checks the JSON contract of DESIGN.md section 6 and the
// files written by --export and --density.
func TestUlamJSON(t *testing.T) {
	dir := t.TempDir()
	mtx, dens := filepath.Join(dir, "p.mtx"), filepath.Join(dir, "rho.csv")
	code, stdout, stderr := runCLI("ulam", "tent", "--cells", "64,128", "--quantity", "lyapunov", "--format", "json", "--export", mtx, "--density", dens)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var doc struct {
		System   *string `json:"system"`
		Quantity *string `json:"quantity"`
		Runs     []struct {
			Cells       *int `json:"cells"`
			NNZ         *int `json:"nnz"`
			Eigenvalues []struct {
				Re *float64 `json:"re"`
				Im *float64 `json:"im"`
			} `json:"eigenvalues"`
			Value   *float64 `json:"value"`
			Seconds *float64 `json:"seconds"`
		} `json:"runs"`
	}
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatalf("%v\n%s", err, stdout)
	}
	if doc.System == nil || *doc.System != "tent" || doc.Quantity == nil || *doc.Quantity != "lyapunov" || len(doc.Runs) != 2 {
		t.Fatalf("document %s", stdout)
	}
	for _, r := range doc.Runs {
		if r.Cells == nil || r.NNZ == nil || r.Value == nil || r.Seconds == nil || len(r.Eigenvalues) != 1 || r.Eigenvalues[0].Re == nil || r.Eigenvalues[0].Im == nil {
			t.Fatalf("run fields missing: %s", stdout)
		}
		// The tent map's Ulam matrix on a dyadic grid is exact for the
		// uniform density and the constant slope: ln 2 (common practice,
		// no source), to the solver's tolerance.
		if math.Abs(*r.Value-math.Ln2) > 1e-10 {
			t.Errorf("Lyapunov exponent %v, want ln 2", *r.Value)
		}
	}
	data, err := os.ReadFile(mtx)
	if err != nil || !strings.HasPrefix(string(data), "%%MatrixMarket matrix coordinate real general\n") {
		t.Errorf("--export: %v %.60q", err, data)
	}
	data, err = os.ReadFile(dens)
	if lines := strings.Split(strings.TrimSpace(string(data)), "\n"); err != nil || lines[0] != "x1,density" || len(lines) != 129 {
		t.Errorf("--density: %v, %d lines, header %q", err, len(lines), lines[0])
	}
}

// TestUlamErrors checks exit codes and one-line messages.
func TestUlamErrors(t *testing.T) {
	for _, c := range []struct {
		args []string
		code int
		msg  string
	}{
		{[]string{"ulam", "tent", "--cells", "x"}, exitUsage, "--cells"},
		{[]string{"ulam", "henon", "--grid", "10"}, exitUsage, "--grid"},
		{[]string{"ulam", "tent", "--cells", "100000000000"}, exitUsage, "matrix indices hold"},
		{[]string{"ulam", "henon", "--grid", "100000x100000"}, exitUsage, "matrix indices hold"},
		{[]string{"ulam", "tent", "--quantity", "entropy"}, exitUsage, "unknown quantity"},
		{[]string{"ulam", "tent", "--format", "xml"}, exitUsage, "--format"},
		{[]string{"ulam", "henon", "--quantity", "lyapunov"}, exitUsage, "1D maps only"},
		{[]string{"ulam"}, exitUsage, "expected a SYSTEM"},
		// A residual below round-off cannot be reached (unless the Krylov
		// space happens to be exactly invariant, as it is for some Ulam
		// matrices with repeated rows, where the residual is exactly 0):
		// the solver stops at its restart limit and says so, with the
		// residuals reached.
		{[]string{"ulam", "tent", "--cells", "999", "--eigs", "3", "--tol", "1e-300"}, exitNumerical, "not converged"},
	} {
		code, stdout, stderr := runCLI(c.args...)
		if code != c.code || stdout != "" || strings.Count(stderr, "\n") != 1 || !strings.Contains(stderr, c.msg) || !strings.HasPrefix(stderr, "crosspec ulam: ") {
			t.Errorf("%v: exit %d, stdout %q, stderr %q; want exit %d and one line with %q", c.args, code, stdout, stderr, c.code, c.msg)
		}
	}
}
