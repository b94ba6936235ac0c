package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"
)

// readJSONFile decodes the JSON document in path.
func readJSONFile(t *testing.T, path string) map[string]any {
	t.Helper()
	data, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	var doc map[string]any
	if err := json.Unmarshal(data, &doc); err != nil {
		t.Fatalf("%s is not JSON: %v", path, err)
	}
	return doc
}

// TestCheckWithoutCycles compares Ulam's method with the Galerkin basis on
// the Gauss map, whose infinitely many laps leave no cycle path: the check
// must make no cycle search, succeed, and compare the two matrix paths with
// each other in every rendering, the plots and the manifest.
//
// The Lyapunov exponent of the Gauss map is π²/(6 ln 2) (P. Lévy (1936)),
// computed here from the closed form: the decimals 2.373138220831925 that
// REFERENCES.md lists differ from the closed form's 2.373138220831251 in
// the thirteenth digit, more than the bar of the converged basis.
func TestCheckWithoutCycles(t *testing.T) {
	dir := filepath.Join(t.TempDir(), "report")
	code, stdout, stderr := runCLI("check", "gauss", "--quantity", "lyapunov", "--methods", "ulam,galerkin",
		"--cells", "1024,2048,4096,8192", "--galerkin-sizes", "2,4,8,16", "--out", dir, "--quiet")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}

	for _, want := range []string{"lyapunov of gauss: Ulam's method against Galerkin (piecewise polynomials of degree 6)\n",
		"verdict, Ulam against Galerkin: "} {
		if !strings.Contains(stdout, want) {
			t.Errorf("table output lacks %q:\n%s", want, stdout)
		}
	}
	for _, unwanted := range []string{"cycle length", "cycle expansion", "against cycles", "advice: cycle"} {
		if strings.Contains(stdout, unwanted) {
			t.Errorf("table output mentions %q without the cycle path:\n%s", unwanted, stdout)
		}
	}

	doc := readJSONFile(t, filepath.Join(dir, "report.json"))
	if _, ok := field(t, doc, "seconds").(map[string]any)["cycles"]; ok {
		t.Errorf("a cycle search was timed: %v", field(t, doc, "seconds"))
	}
	for _, key := range []string{"estimate", "error"} {
		if v := field(t, doc, "cycles", key); v != nil {
			t.Errorf("cycles %s is %v, want null", key, v)
		}
	}
	if orders, ok := field(t, doc, "cycles", "orders").([]any); !ok || len(orders) != 0 {
		t.Errorf("cycles orders %v, want []", field(t, doc, "cycles", "orders"))
	}
	if s := field(t, doc, "cycles", "status"); s != notRun {
		t.Errorf("cycles status %v, want %q", s, notRun)
	}
	if v := field(t, doc, "galerkin", "verdict_against_cycles"); v != notRun {
		t.Errorf("galerkin verdict against cycles %v, want %q", v, notRun)
	}
	if v := field(t, doc, "galerkin", "discrepancy_against_cycles"); v != nil {
		t.Errorf("galerkin discrepancy against cycles %v, want null", v)
	}

	g, eg := field(t, doc, "galerkin", "estimate").(float64), field(t, doc, "galerkin", "error").(float64)
	u, eu := field(t, doc, "ulam", "estimate").(float64), field(t, doc, "ulam", "error").(float64)
	levy := math.Pi * math.Pi / (6 * math.Ln2) // P. Lévy (1936)
	if !(math.Abs(g-levy) <= eg) {
		t.Errorf("Galerkin %.16g ± %.2g misses Lévy's constant %.16g by %.2g", g, eg, levy, math.Abs(g-levy))
	}
	// Piecewise polynomials of degree 6 converge like h^7 or faster, plain
	// Ulam like a power of 1/N below one here: the Galerkin bar must be the
	// smaller one, or the comparison has its paths the wrong way round.
	if !(eg < eu) {
		t.Errorf("Galerkin error %.2g not below Ulam's %.2g", eg, eu)
	}

	// The top-level verdict is Ulam against Galerkin: its discrepancy is
	// theirs, recomputed from the document (rounding of a few operations,
	// so 1e-12 relative is ample).
	want := math.Abs(u-g) / math.Hypot(eu, eg)
	got, ok := field(t, doc, "discrepancy").(float64)
	if !ok || !scalar.EqualWithinAbsOrRel(got, want, 0, 1e-12) {
		t.Errorf("discrepancy %v, want |ulam − galerkin|/combined error = %.6g", field(t, doc, "discrepancy"), want)
	}
	verdict := field(t, doc, "verdict")
	switch verdict {
	case "agree", "inconclusive", "disagree":
	default:
		t.Errorf("verdict %v", verdict)
	}
	if agree := field(t, doc, "agree"); agree != (verdict == "agree") {
		t.Errorf("agree %v with verdict %v", agree, verdict)
	}

	m := readJSONFile(t, filepath.Join(dir, "manifest.json"))
	flags := field(t, m, "flags").(map[string]any)
	for _, key := range []string{"max-len", "expansion", "cycles"} {
		if _, ok := flags[key]; ok {
			t.Errorf("manifest records the cycle flag %q", key)
		}
	}
	if flags["methods"] != "ulam,galerkin" || flags["galerkin-sizes"] != "2,4,8,16" {
		t.Errorf("manifest flags %v lack the methods or the Galerkin sizes", flags)
	}
	for _, name := range []string{"report.txt", "report.csv", "report.tex", "report.md", "convergence.svg", "convergence.png",
		"spectrum.svg", "spectrum.png", "density.svg"} {
		info, err := os.Stat(filepath.Join(dir, name))
		if err != nil || info.Size() == 0 {
			t.Errorf("%s: %v", name, err)
		}
	}
}

// TestCheckMethodsUlamCycles names the default pair explicitly: the output
// is the one the default gives, fixed by the golden file of
// TestCheckRenderings.
func TestCheckMethodsUlamCycles(t *testing.T) {
	code, stdout, stderr := runCLI("check", "logistic-repeller", "--methods", "ulam,cycles",
		"--cells", "1024,2048,4096,8192,16384", "--max-len", "7")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	golden(t, "check-logistic.txt", stdout)
}

// TestCheckGaussNeedsMethods: a check with the cycle path on a map with
// more laps than itineraries can spell stops at once, with exit code 2 and
// a message that names the way out, before any other path runs.
func TestCheckGaussNeedsMethods(t *testing.T) {
	code, stdout, stderr := runCLI("check", "gauss")
	if code != exitUsage {
		t.Fatalf("exit %d, want %d (stdout %q)", code, exitUsage, stdout)
	}
	if !strings.Contains(stderr, "--methods ulam,galerkin") || strings.Count(strings.TrimSpace(stderr), "\n") != 0 {
		t.Errorf("want one line naming --methods ulam,galerkin, got %q", stderr)
	}
}
