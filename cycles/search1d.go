package cycles

import (
	"context"
	"fmt"
	"math"
	"slices"
	"sync"

	"crosspec/dynsys"
)

// lapMap is a 1D map cut into its laps, the alphabet of its symbolic
// dynamics.
type lapMap struct {
	sys   *dynsys.System
	laps  []dynsys.Lap
	width float64
	// endTol is the distance from a lap end within which a point counts as
	// lying on it.
	endTol float64
}

func newLapMap(sys *dynsys.System, settings *dynsys.LapSettings) (*lapMap, error) {
	ls, err := sys.Laps(settings)
	if err != nil {
		return nil, err
	}
	if len(ls.Laps) > MaxSymbols {
		return nil, fmt.Errorf("%s has %d laps, more than the %d symbols an itinerary can spell", sys.Name, len(ls.Laps), MaxSymbols)
	}
	width := sys.Hi[0] - sys.Lo[0]
	return &lapMap{sys: sys, laps: ls.Laps, width: width, endTol: 1e-12 * width}, nil
}

// branch evaluates f on lap s, extended continuously to the lap's ends (so
// that x = 1 is the doubling map's fixed point on its right lap).
func (lm *lapMap) branch(s int, x float64) float64 {
	l := &lm.laps[s]
	if x <= l.Lo {
		return l.FLo
	}
	if x >= l.Hi {
		return l.FHi
	}
	return lm.sys.F(x)
}

// slope returns f' on lap s at x, one-sided at the lap's ends: where the
// formula's derivative at an end disagrees with the lap's orientation (a
// kink of abs, mod, …) it is taken just inside the lap.
func (lm *lapMap) slope(s int, x float64) float64 {
	l := &lm.laps[s]
	d := lm.sys.DF(x)
	atEnd := x-l.Lo <= lm.endTol || l.Hi-x <= lm.endTol
	if !atEnd || (d > 0) == l.Increasing && d != 0 {
		return d
	}
	inside := math.Max(l.Lo, math.Min(l.Hi, x))
	step := (l.Hi - l.Lo) * 0x1p-40
	if l.Hi-inside <= lm.endTol {
		inside -= step
	} else {
		inside += step
	}
	return lm.sys.DF(inside)
}

// label returns the symbol of x by the half-open convention: the lap with
// Lo ≤ x < Hi, a point on an end shared by two laps belonging to the right
// one; x within endTol of a shared end counts as on it. hint is the lap the
// search put x in.
func (lm *lapMap) label(x float64, hint int) int {
	l := &lm.laps[hint]
	if hint+1 < len(lm.laps) && l.Hi-x <= lm.endTol && lm.laps[hint+1].Lo == l.Hi {
		return hint + 1
	}
	return hint
}

// cycleOf finds the periodic point of the itinerary word as the fixed point
// of the composition of inverse branches h_{s_0} ∘ … ∘ h_{s_{n−1}}: each
// pass maps y back along the word, x_j = h_{s_j}(x_{j+1}), x_n = y, and
// restarts from y = x_0. Inverse branches of an expanding map contract, so
// the passes converge, by the factor 1/|Λ| per pass, to full precision. A
// value outside the image of the next lap is moved to the image's nearest
// end (a 1-Lipschitz projection, so the passes still contract): for an
// admissible word the fixed point is unchanged, for an inadmissible one
// the passes settle where the projection is active, which the residual
// f(x_j) − x_{j+1} reveals. A Newton step on the whole orbit follows.
// points must have length len(word); ok is false for an inadmissible word.
func (lm *lapMap) cycleOf(word []byte, points []float64) bool {
	n := len(word)
	first := &lm.laps[word[0]]
	y := 0.5 * (first.Lo + first.Hi)
	const maxPasses = 80
	converged := false
	for pass := range maxPasses {
		cur := y
		// The pass contracts by 1/|Λ|, so the distance left to the fixed
		// point is about change/(|Λ| − 1). It must be small on the scale
		// of the orbit's points, not only of the domain: an orbit that
		// lingers near a fixed point at an end (0^11 1 of the logistic map
		// at 4 has a point at 6e-7 and one 1.4e-7 from x = 1) would hand
		// Newton a start whose steps leave the lap. 1e-12 of the domain
		// leaves Newton a relative error below 1e-5 even there.
		lambda := 1.0
		for j := n - 1; j >= 0; j-- {
			guess := math.NaN()
			if pass > 0 {
				guess = points[j]
			}
			var slope float64
			cur, slope = lm.inverse(int(word[j]), cur, guess)
			points[j] = cur
			lambda *= math.Abs(slope)
		}
		change := math.Abs(cur - y)
		y = cur
		if change <= 1e-12*lm.width*math.Max(lambda-1, 0) {
			converged = true
			break
		}
	}
	// Newton finishes; inadmissible words keep a residual where the
	// projection acts, and so do marginal or attracting cycles where the
	// passes did not converge and Newton cannot finish.
	if !converged && lm.maxResidual(word, points) > 1e-6*lm.width {
		return false
	}
	return lm.newtonPolish(word, points) <= 1e-9*lm.width
}

// inverse returns h_s(y), the point of lap s that f maps to y, with y first
// moved into the lap's image. It runs Newton's method safeguarded by
// bisection on the lap's bracket (the lap is monotone, so the bracket
// always holds the root), starting from guess or, when guess is NaN, from
// linear interpolation between the lap's ends; it stops near full
// precision.
func (lm *lapMap) inverse(s int, y, guess float64) (x, slope float64) {
	l := &lm.laps[s]
	slope = (l.FHi - l.FLo) / (l.Hi - l.Lo)
	y = math.Min(math.Max(y, l.ImageLo()), l.ImageHi())
	if y == l.FLo {
		return l.Lo, slope
	}
	if y == l.FHi {
		return l.Hi, slope
	}
	a, b := l.Lo, l.Hi // f(a) − y and f(b) − y have opposite signs
	sa := l.FLo - y
	x = guess
	if math.IsNaN(x) || x <= a || x >= b {
		x = a + (y-l.FLo)/slope
	}
	for range 100 {
		fx := lm.branch(s, x) - y
		if fx == 0 {
			return x, slope
		}
		if (fx > 0) == (sa > 0) {
			a, sa = x, fx
		} else {
			b = x
		}
		slope = lm.sys.DF(x)
		next := x - fx/slope
		if !(next > a && next < b) {
			next = 0.5 * (a + b)
		}
		// Newton converges quadratically, so a step below 1e-8 of the
		// lap leaves an error of order 1e-16 of it; the Newton polish of
		// the whole orbit removes what is left.
		if math.Abs(next-x) <= 1e-8*(l.Hi-l.Lo) || b-a <= 2*ulpScale(math.Max(math.Abs(a), math.Abs(b))) {
			return next, slope
		}
		x = next
	}
	return x, slope
}

// maxResidual returns max_j |f_{s_j}(x_j) − x_{j+1}|, cyclically.
func (lm *lapMap) maxResidual(word []byte, points []float64) float64 {
	n := len(word)
	var r float64
	for j := range n {
		r = math.Max(r, math.Abs(lm.branch(int(word[j]), points[j])-points[(j+1)%n]))
	}
	return r
}

// newtonPolish applies Newton's method to the cyclic system
// f_{s_j}(x_j) = x_{j+1}: the correction solves f'_j δ_j − δ_{j+1} = −r_j,
// which is eliminated backwards, δ_j = (δ_{j+1} − r_j)/f'_j (stable for an
// expanding map since it divides by the slopes), closing the cycle with
// δ_0 = β_0/(1 − 1/Λ). It stops at round-off, when a step does not reduce
// the residual (the step is undone), where a slope vanishes or Λ ≈ 1, and
// returns the final max-norm residual max_j |f_{s_j}(x_j) − x_{j+1}|.
func (lm *lapMap) newtonPolish(word []byte, points []float64) float64 {
	n := len(word)
	var buf [96]float64
	var alpha, beta, saved []float64
	if n < 32 {
		alpha, beta, saved = buf[:n+1], buf[32:32+n+1], buf[64:64+n]
	} else {
		alpha, beta, saved = make([]float64, n+1), make([]float64, n+1), make([]float64, n)
	}
	best := math.Inf(1)
	for iter := 0; ; iter++ {
		alpha[n], beta[n] = 1, 0
		var maxR, maxSlope float64
		singular := false
		for j := n - 1; j >= 0; j-- {
			s := int(word[j])
			d := lm.slope(s, points[j])
			r := lm.branch(s, points[j]) - points[(j+1)%n]
			maxR = math.Max(maxR, math.Abs(r))
			maxSlope = math.Max(maxSlope, math.Abs(d))
			if math.Abs(d) < 1e-12 {
				singular = true
			}
			alpha[j] = alpha[j+1] / d
			beta[j] = (beta[j+1] - r) / d
		}
		if iter > 0 && !(maxR < best) {
			copy(points, saved)
			return best
		}
		best = maxR
		floor := 2 * ulpScale(lm.width) * math.Max(1, maxSlope)
		if maxR <= floor || iter == 4 || singular || math.Abs(1-alpha[0]) < 1e-8 {
			return maxR
		}
		delta0 := beta[0] / (1 - alpha[0])
		copy(saved, points)
		var maxDelta float64
		clamped := false
		for j := range n {
			l := &lm.laps[word[j]]
			delta := alpha[j]*delta0 + beta[j]
			maxDelta = math.Max(maxDelta, math.Abs(delta))
			x := points[j] + delta
			if x < l.Lo-lm.endTol || x > l.Hi+lm.endTol {
				clamped = true
			}
			points[j] = math.Min(math.Max(x, l.Lo), l.Hi)
		}
		// Newton's error after a step δ is of order (f''/f')δ²: a step
		// below 1e-8 of the domain, none of it cut off at a lap's end,
		// leaves round-off, and the residual need not be evaluated again.
		if !clamped && maxDelta <= 1e-8*lm.width {
			return floor
		}
	}
}

// search1D searches a 1D map by itineraries.
func search1D(ctx context.Context, sys *dynsys.System, cfg *searchConfig, res *SearchResult) error {
	lm, err := newLapMap(sys, cfg.Laps)
	if err != nil {
		return fmt.Errorf("%w: %v", ErrSearch, err)
	}
	m := len(lm.laps)
	g, err := NewGrammar(m, sys.Forbidden)
	if err != nil {
		return err
	}
	res.Symbols, res.Grammar = m, g
	if cfg.Shards > 0 {
		cfg.part = newShardSelector(cfg.Shard, cfg.Shards, m)
	}
	res.Cycles = append(res.Cycles, cfg.Known...)
	for n := cfg.startLen; n <= cfg.MaxLen; n++ {
		count, _ := LyndonCount(m, n)
		words := make([][]byte, 0, min(count, 1<<22))
		for w := range LyndonWords(m, n) {
			if len(w) == n && g.Admissible(w) && cfg.part.holdsWord(w) {
				words = append(words, slices.Clone(w))
			}
		}
		found, stats, ok := lm.searchLength(ctx, words, cfg, n)
		res.Stats.Candidates += stats.Candidates
		res.Stats.Inadmissible += stats.Inadmissible
		res.Stats.Duplicates += stats.Duplicates
		if !ok {
			res.Status = SearchInterrupted
			return nil
		}
		if err := cfg.lengthDone(res, n, found); err != nil {
			return err
		}
	}
	return nil
}

// searchLength finds the cycles of the words (all of length n) in
// parallel, relabels points on shared lap ends by the half-open
// convention, removes orbits found twice and sorts by itinerary. ok is
// false when ctx was cancelled.
func (lm *lapMap) searchLength(ctx context.Context, words [][]byte, cfg *searchConfig, n int) ([]Cycle, SearchStats, bool) {
	const chunk = 256
	chunks := (len(words) + chunk - 1) / chunk
	results := make([][]Cycle, chunks)
	var mu sync.Mutex
	done := 0
	splitWork(chunks, cfg.Workers, func(c int) {
		if ctx.Err() != nil {
			return
		}
		lo, hi := c*chunk, min((c+1)*chunk, len(words))
		points := make([]float64, n)
		labels := make([]byte, n)
		out := make([]Cycle, 0, hi-lo)
		for _, w := range words[lo:hi] {
			if !lm.cycleOf(w, points) {
				continue
			}
			for j, x := range points {
				labels[j] = byte(lm.label(x, int(w[j])))
			}
			if primitivePeriod(labels) < n {
				copy(labels, w)
			}
			if orbitPeriod1D(points, lm.endTol) < n {
				continue
			}
			out = append(out, lm.cycle1D(points, labels))
		}
		results[c] = out
		if cfg.Progress != nil {
			mu.Lock()
			done++
			cfg.Progress(n, float64(done)/float64(chunks))
			mu.Unlock()
		}
	})
	var stats SearchStats
	stats.Candidates = len(words)
	if ctx.Err() != nil {
		return nil, stats, false
	}
	total := 0
	for _, r := range results {
		total += len(r)
	}
	cycles := make([]Cycle, 0, total)
	index := make(map[string]int, total)
	for _, chunkOut := range results {
		for _, c := range chunkOut {
			if k, seen := index[c.Itinerary]; seen && math.Abs(cycles[k].Point[0]-c.Point[0]) <= 1e-9*lm.width {
				stats.Duplicates++
				continue
			}
			index[c.Itinerary] = len(cycles)
			cycles = append(cycles, c)
		}
	}
	stats.Inadmissible = len(words) - total
	slices.SortStableFunc(cycles, compareFound)
	return cycles, stats, true
}

// orbitPeriod1D returns the least d dividing n with x_{j+d} = x_j within
// tol for all j.
func orbitPeriod1D(points []float64, tol float64) int {
	n := len(points)
	for d := 1; d < n; d++ {
		if n%d != 0 {
			continue
		}
		same := true
		for j := d; j < n; j++ {
			if math.Abs(points[j]-points[j-d]) > tol {
				same = false
				break
			}
		}
		if same {
			return d
		}
	}
	return n
}

// compareFound orders cycles by length, itinerary, then point.
func compareFound(a, b Cycle) int {
	if a.Len != b.Len {
		return a.Len - b.Len
	}
	if a.Itinerary != b.Itinerary {
		if a.Itinerary < b.Itinerary {
			return -1
		}
		return 1
	}
	return slices.Compare(a.Point, b.Point)
}
