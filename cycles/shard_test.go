package cycles

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"math"
	"strings"
	"testing"

	"gonum.org/v1/gonum/floats/scalar"

	"crosspec/dynsys"
)

// runShard searches shard (1…shards) of sys to maxLen and returns its
// cycle file as written by a CycleWriter (header, cycles per length, end
// mark unless unfinished) and read back by ReadCycleFile, with the
// shard's own result.
func runShard(t *testing.T, sys *dynsys.System, shard, shards, maxLen int, format FileFormat, unfinished bool) (CycleFile, SearchResult) {
	t.Helper()
	var buf bytes.Buffer
	w := NewCycleWriter(&buf, format, sys.Dim(), false)
	if err := w.WriteShardHeader(NewShardHeader(sys, shard, shards, maxLen)); err != nil {
		t.Fatal(err)
	}
	res, err := Search(context.Background(), sys, &SearchSettings{MaxLen: maxLen, Shard: shard, Shards: shards,
		Found: func(_ int, found []Cycle) error {
			for _, c := range found {
				if err := w.Write(c); err != nil {
					return err
				}
			}
			return w.Flush()
		}})
	if err != nil {
		t.Fatal(err)
	}
	if !unfinished {
		if err := w.WriteSearchedTo(maxLen); err != nil {
			t.Fatal(err)
		}
	}
	if err := w.Flush(); err != nil {
		t.Fatal(err)
	}
	name := fmt.Sprintf("part-%d-of-%d", shard, shards)
	f, err := ReadCycleFile(bytes.NewReader(buf.Bytes()), name, sys.Dim())
	if err != nil {
		t.Fatal(err)
	}
	return f, res
}

// necklaces returns the number of prime cycles of length n of complete
// binary symbolic dynamics, (1/n) Σ_{d|n} μ(d) 2^{n/d}: necklace (Möbius)
// counting, C. Moreau 1872 (common practice). Written out here, apart from
// the package's LyndonCount.
func necklaces(n int) int {
	mu := func(d int) int {
		sign := 1
		for p := 2; d > 1; p++ {
			if d%p == 0 {
				d /= p
				if d%p == 0 {
					return 0
				}
				sign = -sign
			}
		}
		return sign
	}
	sum := 0
	for d := 1; d <= n; d++ {
		if n%d == 0 {
			sum += mu(d) << (n / d)
		}
	}
	return sum / n
}

// sameCycles reports the first difference between two cycle lists:
// itinerary and length exactly, points within pointTol (absolute) and
// multipliers and observable sums within the relative multTol.
func sameCycles(got, want []Cycle, pointTol, multTol float64) error {
	if len(got) != len(want) {
		return fmt.Errorf("%d cycles, want %d", len(got), len(want))
	}
	for i, g := range got {
		w := want[i]
		if g.Len != w.Len || g.Itinerary != w.Itinerary {
			return fmt.Errorf("cycle %d: %q of length %d, want %q of length %d", i, g.Itinerary, g.Len, w.Itinerary, w.Len)
		}
		for k := range w.Point {
			if !scalar.EqualWithinAbsOrRel(g.Point[k], w.Point[k], pointTol, 0) {
				return fmt.Errorf("cycle %d (%q, length %d): point %v, want %v", i, g.Itinerary, g.Len, g.Point, w.Point)
			}
			if !scalar.EqualWithinAbsOrRel(g.Multipliers[k], w.Multipliers[k], 0, multTol) {
				return fmt.Errorf("cycle %d (%q, length %d): multipliers %v, want %v", i, g.Itinerary, g.Len, g.Multipliers, w.Multipliers)
			}
		}
		if !scalar.EqualWithinAbsOrRel(g.ObservableSum, w.ObservableSum, pointTol*float64(g.Len), multTol) {
			return fmt.Errorf("cycle %d: observable sum %v, want %v", i, g.ObservableSum, w.ObservableSum)
		}
	}
	return nil
}

func TestMergeShardsEqualsWholeSearch(t *testing.T) {
	for _, tc := range []struct {
		system string
		maxLen int
		shards []int
		// primes are the prime-cycle counts per length 1…maxLen the
		// merge must reproduce; nil: the binary necklace numbers.
		primes []int
		// pointTol and multTol bound the differences from the whole
		// search. 1D: every word is searched by the same code from the
		// same start in its shard as in the whole search, so the cycles
		// are the same bits; the cycle file's shortest round-trip
		// formatting keeps them (tolerance 0). Hénon: a cycle found by
		// two shards may be kept in another converged copy than the
		// whole search keeps. Multiple shooting stops at a residual of
		// 64 ulps of the domain size (about 4e-14 for the side 3), and
		// the orbit error is that residual times ‖J⁻¹‖ = O(1) for these
		// hyperbolic orbits: 1e-12 in the points. A multiplier moves by
		// Σ_j |f''/f'| δx_j relative, with |f''/f'| ≤ 2a/|f'| and n ≤ 8
		// points: 1e-10 relative covers it with room.
		pointTol, multTol float64
	}{
		// Complete binary dynamics: necklace counts (necklace (Möbius)
		// counting, C. Moreau 1872 (common practice)).
		{"logistic-repeller", 12, []int{1, 3, 7}, nil, 0, 0},
		// A complete two-symbol horseshoe (R. Devaney and Z. Nitecki,
		// Commun. Math. Phys. 67 (1979) 137-146, from memory, as the
		// catalog says): necklace counts again; d = 2 with word seeds
		// split by itinerary. Tolerances as for Hénon below (multiple
		// shooting, n ≤ 8).
		{"horseshoe", 8, []int{3}, nil, 1e-12, 1e-10},
		// Number of prime cycles of period 1…8: R. L. Davidchack and
		// Y.-C. Lai, Phys. Rev. E 60 (1999) 6172 (from memory).
		{"henon", 8, []int{3}, []int{2, 1, 0, 1, 0, 2, 4, 7}, 1e-12, 1e-10},
	} {
		sys := openSystem(t, tc.system)
		whole := search(t, sys, &SearchSettings{MaxLen: tc.maxLen})
		for _, k := range tc.shards {
			for _, format := range []FileFormat{JSONLines, CSV} {
				name := fmt.Sprintf("%s, %d shards, format %d", tc.system, k, format)
				parts := make([]CycleFile, k)
				for i := range k {
					var own SearchResult
					parts[i], own = runShard(t, sys, i+1, k, tc.maxLen, format, false)
					if own.Status != SearchPartial {
						t.Errorf("%s: shard %d: status %v, want %v", name, i+1, own.Status, SearchPartial)
					}
					for _, c := range own.Counts {
						if want := fmt.Sprintf("partial (shard %d of %d)", i+1, k); c.Note != want {
							t.Errorf("%s: shard %d, length %d: note %q, want %q", name, i+1, c.Length, c.Note, want)
						}
					}
					if h := parts[i].Shard; h == nil || h.Shard != i+1 || h.Shards != k || h.System != sys.Name || h.MaxLen != tc.maxLen || parts[i].SearchedTo != tc.maxLen {
						t.Fatalf("%s: shard %d: header %+v, end mark %d", name, i+1, h, parts[i].SearchedTo)
					}
				}
				// The merge does not depend on the order of the files.
				for i, j := 0, k-1; i < j; i, j = i+1, j-1 {
					parts[i], parts[j] = parts[j], parts[i]
				}
				merged, err := MergeShards(sys, parts, nil)
				if err != nil {
					t.Fatalf("%s: %v", name, err)
				}
				if err := sameCycles(merged.Cycles, whole.Cycles, tc.pointTol, tc.multTol); err != nil {
					t.Errorf("%s: merged cycles differ from the whole search: %v", name, err)
				}
				if merged.Status != whole.Status || merged.Status != SearchComplete {
					t.Errorf("%s: status %v, whole search %v", name, merged.Status, whole.Status)
				}
				if len(merged.Counts) != len(whole.Counts) {
					t.Fatalf("%s: %d lengths, want %d", name, len(merged.Counts), len(whole.Counts))
				}
				for i, c := range merged.Counts {
					if c != whole.Counts[i] {
						t.Errorf("%s: counts %+v, whole search %+v", name, c, whole.Counts[i])
					}
					want := 0
					if tc.primes != nil {
						want = tc.primes[i]
					} else {
						want = necklaces(c.Length)
					}
					if c.PrimeCycles != want {
						t.Errorf("%s: length %d: %d prime cycles, want %d", name, c.Length, c.PrimeCycles, want)
					}
				}
			}
		}
	}
}

func TestShardWordsPartition(t *testing.T) {
	// Every Lyndon word lands in exactly one shard, and the prefix length
	// m is the smallest with L^m ≥ 64K (the rule the package documents).
	for _, symbols := range []int{2, 3, 5} {
		for shards := 1; shards <= 9; shards++ {
			m := shardPrefixLen(symbols, shards)
			if math.Pow(float64(symbols), float64(m)) < float64(64*shards) || m > 1 && math.Pow(float64(symbols), float64(m-1)) >= float64(64*shards) {
				t.Errorf("L = %d, K = %d: prefix length %d is not the smallest with L^m ≥ 64K", symbols, shards, m)
			}
			selectors := make([]*shardSelector, shards)
			for i := range shards {
				selectors[i] = newShardSelector(i+1, shards, symbols)
			}
			for w := range LyndonWords(symbols, 7) {
				holders := 0
				for _, p := range selectors {
					if p.holdsWord(w) {
						holders++
					}
				}
				if holders != 1 {
					t.Fatalf("L = %d, K = %d: word %v held by %d shards", symbols, shards, w, holders)
				}
			}
		}
	}
}

func TestMergeShardsRefuses(t *testing.T) {
	logistic := openSystem(t, "logistic-repeller")
	other, err := dynsys.Open("logistic-repeller", map[string]float64{"A": 5})
	if err != nil {
		t.Fatal(err)
	}
	part := func(sys *dynsys.System, shard, shards, maxLen int, unfinished bool) CycleFile {
		f, _ := runShard(t, sys, shard, shards, maxLen, JSONLines, unfinished)
		return f
	}
	p1, p2, p3 := part(logistic, 1, 3, 6, false), part(logistic, 2, 3, 6, false), part(logistic, 3, 3, 6, false)
	whole := CycleFile{Name: "whole", Cycles: p1.Cycles}
	for _, tc := range []struct {
		name  string
		parts []CycleFile
		file  string
		msg   string
	}{
		{"missing shard", []CycleFile{p1, p3}, "", "shard 2 of 3 of logistic-repeller missing"},
		{"shard twice", []CycleFile{p1, p2, p2, p3}, p2.Name, "as " + p2.Name + " does"},
		{"other parameters", []CycleFile{p1, part(other, 2, 3, 6, false), p3}, "part-2-of-3", "not a shard of logistic-repeller (A=6)"},
		{"other max length", []CycleFile{p1, part(logistic, 2, 3, 7, false), p3}, "part-2-of-3", "to length 7, but part-1-of-3 holds"},
		{"other shard count", []CycleFile{p1, part(logistic, 2, 4, 6, false), p3}, "part-2-of-4", "shard 2 of 4"},
		{"unfinished", []CycleFile{p1, part(logistic, 2, 3, 6, true), p3}, "part-2-of-3", "unfinished"},
		{"no header", []CycleFile{p1, whole}, "whole", "not a shard file"},
		{"nothing", nil, "", "no shard files"},
	} {
		_, err := MergeShards(logistic, tc.parts, nil)
		var se *ShardError
		if !errors.As(err, &se) || se.File != tc.file || !strings.Contains(err.Error(), tc.msg) || strings.Contains(err.Error(), "\n") {
			t.Errorf("%s: error %v (file %q), want a one-line *ShardError naming %q and saying %q", tc.name, err, fileOf(se), tc.file, tc.msg)
		}
	}
}

func fileOf(e *ShardError) string {
	if e == nil {
		return ""
	}
	return e.File
}

func TestShardFileMetadata(t *testing.T) {
	// The shard header and end mark round-trip in both formats, do not
	// disturb the cycles' offsets, and a malformed or misplaced header is
	// a *FileError naming its line.
	sys := openSystem(t, "logistic-repeller")
	for _, format := range []FileFormat{JSONLines, CSV} {
		f, _ := runShard(t, sys, 2, 3, 5, format, false)
		want := NewShardHeader(sys, 2, 3, 5)
		if f.Shard == nil || !f.Shard.SameSearch(want) || f.Shard.Shard != 2 || f.SearchedTo != 5 {
			t.Errorf("format %d: header %+v, end mark %d, want %+v and 5", format, f.Shard, f.SearchedTo, want)
		}
	}
	for _, tc := range []struct {
		text string
		line int
	}{
		{`{"shard":1,"shards":2,"system":"x","max_len":0}` + "\n", 1},
		{`{"shard":3,"shards":2,"system":"x","max_len":4}` + "\n", 1},
		{`{"itinerary":"0","length":1,"point":[0],"multipliers":[6],"observable_sum":0}` + "\n" + `{"shard":1,"shards":2,"system":"x","max_len":4}` + "\n", 2},
		{"# not json\n", 1},
		{`{"searched_to":0}` + "\n", 1},
	} {
		_, err := ReadCycleFile(strings.NewReader(tc.text), "f", 1)
		var fe *FileError
		if !errors.As(err, &fe) || fe.Line != tc.line {
			t.Errorf("%q: error %v, want a *FileError at line %d", tc.text, err, tc.line)
		}
	}
}

func TestSearchRejectsBadShard(t *testing.T) {
	sys := openSystem(t, "logistic-repeller")
	for _, s := range [][2]int{{0, 3}, {4, 3}, {1, -1}} {
		if _, err := Search(context.Background(), sys, &SearchSettings{MaxLen: 2, Shard: s[0], Shards: s[1]}); err == nil {
			t.Errorf("shard %d of %d: no error", s[0], s[1])
		}
	}
}
