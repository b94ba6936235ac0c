package cycles

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"slices"
	"strconv"
	"strings"

	"crosspec/dynsys"
)

// FileFormat is the layout of a cycle file (DESIGN.md section 6).
type FileFormat int

const (
	// JSONLines writes one JSON object a line with the fields itinerary,
	// length, point [d], multipliers [d] and observable_sum.
	JSONLines FileFormat = iota
	// CSV writes a header length,itinerary,x1..xd,lambda1..lambdad,
	// observable_sum and one cycle a row.
	CSV
)

// FormatOf returns the format a cycle file's name asks for: CSV for a
// .csv extension, JSON Lines otherwise.
func FormatOf(path string) FileFormat {
	if strings.EqualFold(filepath.Ext(path), ".csv") {
		return CSV
	}
	return JSONLines
}

// CycleWriter writes cycles to a cycle file. Call Flush after each length
// so that an interrupted search keeps what it found.
type CycleWriter struct {
	w      *bufio.Writer
	format FileFormat
	dim    int
	header bool
	buf    []byte
}

// NewCycleWriter returns a writer of cycles of dimension dim. A CSV
// writer writes the header before the first cycle unless skipHeader is set
// (appending to a file that has one).
func NewCycleWriter(w io.Writer, format FileFormat, dim int, skipHeader bool) *CycleWriter {
	return &CycleWriter{w: bufio.NewWriter(w), format: format, dim: dim, header: format == CSV && !skipHeader}
}

// Write writes one cycle.
func (cw *CycleWriter) Write(c Cycle) error {
	if len(c.Point) != cw.dim || len(c.Multipliers) != cw.dim {
		panic(fmt.Sprintf("cycles: CycleWriter for dimension %d given a cycle with %d coordinates and %d multipliers", cw.dim, len(c.Point), len(c.Multipliers)))
	}
	if cw.header {
		cw.header = false
		if _, err := cw.w.WriteString(csvHeader(cw.dim) + "\n"); err != nil {
			return err
		}
	}
	b := cw.buf[:0]
	num := func(v float64) {
		b = strconv.AppendFloat(b, v, 'g', -1, 64)
	}
	switch cw.format {
	case CSV:
		b = strconv.AppendInt(b, int64(c.Len), 10)
		b = append(b, ',')
		b = append(b, c.Itinerary...)
		for _, v := range c.Point {
			b = append(b, ',')
			num(v)
		}
		for _, v := range c.Multipliers {
			b = append(b, ',')
			num(v)
		}
		b = append(b, ',')
		num(c.ObservableSum)
	default:
		b = append(b, `{"itinerary":`...)
		b = strconv.AppendQuote(b, c.Itinerary)
		b = append(b, `,"length":`...)
		b = strconv.AppendInt(b, int64(c.Len), 10)
		list := func(name string, vs []float64) {
			b = append(b, `,"`+name+`":[`...)
			for i, v := range vs {
				if i > 0 {
					b = append(b, ',')
				}
				num(v)
			}
			b = append(b, ']')
		}
		list("point", c.Point)
		list("multipliers", c.Multipliers)
		b = append(b, `,"observable_sum":`...)
		num(c.ObservableSum)
		b = append(b, '}')
	}
	b = append(b, '\n')
	cw.buf = b
	for _, v := range append(append([]float64{c.ObservableSum}, c.Point...), c.Multipliers...) {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("cycles: cycle %q of length %d has a value %v a cycle file cannot hold", c.Itinerary, c.Len, v)
		}
	}
	_, err := cw.w.Write(b)
	return err
}

// WriteShardHeader writes the line that names the shard a file holds: a
// JSON object {"shard":i,"shards":K,"system":…,"params":{…},"max_len":n},
// prefixed by "# " in a CSV file (before its column header). Call it
// before the first cycle; readers that know nothing of shards skip it
// (ReadCycles).
func (cw *CycleWriter) WriteShardHeader(h ShardHeader) error {
	line := shardLine{Shard: &h.Shard, Shards: &h.Shards, System: &h.System, Params: map[string]float64{}, MaxLen: &h.MaxLen}
	for _, p := range h.Params {
		line.Params[p.Name] = p.Value
	}
	return cw.writeMeta(line)
}

// WriteSearchedTo writes the mark {"searched_to":n} (prefixed by "# " in a
// CSV file) that says a shard's search finished every length up to n;
// MergeShards refuses a shard without it.
func (cw *CycleWriter) WriteSearchedTo(n int) error {
	return cw.writeMeta(shardLine{SearchedTo: &n})
}

func (cw *CycleWriter) writeMeta(line shardLine) error {
	b, err := json.Marshal(line)
	if err != nil {
		return fmt.Errorf("cycles: %v", err)
	}
	if cw.format == CSV {
		b = append([]byte("# "), b...)
	}
	_, err = cw.w.Write(append(b, '\n'))
	return err
}

// Flush writes the buffered cycles to the underlying writer.
func (cw *CycleWriter) Flush() error { return cw.w.Flush() }

func csvHeader(d int) string {
	cols := []string{"length", "itinerary"}
	for i := 1; i <= d; i++ {
		cols = append(cols, fmt.Sprintf("x%d", i))
	}
	for i := 1; i <= d; i++ {
		cols = append(cols, fmt.Sprintf("lambda%d", i))
	}
	cols = append(cols, "observable_sum")
	return strings.Join(cols, ",")
}

// FileError is a malformed line of a cycle file.
type FileError struct {
	File string
	Line int
	Msg  string
}

func (e *FileError) Error() string {
	return fmt.Sprintf("cycle file %s:%d: %s", e.File, e.Line, e.Msg)
}

// FileCycle is a cycle read from a file with its place there.
type FileCycle struct {
	Cycle
	// Line is the 1-based line number.
	Line int
	// Offset is the byte offset at which the line starts.
	Offset int64
}

// shardLine is a metadata line of a shard's cycle file: the header (shard
// fields) or the end mark (searched_to).
type shardLine struct {
	Shard      *int               `json:"shard,omitempty"`
	Shards     *int               `json:"shards,omitempty"`
	System     *string            `json:"system,omitempty"`
	Params     map[string]float64 `json:"params,omitempty"`
	MaxLen     *int               `json:"max_len,omitempty"`
	SearchedTo *int               `json:"searched_to,omitempty"`
}

// metaText returns the JSON of a metadata line: a line starting with '#'
// (the JSON follows) or a JSON object whose first key is "shard" or
// "searched_to". Cycle lines start with other keys.
func metaText(text string) (string, bool) {
	if rest, ok := strings.CutPrefix(text, "#"); ok {
		return strings.TrimSpace(rest), true
	}
	if rest, ok := strings.CutPrefix(text, "{"); ok {
		rest = strings.TrimLeft(rest, " \t")
		if strings.HasPrefix(rest, `"shard"`) || strings.HasPrefix(rest, `"searched_to"`) {
			return text, true
		}
	}
	return "", false
}

// CycleFile is a cycle file read back with its shard metadata.
type CycleFile struct {
	// Name names the file in errors.
	Name string
	// Shard is the header of a shard's file; nil for a file of a whole
	// search or from elsewhere.
	Shard *ShardHeader
	// SearchedTo is the length of the file's end mark (the shard's search
	// finished every length up to it); 0 without one.
	SearchedTo int
	// Cycles are the cycles in file order.
	Cycles []FileCycle
}

type jsonCycle struct {
	Itinerary     *string   `json:"itinerary"`
	Length        *int      `json:"length"`
	Point         []float64 `json:"point"`
	Multipliers   []float64 `json:"multipliers"`
	ObservableSum *float64  `json:"observable_sum"`
}

// ReadCycles reads a cycle file of dimension dim, JSON Lines or CSV (told
// apart by the first non-blank character: '{' for JSON Lines). name names
// the file in errors. Blank lines and the metadata lines of a shard's file
// (see ReadCycleFile) are skipped. A malformed line is a *FileError naming
// the line and what was expected.
func ReadCycles(r io.Reader, name string, dim int) ([]FileCycle, error) {
	f, err := ReadCycleFile(r, name, dim)
	return f.Cycles, err
}

// ReadCycleFile reads a cycle file as ReadCycles does and keeps its shard
// metadata: the header of a shard's file (its first non-blank line) and
// the end mark of a finished shard (see CycleWriter.WriteShardHeader and
// WriteSearchedTo). A malformed metadata line, or a header after the first
// cycle, is a *FileError. With an error the CycleFile returned still holds
// the metadata read before the bad line, so that a caller can tell a shard
// of another system (CheckShardSystem) from a damaged file.
func ReadCycleFile(r io.Reader, name string, dim int) (CycleFile, error) {
	file := CycleFile{Name: name}
	data, err := io.ReadAll(r)
	if err != nil {
		return file, fmt.Errorf("cycles: reading %s: %v", name, err)
	}
	var out []FileCycle
	seenLine := false
	isCSV := false
	decided := false
	var offset int64
	lines := bytes.SplitAfter(data, []byte("\n"))
	for i, raw := range lines {
		lineNo := i + 1
		start := offset
		offset += int64(len(raw))
		text := strings.TrimSpace(string(raw))
		if text == "" {
			continue
		}
		fail := func(format string, args ...any) error {
			return &FileError{File: name, Line: lineNo, Msg: fmt.Sprintf(format, args...)}
		}
		if meta, ok := metaText(text); ok {
			if err := file.readMeta(meta, seenLine); err != nil {
				return file, fail("%v", err)
			}
			seenLine = true
			continue
		}
		seenLine = true
		if !decided {
			decided = true
			if !strings.HasPrefix(text, "{") {
				isCSV = true
				if want := csvHeader(dim); text != want {
					return file, fail("expected the CSV header %q (or a JSON object), found %q", want, text)
				}
				continue
			}
		}
		var c Cycle
		if isCSV {
			rec, err := csv.NewReader(strings.NewReader(text)).Read()
			if err != nil {
				return file, fail("malformed CSV row: %v", err)
			}
			if want := 3 + 2*dim; len(rec) != want {
				return file, fail("expected %d columns (%s), found %d", want, csvHeader(dim), len(rec))
			}
			n, err := strconv.Atoi(rec[0])
			if err != nil || n < 1 {
				return file, fail("length: expected a positive integer, found %q", rec[0])
			}
			c = Cycle{Len: n, Itinerary: rec[1], Point: make([]float64, dim), Multipliers: make([]float64, dim)}
			for k, field := range rec[2:] {
				v, err := strconv.ParseFloat(strings.TrimSpace(field), 64)
				if err != nil {
					return file, fail("column %d: expected a number, found %q", k+3, field)
				}
				switch {
				case k < dim:
					c.Point[k] = v
				case k < 2*dim:
					c.Multipliers[k-dim] = v
				default:
					c.ObservableSum = v
				}
			}
		} else {
			var jc jsonCycle
			dec := json.NewDecoder(strings.NewReader(text))
			dec.DisallowUnknownFields()
			if err := dec.Decode(&jc); err != nil {
				return file, fail("expected a JSON object with itinerary, length, point, multipliers, observable_sum: %v", err)
			}
			switch {
			case jc.Length == nil || *jc.Length < 1:
				return file, fail("length: expected a positive integer")
			case len(jc.Point) != dim:
				return file, fail("point: expected %d numbers, found %d", dim, len(jc.Point))
			case len(jc.Multipliers) != dim:
				return file, fail("multipliers: expected %d numbers, found %d", dim, len(jc.Multipliers))
			}
			c = Cycle{Len: *jc.Length, Point: jc.Point, Multipliers: jc.Multipliers}
			if jc.Itinerary != nil {
				c.Itinerary = *jc.Itinerary
			}
			if jc.ObservableSum != nil {
				c.ObservableSum = *jc.ObservableSum
			}
		}
		out = append(out, FileCycle{Cycle: c, Line: lineNo, Offset: start})
	}
	file.Cycles = out
	return file, nil
}

// readMeta reads one metadata line into f; late is set when a line came
// before it.
func (f *CycleFile) readMeta(text string, late bool) error {
	var line shardLine
	dec := json.NewDecoder(strings.NewReader(text))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&line); err != nil {
		return fmt.Errorf(`expected a shard header {"shard":i,"shards":K,"system":…,"params":{…},"max_len":n} or an end mark {"searched_to":n}: %v`, err)
	}
	if line.SearchedTo != nil {
		if line.Shard != nil || line.Shards != nil || line.System != nil || line.Params != nil || line.MaxLen != nil || *line.SearchedTo < 1 {
			return fmt.Errorf(`expected an end mark {"searched_to":n} with a positive n alone`)
		}
		f.SearchedTo = *line.SearchedTo
		return nil
	}
	switch {
	case late || f.Shard != nil:
		return fmt.Errorf("a shard header must be the file's first line")
	case line.Shard == nil || line.Shards == nil || line.System == nil || line.MaxLen == nil:
		return fmt.Errorf("shard header: expected the fields shard, shards, system, params and max_len")
	case *line.Shards < 1 || *line.Shard < 1 || *line.Shard > *line.Shards:
		return fmt.Errorf("shard header: shard %d of %d: expected 1 ≤ shard ≤ shards", *line.Shard, *line.Shards)
	case *line.MaxLen < 1:
		return fmt.Errorf("shard header: max_len %d: expected a positive length", *line.MaxLen)
	}
	h := &ShardHeader{Shard: *line.Shard, Shards: *line.Shards, System: *line.System, MaxLen: *line.MaxLen}
	for name, v := range line.Params {
		h.Params = append(h.Params, dynsys.Param{Name: name, Value: v})
	}
	slices.SortFunc(h.Params, func(a, b dynsys.Param) int { return strings.Compare(a.Name, b.Name) })
	f.Shard = h
	return nil
}
