package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"

	"crosspec/cycles"
	"crosspec/dynsys"
)

func init() { register(cyclesCommand) }

var cyclesCommand = &command{
	name:    "cycles",
	args:    "SYSTEM",
	summary: "search the prime cycles up to a length and check the search is complete",
	details: `Finds every prime cycle of length 1…n with its Floquet multipliers and
observable sum. 1D maps are searched by itinerary over their laps; maps of
dimension d ≥ 2 from seeds by the stabilised Newton iteration. Every length is
checked against the counts of the symbolic dynamics (when known) and against the
closed walks of a box partition's transition graph; a length with fewer cycles
than expected is flagged.

With -o FILE the cycles are written as they are found (JSON Lines, or CSV for a
.csv name), flushed after each length; an interrupted search (Ctrl-C) keeps the
completed lengths and --resume continues it. --check FILE re-converges and checks
every cycle of a file written elsewhere and lists the rejected ones with their
lines (exit code 2 when any is rejected).

A long search splits into K shards that separate processes (cluster array
jobs) run: --shard i/K, with i counted from 1 to K, searches shard i alone and
needs -o FILE; the file's first line names the shard, the system, its
parameters and the longest length, and its last line marks the shard finished.
--resume continues an interrupted shard. 1D maps split their itineraries by
prefix; maps of dimension d ≥ 2 split their starting seeds, so two shards may
find the same cycle. A d ≥ 2 shard also seeds from every orbit it finds, as the
whole search does, so that the shards together find what it finds; on a small
attractor such as the Henon map's each shard then finds nearly every cycle and
the split saves little time. A shard claims no completeness. --merge FILE,FILE,… joins the files
of all K shards, removes cycles found twice, orders them as the whole search
would, runs the completeness checks and reports (and with -o writes) the
result; a missing, repeated or unfinished shard, or a shard of another system,
parameters or length, is refused (exit code 2).`,
	setup: func(fs *flag.FlagSet, e *env) func([]string) int {
		params := paramFlag{}
		fs.Var(params, "param", "override a parameter, NAME=VALUE (repeatable)")
		maxLen := fs.Int("max-len", 10, "longest cycle length")
		out := fs.String("o", "", "write the cycles to `FILE` (JSON Lines, or CSV for .csv)")
		resume := fs.Bool("resume", false, "continue the search written to -o FILE")
		format := fs.String("format", formatTable, "report format: table, csv, json, latex or markdown")
		quiet := fs.Bool("quiet", false, "no progress indicator")
		check := fs.String("check", "", "re-converge and check the cycles of `FILE` instead of searching")
		shard := fs.String("shard", "", "search shard `i/K` (i = 1…K) of a split search alone; needs -o FILE")
		merge := fs.String("merge", "", "join the shard files `FILE,FILE,…` of a split search instead of searching")
		return func(args []string) int {
			if err := checkFormat(*format); err != nil {
				return e.fail(err)
			}
			set := map[string]bool{}
			fs.Visit(func(f *flag.Flag) { set[f.Name] = true })
			for _, pair := range [][2]string{{"shard", "check"}, {"shard", "merge"}, {"merge", "check"}, {"merge", "resume"}, {"merge", "max-len"}} {
				if set[pair[0]] && set[pair[1]] {
					return e.fail(usagef("--%s and --%s cannot be combined", pair[0], pair[1]))
				}
			}
			var part, parts int
			if set["shard"] {
				var err error
				if part, parts, err = parseShard(*shard); err != nil {
					return e.fail(err)
				}
				if *out == "" {
					return e.fail(usagef("--shard needs -o FILE, the shard's cycle file"))
				}
			}
			var mergeFiles []string
			if set["merge"] {
				var err error
				if mergeFiles, err = parseFileList(*merge); err != nil {
					return e.fail(err)
				}
			}
			s, err := openSystem(args, params)
			if err != nil {
				return e.fail(err)
			}
			if *check != "" {
				return checkCycleFile(e, s, *check, *format)
			}
			if mergeFiles != nil {
				return mergeCycleFiles(e, s, mergeFiles, *out, *format)
			}
			if *maxLen < 1 {
				return e.fail(usagef("--max-len %d: expected a positive length", *maxLen))
			}
			if *resume && *out == "" {
				return e.fail(usagef("--resume needs -o FILE, the file to continue"))
			}
			ctx, stop := interruptContext()
			defer stop()
			return runCycleSearch(ctx, e, s, cycleRun{maxLen: *maxLen, out: *out, resume: *resume, format: *format,
				progress: !*quiet && isTerminal(e.stderr), shard: part, shards: parts})
		}
	},
}

// cycleRun is the command line of one search.
type cycleRun struct {
	maxLen   int
	out      string
	resume   bool
	format   string
	progress bool
	// stopAfter, when positive, cancels the search after that length
	// has been written (tests simulate an interruption with it).
	stopAfter int
	// shard of shards (1…shards) selects one part of a split search;
	// shards 0 is the whole search.
	shard, shards int
}

// parseShard reads the --shard value i/K, 1 ≤ i ≤ K.
func parseShard(text string) (shard, shards int, err error) {
	a, b, ok := strings.Cut(text, "/")
	shard, err1 := strconv.Atoi(strings.TrimSpace(a))
	shards, err2 := strconv.Atoi(strings.TrimSpace(b))
	if !ok || err1 != nil || err2 != nil {
		return 0, 0, usagef("--shard %q: expected i/K, shard i of K counted from 1", text)
	}
	if shards < 1 || shard < 1 || shard > shards {
		return 0, 0, usagef("--shard %q: expected i/K with K ≥ 1 and 1 ≤ i ≤ K", text)
	}
	return shard, shards, nil
}

// parseFileList splits the --merge value at commas; an empty name is an
// error.
func parseFileList(text string) ([]string, error) {
	names := strings.Split(text, ",")
	for i, name := range names {
		if strings.TrimSpace(name) == "" {
			return nil, usagef("--merge %q: file name %d of %d is empty", text, i+1, len(names))
		}
	}
	return names, nil
}

func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	st, err := f.Stat()
	return err == nil && st.Mode()&os.ModeCharDevice != 0
}

func runCycleSearch(ctx context.Context, e *env, s *dynsys.System, r cycleRun) int {
	settings := &cycles.SearchSettings{MaxLen: r.maxLen, Shard: r.shard, Shards: r.shards}
	ctx, cancel := context.WithCancel(ctx)
	defer cancel()
	var writer *cycles.CycleWriter
	var header *cycles.ShardHeader
	if r.shards > 0 {
		h := cycles.NewShardHeader(s, r.shard, r.shards, r.maxLen)
		header = &h
	}
	if r.out != "" {
		var known []cycles.Cycle
		file, skipHeader, err := openCycleFile(r.out, s.Dim(), r.resume, header, &known)
		if err != nil {
			return e.fail(err)
		}
		defer file.Close()
		settings.Known = known
		writer = cycles.NewCycleWriter(file, cycles.FormatOf(r.out), s.Dim(), skipHeader)
		if header != nil && !skipHeader {
			if err := writer.WriteShardHeader(*header); err != nil {
				return e.fail(fmt.Errorf("writing %s: %v", r.out, err))
			}
		}
	}
	settings.Found = func(length int, found []cycles.Cycle) error {
		if writer != nil {
			for _, c := range found {
				if err := writer.Write(c); err != nil {
					return err
				}
			}
			if err := writer.Flush(); err != nil {
				return fmt.Errorf("writing %s: %v", r.out, err)
			}
		}
		if r.stopAfter > 0 && length >= r.stopAfter {
			cancel()
		}
		return nil
	}
	if r.progress {
		settings.Progress = func(length int, fraction float64) {
			fmt.Fprintf(e.stderr, "\rlength %d of %d: %3.0f%%", length, r.maxLen, 100*fraction)
		}
	}
	res, err := cycles.Search(ctx, s, settings)
	if r.progress {
		fmt.Fprint(e.stderr, "\r\033[K")
	}
	if err != nil {
		if errors.Is(err, cycles.ErrSearch) {
			return e.fail(&numericalError{err})
		}
		return e.fail(err)
	}
	if res.Status == cycles.SearchInterrupted {
		done := len(res.Counts)
		where := ""
		if r.out != "" {
			where = fmt.Sprintf("; %s holds lengths 1-%d, continue with --resume", r.out, done)
		}
		return e.fail(&numericalError{fmt.Errorf("interrupted during length %d%s", done+1, where)})
	}
	if header != nil && writer != nil {
		err := writer.WriteSearchedTo(r.maxLen)
		if err == nil {
			err = writer.Flush()
		}
		if err != nil {
			return e.fail(fmt.Errorf("writing %s: %v", r.out, err))
		}
	}
	if err := writeCycleReport(e.stdout, s, res, r.format, header); err != nil {
		return e.fail(err)
	}
	return exitOK
}

// openCycleFile opens the output file: created afresh, or, with resume,
// read back, cut before its last length (which may be incomplete) and
// opened for appending. known receives the cycles kept. A shard's file
// (shard not nil) resumes only the same shard of the same search; the
// returned flag says that the file keeps its header lines.
func openCycleFile(path string, dim int, resume bool, shard *cycles.ShardHeader, known *[]cycles.Cycle) (*os.File, bool, error) {
	if !resume {
		f, err := os.Create(path)
		if err != nil {
			return nil, false, usagef("cannot write %s: %v", path, unwrapPath(err))
		}
		return f, false, nil
	}
	f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE, 0o644)
	if err != nil {
		return nil, false, usagef("cannot open %s: %v", path, unwrapPath(err))
	}
	contents, err := cycles.ReadCycleFile(f, path, dim)
	if err != nil {
		f.Close()
		return nil, false, usagef("%v", err)
	}
	read := contents.Cycles
	if len(read) > 0 || contents.Shard != nil {
		if err := sameShard(path, contents.Shard, shard); err != nil {
			f.Close()
			return nil, false, err
		}
	}
	last := 0
	for _, c := range read {
		last = max(last, c.Len)
	}
	cut, _ := f.Seek(0, io.SeekEnd)
	for _, c := range read {
		if c.Len == last {
			cut = min(cut, c.Offset)
			continue
		}
		*known = append(*known, c.Cycle)
	}
	if len(read) == 0 {
		cut = 0
	}
	if err := f.Truncate(cut); err != nil {
		f.Close()
		return nil, false, usagef("cannot truncate %s: %v", path, err)
	}
	if _, err := f.Seek(cut, io.SeekStart); err != nil {
		f.Close()
		return nil, false, usagef("cannot seek %s: %v", path, err)
	}
	return f, cut > 0, nil
}

// sameShard checks that a file being resumed holds the shard (or the
// whole search, nil) that the command line asks for.
func sameShard(path string, inFile, asked *cycles.ShardHeader) error {
	switch {
	case inFile == nil && asked == nil:
		return nil
	case inFile == nil:
		return usagef("cannot resume %s as shard %d/%d: it holds no shard header", path, asked.Shard, asked.Shards)
	case asked == nil:
		return usagef("%s holds %v: resume it with --shard %d/%d", path, *inFile, inFile.Shard, inFile.Shards)
	case !inFile.SameSearch(*asked) || inFile.Shard != asked.Shard:
		return usagef("%s holds %v, not %v", path, *inFile, *asked)
	}
	return nil
}

// mergeCycleFiles joins the shard files of a split search, reports the
// merged search as a search is reported and writes its cycles to out
// (when given).
func mergeCycleFiles(e *env, s *dynsys.System, files []string, out, format string) int {
	parts := make([]cycles.CycleFile, len(files))
	for i, path := range files {
		f, err := os.Open(path)
		if err != nil {
			return e.fail(usagef("cannot read %s: %v", path, unwrapPath(err)))
		}
		parts[i], err = cycles.ReadCycleFile(f, path, s.Dim())
		f.Close()
		if shardErr := cycles.CheckShardSystem(s, parts[i]); shardErr != nil {
			return e.fail(shardErr)
		}
		if err != nil {
			return e.fail(err)
		}
	}
	res, err := cycles.MergeShards(s, parts, nil)
	if err != nil {
		if errors.Is(err, cycles.ErrSearch) {
			return e.fail(&numericalError{err})
		}
		return e.fail(err)
	}
	if out != "" {
		if err := writeCycles(out, s.Dim(), res.Cycles); err != nil {
			return e.fail(err)
		}
	}
	if err := writeCycleReport(e.stdout, s, res, format, nil); err != nil {
		return e.fail(err)
	}
	return exitOK
}

// writeCycles writes a whole cycle file.
func writeCycles(path string, dim int, cs []cycles.Cycle) error {
	f, err := os.Create(path)
	if err != nil {
		return usagef("cannot write %s: %v", path, unwrapPath(err))
	}
	w := cycles.NewCycleWriter(f, cycles.FormatOf(path), dim, false)
	for _, c := range cs {
		if err := w.Write(c); err != nil {
			f.Close()
			return err
		}
	}
	if err := w.Flush(); err != nil {
		f.Close()
		return fmt.Errorf("writing %s: %v", path, err)
	}
	if err := f.Close(); err != nil {
		return fmt.Errorf("writing %s: %v", path, err)
	}
	return nil
}

func unwrapPath(err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// jsonCycle is a cycle in the JSON report, with the cycle-file fields.
type jsonCycle struct {
	Itinerary     string    `json:"itinerary"`
	Length        int       `json:"length"`
	Point         []float64 `json:"point"`
	Multipliers   []float64 `json:"multipliers"`
	ObservableSum float64   `json:"observable_sum"`
}

// jsonShard names the part of a split search a report covers.
type jsonShard struct {
	Index int `json:"index"`
	Of    int `json:"of"`
}

type jsonCount struct {
	Length         int      `json:"length"`
	PrimeCycles    int      `json:"prime_cycles"`
	PeriodicPoints int      `json:"periodic_points"`
	ExpectedPrime  *float64 `json:"expected_prime_cycles,omitempty"`
	ExpectedPoints *float64 `json:"expected_periodic_points,omitempty"`
	BoxBound       *float64 `json:"box_bound,omitempty"`
	Note           string   `json:"note,omitempty"`
}

func toJSONCycles(cs []cycles.Cycle) []jsonCycle {
	out := make([]jsonCycle, len(cs))
	for i, c := range cs {
		out[i] = jsonCycle{Itinerary: c.Itinerary, Length: c.Len, Point: c.Point, Multipliers: c.Multipliers, ObservableSum: c.ObservableSum}
	}
	return out
}

func optional(v float64) *float64 {
	if v < 0 {
		return nil
	}
	return &v
}

func countText(v float64) string {
	if v < 0 {
		return "-"
	}
	return strconv.FormatFloat(v, 'f', -1, 64)
}

// writeCycleReport prints the counts per length and the cycles (JSON); a
// shard's report (shard not nil) says which part of the search it is.
func writeCycleReport(w io.Writer, s *dynsys.System, res cycles.SearchResult, format string, shard *cycles.ShardHeader) error {
	if format == formatJSON {
		doc := struct {
			System  string      `json:"system"`
			Symbols int         `json:"symbols"`
			Status  string      `json:"status"`
			Shard   *jsonShard  `json:"shard,omitempty"`
			Entropy *float64    `json:"topological_entropy,omitempty"`
			Counts  []jsonCount `json:"counts"`
			Cycles  []jsonCycle `json:"cycles"`
		}{System: s.Name, Symbols: res.Symbols, Status: res.Status.String(), Cycles: toJSONCycles(res.Cycles)}
		if shard != nil {
			doc.Shard = &jsonShard{Index: shard.Shard, Of: shard.Shards}
		}
		if res.Grammar != nil {
			h := res.Grammar.Entropy()
			doc.Entropy = &h
		}
		for _, c := range res.Counts {
			doc.Counts = append(doc.Counts, jsonCount{Length: c.Length, PrimeCycles: c.PrimeCycles, PeriodicPoints: c.PeriodicPoints,
				ExpectedPrime: optional(c.ExpectedPrime), ExpectedPoints: optional(c.ExpectedPoints), BoxBound: optional(c.BoxBound), Note: c.Note})
		}
		return writeJSON(w, doc)
	}
	g := &grid{header: []string{"length", "prime cycles", "periodic points", "expected prime", "expected points", "box bound", "note"}}
	for _, c := range res.Counts {
		g.add(strconv.Itoa(c.Length), strconv.Itoa(c.PrimeCycles), strconv.Itoa(c.PeriodicPoints),
			countText(c.ExpectedPrime), countText(c.ExpectedPoints), countText(c.BoxBound), c.Note)
	}
	if err := g.render(w, format); err != nil {
		return err
	}
	if format == formatTable {
		fmt.Fprintf(w, "%s: %d prime cycles, search %s", s.Name, len(res.Cycles), res.Status)
		if shard != nil {
			fmt.Fprintf(w, " (shard %d of %d; merge all %d to judge completeness)", shard.Shard, shard.Shards, shard.Shards)
		}
		if res.Grammar != nil {
			fmt.Fprintf(w, "; %d symbols, topological entropy %.6g", res.Symbols, res.Grammar.Entropy())
		}
		fmt.Fprintln(w)
	}
	return nil
}

// checkCycleFile verifies the cycles of a file written elsewhere.
func checkCycleFile(e *env, s *dynsys.System, path, format string) int {
	f, err := os.Open(path)
	if err != nil {
		return e.fail(usagef("cannot read %s: %v", path, unwrapPath(err)))
	}
	defer f.Close()
	read, err := cycles.ReadCycles(f, path, s.Dim())
	if err != nil {
		return e.fail(err)
	}
	res, err := cycles.Verify(s, read, &cycles.VerifySettings{File: path})
	if err != nil {
		return e.fail(&numericalError{err})
	}
	if format == formatJSON {
		type jsonProblem struct {
			Line    int    `json:"line"`
			Kind    string `json:"kind"`
			Message string `json:"message"`
		}
		doc := struct {
			System   string        `json:"system"`
			File     string        `json:"file"`
			Read     int           `json:"read"`
			Accepted int           `json:"accepted"`
			Problems []jsonProblem `json:"problems"`
		}{System: s.Name, File: path, Read: len(read), Accepted: len(res.Cycles), Problems: []jsonProblem{}}
		for _, p := range res.Problems {
			doc.Problems = append(doc.Problems, jsonProblem{Line: p.Line, Kind: p.Kind.String(), Message: p.Msg})
		}
		if err := writeJSON(e.stdout, doc); err != nil {
			return e.fail(err)
		}
	} else {
		g := &grid{header: []string{"line", "problem", "details"}}
		for _, p := range res.Problems {
			g.add(strconv.Itoa(p.Line), p.Kind.String(), p.Msg)
		}
		if len(res.Problems) > 0 {
			if err := g.render(e.stdout, format); err != nil {
				return e.fail(err)
			}
		}
		if format == formatTable {
			fmt.Fprintf(e.stdout, "%s: %d cycles read, %d accepted, %d rejected\n", path, len(read), len(res.Cycles), len(res.Problems))
		}
	}
	if len(res.Problems) > 0 {
		return e.fail(fmt.Errorf("%d of %d cycles rejected, first %s", len(res.Problems), len(read), res.Problems[0]))
	}
	return exitOK
}
