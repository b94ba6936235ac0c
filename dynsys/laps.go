package dynsys

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"sort"

	"crosspec/dynsys/expr"
	"crosspec/dynsys/root"
)

// Lap is a maximal interval on which a 1D map is continuous and strictly
// monotone, extended continuously to its closed interval.
type Lap struct {
	// Lo and Hi are the lap's end points.
	Lo, Hi float64
	// FLo and FHi are the one-sided limits f(Lo+) and f(Hi−): the image of
	// the lap is the interval between them.
	FLo, FHi float64
	// Increasing is the orientation of f on the lap.
	Increasing bool
}

// ImageLo returns the lower end of the lap's image.
func (l Lap) ImageLo() float64 { return math.Min(l.FLo, l.FHi) }

// ImageHi returns the upper end of the lap's image.
func (l Lap) ImageHi() float64 { return math.Max(l.FLo, l.FHi) }

// Interval is a closed interval [Lo, Hi].
type Interval struct{ Lo, Hi float64 }

// LapSet is the result of Laps.
type LapSet struct {
	// Laps are sorted by position.
	Laps []Lap
	// Excluded are the parts of the domain left out because the laps there
	// are narrower than the tolerance (or the map is undefined there), for
	// instance [0, ε] for the Gauss map.
	Excluded []Interval
	// ExcludedLength is the total length of Excluded.
	ExcludedLength float64
}

// LapSettings controls Laps. A nil *LapSettings means the defaults.
type LapSettings struct {
	// Grid is the number of scan cells over the domain. Default 4096.
	Grid int
	// MinWidth is the width below which laps are left out, reported as
	// Excluded. Default 1e-9 times the domain's width.
	MinWidth float64
}

// ErrNotOneDimensional is returned by Laps for maps of dimension d ≥ 2.
var ErrNotOneDimensional = errors.New("dynsys: laps exist for 1D maps only")

// kind of a cut between laps
const (
	cutCritical = iota // f' changes sign
	cutKink            // a kink of the formula: f or f' may jump
	cutBreak           // given by the system file
)

type cut struct {
	x    float64
	kind int
}

// Laps cuts the domain of a 1D map into its monotone laps. The cuts are the
// critical points of f (roots of f' by Brent's method), the kinks of the
// formula (abs, floor, mod, min, max, comparisons: located by Brent's method
// on the kink's argument, or on its crossings of the integers for floor and
// mod) and the file's breaks. Cuts across which f stays continuous and keeps
// its orientation are dropped again, so every lap is maximal.
//
// The scan resolves cuts that are at least one grid cell apart, or that
// belong to different kinks; cuts of one kink in one grid cell are all found
// (floor and mod crossings are enumerated), unless they are closer than
// MinWidth on average, in which case the cell is excluded.
func (s *System) Laps(settings *LapSettings) (LapSet, error) {
	if s.Dim() != 1 {
		return LapSet{}, ErrNotOneDimensional
	}
	lo, hi := s.Lo[0], s.Hi[0]
	grid := 4096
	minWidth := 1e-9 * (hi - lo)
	if settings != nil {
		if settings.Grid > 0 {
			grid = settings.Grid
		}
		if settings.MinWidth > 0 {
			minWidth = settings.MinWidth
		}
	}

	var cuts []cut
	var excluded []Interval
	h := (hi - lo) / float64(grid)
	// scan finds the cuts in the cell [a, b]. A cell whose kinks cross the
	// integers too often to resolve is halved until its laps are resolved
	// or the cell is narrower than minWidth, which is then left out.
	var scan func(a, b float64)
	scan = func(a, b float64) {
		// Undefined map in the cell's interior: leave the cell out. The end
		// points may be singular (the Gauss map at 0) without harm when
		// the interior is fine, which the kinks then resolve.
		if fm := s.F(0.5 * (a + b)); math.IsNaN(fm) || math.IsInf(fm, 0) {
			excluded = append(excluded, Interval{a, b})
			return
		}
		var cellCuts []cut
		for _, kink := range s.kinks {
			ga, gb := kink.eval(a), kink.eval(b)
			if kink.integer {
				xsCut, ok := integerCrossings(kink.eval, a, b, ga, gb, minWidth)
				if !ok {
					if m := 0.5 * (a + b); b-a > 2*minWidth && m > a && m < b {
						scan(a, m)
						scan(m, b)
					} else {
						excluded = append(excluded, Interval{a, b})
					}
					return
				}
				for _, x := range xsCut {
					cellCuts = append(cellCuts, cut{x, cutKink})
				}
				continue
			}
			if x, ok := signChange(kink.eval, a, b, ga, gb); ok {
				cellCuts = append(cellCuts, cut{x, cutKink})
			}
		}
		if x, ok := signChange(s.DF, a, b, s.DF(a), s.DF(b)); ok {
			cellCuts = append(cellCuts, cut{x, cutCritical})
		}
		cuts = append(cuts, cellCuts...)
	}
	for i := range grid {
		a, b := lo+float64(i)*h, lo+float64(i+1)*h
		if i == grid-1 {
			b = hi
		}
		scan(a, b)
	}
	for _, b := range s.Breaks {
		cuts = append(cuts, cut{b, cutBreak})
	}
	excluded = mergeIntervals(excluded)
	// scanned keeps the scan's intervals, sorted and disjoint, for inside;
	// excluded grows below by the pieces too narrow to keep.
	scanned := slices.Clone(excluded)

	// Sort, drop duplicates (keeping the strongest kind) and cuts inside
	// excluded intervals, and add the domain's ends and the excluded
	// intervals' ends.
	slices.SortFunc(cuts, func(p, q cut) int {
		if p.x < q.x {
			return -1
		}
		if p.x > q.x {
			return 1
		}
		return q.kind - p.kind
	})
	var points []cut
	points = append(points, cut{lo, cutBreak})
	for _, e := range excluded {
		points = append(points, cut{e.Lo, cutBreak}, cut{e.Hi, cutBreak})
	}
	for _, c := range cuts {
		if c.x <= lo || c.x >= hi || inside(scanned, c.x) {
			continue
		}
		points = append(points, c)
	}
	points = append(points, cut{hi, cutBreak})
	slices.SortStableFunc(points, func(p, q cut) int {
		if p.x < q.x {
			return -1
		}
		if p.x > q.x {
			return 1
		}
		return q.kind - p.kind
	})
	points = slices.CompactFunc(points, func(p, q cut) bool {
		return math.Abs(p.x-q.x) <= 4*ulp(p.x)
	})

	// Build the pieces between consecutive points, skipping excluded ones.
	var laps []Lap
	for i := 0; i+1 < len(points); i++ {
		a, b := points[i].x, points[i+1].x
		if inside(scanned, 0.5*(a+b)) {
			continue
		}
		if b-a < minWidth {
			excluded = append(excluded, Interval{a, b})
			continue
		}
		flo, fhi := s.snap(s.limit(a, b, +1), a), s.snap(s.limit(b, a, -1), b)
		if math.IsNaN(flo) || math.IsNaN(fhi) {
			excluded = append(excluded, Interval{a, b})
			continue
		}
		lap := Lap{Lo: a, Hi: b, FLo: flo, FHi: fhi, Increasing: fhi > flo}
		// Merge with the previous lap when f is continuous across the cut
		// and keeps its orientation.
		if n := len(laps); n > 0 && laps[n-1].Hi == a && points[i].kind != cutBreak {
			prev := laps[n-1]
			scale := math.Max(1, math.Max(math.Abs(prev.FHi), math.Abs(flo)))
			if prev.Increasing == lap.Increasing && math.Abs(prev.FHi-flo) <= 1e-9*scale {
				laps[n-1].Hi, laps[n-1].FHi = b, fhi
				continue
			}
		}
		laps = append(laps, lap)
	}
	excluded = mergeIntervals(excluded)
	var length float64
	for _, e := range excluded {
		length += e.Hi - e.Lo
	}
	if len(laps) == 0 {
		return LapSet{}, fmt.Errorf("dynsys: %s: no lap wider than %g found on [%g, %g]", s.Name, minWidth, lo, hi)
	}
	return LapSet{Laps: laps, Excluded: excluded, ExcludedLength: length}, nil
}

// limit returns the one-sided limit of f at the lap end x, approached from
// inside the lap towards the other end `other` (dir = +1 from the right,
// −1 from the left). When f is continuous at x its value there is used;
// otherwise the limit is extrapolated linearly from two interior points.
func (s *System) limit(x, other float64, dir float64) float64 {
	width := math.Abs(other - x)
	delta := math.Min(width/8, math.Max(math.Abs(x), width)*0x1p-36)
	x1, x2 := x+dir*delta, x+2*dir*delta
	f1, f2 := s.F(x1), s.F(x2)
	extrapolated := 2*f1 - f2
	if fx := s.F(x); !math.IsNaN(fx) && !math.IsInf(fx, 0) {
		scale := math.Max(1, math.Abs(fx))
		slope := math.Abs(f2-f1) / delta
		if math.Abs(fx-extrapolated) <= 1e-9*scale+4*slope*delta*delta {
			return fx
		}
	}
	return extrapolated
}

// snap moves a lap end's image y = f(x±) onto an end of the domain when it
// is within round-off of it, so that, for instance, the laps of the Gauss
// map map onto exactly [0, 1] although their limits are extrapolated. The
// round-off of evaluating f near x is about ε·|x f'(x)| (the condition of f
// at x, and the size of the terms that cancel in 1/x − k), so the tolerance
// is a few times that, and at least 1e-13 of the domain's width.
func (s *System) snap(y, x float64) float64 {
	cond := math.Abs(x * s.DF(x))
	if math.IsNaN(cond) || math.IsInf(cond, 0) {
		cond = 0
	}
	tol := math.Max(1e-13*(s.Hi[0]-s.Lo[0]), 16*0x1p-52*cond)
	if math.Abs(y-s.Lo[0]) <= tol {
		return s.Lo[0]
	}
	if math.Abs(y-s.Hi[0]) <= tol {
		return s.Hi[0]
	}
	return y
}

// ClipLap returns the part [xa, xb] of lap l whose image lies in [lo, hi]
// (usually the domain), with the images ya = f(xa), yb = f(xb); ok is
// false when the image meets [lo, hi] in at most a point or a preimage of
// lo or hi cannot be found.
func (s *System) ClipLap(l Lap, lo, hi float64) (xa, ya, xb, yb float64, ok bool) {
	if l.ImageHi() <= lo || l.ImageLo() >= hi {
		return 0, 0, 0, 0, false
	}
	xa, ya, xb, yb = l.Lo, l.FLo, l.Hi, l.FHi
	// The end whose image leaves the domain is moved to the preimage of
	// the domain's edge.
	clip := func(y float64) (float64, bool) { return s.Preimage(l, y) }
	if l.Increasing {
		if l.FLo < lo {
			if xa, ok = clip(lo); !ok {
				return 0, 0, 0, 0, false
			}
			ya = lo
		}
		if l.FHi > hi {
			if xb, ok = clip(hi); !ok {
				return 0, 0, 0, 0, false
			}
			yb = hi
		}
	} else {
		if l.FLo > hi {
			if xa, ok = clip(hi); !ok {
				return 0, 0, 0, 0, false
			}
			ya = hi
		}
		if l.FHi < lo {
			if xb, ok = clip(lo); !ok {
				return 0, 0, 0, 0, false
			}
			yb = lo
		}
	}
	return xa, ya, xb, yb, xb > xa
}

// Preimage returns the x in the lap with f(x) = y, found to full precision
// by Brent's method; ok is false when y is outside the lap's image.
func (s *System) Preimage(l Lap, y float64) (x float64, ok bool) {
	if y < l.ImageLo() || y > l.ImageHi() {
		return 0, false
	}
	if y == l.FLo {
		return l.Lo, true
	}
	if y == l.FHi {
		return l.Hi, true
	}
	g := func(x float64) float64 {
		if x <= l.Lo {
			return l.FLo - y
		}
		if x >= l.Hi {
			return l.FHi - y
		}
		return s.F(x) - y
	}
	r, err := root.Brent(g, l.Lo, l.Hi, l.FLo-y, l.FHi-y, nil)
	if err != nil {
		return 0, false
	}
	return r.X, true
}

// LapOf returns the index of the lap that contains x, or -1.
func (ls LapSet) LapOf(x float64) int {
	i, found := slices.BinarySearchFunc(ls.Laps, x, func(l Lap, x float64) int {
		if l.Hi < x {
			return -1
		}
		if l.Lo > x {
			return 1
		}
		return 0
	})
	if !found {
		return -1
	}
	return i
}

func signChange(g func(float64) float64, a, b, ga, gb float64) (float64, bool) {
	if math.IsNaN(ga) || math.IsNaN(gb) || ga == 0 || gb == 0 || (ga > 0) == (gb > 0) {
		if ga == 0 && !math.IsNaN(gb) {
			return a, true
		}
		return 0, false
	}
	r, err := root.Brent(g, a, b, ga, gb, nil)
	if err != nil {
		return 0, false
	}
	return r.X, true
}

// integerCrossings returns the points of [a, b) where g crosses an integer,
// assuming g monotone on the cell. ok is false when there are too many to
// be resolved (more than the cell's width over minWidth, or infinitely
// many).
func integerCrossings(g func(float64) float64, a, b, ga, gb, minWidth float64) ([]float64, bool) {
	if math.IsNaN(ga) || math.IsNaN(gb) {
		return nil, false
	}
	if math.IsInf(ga, 0) || math.IsInf(gb, 0) {
		return nil, false
	}
	lo, hi := math.Min(ga, gb), math.Max(ga, gb)
	// A crossing exactly at a grid point belongs to the cell on its right.
	first, last := math.Ceil(lo), math.Floor(hi)
	if first > last {
		return nil, true
	}
	count := last - first + 1
	if count*minWidth > b-a || count > 1e6 {
		return nil, false
	}
	var out []float64
	for k := first; k <= last; k++ {
		h := func(x float64) float64 { return g(x) - k }
		ha, hb := ga-k, gb-k
		if ha == 0 {
			out = append(out, a)
			continue
		}
		if hb == 0 {
			continue // the next cell's left end
		}
		r, err := root.Brent(h, a, b, ha, hb, nil)
		if err == nil {
			out = append(out, r.X)
		}
	}
	return out, true
}

func mergeIntervals(in []Interval) []Interval {
	if len(in) == 0 {
		return nil
	}
	slices.SortFunc(in, func(p, q Interval) int {
		if p.Lo < q.Lo {
			return -1
		}
		if p.Lo > q.Lo {
			return 1
		}
		return 0
	})
	out := []Interval{in[0]}
	for _, iv := range in[1:] {
		last := &out[len(out)-1]
		if iv.Lo <= last.Hi {
			last.Hi = math.Max(last.Hi, iv.Hi)
			continue
		}
		out = append(out, iv)
	}
	return out
}

// inside reports whether x lies in the interior of one of ivs, which are
// sorted and disjoint (mergeIntervals): by bisection, since a fine scan of
// the Gauss map leaves out thousands of intervals.
func inside(ivs []Interval, x float64) bool {
	k := sort.Search(len(ivs), func(i int) bool { return ivs[i].Hi > x })
	return k < len(ivs) && x > ivs[k].Lo && x < ivs[k].Hi
}

func ulp(x float64) float64 {
	x = math.Abs(x)
	return math.Nextafter(x, math.Inf(1)) - x
}

// lapKink is a kink of a 1D map's formula, compiled for the lap scan.
type lapKink struct {
	eval    func(float64) float64
	integer bool // jumps where eval crosses an integer (floor, mod)
}

// compileKinks compiles the arguments of the kinks of a 1D map's formula.
func (s *System) compileKinks(params map[string]float64) error {
	for _, k := range expr.Kinks(s.mapNodes[0]) {
		prog, err := expr.Compile([]*expr.Node{k.Arg}, s.Vars, params)
		if err != nil {
			return err
		}
		s.kinks = append(s.kinks, lapKink{eval: prog.Scalar, integer: k.Kind == expr.KinkInteger})
	}
	return nil
}
