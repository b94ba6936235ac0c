package main

import (
	"bytes"
	"flag"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

var update = flag.Bool("update", false, "rewrite the golden files in testdata/")

// runCLI runs the command line and returns exit code, stdout and stderr.
func runCLI(args ...string) (int, string, string) {
	var stdout, stderr bytes.Buffer
	code := run(args, &stdout, &stderr)
	return code, stdout.String(), stderr.String()
}

// golden compares got with the file testdata/NAME, or rewrites it with
// -update.
func golden(t *testing.T, name, got string) {
	t.Helper()
	path := filepath.Join("..", "..", "testdata", "golden", name)
	if *update {
		if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(path, []byte(got), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	want, err := os.ReadFile(path)
	if err != nil {
		t.Fatalf("%v (run go test -update to create it)", err)
	}
	if got != string(want) {
		t.Errorf("%s differs from the golden file:\n--- got\n%s\n--- want\n%s", name, got, want)
	}
}

// TestBadSystemFiles runs every malformed system file of testdata/bad
// through the command line: each gives exit code 2 and its expected
// one-line error (testdata/bad/NAME.err).
func TestBadSystemFiles(t *testing.T) {
	files, err := filepath.Glob(filepath.Join("..", "..", "testdata", "bad", "*.toml"))
	if err != nil {
		t.Fatal(err)
	}
	if len(files) < 20 {
		t.Fatalf("only %d malformed system files", len(files))
	}
	for _, file := range files {
		code, stdout, stderr := runCLI("show", file)
		if code != exitUsage {
			t.Errorf("%s: exit code %d, want %d", file, code, exitUsage)
		}
		if stdout != "" {
			t.Errorf("%s: printed %q on stdout", file, stdout)
		}
		if strings.Count(stderr, "\n") != 1 || !strings.HasPrefix(stderr, "crosspec show: system file ") {
			t.Errorf("%s: error is not one line naming the file: %q", file, stderr)
		}
		errFile := strings.TrimSuffix(file, ".toml") + ".err"
		if *update {
			if err := os.WriteFile(errFile, []byte(stderr), 0o644); err != nil {
				t.Fatal(err)
			}
			continue
		}
		want, err := os.ReadFile(errFile)
		if err != nil {
			t.Fatalf("%v (run go test -update to create it)", err)
		}
		if stderr != string(want) {
			t.Errorf("%s:\n got  %s want %s", file, stderr, want)
		}
	}
}

func TestUsageErrors(t *testing.T) {
	cases := []struct {
		args []string
		want string
	}{
		{[]string{"frobnicate"}, `crosspec: unknown command "frobnicate"`},
		{[]string{"show"}, "crosspec show: expected a SYSTEM"},
		{[]string{"show", "no-such-system"}, `crosspec show: no system file or catalog system "no-such-system"`},
		{[]string{"show", "missing/file.toml"}, "crosspec show: system file missing/file.toml: cannot read: no such file or directory"},
		{[]string{"show", "--param", "A", "logistic-repeller"}, `crosspec show: invalid value "A" for flag -param: expected NAME=VALUE`},
		{[]string{"show", "logistic-repeller", "--param", "A=six"}, `crosspec show: invalid value "A=six" for flag -param: parameter A: expected a number`},
		{[]string{"show", "logistic-repeller", "--param", "Z=1"}, `crosspec show: system file catalog:logistic-repeller: parameter override "Z"`},
		{[]string{"systems", "--format", "yaml"}, `crosspec systems: --format "yaml": expected one of`},
		{[]string{"systems", "extra"}, `crosspec systems: expected no arguments`},
		{[]string{"show", "--bogus", "henon"}, "crosspec show: flag provided but not defined: -bogus"},
		{[]string{"help", "frobnicate"}, `crosspec help: unknown command "frobnicate"`},
	}
	for _, c := range cases {
		code, _, stderr := runCLI(c.args...)
		if code != exitUsage {
			t.Errorf("%v: exit code %d, want %d", c.args, code, exitUsage)
		}
		if !strings.HasPrefix(stderr, c.want) || strings.Count(stderr, "\n") != 1 {
			t.Errorf("%v: stderr %q, want one line starting %q", c.args, stderr, c.want)
		}
	}
}

func TestHelpAndVersion(t *testing.T) {
	code, stdout, _ := runCLI("--version")
	if code != exitOK || stdout != "crosspec "+version+"\n" {
		t.Errorf("--version: %d %q", code, stdout)
	}
	code, stdout, _ = runCLI("help")
	if code != exitOK || !strings.Contains(stdout, "commands:") {
		t.Errorf("help: %d %q", code, stdout)
	}
	for _, c := range commands {
		for _, args := range [][]string{{c.name, "--help"}, {"help", c.name}} {
			code, stdout, stderr := runCLI(args...)
			if code != exitOK || !strings.HasPrefix(stdout, "usage: crosspec "+c.name) || stderr != "" {
				t.Errorf("%v: exit %d, stdout %q, stderr %q", args, code, stdout, stderr)
			}
		}
	}
}

func TestGoldenOutputs(t *testing.T) {
	cases := []struct {
		name string
		args []string
	}{
		{"systems.txt", []string{"systems"}},
		{"systems.csv", []string{"systems", "--format", "csv"}},
		{"systems.md", []string{"systems", "--format", "markdown"}},
		{"systems.tex", []string{"systems", "--format", "latex"}},
		{"systems.json", []string{"systems", "--format", "json"}},
		{"show-logistic-repeller.txt", []string{"show", "logistic-repeller"}},
		{"show-henon.txt", []string{"show", "henon", "--param", "a=1.2"}},
		{"show-cantor.txt", []string{"show", "cantor"}},
	}
	for _, c := range cases {
		code, stdout, stderr := runCLI(c.args...)
		if code != exitOK {
			t.Errorf("%v: exit %d: %s", c.args, code, stderr)
			continue
		}
		golden(t, c.name, stdout)
	}
}
