package main

import (
	"fmt"
	"image/color"
	"io"
	"math"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgsvg"

	"github.com/posteriori-fem/posteriori/adapt/study"
)

// Sizes of the figure: each panel, and the legend column at its right.
const (
	panelWidth   = 3.2 * vg.Inch
	panelHeight  = 2.5 * vg.Inch
	legendWidth  = 1.3 * vg.Inch
	titleHeight  = 0.35 * vg.Inch
	maxPanelCols = 3
)

// estimatorColor is the line colour of each estimator (a palette that
// stays distinct for colour-blind readers); the degree sets the dashes.
var estimatorColor = map[string]color.Color{
	"residual":     color.RGBA{R: 0x00, G: 0x72, B: 0xb2, A: 0xff},
	"averaging":    color.RGBA{R: 0xe6, G: 0x9f, B: 0x00, A: 0xff},
	"spr":          color.RGBA{R: 0x00, G: 0x9e, B: 0x73, A: 0xff},
	"equilibrated": color.RGBA{R: 0xd5, G: 0x5e, B: 0x00, A: 0xff},
	"flux":         color.RGBA{R: 0xcc, G: 0x79, B: 0xa7, A: 0xff},
}

// degreeDashes is the dash pattern of each degree: P1 solid, P2 dashed.
var degreeDashes = map[int][]vg.Length{1: nil, 2: {vg.Points(5), vg.Points(3)}}

// writePlot draws effectivity.svg: effectivity against DOFs, one line per
// (estimator, degree), in one panel per problem of sums, or only for the
// problem named which (unless which is "all").
func writePlot(w io.Writer, sums []study.Summary, which string) error {
	var order []string // problems in table order
	byProblem := map[string][]study.Summary{}
	for _, s := range sums {
		if which != "all" && s.Case.Name != which {
			continue
		}
		if _, ok := byProblem[s.Case.Name]; !ok {
			order = append(order, s.Case.Name)
		}
		byProblem[s.Case.Name] = append(byProblem[s.Case.Name], s)
	}
	if len(order) == 0 {
		return fmt.Errorf("plot: no runs of problem %q", which)
	}
	cols := min(maxPanelCols, len(order))
	rows := (len(order) + cols - 1) / cols

	legend := plot.NewLegend()
	legend.Top, legend.Left = true, true // icons first: text set in a wider substitute font runs into free space
	legend.ThumbnailWidth = vg.Points(24)
	legend.TextStyle.Font.Size = vg.Points(9)
	entered := map[string]bool{}

	grid := make([][]*plot.Plot, rows)
	for j := range grid {
		grid[j] = make([]*plot.Plot, cols)
	}
	for k, name := range order {
		p := plot.New()
		p.Title.Text = name
		p.Title.TextStyle.Font.Size = vg.Points(11)
		p.X.Label.Text = "DOFs"
		p.Y.Label.Text = "η / error"
		for _, a := range []*plot.Axis{&p.X, &p.Y} {
			a.Label.TextStyle.Font.Size = vg.Points(9)
			a.Tick.Label.Font.Size = vg.Points(8)
		}
		p.X.Scale, p.X.Tick.Marker = plot.LogScale{}, plot.LogTicks{Prec: -1}
		p.Y.Scale, p.Y.Tick.Marker = plot.LogScale{}, factorTicks{}
		p.Add(plotter.NewGrid())
		lo, hi := math.Inf(1), math.Inf(-1) // DOF range of the panel
		for _, s := range byProblem[name] {
			xy := make(plotter.XYs, 0, len(s.Steps))
			for _, st := range s.Steps {
				if st.Effectivity > 0 && st.DOFs > 0 {
					xy = append(xy, plotter.XY{X: float64(st.DOFs), Y: st.Effectivity})
					lo, hi = min(lo, float64(st.DOFs)), max(hi, float64(st.DOFs))
				}
			}
			if len(xy) == 0 {
				continue
			}
			l, err := plotter.NewLine(xy)
			if err != nil {
				return fmt.Errorf("plot: %s: %w", name, err)
			}
			l.Color = estimatorColor[s.Estimator.Name]
			l.Dashes = degreeDashes[s.Degree]
			l.Width = vg.Points(1.2)
			p.Add(l)
			label := fmt.Sprintf("%s P%d", s.Estimator.Name, s.Degree)
			if !entered[label] {
				entered[label] = true
				legend.Add(label, l)
			}
		}
		if lo <= hi {
			// The ideal effectivity 1, for reference.
			one, err := plotter.NewLine(plotter.XYs{{X: lo, Y: 1}, {X: hi, Y: 1}})
			if err != nil {
				return fmt.Errorf("plot: %s: %w", name, err)
			}
			one.Color = color.Gray{Y: 0x60}
			one.Dashes = []vg.Length{vg.Points(1), vg.Points(2)}
			p.Add(one)
		}
		// Round the y range out to ticks, so that the labels reach past
		// the highest and lowest curves.
		p.Y.Min, p.Y.Max = factorRange(p.Y.Min, p.Y.Max)
		grid[k/cols][k%cols] = p
	}

	width := vg.Length(cols)*panelWidth + legendWidth
	height := vg.Length(rows)*panelHeight + titleHeight
	c := vgsvg.New(width, height)
	dc := draw.New(c)
	title := plot.DefaultFont
	title.Size = vg.Points(12)
	dc.FillText(draw.TextStyle{Color: color.Black, Font: title, Handler: plot.DefaultTextHandler, XAlign: draw.XCenter, YAlign: draw.YTop},
		vg.Point{X: width / 2, Y: height - vg.Points(6)}, "Effectivity index against DOFs (adaptive, Dörfler marking)")
	panels := draw.Canvas{Canvas: dc.Canvas, Rectangle: vg.Rectangle{
		Min: vg.Point{X: 0, Y: 0},
		Max: vg.Point{X: width - legendWidth, Y: height - titleHeight},
	}}
	tiles := draw.Tiles{Rows: rows, Cols: cols, PadX: vg.Points(8), PadY: vg.Points(8),
		PadTop: vg.Points(2), PadBottom: vg.Points(4), PadLeft: vg.Points(4), PadRight: vg.Points(4)}
	canvases := plot.Align(grid, tiles, panels)
	for j := range grid {
		for i, p := range grid[j] {
			if p != nil {
				p.Draw(canvases[j][i])
			}
		}
	}
	legend.Draw(draw.Canvas{Canvas: dc.Canvas, Rectangle: vg.Rectangle{
		Min: vg.Point{X: width - legendWidth + vg.Points(6), Y: 0},
		Max: vg.Point{X: width - vg.Points(4), Y: height - titleHeight - vg.Points(24)},
	}})
	_, err := c.WriteTo(w)
	return err
}

// factorTicks marks a log axis of ratios at the powers of 2 in its range
// (…, 0.25, 0.5, 1, 2, 4, …), or at every second or fourth of them when
// the range is wide.
type factorTicks struct{}

// factorStep returns the exponent step of the ticks between 2^k0 and
// 2^k1: 1, 2, 4, … so that at most 8 steps span the range.
func factorStep(k0, k1 int) int {
	step := 1
	for (k1-k0)/step > 8 {
		step *= 2
	}
	return step
}

// Ticks implements plot.Ticker.
func (factorTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(lo > 0 && hi >= lo) {
		return nil
	}
	k0, k1 := int(math.Floor(math.Log2(lo))), int(math.Ceil(math.Log2(hi)))
	step := factorStep(k0, k1)
	var ts []plot.Tick
	for k := k0 - k0%step; k <= k1; k += step {
		v := math.Ldexp(1, k)
		if v >= lo*(1-1e-12) && v <= hi*(1+1e-12) {
			ts = append(ts, plot.Tick{Value: v, Label: fmt.Sprintf("%g", v)})
		}
	}
	return ts
}

// factorRange returns the range [lo, hi] of a log axis widened to the
// nearest ticks of factorTicks outside it, so that the axis is labelled
// at both ends of the data. A range that is not positive is returned as
// it is.
func factorRange(lo, hi float64) (float64, float64) {
	if !(lo > 0 && hi >= lo) || math.IsInf(hi, 0) {
		return lo, hi
	}
	k0, k1 := int(math.Floor(math.Log2(lo))), int(math.Ceil(math.Log2(hi)))
	for {
		step := factorStep(k0, k1)
		a := k0 - ((k0%step)+step)%step // down to a multiple of step
		b := k1 + ((step-k1%step)%step+step)%step
		if a == k0 && b == k1 {
			return math.Ldexp(1, k0), math.Ldexp(1, k1)
		}
		k0, k1 = a, b
	}
}
