package main

import (
	"encoding/json"
	"math"
	"path/filepath"
	"strings"
	"testing"
)

func TestExpandGolden(t *testing.T) {
	cases := []struct {
		name string
		args []string
	}{
		{"expand-logistic-escape.txt", []string{"expand", "logistic-repeller", "--quantity", "escape-rate", "--max-len", "9"}},
		{"expand-doubling-factorized.md", []string{"expand", "doubling", "--max-len", "8", "--eigs", "4", "--expansion", "factorized", "--format", "markdown"}},
		{"expand-skew-tent-zeta.csv", []string{"expand", "skew-tent-repeller", "--quantity", "escape-rate", "--max-len", "5", "--expansion", "zeta", "--format", "csv"}},
	}
	for _, c := range cases {
		code, stdout, stderr := runCLI(c.args...)
		if code != exitOK {
			t.Fatalf("%v: exit %d: %s", c.args, code, stderr)
		}
		golden(t, c.name, stdout)
	}
}

// TestExpandJSON checks the documented fields of the expand document
// (DESIGN.md section 6) and the escape rate of the full-branch
// piecewise-linear repeller from its dynamical zeta function,
// −ln(1/4 + 1/2) exactly at every length (common practice, no source): its
// cycle weights make every curvature correction vanish, so only round-off,
// a few ulps of the zero, separates the orders.
func TestExpandJSON(t *testing.T) {
	code, stdout, stderr := runCLI("expand", "skew-tent-repeller", "--quantity", "escape-rate", "--max-len", "6", "--expansion", "zeta", "--format", "json")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var doc map[string]any
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatal(err)
	}
	for _, key := range []string{"system", "quantity", "orders", "estimate", "error"} {
		if _, ok := doc[key]; !ok {
			t.Errorf("missing field %q", key)
		}
	}
	orders := doc["orders"].([]any)
	if len(orders) != 6 {
		t.Fatalf("%d orders, want 6", len(orders))
	}
	want := -math.Log(0.75)
	for _, o := range orders {
		m := o.(map[string]any)
		for _, key := range []string{"max_len", "cycles", "eigenvalues", "value"} {
			if _, ok := m[key]; !ok {
				t.Errorf("order misses field %q", key)
			}
		}
		if v := m["value"].(float64); math.Abs(v-want) > 1e-14 {
			t.Errorf("length %v: escape rate %.17g, want %.17g", m["max_len"], v, want)
		}
	}
}

// TestExpandNonHyperbolic checks the warning for x → 4x(1−x): its search is
// complete, but the critical point makes the determinant's coefficients
// decay only geometrically (the leading zero converges at the rate 1/2;
// common practice, no source), so the warning must name that cause and not
// claim that the values, which still halve their changes at every length,
// stopped improving.
func TestExpandNonHyperbolic(t *testing.T) {
	code, stdout, stderr := runCLI("expand", "logistic4", "--quantity", "lyapunov", "--max-len", "9", "--format", "json")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var doc struct {
		Orders []struct {
			Value float64 `json:"value"`
		} `json:"orders"`
		Warnings []string `json:"warnings"`
	}
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatal(err)
	}
	n := len(doc.Orders)
	if n < 3 {
		t.Fatalf("%d orders", n)
	}
	last := math.Abs(doc.Orders[n-1].Value - doc.Orders[n-2].Value)
	before := math.Abs(doc.Orders[n-2].Value - doc.Orders[n-3].Value)
	if !(last < 0.6*before) {
		t.Fatalf("changes %.3g then %.3g: the premise, convergence at the rate 1/2, does not hold", before, last)
	}
	warnings := strings.Join(doc.Warnings, "\n")
	if !strings.Contains(warnings, "critical point") || strings.Contains(warnings, "stopped improving") {
		t.Errorf("warnings %q: want the geometric decay with its causes, a critical point among them, and no stall of the values", warnings)
	}
}

// TestExpandCycleFile expands a cycle file with planted errors: each
// rejected cycle is listed on stderr with its line, and the rest is used.
func TestExpandCycleFile(t *testing.T) {
	file := filepath.Join("..", "..", "testdata", "cycles", "logistic-bad.jsonl")
	code, stdout, stderr := runCLI("expand", "logistic-repeller", "--cycles", file, "--max-len", "4", "--quantity", "escape-rate")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	lines := strings.Split(strings.TrimSpace(stderr), "\n")
	if len(lines) != 4 {
		t.Errorf("want 4 rejections on stderr, got %q", stderr)
	}
	for _, l := range lines {
		if !strings.HasPrefix(l, "crosspec expand: rejected "+file+":") {
			t.Errorf("rejection line %q does not name the file and line", l)
		}
	}
	if !strings.Contains(stdout, "4 cycles of the file were rejected") {
		t.Errorf("report does not mention the rejections:\n%s", stdout)
	}
}

func TestExpandErrors(t *testing.T) {
	cases := []struct {
		args []string
		want string
	}{
		{[]string{"expand", "logistic-repeller", "--quantity", "entropy"}, `crosspec expand: --quantity: unknown quantity "entropy"`},
		{[]string{"expand", "cantor", "--quantity", "mean"}, "crosspec expand: quantity mean needs an observable"},
		{[]string{"expand", "henon", "--quantity", "dimension"}, "crosspec expand: quantity dimension is defined here for 1D maps only"},
		{[]string{"expand", "henon", "--expansion", "factorized", "--max-len", "2"}, "crosspec expand: cycles: defined for one-dimensional maps only"},
		{[]string{"expand", "doubling", "--expansion", "taylor"}, `crosspec expand: --expansion "taylor": expected determinant, zeta or factorized`},
		{[]string{"expand", "doubling", "--max-len", "0"}, "crosspec expand: --max-len 0: expected a positive length"},
		{[]string{"expand", "doubling", "--cycles", "no/such.jsonl"}, "crosspec expand: cannot read no/such.jsonl"},
	}
	for _, c := range cases {
		code, _, stderr := runCLI(c.args...)
		if code != exitUsage || !strings.HasPrefix(stderr, c.want) || strings.Count(stderr, "\n") != 1 {
			t.Errorf("%v: exit %d, stderr %q; want exit 2 and one line starting %q", c.args, code, stderr, c.want)
		}
	}
}

// TestExpandPressureCurve prints P(β) for the middle-thirds Cantor
// repeller with the weight |Λ_p|^β: P(β) = ln 2 + (β − 1) ln 3 exactly
// (two full branches of slope 3, common practice, no source), to a few ulps
// through the zeta function, which is exact at length 1.
func TestExpandPressureCurve(t *testing.T) {
	code, stdout, stderr := runCLI("expand", "cantor", "--quantity", "lyapunov", "--betas", "0,0.5,1,2", "--max-len", "5", "--expansion", "zeta", "--format", "json")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var doc struct {
		Points []struct{ Beta, Pressure float64 }
	}
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatal(err)
	}
	if len(doc.Points) != 4 {
		t.Fatalf("%d points, want 4", len(doc.Points))
	}
	for _, p := range doc.Points {
		if want := math.Log(2) + (p.Beta-1)*math.Log(3); math.Abs(p.Pressure-want) > 1e-13 {
			t.Errorf("β = %g: P = %.16g, want %.16g", p.Beta, p.Pressure, want)
		}
	}
	if code, _, stderr := runCLI("expand", "cantor", "--betas", "0,x"); code != exitUsage || !strings.Contains(stderr, "--betas") {
		t.Errorf("bad --betas: exit %d, %q", code, stderr)
	}
}
