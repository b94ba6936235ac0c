package main

import (
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"crosspec/dynsys"
)

func TestCyclesGolden(t *testing.T) {
	for _, tc := range []struct {
		golden string
		args   []string
	}{
		{"cycles-logistic-repeller.txt", []string{"cycles", "logistic-repeller", "--max-len", "8"}},
		{"cycles-henon.md", []string{"cycles", "henon", "--max-len", "6", "--format", "markdown"}},
		{"cycles-cantor.json", []string{"cycles", "cantor", "--max-len", "3", "--format", "json"}},
		{"cycles-check-logistic.txt", []string{"cycles", "logistic-repeller", "--check", "../../testdata/cycles/logistic-bad.jsonl"}},
	} {
		code, stdout, stderr := runCLI(tc.args...)
		wantCode := exitOK
		if strings.Contains(tc.golden, "check") {
			wantCode = exitUsage
		}
		if code != wantCode {
			t.Errorf("%v: exit code %d, want %d (%s)", tc.args, code, wantCode, stderr)
		}
		golden(t, tc.golden, stdout)
	}
}

func TestCyclesErrors(t *testing.T) {
	dir := t.TempDir()
	for _, tc := range []struct {
		args []string
		code int
		msg  string
	}{
		{[]string{"cycles", "henon", "--max-len", "0"}, exitUsage, "crosspec cycles: --max-len 0: expected a positive length\n"},
		{[]string{"cycles", "henon", "--resume"}, exitUsage, "crosspec cycles: --resume needs -o FILE, the file to continue\n"},
		{[]string{"cycles", "henon", "--format", "xml"}, exitUsage, `crosspec cycles: --format "xml": expected one of table, csv, json, latex, markdown` + "\n"},
		{[]string{"cycles", "logistic-repeller", "--check", "../../testdata/cycles/malformed.jsonl"}, exitUsage,
			"crosspec cycles: cycle file ../../testdata/cycles/malformed.jsonl:2: point: expected 1 numbers, found 2\n"},
		{[]string{"cycles", "logistic-repeller", "-o", filepath.Join(dir, "missing", "x.jsonl")}, exitUsage, ""},
	} {
		code, stdout, stderr := runCLI(tc.args...)
		if code != tc.code || stdout != "" || strings.Count(stderr, "\n") != 1 {
			t.Errorf("%v: exit %d, stdout %q, stderr %q", tc.args, code, stdout, stderr)
		}
		if tc.msg != "" && stderr != tc.msg {
			t.Errorf("%v:\n got  %s want %s", tc.args, stderr, tc.msg)
		}
	}
}

func TestCyclesResume(t *testing.T) {
	// An interrupted search (simulated by stopping after length 5) exits
	// non-zero with one line, keeps the lengths it finished, and --resume
	// completes the same file as an uninterrupted run, in both formats.
	s, err := dynsys.Open("henon", nil)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	for _, name := range []string{"h.jsonl", "h.csv"} {
		whole, part := filepath.Join(dir, "whole-"+name), filepath.Join(dir, "part-"+name)
		var out, errs strings.Builder
		e := &env{stdout: &out, stderr: &errs, cmd: "crosspec cycles"}
		if code := runCycleSearch(context.Background(), e, s, cycleRun{maxLen: 9, out: whole, format: formatTable}); code != exitOK {
			t.Fatalf("uninterrupted: exit %d: %s", code, errs.String())
		}
		errs.Reset()
		code := runCycleSearch(context.Background(), e, s, cycleRun{maxLen: 9, out: part, format: formatTable, stopAfter: 5})
		if code != exitNumerical || !strings.Contains(errs.String(), "interrupted during length 6") || strings.Count(errs.String(), "\n") != 1 {
			t.Errorf("interrupted: exit %d, stderr %q", code, errs.String())
		}
		if code := runCycleSearch(context.Background(), e, s, cycleRun{maxLen: 9, out: part, resume: true, format: formatTable}); code != exitOK {
			t.Fatalf("resumed: exit %d: %s", code, errs.String())
		}
		a, _ := os.ReadFile(whole)
		b, _ := os.ReadFile(part)
		if len(a) == 0 || string(a) != string(b) {
			t.Errorf("%s: resumed file differs from the uninterrupted one:\n%s\n---\n%s", name, b, a)
		}
	}
}
