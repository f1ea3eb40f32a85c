package main

import (
	"fmt"
	"image/color"
	"math"
	"time"

	"github.com/sustain-cycling/sustain/estimate"
	"github.com/sustain-cycling/sustain/powerduration"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// The project's own palette.
var (
	inkMain    = color.RGBA{R: 0x1f, G: 0x4e, B: 0x79, A: 0xff} // deep blue
	inkCompare = color.RGBA{R: 0xc2, G: 0x6a, B: 0x1b, A: 0xff} // burnt orange
	inkModel   = []color.Color{
		color.RGBA{R: 0x2e, G: 0x8b, B: 0x57, A: 0xff}, // green
		color.RGBA{R: 0x8e, G: 0x44, B: 0xad, A: 0xff}, // purple
		color.RGBA{R: 0xb0, G: 0x30, B: 0x30, A: 0xff}, // brick
	}
	inkGrid = color.Gray{Y: 0xdd}
)

// timeTicks labels a log time axis at durations riders read.
type timeTicks struct{}

func (timeTicks) Ticks(lo, hi float64) []plot.Tick {
	marks := []struct {
		s     float64
		label string
	}{{1, "1 s"}, {5, "5 s"}, {10, "10 s"}, {30, "30 s"}, {60, "1 min"}, {120, "2 min"}, {300, "5 min"}, {600, "10 min"},
		{1200, "20 min"}, {3600, "1 h"}, {7200, "2 h"}, {14400, "4 h"}, {21600, "6 h"}}
	var ts []plot.Tick
	for _, m := range marks {
		if m.s >= lo && m.s <= hi {
			ts = append(ts, plot.Tick{Value: m.s, Label: m.label})
		}
	}
	return ts
}

func curveXYs(ps []powerduration.Point) plotter.XYs {
	xy := make(plotter.XYs, 0, len(ps))
	for _, p := range ps {
		if p.Watts > 0 {
			xy = append(xy, plotter.XY{X: float64(p.DurationS), Y: p.Watts})
		}
	}
	return xy
}

// relabelled places ticks as gonum does and writes the labelled ones with label.
type relabelled func(v float64) string

func (label relabelled) Ticks(lo, hi float64) []plot.Tick {
	ts := plot.DefaultTicks{}.Ticks(lo, hi)
	for i := range ts {
		if ts[i].Label != "" {
			ts[i].Label = label(ts[i].Value)
		}
	}
	return ts
}

// wholeTicks labels a linear axis in whole numbers.
var wholeTicks = relabelled(func(v float64) string { return fmt.Sprintf("%.0f", v) })

// dateTicks labels a time axis (Unix seconds) with dates.
var dateTicks = relabelled(func(v float64) string { return time.Unix(int64(v), 0).UTC().Format("Jan 2") })

// newCurvePlot is an empty power-duration plot: log time, watts.
func newCurvePlot(title string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.X.Label.Text = "duration"
	p.Y.Label.Text = "mean power (W)"
	p.X.Scale = plot.LogScale{}
	p.X.Tick.Marker = timeTicks{}
	p.Y.Min = 0
	p.Y.Tick.Marker = wholeTicks
	p.Legend.Top = true
	p.Add(&plotter.Grid{Vertical: draw.LineStyle{Color: inkGrid, Width: vg.Points(0.5)},
		Horizontal: draw.LineStyle{Color: inkGrid, Width: vg.Points(0.5)}})
	return p
}

func addLine(p *plot.Plot, xy plotter.XYs, label string, ink color.Color, dashed bool, width float64) error {
	if len(xy) == 0 {
		return nil
	}
	l, err := plotter.NewLine(xy)
	if err != nil {
		return err
	}
	l.Color = ink
	l.Width = vg.Points(width)
	if dashed {
		l.Dashes = []vg.Length{vg.Points(5), vg.Points(3)}
	}
	p.Add(l)
	p.Legend.Add(label, l)
	return nil
}

func plotCurves(path string, out curveOut, title string) error {
	p := newCurvePlot(title)
	label := fmt.Sprintf("%s to %s", orOpen(out.Window.From), orOpen(out.Window.To))
	if err := addLine(p, curveXYs(out.Points), label, inkMain, false, 2); err != nil {
		return err
	}
	if out.Compare != nil {
		cl := fmt.Sprintf("%s to %s (compared)", orOpen(out.Compare.Window.From), orOpen(out.Compare.Window.To))
		if err := addLine(p, curveXYs(out.Compare.Points), cl, inkCompare, true, 1.5); err != nil {
			return err
		}
	}
	p.X.Min = 1
	p.X.Max = math.Max(float64(out.Points[len(out.Points)-1].DurationS), 60)
	return p.Save(22*vg.Centimeter, 14*vg.Centimeter, path)
}

func plotEstimate(path string, rep estimate.Report, title string) error {
	p := newCurvePlot(title)
	if err := addLine(p, curveXYs(rep.Curve.Points), "best mean power", inkMain, false, 2); err != nil {
		return err
	}
	maxS := math.Max(float64(rep.Curve.Points[len(rep.Curve.Points)-1].DurationS), 60)
	k := 0
	for _, f := range rep.Models {
		if f.Model == estimate.ModelCP2Work || f.Model == estimate.ModelCP2Inverse {
			continue
		}
		// draw each model over the durations it was fitted to (the
		// 2-parameter model runs to infinity at short durations)
		lo, hi := 1.0, maxS
		if f.Model == estimate.ModelCP2 && len(f.Efforts) > 0 {
			lo = float64(f.Efforts[0].DurationS) / 2
			hi = math.Min(maxS, 2*float64(f.Efforts[len(f.Efforts)-1].DurationS))
		}
		var xy plotter.XYs
		for _, pt := range modelCurve(f, maxS) {
			if pt[0] >= lo && pt[0] <= hi {
				xy = append(xy, plotter.XY{X: pt[0], Y: pt[1]})
			}
		}
		label := fmt.Sprintf("%s: CP %.0f W, W′ %.1f kJ (%s)", f.Model, f.CPW, f.WPrimeJ/1000, f.Confidence)
		if err := addLine(p, xy, label, inkModel[k%len(inkModel)], true, 1.2); err != nil {
			return err
		}
		k++
	}
	var used plotter.XYs
	for _, e := range rep.Efforts {
		if e.Status == estimate.EffortUsed {
			used = append(used, plotter.XY{X: float64(e.DurationS), Y: e.Watts})
		}
	}
	if len(used) > 0 {
		s, err := plotter.NewScatter(used)
		if err != nil {
			return err
		}
		s.GlyphStyle.Shape = draw.CircleGlyph{}
		s.GlyphStyle.Radius = vg.Points(3.5)
		s.GlyphStyle.Color = inkCompare
		p.Add(s)
		p.Legend.Add("maximal efforts found", s)
	}
	top := 0.0
	for _, pt := range rep.Curve.Points {
		top = math.Max(top, pt.Watts)
	}
	p.X.Min, p.X.Max = 1, maxS
	p.Y.Max = 1.15 * top
	return p.Save(22*vg.Centimeter, 14*vg.Centimeter, path)
}
