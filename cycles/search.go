package cycles

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"strings"

	"crosspec/dynsys"
)

// SearchSettings controls Search. A nil *SearchSettings means the
// defaults.
type SearchSettings struct {
	// MaxLen is the longest cycle length searched. Default 10.
	MaxLen int
	// Known are cycles of the lengths below the first length searched,
	// found before (a resumed search passes the cycles read back from its
	// file). Search then starts at the length after the longest known one
	// and, for d ≥ 2, seeds from them as from its own finds. Default none.
	Known []Cycle
	// Workers is the number of goroutines. Default runtime.GOMAXPROCS(0).
	// The result does not depend on it.
	Workers int
	// Found, if not nil, is called once per length, in increasing order,
	// with the prime cycles of that length as soon as the length is
	// complete, so that a caller can write them out; an error stops the
	// search and is returned.
	Found func(length int, cycles []Cycle) error
	// Progress, if not nil, is called now and then with the length being
	// searched and the fraction done of it; calls come from the worker
	// goroutines one at a time (under a lock).
	Progress func(length int, fraction float64)
	// Laps controls the lap scan of a 1D map. Default nil (its defaults).
	Laps *dynsys.LapSettings
	// BoundCells is the number of cells per axis of the box partition
	// whose 0/1 transition matrix gives the completeness bound. Default
	// 2048 for d = 1, 64 for d = 2, 8 for d ≥ 3; −1 turns the bound off.
	BoundCells int
	// SeedCells is the number of cells per axis of the box partition whose
	// recurrent cells seed the search of a map with d ≥ 2. Default 100
	// for d = 2, 12 for d ≥ 3.
	SeedCells int
	// GridSeeds is the number of points per axis of the coarse grid of
	// seeds (d ≥ 2). Default 16.
	GridSeeds int
	// Beta is the stabilising step parameter β of the Davidchack–Lai
	// iteration (d ≥ 2). Default 1.
	Beta float64
	// MaxIter bounds the stabilised iterations per seed and matrix
	// (d ≥ 2). Default 200.
	MaxIter int
	// Shard and Shards select one part of a search split into Shards
	// parts, numbered 1…Shards, that separate processes (cluster array
	// jobs) run and MergeShards joins. A 1D map's Lyndon words are split
	// by their itinerary prefix; a map with d ≥ 2 splits its seeds (see
	// MergeShards). A shard's result
	// has Status SearchPartial and claims no completeness. Default
	// Shards = 0: the whole search; Shard is then ignored.
	Shard, Shards int
}

// SearchStatus says how a search ended.
type SearchStatus int

const (
	// SearchComplete: every length was searched and no check found fewer
	// cycles than expected.
	SearchComplete SearchStatus = iota
	// SearchShort: every length was searched but at some length fewer
	// periodic points were found than the grammar predicts (see
	// LengthCount.Note).
	SearchShort
	// SearchInterrupted: the context was cancelled; the result holds the
	// lengths completed before.
	SearchInterrupted
	// SearchPartial: every length was searched, but only one shard of a
	// split search (SearchSettings.Shards); completeness is judged when
	// the shards are merged.
	SearchPartial
)

func (s SearchStatus) String() string {
	switch s {
	case SearchComplete:
		return "complete"
	case SearchShort:
		return "fewer cycles than expected"
	case SearchInterrupted:
		return "interrupted"
	case SearchPartial:
		return "partial"
	}
	return fmt.Sprintf("SearchStatus(%d)", int(s))
}

// LengthCount is the completeness report of one cycle length.
type LengthCount struct {
	// Length is the cycle length n.
	Length int
	// PrimeCycles is the number of prime cycles of length n found.
	PrimeCycles int
	// PeriodicPoints is the number of fixed points of fⁿ found,
	// Σ_{d|n} d·N_d over the prime cycles of the lengths d dividing n.
	PeriodicPoints int
	// ExpectedPrime and ExpectedPoints are the counts the symbolic
	// dynamics predicts (necklace formula for complete dynamics, Möbius
	// inversion of tr Tⁿ for a grammar); −1 when no grammar is known.
	ExpectedPrime, ExpectedPoints float64
	// BoxBound is tr Tⁿ of the 0/1 transition matrix of the box partition
	// restricted to its recurrent cells: the number of closed walks of
	// length n, an upper bound on the periodic points when the partition
	// separates them and the sampling resolves every transition; −1 when
	// not computed.
	BoxBound float64
	// Note is empty when the counts agree with the expectations, and says
	// what is missing otherwise; for one shard of a split search it is
	// "partial (shard i of K)" and no check is made.
	Note string
}

// SearchStats counts the work of a search.
type SearchStats struct {
	// Candidates is the number of itineraries (1D) or seed trials (d ≥ 2)
	// tried.
	Candidates int
	// Inadmissible is the number of itineraries without a periodic point
	// (1D), or of seed trials that did not converge (d ≥ 2).
	Inadmissible int
	// Duplicates is the number of orbits found more than once.
	Duplicates int
	// BoundCells is the number of recurrent cells of the bound's
	// partition.
	BoundCells int
	// SeedCells is the number of recurrent cells used as seeds (d ≥ 2).
	SeedCells int
}

// SearchResult is what Search returns.
type SearchResult struct {
	// Cycles are the prime cycles found (and the Known ones), sorted by
	// length, then itinerary, then point.
	Cycles []Cycle
	// Counts has one entry per length 1…MaxLen (or up to the last length
	// completed when interrupted).
	Counts []LengthCount
	// Symbols is the size of the alphabet: the number of laps of a 1D map;
	// for d ≥ 2 with a symbols formula, one more than the largest region
	// index met at the seeds (at least 2); 0 without symbolic dynamics.
	Symbols int
	// Grammar is the system's grammar (complete dynamics when it names no
	// forbidden words); nil without symbolic dynamics.
	Grammar *Grammar
	// Stats counts the work.
	Stats SearchStats
	// Status says how the search ended.
	Status SearchStatus
}

// ErrSearch is wrapped by the errors of Search that are numerical failures
// rather than bad input.
var ErrSearch = errors.New("cycles: search failed")

type searchConfig struct {
	SearchSettings
	// part selects the words or seeds of a shard; nil for the whole
	// search.
	part     *shardSelector
	startLen int
	// done is the last length completed.
	done int
}

// lengthDone records the prime cycles found at length n and hands them to
// the Found callback.
func (c *searchConfig) lengthDone(res *SearchResult, n int, found []Cycle) error {
	res.Cycles = append(res.Cycles, found...)
	c.done = n
	if c.Found != nil {
		return c.Found(n, found)
	}
	return nil
}

func (c *searchConfig) defaults(d int) {
	if c.MaxLen <= 0 {
		c.MaxLen = 10
	}
	if c.Workers <= 0 {
		c.Workers = runtime.GOMAXPROCS(0)
	}
	if c.BoundCells == 0 {
		switch d {
		case 1:
			c.BoundCells = 2048
		case 2:
			c.BoundCells = 64
		default:
			c.BoundCells = 8
		}
	}
	if c.SeedCells <= 0 {
		c.SeedCells = 100
		if d > 2 {
			c.SeedCells = 12
		}
	}
	if c.GridSeeds <= 0 {
		c.GridSeeds = 16
	}
	if c.Beta <= 0 {
		c.Beta = 1
	}
	if c.MaxIter <= 0 {
		c.MaxIter = 200
	}
	c.startLen = 1
	for _, k := range c.Known {
		c.startLen = max(c.startLen, k.Len+1)
	}
	c.done = c.startLen - 1
}

// Search finds the prime cycles of sys of lengths 1…MaxLen.
//
// 1D maps. The alphabet is the map's laps. Each Lyndon word s_0…s_{n−1}
// (J.-P. Duval's generator; words containing a forbidden word of the
// system file are skipped) names at most one prime cycle, the fixed point
// of the composed inverse branches x_0 = h_{s_0}∘⋯∘h_{s_{n−1}}(x_0), which
// contract by 1/|Λ| for an expanding map. The passes move a value outside
// the next lap's image to the image's end, so an inadmissible word settles
// with a residual f(x_j) ≠ x_{j+1} and is recognised as pruned, not forced.
// Newton's method on the cyclic orbit equations finishes to round-off.
// Points on an end shared by two laps are given the right-hand lap (the
// half-open convention), so an orbit through a lap end is named once.
// Λ_p = Π f'(x_j) (one-sided at lap ends), A_p = Σ a(x_j).
//
// Maps of dimension d ≥ 2. Seeds are the centers of the recurrent cells of
// a box partition (SeedCells per axis), a coarse grid (GridSeeds per axis)
// and the points of the cycles of the two previous lengths. From each seed
// and each stabilising matrix C (the d×d signed permutation matrices of
// P. Schmelcher and F. K. Diakonos, Phys. Rev. Lett. 78 (1997) 4733) the
// iteration of R. L. Davidchack and Y.-C. Lai, Phys. Rev. E 60 (1999) 6172,
//
//	x ← x + (β‖g‖ Cᵀ − G)⁻¹ g,  g = f^n(x) − x,  G = Df^n(x) − 1,
//
// converges to the saddles Newton's method alone misses; each limit is
// polished by multiple-shooting Newton on the whole n-point orbit. When the
// system file names regions by a symbols formula, every admissible Lyndon
// word is also seeded by a closed walk of the partition's graph through
// cells of its symbols and polished by multiple shooting (a pseudo-orbit
// shadowed by a true orbit of a hyperbolic set). Orbits are kept if all
// their points lie in the domain, their least period is n, and no cyclic
// shift of them was found before (points within 1e-7 of the domain size).
// Multipliers come from the QR-accumulated Jacobian product (see floquet).
//
// Completeness. Every length is checked against the counts of the
// symbolic dynamics when known (necklace numbers for complete dynamics,
// Möbius inversion of tr Tⁿ for a grammar) and against tr Tⁿ of the 0/1
// transition matrix of a box partition restricted to its recurrent cells
// (BoundCells per axis): the number of closed walks of length n, which
// bounds the periodic points from above when the partition separates them
// (exact cover for 1D maps, sampled for d ≥ 2). The box graph is the
// search's own; it does not use the Ulam path.
//
// When ctx is cancelled Search returns the lengths completed so far with
// Status SearchInterrupted and a nil error. Settings.Found sees every
// completed length in order, so a caller can write a cycle file that an
// interruption leaves consistent; Settings.Known resumes it.
//
// With Settings.Shards = K > 0 Search finds only the cycles of shard
// Settings.Shard (1…K): see MergeShards for the split and the join.
func Search(ctx context.Context, sys *dynsys.System, settings *SearchSettings) (SearchResult, error) {
	cfg := searchConfig{}
	if settings != nil {
		cfg.SearchSettings = *settings
	}
	if err := checkShard(cfg.Shard, cfg.Shards); err != nil {
		return SearchResult{}, err
	}
	cfg.defaults(sys.Dim())
	var res SearchResult
	var bound []float64
	if cfg.BoundCells > 0 {
		g := newBoxGraph(sys, cfg.BoundCells, 0, cfg.Laps)
		res.Stats.BoundCells = len(g.core)
		bound = g.closedWalks(cfg.MaxLen, cfg.Workers)
	}
	var err error
	if sys.Dim() == 1 {
		err = search1D(ctx, sys, &cfg, &res)
	} else {
		err = searchND(ctx, sys, &cfg, &res)
	}
	if err != nil {
		return res, err
	}
	res.Counts = lengthCounts(res.Cycles, res.Grammar, bound, cfg.MaxLen)
	if cfg.Shards > 0 {
		partial := fmt.Sprintf("partial (shard %d of %d)", cfg.Shard, cfg.Shards)
		for i := range res.Counts {
			res.Counts[i].Note = partial
		}
		if res.Status != SearchInterrupted {
			res.Status = SearchPartial
		}
	}
	switch res.Status {
	case SearchInterrupted:
		res.Counts = res.Counts[:cfg.done]
	case SearchComplete:
		res.Status = judge(res.Counts)
	}
	return res, nil
}

// judge returns SearchShort when at some length fewer periodic points were
// found than the grammar predicts, SearchComplete otherwise.
func judge(counts []LengthCount) SearchStatus {
	for _, c := range counts {
		if c.Note != "" && c.ExpectedPoints >= 0 && float64(c.PeriodicPoints) < c.ExpectedPoints {
			return SearchShort
		}
	}
	return SearchComplete
}

// lengthCounts tabulates the cycles found per length with the expected
// counts and the box bound.
func lengthCounts(cycles []Cycle, g *Grammar, bound []float64, maxLen int) []LengthCount {
	prime := make([]int, maxLen+1)
	for _, c := range cycles {
		if c.Len <= maxLen {
			prime[c.Len]++
		}
	}
	var expectedPoints, expectedPrime []float64
	if g != nil {
		expectedPoints = g.PeriodicPoints(maxLen)
		expectedPrime = PrimeCounts(expectedPoints)
	}
	out := make([]LengthCount, maxLen)
	for n := 1; n <= maxLen; n++ {
		c := LengthCount{Length: n, PrimeCycles: prime[n], ExpectedPrime: -1, ExpectedPoints: -1, BoxBound: -1}
		for d := 1; d <= n; d++ {
			if n%d == 0 {
				c.PeriodicPoints += d * prime[d]
			}
		}
		var notes []string
		if expectedPoints != nil {
			c.ExpectedPoints, c.ExpectedPrime = expectedPoints[n-1], expectedPrime[n-1]
			if float64(c.PrimeCycles) < c.ExpectedPrime {
				notes = append(notes, fmt.Sprintf("%d of %g prime cycles expected from the symbolic dynamics found", c.PrimeCycles, c.ExpectedPrime))
			} else if float64(c.PrimeCycles) > c.ExpectedPrime {
				notes = append(notes, fmt.Sprintf("%d prime cycles found, more than the %g of the symbolic dynamics (grammar incomplete?)", c.PrimeCycles, c.ExpectedPrime))
			}
		}
		if bound != nil {
			c.BoxBound = bound[n-1]
			if float64(c.PeriodicPoints) > c.BoxBound {
				notes = append(notes, fmt.Sprintf("%d periodic points exceed the box-graph bound %g (partition too coarse to separate them)", c.PeriodicPoints, c.BoxBound))
			}
		}
		c.Note = strings.Join(notes, "; ")
		out[n-1] = c
	}
	return out
}

// splitWork runs job(i) for i = 0…count−1 on workers goroutines, handing
// out indices in order; results are stored by index by the job itself, so
// the outcome does not depend on the scheduling.
func splitWork(count, workers int, job func(i int)) {
	if workers <= 1 || count <= 1 {
		for i := range count {
			job(i)
		}
		return
	}
	next := make(chan int)
	done := make(chan struct{})
	for range min(workers, count) {
		go func() {
			for i := range next {
				job(i)
			}
			done <- struct{}{}
		}()
	}
	for i := range count {
		next <- i
	}
	close(next)
	for range min(workers, count) {
		<-done
	}
}

// ulpScale is a round-off unit for coordinates of size scale.
func ulpScale(scale float64) float64 {
	return math.Max(scale, math.SmallestNonzeroFloat64) * 0x1p-52
}
