package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"crosspec/dynsys"
)

// runShards runs shards 1…k of a search with --shard i/k, each writing
// dir/part-i.EXT, and returns the comma-separated list of the files.
func runShards(t *testing.T, dir, system, maxLen string, k int, ext string) string {
	t.Helper()
	var files []string
	for i := 1; i <= k; i++ {
		path := filepath.Join(dir, fmt.Sprintf("part-%d-of-%d%s", i, k, ext))
		code, stdout, stderr := runCLI("cycles", system, "--max-len", maxLen, "--shard", fmt.Sprintf("%d/%d", i, k), "-o", path)
		if code != exitOK {
			t.Fatalf("shard %d/%d: exit %d: %s", i, k, code, stderr)
		}
		if want := fmt.Sprintf("search partial (shard %d of %d;", i, k); !strings.Contains(stdout, want) {
			t.Errorf("shard %d/%d: report does not say %q:\n%s", i, k, want, stdout)
		}
		files = append(files, path)
	}
	return strings.Join(files, ",")
}

func TestCyclesShardMergeEqualsWhole(t *testing.T) {
	// The logistic repeller to length 12 split into K = 1, 3 and 7 shards
	// and merged gives the same cycle file, byte for byte, and the same
	// report as the whole search: each itinerary is searched by the same
	// code in its shard, and the file keeps every bit (shortest
	// round-trip formatting). The counts it reports are the binary
	// necklace numbers, (1/n) Σ_{d|n} μ(d) 2^{n/d} (necklace (Möbius)
	// counting, C. Moreau 1872 (common practice)), checked in package
	// cycles; here the report must say complete.
	dir := t.TempDir()
	for _, ext := range []string{".jsonl", ".csv"} {
		whole := filepath.Join(dir, "whole"+ext)
		code, wantReport, stderr := runCLI("cycles", "logistic-repeller", "--max-len", "12", "-o", whole)
		if code != exitOK {
			t.Fatalf("whole search: exit %d: %s", code, stderr)
		}
		if !strings.Contains(wantReport, "747 prime cycles, search complete") {
			t.Errorf("whole search report:\n%s", wantReport)
		}
		wantFile, _ := os.ReadFile(whole)
		for _, k := range []int{1, 3, 7} {
			files := runShards(t, dir, "logistic-repeller", "12", k, ext)
			merged := filepath.Join(dir, fmt.Sprintf("merged-%d%s", k, ext))
			code, report, stderr := runCLI("cycles", "logistic-repeller", "--merge", files, "-o", merged)
			if code != exitOK {
				t.Fatalf("merge of %d shards: exit %d: %s", k, code, stderr)
			}
			if report != wantReport {
				t.Errorf("merge of %d shards (%s): report\n%s\nwant\n%s", k, ext, report, wantReport)
			}
			got, _ := os.ReadFile(merged)
			if len(wantFile) == 0 || !bytes.Equal(got, wantFile) {
				t.Errorf("merge of %d shards (%s): file differs from the whole search's", k, ext)
			}
		}
	}
}

func TestCyclesShardResume(t *testing.T) {
	// An interrupted shard keeps its header and completed lengths, has no
	// end mark (so a merge refuses it), and --resume completes the same
	// file as an uninterrupted run of the shard.
	s, err := dynsys.Open("logistic-repeller", nil)
	if err != nil {
		t.Fatal(err)
	}
	dir := t.TempDir()
	for _, ext := range []string{".jsonl", ".csv"} {
		whole, part := filepath.Join(dir, "whole-2"+ext), filepath.Join(dir, "part-2"+ext)
		var out, errs strings.Builder
		e := &env{stdout: &out, stderr: &errs, cmd: "crosspec cycles"}
		run := cycleRun{maxLen: 10, out: whole, format: formatTable, shard: 2, shards: 3}
		if code := runCycleSearch(context.Background(), e, s, run); code != exitOK {
			t.Fatalf("uninterrupted: exit %d: %s", code, errs.String())
		}
		run.out, run.stopAfter = part, 6
		if code := runCycleSearch(context.Background(), e, s, run); code != exitNumerical {
			t.Errorf("interrupted: exit %d, want %d", code, exitNumerical)
		}
		others := runShards(t, dir, "logistic-repeller", "10", 3, ext)
		withPart := strings.Replace(others, filepath.Join(dir, "part-2-of-3"+ext), part, 1)
		code, stdout, stderr := runCLI("cycles", "logistic-repeller", "--merge", withPart)
		if code != exitUsage || stdout != "" || !strings.Contains(stderr, part+": shard 2 of 3 of logistic-repeller (A=6) to length 10 is unfinished") || strings.Count(stderr, "\n") != 1 {
			t.Errorf("merge with an interrupted shard: exit %d, stderr %q", code, stderr)
		}
		run.stopAfter, run.resume = 0, true
		if code := runCycleSearch(context.Background(), e, s, run); code != exitOK {
			t.Fatalf("resumed: exit %d: %s", code, errs.String())
		}
		a, _ := os.ReadFile(whole)
		b, _ := os.ReadFile(part)
		if len(a) == 0 || !bytes.Equal(a, b) {
			t.Errorf("%s: resumed shard differs from the uninterrupted one:\n%s\n---\n%s", ext, b, a)
		}
	}
}

func TestCyclesShardErrors(t *testing.T) {
	dir := t.TempDir()
	logistic := runShards(t, dir, "logistic-repeller", "6", 3, ".jsonl")
	parts := strings.Split(logistic, ",")
	henonDir := filepath.Join(dir, "henon")
	os.Mkdir(henonDir, 0o755)
	henon := strings.Split(runShards(t, henonDir, "henon", "6", 3, ".jsonl"), ",")
	longDir := filepath.Join(dir, "long")
	os.Mkdir(longDir, 0o755)
	long := strings.Split(runShards(t, longDir, "logistic-repeller", "7", 3, ".jsonl"), ",")
	plain := filepath.Join(dir, "plain.jsonl")
	if code, _, stderr := runCLI("cycles", "logistic-repeller", "--max-len", "6", "-o", plain); code != exitOK {
		t.Fatal(stderr)
	}
	out := filepath.Join(dir, "x.jsonl")
	for _, tc := range []struct {
		args []string
		msg  string
	}{
		{[]string{"--max-len", "6", "--shard", "0/3", "-o", out}, `--shard "0/3": expected i/K with K ≥ 1 and 1 ≤ i ≤ K`},
		{[]string{"--max-len", "6", "--shard", "4/3", "-o", out}, `--shard "4/3": expected i/K with K ≥ 1 and 1 ≤ i ≤ K`},
		{[]string{"--max-len", "6", "--shard", "1/0", "-o", out}, `--shard "1/0": expected i/K with K ≥ 1 and 1 ≤ i ≤ K`},
		{[]string{"--max-len", "6", "--shard", "two", "-o", out}, `--shard "two": expected i/K, shard i of K counted from 1`},
		{[]string{"--max-len", "6", "--shard", "1/3"}, "--shard needs -o FILE, the shard's cycle file"},
		{[]string{"--shard", "1/3", "--check", plain}, "--shard and --check cannot be combined"},
		{[]string{"--shard", "1/3", "--merge", logistic}, "--shard and --merge cannot be combined"},
		{[]string{"--merge", logistic, "--resume", "-o", out}, "--merge and --resume cannot be combined"},
		{[]string{"--merge", logistic, "--max-len", "6"}, "--merge and --max-len cannot be combined"},
		{[]string{"--merge", parts[0] + ",," + parts[2]}, "file name 2 of 3 is empty"},
		{[]string{"--merge", parts[0] + "," + parts[2]}, "cycles: shard 2 of 3 of logistic-repeller missing from the merge"},
		{[]string{"--merge", parts[0] + "," + parts[1] + "," + parts[1] + "," + parts[2]}, parts[1] + ": holds shard 2 of 3, as " + parts[1] + " does"},
		{[]string{"--merge", parts[0] + "," + henon[1] + "," + parts[2]}, henon[1] + ": holds shard 2 of 3 of henon (a=1.4, b=0.3) to length 6, not a shard of logistic-repeller (A=6)"},
		{[]string{"--merge", parts[0] + "," + long[1] + "," + parts[2]}, long[1] + ": holds shard 2 of 3 of logistic-repeller (A=6) to length 7, but " + parts[0] + " holds shard 1 of 3 of logistic-repeller (A=6) to length 6"},
		{[]string{"--merge", parts[0] + "," + plain + "," + parts[2]}, plain + ": not a shard file"},
		{[]string{"--merge", logistic, "--param", "A=5"}, "not a shard of logistic-repeller (A=5)"},
		{[]string{"--merge", parts[0] + "," + filepath.Join(dir, "none.jsonl")}, "cannot read " + filepath.Join(dir, "none.jsonl")},
		{[]string{"--max-len", "6", "--resume", "-o", parts[1]}, "holds shard 2 of 3 of logistic-repeller (A=6) to length 6: resume it with --shard 2/3"},
		{[]string{"--max-len", "6", "--resume", "--shard", "1/3", "-o", parts[1]}, "holds shard 2 of 3 of logistic-repeller (A=6) to length 6, not shard 1 of 3"},
		{[]string{"--max-len", "6", "--resume", "--shard", "1/3", "-o", plain}, "it holds no shard header"},
	} {
		args := append([]string{"cycles", "logistic-repeller"}, tc.args...)
		code, stdout, stderr := runCLI(args...)
		if code != exitUsage || stdout != "" || strings.Count(stderr, "\n") != 1 || !strings.HasPrefix(stderr, "crosspec cycles: ") || !strings.Contains(stderr, tc.msg) {
			t.Errorf("%v: exit %d, stdout %q, stderr %q; want exit %d and one line with %q", tc.args, code, stdout, stderr, exitUsage, tc.msg)
		}
	}
}

func TestCyclesShardHenonMerge(t *testing.T) {
	// Hénon (1.4, 0.3) to period 8 in 3 shards: the merge counts
	// 2, 1, 0, 1, 0, 2, 4, 7 prime cycles per period (R. L. Davidchack
	// and Y.-C. Lai, Phys. Rev. E 60 (1999) 6172 (from memory)) and says
	// complete. Cycle for cycle equality with the whole search is checked
	// in package cycles.
	dir := t.TempDir()
	files := runShards(t, dir, "henon", "8", 3, ".jsonl")
	code, stdout, stderr := runCLI("cycles", "henon", "--merge", files, "--format", "json")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, stderr)
	}
	var doc struct {
		Status string `json:"status"`
		Counts []struct {
			Length      int `json:"length"`
			PrimeCycles int `json:"prime_cycles"`
		} `json:"counts"`
	}
	if err := json.Unmarshal([]byte(stdout), &doc); err != nil {
		t.Fatal(err)
	}
	want := []int{2, 1, 0, 1, 0, 2, 4, 7}
	if len(doc.Counts) != len(want) || doc.Status != "complete" {
		t.Fatalf("status %q, %d lengths; want complete, %d", doc.Status, len(doc.Counts), len(want))
	}
	for n, c := range doc.Counts {
		if c.Length != n+1 || c.PrimeCycles != want[n] {
			t.Errorf("period %d: %d prime cycles, want %d", c.Length, c.PrimeCycles, want[n])
		}
	}
}

// TestExpandRefusesShard: an expansion from one shard's file would miss
// the other shards' cycles without a word; it is refused with exit code 2
// and a message that names the merge.
func TestExpandRefusesShard(t *testing.T) {
	part := filepath.Join(t.TempDir(), "part-1.jsonl")
	if code, _, stderr := runCLI("cycles", "logistic-repeller", "--max-len", "6", "--shard", "1/2", "-o", part, "--quiet"); code != exitOK {
		t.Fatalf("shard search: exit %d: %s", code, stderr)
	}
	code, _, stderr := runCLI("expand", "logistic-repeller", "--max-len", "6", "--cycles", part, "--quiet")
	if code != exitUsage || !strings.Contains(stderr, "shard 1 of 2") || !strings.Contains(stderr, "--merge") {
		t.Errorf("expand from a shard: exit %d, %q", code, stderr)
	}
}
