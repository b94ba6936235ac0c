package cycles

import (
	"fmt"
	"math"
	"slices"

	"crosspec/dynsys"
)

// shardSelector decides which words or seeds belong to one shard.
type shardSelector struct {
	shard, shards int
	symbols       int
	prefix        int
}

// newShardSelector returns the selector of shard (1…shards) for an
// alphabet of symbols letters (0 when the search has no itineraries).
func newShardSelector(shard, shards, symbols int) *shardSelector {
	return &shardSelector{shard: shard, shards: shards, symbols: symbols, prefix: shardPrefixLen(symbols, shards)}
}

// prefixesPerShard is the least number of itinerary prefixes per shard.
const prefixesPerShard = 64

// shardPrefixLen returns the smallest m with L^m ≥ 64K, the prefix length
// that decides a word's shard; 1 for an alphabet of fewer than 2 letters.
func shardPrefixLen(symbols, shards int) int {
	if symbols < 2 {
		return 1
	}
	m, power := 1, symbols
	for power < prefixesPerShard*shards {
		m++
		power *= symbols
	}
	return m
}

// shardOfWord returns the shard (1…K) of a word of symbol values.
func (p *shardSelector) shardOfWord(word []byte) int {
	v := 0
	for _, s := range word[:min(len(word), p.prefix)] {
		v = v*max(p.symbols, 1) + int(s)
	}
	return 1 + v%p.shards
}

// holdsWord reports whether word belongs to this shard; a nil selector
// (the whole search) holds every word.
func (p *shardSelector) holdsWord(word []byte) bool {
	return p == nil || p.shardOfWord(word) == p.shard
}

// holdsSeed reports whether base seed i belongs to this shard.
func (p *shardSelector) holdsSeed(i int) bool {
	return p == nil || 1+i%p.shards == p.shard
}

// checkShard checks the shard selection of SearchSettings.
func checkShard(shard, shards int) error {
	if shards < 0 || shards > 0 && (shard < 1 || shard > shards) {
		return fmt.Errorf("cycles: shard %d of %d: expected 1 ≤ shard ≤ shards", shard, shards)
	}
	return nil
}

// ShardHeader identifies the part of a split search a cycle file holds: it
// is the file's first line (see CycleWriter.WriteShardHeader).
type ShardHeader struct {
	// Shard is the shard's number, 1…Shards.
	Shard, Shards int
	// System is the system's name.
	System string
	// Params are the system's parameters after overrides, sorted by name.
	Params []dynsys.Param
	// MaxLen is the longest cycle length of the search.
	MaxLen int
}

// NewShardHeader returns the header of shard (1…shards) of the search of
// sys up to maxLen.
func NewShardHeader(sys *dynsys.System, shard, shards, maxLen int) ShardHeader {
	return ShardHeader{Shard: shard, Shards: shards, System: sys.Name, Params: slices.Clone(sys.Params), MaxLen: maxLen}
}

// SameSearch reports whether h and o are shards of the same search: the
// same system, parameters, number of shards and longest length.
func (h ShardHeader) SameSearch(o ShardHeader) bool {
	return h.System == o.System && h.Shards == o.Shards && h.MaxLen == o.MaxLen && slices.Equal(h.Params, o.Params)
}

// String describes the shard in words, e.g. "shard 2 of 3 of henon
// (a=1.4, b=0.3) to length 8".
func (h ShardHeader) String() string {
	return fmt.Sprintf("shard %d of %d of %s to length %d", h.Shard, h.Shards, systemText(h.System, h.Params), h.MaxLen)
}

// systemText names a system with its parameters, e.g. "henon (a=1.4,
// b=0.3)".
func systemText(name string, params []dynsys.Param) string {
	s := name
	for i, p := range params {
		sep := ", "
		if i == 0 {
			sep = " ("
		}
		s += fmt.Sprintf("%s%s=%v", sep, p.Name, p.Value)
	}
	if len(params) > 0 {
		s += ")"
	}
	return s
}

// ShardError is a set of shard files that MergeShards refuses: a file
// that is not a shard, a shard of another search, a shard given twice,
// missing or unfinished.
type ShardError struct {
	// File names the offending file; empty when a shard is missing.
	File string
	Msg  string
}

func (e *ShardError) Error() string {
	if e.File == "" {
		return "cycles: " + e.Msg
	}
	return fmt.Sprintf("cycles: %s: %s", e.File, e.Msg)
}

// MergeShards joins the cycle files of the K shards of a split search of
// sys into the result the whole search would have given.
//
// The shards are run by separate processes (the tasks of a cluster array
// job), each writing its own cycle file (SearchSettings.Shard and Shards,
// CycleWriter.WriteShardHeader and WriteSearchedTo).
//
// Maps with an alphabet (the laps of a 1D map, the regions of a symbols
// formula). The Lyndon word s_0 s_1 … of length n over L symbols goes to
// shard 1 + (v mod K), where v is the base-L number spelled by its first m
// symbols, s_0 L^{m−1} + … + s_{m−1}, and m is the smallest prefix length
// with L^m ≥ 64K; a word shorter than m is read whole. Every word thus
// belongs to exactly one shard, and the words of a shard are searched
// exactly as in the whole search, so the shards' cycles together are the
// whole search's cycles. (A cycle through a lap end may be named by a word
// other than the one searched; a cycle found by two shards is kept once.)
// Many prefixes per shard are needed because Lyndon words are far from
// evenly spread over their prefixes: a Lyndon word begins with its longest
// run of its smallest symbol, so with m = 4 (L^m ≥ 4K, K = 4) the binary
// words of length 20 fell 55604, 34179, 13649 and 7581 into the 4 shards;
// with 64 prefixes a shard the largest of 3, 4 or 7 shards held at most
// 1.2 times its even share (the logistic repeller at length 20, measured).
//
// Maps with d ≥ 2. Before the search there are no itineraries to split, so
// the base seeds (the recurrent cells' centers and the coarse grid,
// numbered 0, 1, … in the search's order) are dealt out: seed i goes to
// shard 1 + (i mod K). A shard also seeds from all the orbits it found at
// the two previous lengths, as the whole search seeds from all of its
// finds. Every trial (one seed, one stabilising matrix) is deterministic,
// so by induction over the length the union of the shards' seeds is the
// whole search's seed set (up to round-off in the points of the orbit
// seeds) and the union of their orbits is its orbits. Two shards may find
// the same orbit (from different seeds, or because both found its shorter
// seed orbits); MergeShards removes these duplicates, and the copy it keeps
// may differ from the whole search's in round-off. The word seeds of a
// symbols formula are split by itinerary as above. Since every shard seeds
// from all its own finds, a shard of a small attractor such as Hénon's
// finds most cycles itself: the base seeds' work is divided by K, the
// orbit seeds' work is not.
//
// A shard's result never claims completeness: its Status is SearchPartial
// and every length's note reads "partial (shard i of K)". Only
// MergeShards, holding every cycle, runs the completeness checks.
//
// Every file must carry a shard header (ReadCycleFile) naming sys (its
// name and parameters), the same K and longest length, and a finished
// mark at that length; every shard 1…K must be given exactly once.
// Otherwise MergeShards returns a *ShardError naming the file.
//
// The cycles are ordered as Search orders them (by length, itinerary and
// point) and a cycle found by two shards is kept once: for a 1D map, the
// same length and itinerary with points within 1e-9 of the domain size
// (the rule of the 1D search); for d ≥ 2, any orbit point within 1e-7 of
// the domain size of an orbit of its length kept before (the rule of the
// d ≥ 2 search). Then every length is checked as Search checks it:
// against the counts of the symbolic dynamics and the closed walks of the
// box partition (settings.BoundCells, Laps, SeedCells and GridSeeds as for
// Search; the other settings are not used). Stats.Duplicates counts the
// cycles removed.
func MergeShards(sys *dynsys.System, parts []CycleFile, settings *SearchSettings) (SearchResult, error) {
	if len(parts) == 0 {
		return SearchResult{}, &ShardError{Msg: "no shard files to merge"}
	}
	var first ShardHeader
	holder := map[int]string{}
	for i, p := range parts {
		h := p.Shard
		if h == nil {
			return SearchResult{}, &ShardError{File: p.Name, Msg: "not a shard file (no shard header on its first line)"}
		}
		if err := CheckShardSystem(sys, p); err != nil {
			return SearchResult{}, err
		}
		if i == 0 {
			first = *h
		} else if !h.SameSearch(first) {
			return SearchResult{}, &ShardError{File: p.Name, Msg: fmt.Sprintf("holds %v, but %s holds %v", *h, parts[0].Name, first)}
		}
		if other, dup := holder[h.Shard]; dup {
			return SearchResult{}, &ShardError{File: p.Name, Msg: fmt.Sprintf("holds shard %d of %d, as %s does", h.Shard, h.Shards, other)}
		}
		holder[h.Shard] = p.Name
		if p.SearchedTo < h.MaxLen {
			return SearchResult{}, &ShardError{File: p.Name, Msg: fmt.Sprintf("%v is unfinished (no end mark at length %d); continue it with --resume", *h, h.MaxLen)}
		}
	}
	var missing []int
	for k := 1; k <= first.Shards; k++ {
		if _, ok := holder[k]; !ok {
			missing = append(missing, k)
		}
	}
	if len(missing) > 0 {
		what := "shard"
		if len(missing) > 1 {
			what = "shards"
		}
		return SearchResult{}, &ShardError{Msg: fmt.Sprintf("%s %s of %d of %s missing from the merge", what, joinInts(missing), first.Shards, first.System)}
	}

	cfg := searchConfig{}
	if settings != nil {
		cfg.SearchSettings = *settings
	}
	cfg.Shards, cfg.Shard, cfg.Known = 0, 0, nil
	cfg.MaxLen = first.MaxLen
	cfg.defaults(sys.Dim())
	var res SearchResult
	var all []Cycle
	for _, p := range parts {
		for _, c := range p.Cycles {
			if c.Len > cfg.MaxLen {
				return SearchResult{}, &ShardError{File: p.Name, Msg: fmt.Sprintf("line %d: cycle of length %d beyond the shard's longest length %d", c.Line, c.Len, cfg.MaxLen)}
			}
			all = append(all, c.Cycle)
		}
	}
	slices.SortStableFunc(all, compareFound)

	d := sys.Dim()
	if d == 1 {
		lm, err := newLapMap(sys, cfg.Laps)
		if err != nil {
			return SearchResult{}, fmt.Errorf("%w: %v", ErrSearch, err)
		}
		g, err := NewGrammar(len(lm.laps), sys.Forbidden)
		if err != nil {
			return SearchResult{}, err
		}
		res.Symbols, res.Grammar = len(lm.laps), g
	} else {
		seedGraph, baseSeeds := ndBaseSeeds(sys, &cfg)
		res.Stats.SeedCells = len(seedGraph.core)
		if sys.HasSymbols() {
			m, g, err := ndAlphabet(sys, baseSeeds)
			if err != nil {
				return SearchResult{}, err
			}
			res.Symbols, res.Grammar = m, g
		}
	}
	var scale float64
	for i := range d {
		scale = math.Max(scale, sys.Hi[i]-sys.Lo[i])
	}
	res.Cycles, res.Stats.Duplicates = uniqueCycles(sys, all, d == 1, scale)

	var bound []float64
	if cfg.BoundCells > 0 {
		g := newBoxGraph(sys, cfg.BoundCells, 0, cfg.Laps)
		res.Stats.BoundCells = len(g.core)
		bound = g.closedWalks(cfg.MaxLen, cfg.Workers)
	}
	res.Counts = lengthCounts(res.Cycles, res.Grammar, bound, cfg.MaxLen)
	res.Status = judge(res.Counts)
	return res, nil
}

// CheckShardSystem returns a *ShardError when the shard header of f names
// another system or other parameters than sys; nil when it names sys or
// f has no header. A caller can check it before the cycles, which a file
// of a map of another dimension fails to give.
func CheckShardSystem(sys *dynsys.System, f CycleFile) error {
	h := f.Shard
	if h == nil || h.System == sys.Name && slices.Equal(h.Params, sys.Params) {
		return nil
	}
	return &ShardError{File: f.Name, Msg: fmt.Sprintf("holds %v, not a shard of %s", *h, systemText(sys.Name, sys.Params))}
}

// uniqueCycles removes from sorted the cycles given twice, keeping the
// first, and returns the rest and the number removed. By itinerary (1D) a
// cycle is the same when its length and itinerary agree and its point is
// within 1e-9·scale (as the 1D search decides); without, when one of its
// orbit points is within 1e-7·scale of one of a kept orbit of its length
// (as the d ≥ 2 search decides).
func uniqueCycles(sys *dynsys.System, sorted []Cycle, byItinerary bool, scale float64) ([]Cycle, int) {
	out := make([]Cycle, 0, len(sorted))
	removed := 0
	if byItinerary {
		last := map[string]int{}
		for _, c := range sorted {
			key := fmt.Sprintf("%d:%s", c.Len, c.Itinerary)
			if k, seen := last[key]; seen && samePoint(out[k].Point, c.Point, 1e-9*scale) {
				removed++
				continue
			}
			last[key] = len(out)
			out = append(out, c)
		}
		return out, removed
	}
	d := sys.Dim()
	indexes := map[int]*orbitIndex{}
	for _, c := range sorted {
		ix := indexes[c.Len]
		if ix == nil {
			ix = newOrbitIndex(d, 1e-7*scale)
			indexes[c.Len] = ix
		}
		if ix.find(c.Point) >= 0 {
			removed++
			continue
		}
		ix.add(orbitND{n: c.Len, points: forwardOrbit(sys, c.Point, c.Len)})
		out = append(out, c)
	}
	return out, removed
}

// samePoint reports whether a and b agree within tol in every coordinate.
func samePoint(a, b []float64, tol float64) bool {
	for i := range a {
		if math.Abs(a[i]-b[i]) > tol {
			return false
		}
	}
	return true
}

func joinInts(v []int) string {
	s := ""
	for i, k := range v {
		if i > 0 {
			s += ", "
		}
		s += fmt.Sprint(k)
	}
	return s
}
