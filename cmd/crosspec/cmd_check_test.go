package main

import (
	"bufio"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func checkJSON(t *testing.T, args ...string) map[string]any {
	t.Helper()
	code, stdout, stderr := runCLI(append(append([]string{"check"}, args...), "--format", "json")...)
	if code != exitOK {
		t.Fatalf("check %v: exit %d: %s", args, code, stderr)
	}
	var doc map[string]any
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatalf("check %v: output is not JSON: %v", args, err)
	}
	return doc
}

func field(t *testing.T, doc map[string]any, path ...string) any {
	t.Helper()
	var cur any = doc
	for _, key := range path {
		m, ok := cur.(map[string]any)
		if !ok {
			t.Fatalf("%v: %q is not an object", path, key)
		}
		if cur, ok = m[key]; !ok {
			t.Fatalf("missing field %v", path)
		}
	}
	return cur
}

// TestCheckLogisticRepeller runs check at its default settings on the
// logistic repeller A = 6 (escape rate): the two paths must agree, and
// their extrapolated values lie within 1e-6 of each other. The cycle
// expansion of this smooth hyperbolic map converges faster than
// exponentially to round-off (REFERENCES.md, common practice); Ulam's
// estimates at up to 2^18 cells are good to about 1e-8, so 1e-6 leaves the
// margin of the requirement.
func TestCheckLogisticRepeller(t *testing.T) {
	if testing.Short() {
		t.Skip("runs both paths at their default sizes")
	}
	doc := checkJSON(t, "logistic-repeller", "--quantity", "escape-rate")
	for _, key := range []string{"system", "quantity", "ulam", "cycles", "agree", "discrepancy"} {
		field(t, doc, key)
	}
	for _, key := range []string{"runs", "estimate", "error"} {
		field(t, doc, "ulam", key)
	}
	for _, key := range []string{"orders", "estimate", "error", "recommended_max_len"} {
		field(t, doc, "cycles", key)
	}
	run := field(t, doc, "ulam", "runs").([]any)[0].(map[string]any)
	for _, key := range []string{"cells", "nnz", "eigenvalues", "value", "seconds"} {
		if _, ok := run[key]; !ok {
			t.Errorf("ulam run misses %q", key)
		}
	}
	order := field(t, doc, "cycles", "orders").([]any)[0].(map[string]any)
	for _, key := range []string{"max_len", "cycles", "eigenvalues", "value"} {
		if _, ok := order[key]; !ok {
			t.Errorf("cycles order misses %q", key)
		}
	}
	if field(t, doc, "agree") != true {
		t.Errorf("verdict %v, reasons %v", field(t, doc, "verdict"), field(t, doc, "reasons"))
	}
	u, c := field(t, doc, "ulam", "estimate").(float64), field(t, doc, "cycles", "estimate").(float64)
	if math.Abs(u-c) > 1e-6 {
		t.Errorf("Ulam %.12g and cycles %.12g differ by more than 1e-6", u, c)
	}
}

// TestCheckExactPiecewiseLinear checks both paths on the full-branch
// piecewise-linear repeller, whose escape rate −ln(1/4 + 1/2) is exact for
// Ulam's method when the branch points 1/4, 1/3, 1/2 fall on cell edges
// (N a multiple of 12) and for the dynamical zeta function at every length
// (common practice, no source). Both hit it to round-off: a few ulps of
// the eigenvalue, amplified by the logarithm, well under 1e-12.
func TestCheckExactPiecewiseLinear(t *testing.T) {
	doc := checkJSON(t, "skew-tent-repeller", "--cells", "1200,2400,4800,9600", "--max-len", "6", "--expansion", "zeta")
	want := -math.Log(0.75)
	for _, path := range []string{"ulam", "cycles"} {
		got := field(t, doc, path, "estimate").(float64)
		if math.Abs(got-want) > 1e-12 {
			t.Errorf("%s: escape rate %.17g, want %.17g", path, got, want)
		}
	}
	if field(t, doc, "agree") != true {
		t.Errorf("verdict %v: %v", field(t, doc, "verdict"), field(t, doc, "reasons"))
	}
}

// TestCheckRenderings fixes the table, CSV, Markdown and LaTeX renderings
// with golden files.
func TestCheckRenderings(t *testing.T) {
	args := []string{"check", "logistic-repeller", "--cells", "1024,2048,4096,8192,16384", "--max-len", "7"}
	for format, name := range map[string]string{formatTable: "check-logistic.txt", formatCSV: "check-logistic.csv",
		formatMarkdown: "check-logistic.md", formatLaTeX: "check-logistic.tex"} {
		code, stdout, stderr := runCLI(append(args, "--format", format)...)
		if code != exitOK {
			t.Fatalf("%s: exit %d: %s", format, code, stderr)
		}
		golden(t, name, stdout)
	}
}

// TestCheckMissingCycle removes one prime cycle from a complete cycle file:
// the comparison must not report agreement, and must say why.
func TestCheckMissingCycle(t *testing.T) {
	dir := t.TempDir()
	file := filepath.Join(dir, "logistic.jsonl")
	if code, _, stderr := runCLI("cycles", "logistic-repeller", "--max-len", "10", "-o", file, "--quiet"); code != exitOK {
		t.Fatalf("cycle search: %s", stderr)
	}
	data, err := os.ReadFile(file)
	if err != nil {
		t.Fatal(err)
	}
	var kept []string
	sc := bufio.NewScanner(strings.NewReader(string(data)))
	for sc.Scan() {
		if strings.Contains(sc.Text(), `"itinerary":"001"`) {
			continue // drop the prime cycle 001
		}
		kept = append(kept, sc.Text())
	}
	broken := filepath.Join(dir, "broken.jsonl")
	if err := os.WriteFile(broken, []byte(strings.Join(kept, "\n")+"\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	doc := checkJSON(t, "logistic-repeller", "--cycles", broken, "--max-len", "10", "--cells", "1024,2048,4096,8192,16384,32768")
	verdict := field(t, doc, "verdict").(string)
	reasons := field(t, doc, "reasons").([]any)
	if verdict == "agree" || len(reasons) == 0 {
		t.Errorf("one missing cycle gave verdict %q with reasons %v", verdict, reasons)
	}
}

func TestCheckErrors(t *testing.T) {
	cases := []struct {
		args []string
		want string
	}{
		{[]string{"check", "henon", "--quantity", "lyapunov"}, "crosspec check: quantity lyapunov is compared for 1D maps only"},
		{[]string{"check", "cantor", "--quantity", "mean"}, "crosspec check: quantity mean needs an observable"},
		{[]string{"check", "cantor", "--plot", "out.pdf"}, `crosspec check: plot file "out.pdf": expected a name ending in .svg or .png`},
		{[]string{"check", "cantor", "--cells", "1024,x"}, "crosspec check: --cells"},
		{[]string{"check", "cantor", "--tol", "0"}, "crosspec check: --tol and --eigs must be positive, --points at least 0"},
		{[]string{"check", "horseshoe", "--points", "-1"}, "crosspec check: --tol and --eigs must be positive, --points at least 0"},
	}
	for _, c := range cases {
		code, _, stderr := runCLI(c.args...)
		if code != exitUsage || !strings.HasPrefix(stderr, c.want) || strings.Count(stderr, "\n") != 1 {
			t.Errorf("%v: exit %d, stderr %q; want exit 2 and one line starting %q", c.args, code, stderr, c.want)
		}
	}
}

// TestDemo runs the demo into a temporary folder: the report in every
// format, the plots and a manifest that names the system file's hash.
func TestDemo(t *testing.T) {
	if testing.Short() {
		t.Skip("runs both paths on the demo system")
	}
	dir := filepath.Join(t.TempDir(), "demo")
	code, stdout, stderr := runCLI("demo", "--out", dir, "--quiet")
	if code != exitOK {
		t.Fatalf("demo: exit %d: %s", code, stderr)
	}
	if !strings.Contains(stdout, "INVENTED") || !strings.Contains(stdout, "verdict, Ulam against cycles: ") {
		t.Errorf("demo output lacks the scenario note or the verdict:\n%s", stdout)
	}
	for _, name := range []string{"report.txt", "report.csv", "report.json", "report.tex", "report.md",
		"convergence.svg", "convergence.png", "spectrum.svg", "density.svg", "manifest.json"} {
		info, err := os.Stat(filepath.Join(dir, name))
		if err != nil || info.Size() == 0 {
			t.Errorf("%s: %v", name, err)
		}
	}
	data, err := os.ReadFile(filepath.Join(dir, "manifest.json"))
	if err != nil {
		t.Fatal(err)
	}
	var m map[string]any
	if err := json.Unmarshal(data, &m); err != nil {
		t.Fatal(err)
	}
	for _, key := range []string{"version", "system_sha256", "params", "flags", "counts", "seconds", "outputs"} {
		if _, ok := m[key]; !ok {
			t.Errorf("manifest misses %q", key)
		}
	}
}

// TestCheckGalerkin runs the higher-order basis as a third path. The
// doubling map's decay rate is ln 2 (eigenvalues 2^−k; P. Gaspard, Chaos,
// Scattering and Statistical Mechanics, Cambridge UP, 1998, from memory):
// piecewise polynomials of degree ≥ 1 hold the eigenvalue 1/2 exactly and
// the factorized cycle expansion has it at length 2, so both are exact to
// round-off, a few ulps of the eigenvalues through the logarithm: 1e-12
// leaves a wide margin.
func TestCheckGalerkin(t *testing.T) {
	doc := checkJSON(t, "doubling", "--methods", "galerkin,cycles", "--quantity", "decay-rate", "--expansion", "factorized", "--max-len", "8")
	g, ok := doc["galerkin"].(map[string]any)
	if !ok {
		t.Fatalf("no galerkin object in %v", doc)
	}
	for _, key := range []string{"basis", "runs", "estimate", "error", "verdict_against_cycles"} {
		if _, ok := g[key]; !ok {
			t.Errorf("galerkin misses %q", key)
		}
	}
	want := math.Log(2)
	for _, v := range []float64{g["estimate"].(float64), field(t, doc, "cycles", "estimate").(float64)} {
		if math.Abs(v-want) > 1e-12 {
			t.Errorf("decay rate %.17g, want ln 2", v)
		}
	}
	if g["verdict_against_cycles"] != "agree" || field(t, doc, "verdict") != "agree" {
		t.Errorf("verdicts %v and %v", g["verdict_against_cycles"], field(t, doc, "verdict"))
	}
	// The Ulam path left out: null estimate, status "not run".
	if field(t, doc, "ulam", "estimate") != nil || field(t, doc, "ulam", "status") != "not run" {
		t.Errorf("ulam left out: estimate %v, status %v", field(t, doc, "ulam", "estimate"), field(t, doc, "ulam", "status"))
	}
	if code, _, stderr := runCLI("check", "doubling", "--methods", "galerkin"); code != exitUsage || !strings.Contains(stderr, "name at least two paths") {
		t.Errorf("one method: exit %d, %q", code, stderr)
	}
	// A grid too large to index is refused before any run.
	if code, stdout, stderr := runCLI("check", "tent", "--cells", "1024,100000000000"); code != exitUsage || stdout != "" || !strings.Contains(stderr, "--cells") {
		t.Errorf("grid too large: exit %d, %q", code, stderr)
	}
}

// TestCheckAdviceLongerCycles: the horseshoe's cycle expansion is still
// improving at the default length 8 of two-dimensional maps (its
// differences fall irregularly but fast), so the advice names --max-len;
// the Hénon map's does not settle at all, so it does not.
func TestCheckAdviceLongerCycles(t *testing.T) {
	for _, c := range []struct {
		system string
		hint   bool
	}{{"horseshoe", true}, {"henon", false}} {
		code, stdout, stderr := runCLI("check", c.system, "--quiet", "--cells", "4096,16384")
		if code != exitOK {
			t.Fatalf("%s: exit %d: %s", c.system, code, stderr)
		}
		if got := strings.Contains(stdout, "try a larger --max-len"); got != c.hint {
			t.Errorf("%s: hint %v, want %v:\n%s", c.system, got, c.hint, stdout)
		}
	}
}

// TestCheckDecayRateBases: the middle-thirds Cantor map's transfer operator
// has λ_k = (2/3) 3^(−k) on analytic functions (linear branches of slope 3;
// common practice, no source), so the cycle expansion's decay rate is
// ln 3, while plain Ulam sees the jump eigenvalue 1/3 of the fixed points
// 0 and 1 (reached by the hole's edges) and gives ln 2. Those differ
// without either path being wrong: check must not say "disagree", and must
// say why. The global Chebyshev basis, smooth, agrees with the cycles.
func TestCheckDecayRateBases(t *testing.T) {
	run := func(args ...string) map[string]any {
		t.Helper()
		code, stdout, stderr := runCLI(append([]string{"check", "cantor", "--quantity", "decay-rate", "--max-len", "8", "--format", "json"}, args...)...)
		if code != exitOK {
			t.Fatalf("%v: exit %d: %s", args, code, stderr)
		}
		var doc map[string]any
		if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
			t.Fatal(err)
		}
		return doc
	}
	doc := run("--cells", "1024,2048,4096")
	if v := field(t, doc, "ulam", "estimate").(float64); math.Abs(v-math.Ln2) > 1e-9 {
		t.Errorf("Ulam decay rate %.12g, want ln 2 (the jump eigenvalue)", v)
	}
	if v := field(t, doc, "cycles", "estimate").(float64); math.Abs(v-math.Log(3)) > 1e-9 {
		t.Errorf("cycle decay rate %.12g, want ln 3", v)
	}
	reasons := fmt.Sprint(field(t, doc, "reasons"))
	if field(t, doc, "verdict") != "inconclusive" || !strings.Contains(reasons, "analytic functions") {
		t.Errorf("plain Ulam against cycles: verdict %v, reasons %s", field(t, doc, "verdict"), reasons)
	}
	doc = run("--methods", "galerkin,cycles", "--basis", "chebyshev")
	if field(t, doc, "verdict") != "agree" {
		t.Errorf("Chebyshev against cycles: verdict %v, reasons %v", field(t, doc, "verdict"), field(t, doc, "reasons"))
	}
	// Plain Ulam's decay rate confirms nothing either: the doubling map's
	// Ulam matrices have eigenvalues 1 and 0 only, so their λ1 is noise
	// whatever the verdict of the numbers.
	code, stdout, stderr := runCLI("check", "doubling", "--quantity", "decay-rate", "--cells", "1024,2048,4096,8192", "--max-len", "8", "--format", "json")
	if code != exitOK {
		t.Fatalf("doubling: exit %d: %s", code, stderr)
	}
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatal(err)
	}
	if field(t, doc, "verdict") != "inconclusive" {
		t.Errorf("doubling, plain Ulam against cycles: verdict %v", field(t, doc, "verdict"))
	}
}

// TestCheckTwoDimensionalAgree: skew-cantor, the product of the skew tent
// and the Cantor map, has the escape rate ln 2 (the factors' escape rates
// add; common practice, no source). Its 2D Ulam matrices from triangles are
// exact on every grid, and its cycle expansion to check's 2D default length
// 8 converges with irregular, non-monotone steps, which is the nature of
// 2D expansions: check must confirm the agreement (it called every 2D
// comparison inconclusive before), with a cycle bar that contains ln 2.
func TestCheckTwoDimensionalAgree(t *testing.T) {
	code, stdout, stderr := runCLI("check", "skew-cantor", "--cells", "1024,2048,4096,8192", "--format", "json")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var doc map[string]any
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatal(err)
	}
	if v := doc["verdict"]; v != "agree" {
		t.Errorf("verdict %v, want agree: %v", v, doc["reasons"])
	}
	v, e := field(t, doc, "cycles", "estimate").(float64), field(t, doc, "cycles", "error").(float64)
	if !(math.Abs(v-math.Ln2) <= e) {
		t.Errorf("cycles %.15g ± %.2g does not contain ln 2", v, e)
	}
	if u := field(t, doc, "ulam", "estimate").(float64); math.Abs(u-math.Ln2) > 1e-12 {
		t.Errorf("Ulam %.15g, want ln 2 to the solver's 1e-12", u)
	}
}

// TestCheckShortSearchDoubted: below the complete-horseshoe parameters the
// area-preserving quadratic map is pruned (R. Devaney and Z. Nitecki, 1979,
// from memory, as in the catalog file); at a = 5.5 the search finds fewer
// cycles than the two-symbol count predicts, and the verdict must say that
// the expansion misses terms.
func TestCheckShortSearchDoubted(t *testing.T) {
	code, stdout, stderr := runCLI("check", "horseshoe", "--param", "a=5.5", "--cells", "1024,2048,4096", "--format", "json")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var doc struct {
		Verdict string   `json:"verdict"`
		Reasons []string `json:"reasons"`
	}
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatal(err)
	}
	said := false
	for _, r := range doc.Reasons {
		said = said || strings.Contains(r, "fewer cycles than the symbolic dynamics predicts")
	}
	if !said || doc.Verdict == "agree" {
		t.Errorf("verdict %q, reasons %q: want the short search named and no agreement", doc.Verdict, doc.Reasons)
	}
}
