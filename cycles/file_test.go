package cycles

import (
	"bytes"
	"context"
	"errors"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

func readTestFile(t *testing.T, name string, dim int) []FileCycle {
	t.Helper()
	f, err := os.Open(filepath.Join("..", "testdata", "cycles", name))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	read, err := ReadCycles(f, name, dim)
	if err != nil {
		t.Fatal(err)
	}
	return read
}

func TestVerifyReportsProblems(t *testing.T) {
	// Files with deliberately wrong entries. The good entries are the
	// search's own output; the bad ones are made by hand, so each problem
	// must be reported at its line and nothing else.
	type problem struct {
		line int
		kind ProblemKind
	}
	for _, tc := range []struct {
		file, system string
		dim          int
		want         []problem
		accepted     int
	}{
		{"logistic-bad.jsonl", "logistic-repeller", 1,
			[]problem{{3, NotPeriodic}, {4, Duplicate}, {5, WrongMultiplier}, {7, NotPrime}}, 3},
		{"henon-bad.csv", "henon", 2,
			[]problem{{5, Duplicate}, {6, NotPeriodic}, {7, NotPrime}, {8, WrongMultiplier}}, 3},
	} {
		s := openSystem(t, tc.system)
		res, err := Verify(s, readTestFile(t, tc.file, tc.dim), &VerifySettings{File: tc.file})
		if err != nil {
			t.Fatal(err)
		}
		var got []problem
		for _, p := range res.Problems {
			got = append(got, problem{p.Line, p.Kind})
			if !strings.HasPrefix(p.String(), tc.file+":") {
				t.Errorf("problem %q does not name the file", p)
			}
		}
		if !slices.Equal(got, tc.want) {
			t.Errorf("%s: problems %v, want %v", tc.file, res.Problems, tc.want)
		}
		if len(res.Cycles) != tc.accepted {
			t.Errorf("%s: %d cycles accepted, want %d", tc.file, len(res.Cycles), tc.accepted)
		}
	}
}

func TestReadMalformed(t *testing.T) {
	f, err := os.Open(filepath.Join("..", "testdata", "cycles", "malformed.jsonl"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	_, err = ReadCycles(f, "malformed.jsonl", 1)
	var fe *FileError
	if !errors.As(err, &fe) || fe.Line != 2 || !strings.Contains(err.Error(), "point: expected 1 numbers, found 2") {
		t.Errorf("error %v, want line 2 naming the point", err)
	}
}

func TestWriteReadRoundTrip(t *testing.T) {
	// Written with the shortest round-trip formatting, the cycles read
	// back bit for bit and pass verification untouched.
	for _, tc := range []struct {
		system string
		format FileFormat
	}{{"logistic-repeller", JSONLines}, {"henon", CSV}} {
		s := openSystem(t, tc.system)
		res := search(t, s, &SearchSettings{MaxLen: 7})
		var buf bytes.Buffer
		w := NewCycleWriter(&buf, tc.format, s.Dim(), false)
		for _, c := range res.Cycles {
			if err := w.Write(c); err != nil {
				t.Fatal(err)
			}
		}
		if err := w.Flush(); err != nil {
			t.Fatal(err)
		}
		read, err := ReadCycles(&buf, "buffer", s.Dim())
		if err != nil {
			t.Fatal(err)
		}
		for i, fc := range read {
			c := res.Cycles[i]
			if fc.Itinerary != c.Itinerary || fc.Len != c.Len || !slices.Equal(fc.Point, c.Point) || !slices.Equal(fc.Multipliers, c.Multipliers) || fc.ObservableSum != c.ObservableSum {
				t.Errorf("%s: line %d reads %+v, wrote %+v", tc.system, fc.Line, fc.Cycle, c)
			}
		}
		v, err := Verify(s, read, nil)
		if err != nil {
			t.Fatal(err)
		}
		if len(v.Problems) != 0 || len(v.Cycles) != len(res.Cycles) {
			t.Errorf("%s: own cycles rejected: %v", tc.system, v.Problems)
		}
	}
}

// searchToFile runs a search writing each length to buf, cancelling after
// length stopAfter (0: never).
func searchToFile(t *testing.T, system string, maxLen, stopAfter int, known []Cycle, buf *bytes.Buffer) SearchResult {
	t.Helper()
	s := openSystem(t, system)
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	w := NewCycleWriter(buf, JSONLines, s.Dim(), false)
	res, err := Search(ctx, s, &SearchSettings{MaxLen: maxLen, Known: known, Found: func(n int, found []Cycle) error {
		for _, c := range found {
			if err := w.Write(c); err != nil {
				return err
			}
		}
		if n == stopAfter {
			cancel()
		}
		return w.Flush()
	}})
	if err != nil {
		t.Fatal(err)
	}
	return res
}

func TestResumeEqualsUninterrupted(t *testing.T) {
	// An interrupted search keeps its completed lengths; resuming from the
	// file (dropping its last length, which may be incomplete) writes the
	// same bytes as an uninterrupted run. Hénon: the d ≥ 2 search seeds
	// from the cycles of the previous lengths, read back from the file.
	for _, system := range []string{"henon", "logistic-repeller"} {
		var whole, part bytes.Buffer
		searchToFile(t, system, 10, 0, nil, &whole)
		res := searchToFile(t, system, 10, 6, nil, &part)
		if res.Status != SearchInterrupted || len(res.Counts) != 6 {
			t.Fatalf("%s: status %v after %d lengths, want interrupted after 6", system, res.Status, len(res.Counts))
		}
		read, err := ReadCycles(bytes.NewReader(part.Bytes()), "part", openSystem(t, system).Dim())
		if err != nil {
			t.Fatal(err)
		}
		var known []Cycle
		cut := int64(part.Len())
		for _, fc := range read {
			if fc.Len == 6 {
				cut = min(cut, fc.Offset)
				continue
			}
			known = append(known, fc.Cycle)
		}
		part.Truncate(int(cut))
		searchToFile(t, system, 10, 0, known, &part)
		if !bytes.Equal(part.Bytes(), whole.Bytes()) {
			t.Errorf("%s: resumed file differs from the uninterrupted one", system)
		}
	}
}
