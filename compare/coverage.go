package compare

import (
	"fmt"
	"math"
	"sort"
	"strings"
	"text/tabwriter"
)

// Case pairs an Estimate with the true value it estimates, for calibrating
// error bars on problems with known answers.
type Case struct {
	Label    string
	Truth    float64
	Estimate Estimate
}

// CoverageRow is the verdict of Calibrate on one case.
type CoverageRow struct {
	Label  string
	Status Status
	// TrueError is |Value − Truth|; Error is the reported error bar.
	TrueError, Error float64
	// Covered reports TrueError ≤ Error.
	Covered bool
	// Ratio is Error / max(TrueError, TrueErrorFloor(Truth)): how many
	// times larger the bar is than the error it should cover.
	Ratio float64
}

// Coverage summarises how well error bars cover known true values. The design
// goal is Covered == Cases with Ratio ≤ MaxOverstatement on every case.
type Coverage struct {
	Rows []CoverageRow
	// Cases and Covered count all rows and the covered ones.
	Cases, Covered int
	// Overstated counts the rows whose Ratio exceeds MaxOverstatement.
	Overstated int
	// MedianRatio and MaxRatio summarise Ratio over the rows.
	MedianRatio, MaxRatio float64
}

// MaxOverstatement is the largest acceptable ratio of a reported error bar to
// the true error.
const MaxOverstatement = 100

// TrueErrorFloor is the smallest true error Calibrate credits an estimate of
// truth with: 100 machine epsilons of |truth|. An extrapolation can be exact
// to round-off (Richardson on an exact C/N sequence), and a true error of
// 1e-17 then says nothing about the bar; 100 ε is the round-off a short
// computation of a value of that size can accumulate, so a bar up to
// MaxOverstatement × 100 ε |truth| ≈ 2e-12 |truth| still counts as tight.
func TrueErrorFloor(truth float64) float64 {
	return 100 * epsilon * math.Abs(truth)
}

// Calibrate measures the coverage of the error bars of the given cases.
func Calibrate(cases []Case) Coverage {
	var c Coverage
	ratios := make([]float64, 0, len(cases))
	for _, k := range cases {
		trueErr := math.Abs(k.Estimate.Value - k.Truth)
		row := CoverageRow{
			Label:     k.Label,
			Status:    k.Estimate.Status,
			TrueError: trueErr,
			Error:     k.Estimate.Error,
			Covered:   trueErr <= k.Estimate.Error,
			Ratio:     k.Estimate.Error / math.Max(trueErr, TrueErrorFloor(k.Truth)),
		}
		c.Rows = append(c.Rows, row)
		c.Cases++
		if row.Covered {
			c.Covered++
		}
		if !(row.Ratio <= MaxOverstatement) {
			c.Overstated++
		}
		ratios = append(ratios, row.Ratio)
	}
	if len(ratios) > 0 {
		sort.Float64s(ratios)
		c.MedianRatio = ratios[len(ratios)/2]
		c.MaxRatio = ratios[len(ratios)-1]
	}
	return c
}

// Fraction returns Covered / Cases (NaN without cases).
func (c Coverage) Fraction() float64 {
	if c.Cases == 0 {
		return math.NaN()
	}
	return float64(c.Covered) / float64(c.Cases)
}

// String returns the coverage as a plain-text table, one row a case and a
// summary line, for test logs and calibration notes.
func (c Coverage) String() string {
	var b strings.Builder
	w := tabwriter.NewWriter(&b, 0, 0, 2, ' ', 0)
	fmt.Fprintln(w, "case\tstatus\ttrue error\terror bar\tbar/true\tcovered")
	for _, r := range c.Rows {
		fmt.Fprintf(w, "%s\t%s\t%.3g\t%.3g\t%.3g\t%v\n", r.Label, r.Status, r.TrueError, r.Error, r.Ratio, r.Covered)
	}
	w.Flush()
	fmt.Fprintf(&b, "covered %d of %d (%.4g), bars over %d× the true error: %d, median ratio %.3g, max %.3g\n",
		c.Covered, c.Cases, c.Fraction(), MaxOverstatement, c.Overstated, c.MedianRatio, c.MaxRatio)
	return b.String()
}
