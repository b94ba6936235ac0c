package cycles

import (
	"fmt"
	"math"
	"slices"

	"crosspec/dynsys"
)

// ProblemKind classifies what is wrong with a cycle read from a file.
type ProblemKind int

const (
	// NotPeriodic: the point is not (within tolerance) a periodic point of
	// the stated length.
	NotPeriodic ProblemKind = iota
	// NotPrime: the orbit repeats with a shorter period, or the itinerary
	// is a repetition of a shorter word.
	NotPrime
	// Duplicate: the orbit was given before in the file.
	Duplicate
	// WrongMultiplier: a multiplier differs from the recomputed one.
	WrongMultiplier
	// WrongItinerary: the itinerary is not spelled over the system's
	// alphabet, has the wrong length, or does not belong to the point.
	WrongItinerary
)

func (k ProblemKind) String() string {
	switch k {
	case NotPeriodic:
		return "not periodic"
	case NotPrime:
		return "not prime"
	case Duplicate:
		return "duplicate"
	case WrongMultiplier:
		return "wrong multiplier"
	case WrongItinerary:
		return "wrong itinerary"
	}
	return fmt.Sprintf("ProblemKind(%d)", int(k))
}

// Problem is one rejected cycle of a file.
type Problem struct {
	File string
	Line int
	Kind ProblemKind
	Msg  string
}

func (p Problem) String() string {
	return fmt.Sprintf("%s:%d: %s: %s", p.File, p.Line, p.Kind, p.Msg)
}

// VerifySettings controls Verify. A nil *VerifySettings means the
// defaults.
type VerifySettings struct {
	// File names the file in problems. Default "cycles".
	File string
	// PointTol is the largest distance, relative to the domain's size,
	// between a given point and the re-converged periodic point. Default
	// 1e-8: a point printed with 10 significant digits passes.
	PointTol float64
	// MultiplierTol is the largest relative difference between a given
	// and a recomputed multiplier. Default 1e-6, which a multiplier
	// printed with 8 significant digits passes; the recomputed ones are
	// good to about n·ε relative (1D) or ε·|Λ_1/Λ_i| for the contracting
	// ones of a QR product.
	MultiplierTol float64
	// Laps controls the lap scan of a 1D map. Default nil (its defaults).
	Laps *dynsys.LapSettings
}

// VerifyResult is what Verify returns.
type VerifyResult struct {
	// Cycles are the accepted cycles with re-converged points and
	// recomputed multipliers and observable sums, sorted by length,
	// itinerary and point.
	Cycles []Cycle
	// Problems lists the rejected cycles in file order.
	Problems []Problem
}

// Verify re-converges every cycle read from a file and checks it: the
// point must be periodic with the stated least period (1D: the periodic
// point of the itinerary, found by inverse branches; d ≥ 2: multiple
// shooting from the point's forward orbit), the itinerary prime and
// consistent with the point, the multipliers equal the recomputed ones,
// and no orbit given twice. Each failure is a Problem naming the line;
// the accepted cycles carry the recomputed values.
func Verify(sys *dynsys.System, in []FileCycle, settings *VerifySettings) (VerifyResult, error) {
	var vs VerifySettings
	if settings != nil {
		vs = *settings
	}
	if vs.File == "" {
		vs.File = "cycles"
	}
	if vs.PointTol <= 0 {
		vs.PointTol = 1e-8
	}
	if vs.MultiplierTol <= 0 {
		vs.MultiplierTol = 1e-6
	}
	d := sys.Dim()
	var scale float64
	for i := range d {
		scale = math.Max(scale, sys.Hi[i]-sys.Lo[i])
	}
	var lm *lapMap
	if d == 1 {
		var err error
		if lm, err = newLapMap(sys, vs.Laps); err != nil {
			return VerifyResult{}, fmt.Errorf("%w: %v", ErrSearch, err)
		}
	}
	nd := &ndSearch{sys: sys, d: d, scale: scale}
	var res VerifyResult
	index := newOrbitIndex(d, 1e-7*scale)
	lineOf := []int{}
	for _, fc := range in {
		problem := func(kind ProblemKind, format string, args ...any) {
			res.Problems = append(res.Problems, Problem{File: vs.File, Line: fc.Line, Kind: kind, Msg: fmt.Sprintf(format, args...)})
		}
		n := fc.Len
		var points []float64
		if d == 1 && fc.Itinerary != "" {
			word, err := ParseItinerary(fc.Itinerary, len(lm.laps))
			if err != nil {
				problem(WrongItinerary, "itinerary %q: %v", fc.Itinerary, err)
				continue
			}
			if len(word) != n {
				problem(WrongItinerary, "itinerary %q has %d symbols, the length is %d", fc.Itinerary, len(word), n)
				continue
			}
			if p := primitivePeriod(word); p < n {
				problem(NotPrime, "itinerary %q repeats with period %d", fc.Itinerary, p)
				continue
			}
			points = make([]float64, n)
			if !lm.cycleOf(word, points) {
				problem(NotPeriodic, "itinerary %q has no periodic point (inadmissible)", fc.Itinerary)
				continue
			}
		} else {
			points = forwardOrbit(sys, fc.Point, n)
			if _, ok := nd.multipleShooting(points, n); !ok {
				problem(NotPeriodic, "no periodic orbit of length %d found near the point %v", n, fc.Point)
				continue
			}
		}
		if dist := maxDistance(points[:d], fc.Point); dist > vs.PointTol*scale {
			problem(NotPeriodic, "the point %v is %.3g away from the periodic point %v of its orbit (f^%d moves it by %.3g)", fc.Point, dist, points[:d], n, returnDistance(sys, fc.Point, n))
			continue
		}
		if p := orbitPeriodND(points, n, d, 1e-9*scale); p < n {
			problem(NotPrime, "the orbit has least period %d", p)
			continue
		}
		var c Cycle
		if d == 1 {
			c = lm.cycle1D(points, lm.wordOf(fc.Itinerary, points))
		} else {
			var ok bool
			if c, ok = makeCycleND(sys, points, n); !ok {
				problem(WrongItinerary, "a point of the orbit has no symbol")
				continue
			}
			if fc.Itinerary != "" && c.Itinerary != fc.Itinerary {
				problem(WrongItinerary, "itinerary %q, the orbit's is %q", fc.Itinerary, c.Itinerary)
				continue
			}
		}
		if k := index.find(c.Point); k >= 0 {
			problem(Duplicate, "the orbit of line %d again", lineOf[k])
			continue
		}
		bad := false
		for i, want := range c.Multipliers {
			got := fc.Multipliers[i]
			if math.Abs(got-want) > vs.MultiplierTol*math.Abs(want) {
				problem(WrongMultiplier, "multiplier %d is %.10g, recomputed %.10g", i+1, got, want)
				bad = true
				break
			}
		}
		if bad {
			continue
		}
		index.add(orbitND{n: n, points: points})
		lineOf = append(lineOf, fc.Line)
		res.Cycles = append(res.Cycles, c)
	}
	slices.SortStableFunc(res.Cycles, compareFound)
	return res, nil
}

// cycle1D builds the Cycle of a 1D orbit found from word (in the orbit's
// rotation): itinerary in its least rotation, point, multiplier Π f'(x_j)
// and observable sum.
func (lm *lapMap) cycle1D(points []float64, word []byte) Cycle {
	n := len(points)
	r := leastRotation(word)
	c := Cycle{Len: n, Point: []float64{points[r]}}
	out := make([]byte, n)
	lambda := 1.0
	for k := range n {
		j := (r + k) % n
		out[k] = word[j]
		lambda *= lm.slope(int(word[j]), points[j])
		c.ObservableSum += lm.sys.Observable(points[j : j+1])
	}
	c.Itinerary = Itinerary(out)
	c.Multipliers = []float64{lambda}
	return c
}

// wordOf returns the parsed itinerary, or, when there is none, the laps
// of the points by the half-open convention.
func (lm *lapMap) wordOf(itinerary string, points []float64) []byte {
	if w, err := ParseItinerary(itinerary, len(lm.laps)); err == nil && len(w) == len(points) && itinerary != "" {
		return w
	}
	w := make([]byte, len(points))
	for j, x := range points {
		k, _ := slices.BinarySearchFunc(lm.laps, x, func(l dynsys.Lap, x float64) int {
			if l.Hi <= x {
				return -1
			}
			if l.Lo > x {
				return 1
			}
			return 0
		})
		w[j] = byte(min(k, len(lm.laps)-1))
	}
	return w
}

func maxDistance(a, b []float64) float64 {
	var m float64
	for i := range a {
		m = math.Max(m, math.Abs(a[i]-b[i]))
	}
	return m
}

// returnDistance returns |fⁿ(x) − x| (max norm).
func returnDistance(sys *dynsys.System, x []float64, n int) float64 {
	orbit := forwardOrbit(sys, x, n+1)
	d := sys.Dim()
	return maxDistance(orbit[n*d:], x)
}
