package dynsys

import (
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"

	"github.com/BurntSushi/toml"

	"crosspec/dynsys/expr"
)

// Error is a mistake in a system file: the file, the line (0 when unknown)
// and what was expected.
type Error struct {
	File string
	Line int
	Msg  string
}

// Error returns the message on one line: line breaks and other control
// characters that the file's text brings into it are escaped.
func (e *Error) Error() string {
	msg := oneLine(e.Msg)
	if e.Line > 0 {
		return fmt.Sprintf("system file %s:%d: %s", e.File, e.Line, msg)
	}
	return fmt.Sprintf("system file %s: %s", e.File, msg)
}

func oneLine(s string) string {
	return strings.Map(func(r rune) rune {
		if r < ' ' || r == 0x7f {
			return -1
		}
		return r
	}, strings.NewReplacer("\n", `\n`, "\r", `\r`, "\t", " ").Replace(s))
}

// fileSpec mirrors the TOML system file of DESIGN.md section 5.
type fileSpec struct {
	Name        string             `toml:"name"`
	Description string             `toml:"description"`
	Vars        []string           `toml:"vars"`
	Map         []string           `toml:"map"`
	Domain      [][]float64        `toml:"domain"`
	Closed      bool               `toml:"closed"`
	Observable  string             `toml:"observable"`
	Breaks      []float64          `toml:"breaks"`
	Symbols     string             `toml:"symbols"`
	Forbidden   []string           `toml:"forbidden"`
	Params      map[string]float64 `toml:"params"`
	Reference   []referenceSpec    `toml:"reference"`
}

type referenceSpec struct {
	Quantity string  `toml:"quantity"`
	Index    int     `toml:"index"`
	Beta     float64 `toml:"beta"`
	Value    float64 `toml:"value"`
	Source   string  `toml:"source"`
}

var tomlLine = regexp.MustCompile(`^line (\d+) \(last key "([^"]*)"\): `)

var topKeys = []string{"name", "description", "vars", "map", "domain", "closed", "observable", "breaks", "symbols", "forbidden", "params", "reference"}

// Load reads the system file at path. overrides replace parameter values
// (the command line's --param k=5.3); each must name a parameter the file
// defines.
func Load(path string, overrides map[string]float64) (*System, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, &Error{File: path, Msg: fmt.Sprintf("cannot read: %v", unwrapPathError(err))}
	}
	return Parse(path, data, overrides)
}

func unwrapPathError(err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// Parse builds a system from the text of a system file; file names it in
// errors.
func Parse(file string, data []byte, overrides map[string]float64) (*System, error) {
	l := loader{file: file, src: string(data)}
	return l.load(data, overrides)
}

type loader struct {
	file string
	src  string
}

func (l *loader) errorf(line int, format string, args ...any) *Error {
	return &Error{File: l.file, Line: line, Msg: fmt.Sprintf(format, args...)}
}

// line returns the line on which key is assigned inside the TOML table
// (table "" is the top level), or 0 when it cannot be found.
func (l *loader) line(table, key string) int {
	current := ""
	for i, raw := range strings.Split(l.src, "\n") {
		s := strings.TrimSpace(raw)
		if strings.HasPrefix(s, "[") {
			current = strings.Trim(s, "[] \t")
			if j := strings.IndexByte(current, '#'); j >= 0 {
				current = strings.TrimSpace(current[:j])
			}
			continue
		}
		if current != table {
			continue
		}
		if rest, ok := strings.CutPrefix(s, key); ok {
			rest = strings.TrimSpace(rest)
			if strings.HasPrefix(rest, "=") {
				return i + 1
			}
		}
		if q := `"` + key + `"`; strings.HasPrefix(s, q) {
			if strings.HasPrefix(strings.TrimSpace(s[len(q):]), "=") {
				return i + 1
			}
		}
	}
	return 0
}

// elementLine returns the line of the index-th element of the array key
// when the elements are strings that can be found in the text.
func (l *loader) elementLine(key string, index int, text string) int {
	start := l.line("", key)
	if start == 0 {
		return 0
	}
	lines := strings.Split(l.src, "\n")
	quoted := fmt.Sprintf("%q", text)
	for i := start - 1; i < len(lines) && i < start-1+50; i++ {
		if strings.Contains(lines[i], quoted) || strings.Contains(lines[i], "'"+text+"'") {
			return i + 1
		}
	}
	return start
}

func (l *loader) load(data []byte, overrides map[string]float64) (*System, error) {
	var spec fileSpec
	md, err := toml.Decode(l.src, &spec)
	if err != nil {
		var perr toml.ParseError
		if errors.As(err, &perr) {
			msg := perr.Message
			if msg == "" {
				msg = err.Error()
			}
			return nil, l.errorf(perr.Position.Line, "%s", strings.TrimPrefix(msg, "toml: "))
		}
		// Type mismatches come as "toml: line 4 (last key "closed"): …".
		msg := strings.TrimPrefix(err.Error(), "toml: ")
		if m := tomlLine.FindStringSubmatch(msg); m != nil {
			line, _ := strconv.Atoi(m[1])
			return nil, l.errorf(line, "%s: %s", m[2], msg[len(m[0]):])
		}
		return nil, l.errorf(0, "%s", msg)
	}
	if undecoded := md.Undecoded(); len(undecoded) > 0 {
		key := undecoded[0]
		table, name := "", key.String()
		if len(key) > 1 {
			table, name = strings.Join(key[:len(key)-1], "."), key[len(key)-1]
		}
		return nil, l.errorf(l.line(table, name), "unknown key %q (known keys: %s)", key.String(), strings.Join(topKeys, ", "))
	}

	s := &System{
		Name:        spec.Name,
		Description: spec.Description,
		File:        l.file,
		Content:     data,
		Closed:      spec.Closed,
		Forbidden:   spec.Forbidden,
		SymbolsText: spec.Symbols,
	}
	if s.Name == "" {
		s.Name = strings.TrimSuffix(filepath.Base(l.file), filepath.Ext(l.file))
	}

	// Variables.
	if len(spec.Vars) == 0 {
		return nil, l.errorf(l.line("", "vars"), "vars: expected at least one variable name, e.g. vars = [\"x\"]")
	}
	for i, v := range spec.Vars {
		if err := checkIdentifier(v); err != nil {
			return nil, l.errorf(l.line("", "vars"), "vars[%d]: %v", i, err)
		}
		if slices.Contains(spec.Vars[:i], v) {
			return nil, l.errorf(l.line("", "vars"), "vars: %q appears twice", v)
		}
	}
	s.Vars = spec.Vars
	d := len(s.Vars)

	// Parameters and overrides.
	names := make([]string, 0, len(spec.Params))
	for name := range spec.Params {
		names = append(names, name)
	}
	slices.Sort(names)
	for _, name := range names {
		line := l.line("params", name)
		if err := checkIdentifier(name); err != nil {
			return nil, l.errorf(line, "params: %v", err)
		}
		if slices.Contains(s.Vars, name) {
			return nil, l.errorf(line, "params: %q is also a variable", name)
		}
		v := spec.Params[name]
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, l.errorf(line, "params: %s = %v, expected a finite number", name, v)
		}
	}
	overrideNames := make([]string, 0, len(overrides))
	for name := range overrides {
		overrideNames = append(overrideNames, name)
	}
	slices.Sort(overrideNames)
	for _, name := range overrideNames {
		if _, ok := spec.Params[name]; !ok {
			known := "none"
			if len(names) > 0 {
				known = strings.Join(names, ", ")
			}
			return nil, l.errorf(0, "parameter override %q: the file defines no such parameter (defined: %s)", name, known)
		}
		v := overrides[name]
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, l.errorf(0, "parameter override %s = %v, expected a finite number", name, v)
		}
	}
	values := make(map[string]float64, len(names))
	for _, name := range names {
		v := spec.Params[name]
		if o, ok := overrides[name]; ok {
			v = o
		}
		values[name] = v
		s.Params = append(s.Params, Param{Name: name, Value: v})
	}

	// Domain.
	dline := l.line("", "domain")
	if len(spec.Domain) != d {
		return nil, l.errorf(dline, "domain: expected %d [lo, hi] pairs, one per variable of vars, found %d", d, len(spec.Domain))
	}
	s.Lo, s.Hi = make([]float64, d), make([]float64, d)
	for i, pair := range spec.Domain {
		if len(pair) != 2 {
			return nil, l.errorf(dline, "domain[%d] (%s): expected [lo, hi], found %d numbers", i, s.Vars[i], len(pair))
		}
		lo, hi := pair[0], pair[1]
		if math.IsNaN(lo) || math.IsNaN(hi) || math.IsInf(lo, 0) || math.IsInf(hi, 0) {
			return nil, l.errorf(dline, "domain[%d] (%s): expected finite bounds, found [%v, %v]", i, s.Vars[i], lo, hi)
		}
		if !(lo < hi) {
			return nil, l.errorf(dline, "domain[%d] (%s): expected lo < hi, found [%v, %v] (empty or inverted)", i, s.Vars[i], lo, hi)
		}
		s.Lo[i], s.Hi[i] = lo, hi
	}

	// Formulas.
	known := append(slices.Clone(s.Vars), names...)
	used := make(map[string]bool)
	parse := func(what, text string, line int) (*expr.Node, error) {
		if strings.TrimSpace(text) == "" {
			return nil, l.errorf(line, "%s: expected a formula, found an empty string", what)
		}
		n, err := expr.Parse(text)
		if err != nil {
			return nil, l.errorf(line, "%s %q: %s", what, text, strings.TrimPrefix(err.Error(), "expr: "))
		}
		for _, name := range n.Names() {
			if !slices.Contains(known, name) {
				return nil, l.errorf(line, "%s %q: unknown name %q (defined: %s; constants: pi, e)", what, text, name, strings.Join(known, ", "))
			}
			used[name] = true
		}
		return n, nil
	}
	mline := l.line("", "map")
	if len(spec.Map) != d {
		return nil, l.errorf(mline, "map: expected %d formulas, one per variable of vars, found %d", d, len(spec.Map))
	}
	for i, text := range spec.Map {
		n, err := parse(fmt.Sprintf("map[%d] (%s')", i, s.Vars[i]), text, l.elementLine("map", i, text))
		if err != nil {
			return nil, err
		}
		s.mapNodes = append(s.mapNodes, n)
	}
	if spec.Observable != "" {
		n, err := parse("observable", spec.Observable, l.line("", "observable"))
		if err != nil {
			return nil, err
		}
		s.obsNode = n
	}
	if spec.Symbols != "" {
		if d == 1 {
			return nil, l.errorf(l.line("", "symbols"), "symbols: a 1D map takes its symbols from its laps; remove this key or use breaks")
		}
		n, err := parse("symbols", spec.Symbols, l.line("", "symbols"))
		if err != nil {
			return nil, err
		}
		s.symNode = n
	}
	for _, name := range names {
		if !used[name] {
			return nil, l.errorf(l.line("params", name), "params: %q is defined but used by no formula", name)
		}
	}

	// Breaks and forbidden words.
	if len(spec.Breaks) > 0 {
		bline := l.line("", "breaks")
		if d != 1 {
			return nil, l.errorf(bline, "breaks: lap boundaries apply to 1D maps only, this map has %d variables", d)
		}
		for i, b := range spec.Breaks {
			if !(b > s.Lo[0] && b < s.Hi[0]) {
				return nil, l.errorf(bline, "breaks[%d] = %v: expected a point strictly inside the domain (%v, %v)", i, b, s.Lo[0], s.Hi[0])
			}
			if i > 0 && !(b > spec.Breaks[i-1]) {
				return nil, l.errorf(bline, "breaks: expected increasing values, found %v after %v", b, spec.Breaks[i-1])
			}
		}
		s.Breaks = spec.Breaks
	}
	for i, w := range spec.Forbidden {
		if w == "" || strings.IndexFunc(w, func(r rune) bool { return !(r >= '0' && r <= '9' || r >= 'a' && r <= 'z') }) >= 0 {
			return nil, l.errorf(l.line("", "forbidden"), "forbidden[%d] = %q: expected a word of symbols 0-9, a-z", i, w)
		}
	}

	// References.
	for i, r := range spec.Reference {
		q, err := ParseQuantity(r.Quantity)
		if err != nil {
			return nil, l.errorf(l.line("reference", "quantity"), "reference[%d]: %v", i, err)
		}
		if r.Source == "" {
			return nil, l.errorf(l.line("reference", "quantity"), "reference[%d]: expected a source (author, venue, year, or \"common practice, no source\")", i)
		}
		s.References = append(s.References, Reference{Quantity: q, Index: r.Index, Beta: r.Beta, Value: r.Value, Source: r.Source})
	}

	if err := s.compile(values); err != nil {
		return nil, l.errorf(0, "%v", err)
	}
	if s.Closed {
		if err := s.probeInvariance(); err != nil {
			return nil, l.errorf(l.line("", "closed"), "%v", err)
		}
	}
	return s, nil
}

func checkIdentifier(name string) error {
	if name == "" {
		return errors.New("expected a name, found an empty string")
	}
	for i, r := range name {
		letter := r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r == '_'
		if !letter && !(i > 0 && r >= '0' && r <= '9') {
			return fmt.Errorf("%q is not a name (expected letters, digits and _, starting with a letter)", name)
		}
	}
	if expr.IsReserved(name) {
		return fmt.Errorf("%q is a reserved name (a function or constant of the formula language)", name)
	}
	return nil
}

// compile differentiates and compiles every formula.
func (s *System) compile(params map[string]float64) error {
	d := s.Dim()
	for _, f := range s.mapNodes {
		for _, v := range s.Vars {
			s.jacNodes = append(s.jacNodes, expr.Diff(f, v))
		}
	}
	var err error
	if s.mapProg, err = expr.Compile(s.mapNodes, s.Vars, params); err != nil {
		return err
	}
	if s.jacProg, err = expr.Compile(s.jacNodes, s.Vars, params); err != nil {
		return err
	}
	if s.obsNode != nil {
		for _, v := range s.Vars {
			s.gradNodes = append(s.gradNodes, expr.Diff(s.obsNode, v))
		}
		if s.obsProg, err = expr.Compile([]*expr.Node{s.obsNode}, s.Vars, params); err != nil {
			return err
		}
		if s.gradProg, err = expr.Compile(s.gradNodes, s.Vars, params); err != nil {
			return err
		}
	}
	if s.symNode != nil {
		if s.symProg, err = expr.Compile([]*expr.Node{s.symNode}, s.Vars, params); err != nil {
			return err
		}
	}
	if d == 1 {
		if err := s.compileKinks(params); err != nil {
			return err
		}
	}
	return nil
}

// probeInvariance maps a grid of interior points and reports the first that
// leaves the domain of a system declared closed.
func (s *System) probeInvariance() error {
	d := s.Dim()
	perAxis := int(math.Max(2, math.Floor(math.Pow(20000, 1/float64(d)))))
	x, y := make([]float64, d), make([]float64, d)
	idx := make([]int, d)
	for {
		for i := range d {
			x[i] = s.Lo[i] + (float64(idx[i])+0.5)/float64(perAxis)*(s.Hi[i]-s.Lo[i])
		}
		s.Map(y, x)
		for i := range d {
			slack := 1e-9 * (s.Hi[i] - s.Lo[i])
			if !(y[i] >= s.Lo[i]-slack && y[i] <= s.Hi[i]+slack) {
				return fmt.Errorf("closed = true, but the map sends %s to %s, outside the domain (set closed = false for an open system)", formatPoint(x), formatPoint(y))
			}
		}
		k := 0
		for ; k < d; k++ {
			idx[k]++
			if idx[k] < perAxis {
				break
			}
			idx[k] = 0
		}
		if k == d {
			return nil
		}
	}
}

func formatPoint(x []float64) string {
	parts := make([]string, len(x))
	for i, v := range x {
		parts[i] = fmt.Sprintf("%.6g", v)
	}
	return "(" + strings.Join(parts, ", ") + ")"
}
