package main

import (
	"fmt"
	"image/color"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"crosspec/compare"
)

// Colours of the two paths, the same in every plot: Ulam blue, cycles
// vermilion (a pair that stays distinct for colour-blind readers).
var (
	ulamColour   = color.RGBA{R: 0, G: 114, B: 178, A: 255}
	cyclesColour = color.RGBA{R: 213, G: 94, B: 0, A: 255}
	thirdColour  = color.RGBA{R: 0, G: 158, B: 115, A: 255}
	greyColour   = color.RGBA{R: 120, G: 120, B: 120, A: 255}
)

// convergenceSeries is one path's sequence of estimates against its
// resolution, with the path's extrapolated estimate.
type convergenceSeries struct {
	label    string    // "Ulam", "cycle expansion"
	xLabel   string    // axis label of the resolution
	logX     bool      // resolution on a log axis (cells)
	x        []float64 // resolution: cells N or cycle length n
	values   []float64
	estimate compare.Estimate
	colour   color.Color
}

// plotFormat returns the image format named by the file extension.
func plotFormat(path string) (string, error) {
	ext := strings.ToLower(strings.TrimPrefix(filepath.Ext(path), "."))
	switch ext {
	case "svg", "png":
		return ext, nil
	}
	return "", usagef("plot file %q: expected a name ending in .svg or .png", path)
}

// savePanels draws the plots side by side into path (SVG or PNG by
// extension).
func savePanels(path string, panels []*plot.Plot, width, height vg.Length) error {
	format, err := plotFormat(path)
	if err != nil {
		return err
	}
	canvas, err := draw.NewFormattedCanvas(width, height, format)
	if err != nil {
		return err
	}
	dc := draw.New(canvas)
	// Each panel gets an equal vertical strip, with a margin around it.
	margin := 4 * vg.Millimeter
	strip := width / vg.Length(len(panels))
	for i, p := range panels {
		left := vg.Length(i)*strip + margin
		right := width - vg.Length(i+1)*strip + margin
		p.Draw(draw.Crop(dc, left, -right, margin, -margin))
	}
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	if _, err := canvas.WriteTo(f); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// decadeTicks marks the powers of ten of a log axis, labelled 1e-06 style,
// every step-th decade labelled so that at most eight labels show.
type decadeTicks struct{}

func (decadeTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(lo > 0) || !(hi > lo) {
		return nil
	}
	first, last := int(math.Floor(math.Log10(lo))), int(math.Ceil(math.Log10(hi)))
	step := max(1, (last-first+7)/8)
	var ticks []plot.Tick
	for k := first; k <= last; k++ {
		v := math.Pow(10, float64(k))
		if v < lo*(1-1e-9) || v > hi*(1+1e-9) {
			continue
		}
		label := ""
		if (k-first)%step == 0 {
			label = fmt.Sprintf("1e%d", k)
			if k >= 0 && k <= 6 {
				label = strconv.FormatFloat(v, 'f', -1, 64)
			}
		}
		ticks = append(ticks, plot.Tick{Value: v, Label: label})
	}
	return ticks
}

func newPlot(title, xLabel, yLabel string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.Title.TextStyle.Font.Size = vg.Points(11)
	p.X.Label.Text = xLabel
	p.Y.Label.Text = yLabel
	p.X.Label.TextStyle.Font.Size = vg.Points(10)
	p.Y.Label.TextStyle.Font.Size = vg.Points(10)
	p.Legend.Top = true
	p.Legend.TextStyle.Font.Size = vg.Points(9)
	p.Legend.XOffs, p.Legend.YOffs = -vg.Millimeter*2, -vg.Millimeter*2
	p.Add(plotter.NewGrid())
	return p
}

// writeConvergencePlot draws, for each path, the distance of every estimate
// from one reference value, the extrapolated value of the more precise path,
// and the size of each step, on a log scale against the path's resolution,
// with each path's reported error bar as a dashed line: a reader sees how
// fast each path converges towards the same number, and whether each error
// bar is plausible. Distances that are exactly zero are not drawn.
func writeConvergencePlot(path, title, quantity string, series []convergenceSeries) error {
	ref := math.NaN()
	refError := math.Inf(1)
	refLabel := ""
	for _, s := range series {
		if e := s.estimate.Error; e < refError && !math.IsNaN(s.estimate.Value) {
			ref, refError, refLabel = s.estimate.Value, e, s.label
		}
	}
	if math.IsNaN(ref) {
		return &numericalError{fmt.Errorf("nothing to plot: no path gave an estimate")}
	}
	var panels []*plot.Plot
	for _, s := range series {
		if len(s.values) == 0 {
			continue
		}
		p := newPlot(fmt.Sprintf("%s: %s", title, s.label), s.xLabel, fmt.Sprintf("%s: distance or change", quantity))
		p.Y.Scale = plot.LogScale{}
		p.Y.Tick.Marker = decadeTicks{}
		if s.logX {
			p.X.Scale = plot.LogScale{}
			p.X.Tick.Marker = decadeTicks{}
		}
		var dist, steps plotter.XYs
		for i, v := range s.values {
			if math.IsNaN(v) {
				continue
			}
			if d := math.Abs(v - ref); d > 0 {
				dist = append(dist, plotter.XY{X: s.x[i], Y: d})
			}
			if i > 0 && !math.IsNaN(s.values[i-1]) {
				if d := math.Abs(v - s.values[i-1]); d > 0 {
					steps = append(steps, plotter.XY{X: s.x[i], Y: d})
				}
			}
		}
		if len(dist) > 0 {
			line, points, err := plotter.NewLinePoints(dist)
			if err != nil {
				return err
			}
			line.Color, points.Color = s.colour, s.colour
			points.Shape = draw.CircleGlyph{}
			points.Radius = vg.Points(2.5)
			p.Add(line, points)
			p.Legend.Add(fmt.Sprintf("|estimate − %s value %s|", refLabel, compare.FormatUncertainty(ref, refError)), line, points)
		}
		if len(steps) > 0 {
			sc, err := plotter.NewScatter(steps)
			if err != nil {
				return err
			}
			sc.Color = greyColour
			sc.Shape = draw.TriangleGlyph{}
			sc.Radius = vg.Points(2.5)
			p.Add(sc)
			p.Legend.Add("change from the previous estimate", sc)
		}
		if e := s.estimate.Error; e > 0 && !math.IsInf(e, 0) && !math.IsNaN(e) && len(s.x) > 0 {
			band, err := plotter.NewLine(plotter.XYs{{X: s.x[0], Y: e}, {X: s.x[len(s.x)-1], Y: e}})
			if err != nil {
				return err
			}
			band.Color = s.colour
			band.Dashes = []vg.Length{vg.Points(5), vg.Points(3)}
			p.Add(band)
			p.Legend.Add(fmt.Sprintf("this path's estimated error %.1e", e), band)
		}
		panels = append(panels, p)
	}
	if len(panels) == 0 {
		return &numericalError{fmt.Errorf("nothing to plot")}
	}
	return savePanels(path, panels, vg.Length(len(panels))*12*vg.Centimeter, 10*vg.Centimeter)
}

// spectrumSet is one path's eigenvalue estimates.
type spectrumSet struct {
	label  string
	values []complex128
	colour color.Color
	shape  draw.GlyphDrawer
}

// writeSpectrumPlot draws the eigenvalue estimates of the paths in the
// complex plane, with the unit circle's arc for scale.
func writeSpectrumPlot(path, title string, sets []spectrumSet) error {
	p := newPlot(title, "Re λ", "Im λ")
	var maxAbs float64
	for _, s := range sets {
		var xy plotter.XYs
		for _, v := range s.values {
			if math.IsNaN(real(v)) || math.IsNaN(imag(v)) {
				continue
			}
			xy = append(xy, plotter.XY{X: real(v), Y: imag(v)})
			maxAbs = math.Max(maxAbs, math.Hypot(real(v), imag(v)))
		}
		if len(xy) == 0 {
			continue
		}
		sc, err := plotter.NewScatter(xy)
		if err != nil {
			return err
		}
		sc.Color = s.colour
		sc.Shape = s.shape
		sc.Radius = vg.Points(4)
		p.Add(sc)
		p.Legend.Add(s.label, sc)
	}
	if maxAbs == 0 {
		maxAbs = 1
	}
	r := 1.1 * maxAbs
	p.X.Min, p.X.Max, p.Y.Min, p.Y.Max = -r, r, -r, r
	var circle plotter.XYs
	for i := 0; i <= 200; i++ {
		t := 2 * math.Pi * float64(i) / 200
		circle = append(circle, plotter.XY{X: maxAbs * math.Cos(t), Y: maxAbs * math.Sin(t)})
	}
	ring, err := plotter.NewLine(circle)
	if err != nil {
		return err
	}
	ring.Color = greyColour
	ring.Dashes = []vg.Length{vg.Points(2), vg.Points(2)}
	p.Add(ring)
	p.Legend.Add(fmt.Sprintf("|λ| = %.3g", maxAbs), ring)
	return savePanels(path, []*plot.Plot{p}, 12*vg.Centimeter, 12*vg.Centimeter)
}

// writeDensityPlot draws the leading density of the Ulam path at the
// centres of the cells kept. For an open system those are the cells near the
// repeller, where the density is normalised, so the density is drawn as
// points rather than a line across the gaps.
func writeDensityPlot(path, title, variable string, x, density []float64) error {
	p := newPlot(title, variable, "density ρ("+variable+")")
	xy := make(plotter.XYs, 0, len(x))
	for i := range x {
		xy = append(xy, plotter.XY{X: x[i], Y: density[i]})
	}
	sc, err := plotter.NewScatter(xy)
	if err != nil {
		return err
	}
	sc.Color = ulamColour
	sc.Shape = draw.CircleGlyph{}
	sc.Radius = vg.Points(1)
	p.Add(sc)
	p.Legend.Add(fmt.Sprintf("leading left eigenvector of the Ulam matrix (%d cells kept)", len(x)), sc)
	return savePanels(path, []*plot.Plot{p}, 14*vg.Centimeter, 9*vg.Centimeter)
}
