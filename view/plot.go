package view

import (
	"fmt"
	"image/color"
	"math"
	"strconv"
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

// NiceTicks marks a linear axis at a round step (1, 2, 2.5 or 5 times a
// power of ten) giving 5 to 10 labelled ticks, each label written with the
// decimals the step needs, so it reads exactly the value it stands at.
type NiceTicks struct{}

func (NiceTicks) Ticks(lo, hi float64) []plot.Tick {
	if !(hi > lo) || math.IsInf(hi-lo, 0) {
		return []plot.Tick{{Value: lo, Label: strconv.FormatFloat(lo, 'f', -1, 64)}}
	}
	step, decimals := niceStep((hi - lo) / 8)
	var ts []plot.Tick
	for i := math.Ceil(lo / step); i*step <= hi+step*1e-9; i++ {
		v, _ := strconv.ParseFloat(strconv.FormatFloat(i*step, 'f', decimals, 64), 64)
		ts = append(ts, plot.Tick{Value: v, Label: strconv.FormatFloat(v, 'f', decimals, 64)})
		// a minor tick halfway, unlabelled
		if m := v + step/2; m <= hi {
			ts = append(ts, plot.Tick{Value: m})
		}
	}
	return ts
}

// niceStep is the round step nearest above raw (1, 2, 2.5 or 5 times a
// power of ten) and the decimals its multiples need.
func niceStep(raw float64) (float64, int) {
	exp := math.Floor(math.Log10(raw))
	base := math.Pow(10, exp)
	for _, m := range []float64{1, 2, 2.5, 5, 10} {
		if m*base >= raw {
			step := m * base
			decimals := int(max(0, -exp))
			if m == 2.5 { // one more decimal, where 2.5 × 10^exp is not whole
				decimals = int(max(0, 1-exp))
			}
			if m == 10 {
				decimals = int(max(0, -exp-1))
			}
			return step, decimals
		}
	}
	return 10 * base, int(max(0, -exp-1))
}

// DateTicks marks a time axis (Unix seconds) at whole days, a round number
// of days or weeks apart, labelled with the date; with the year when the
// axis spans more than one.
type DateTicks struct{}

func (DateTicks) Ticks(lo, hi float64) []plot.Tick {
	const day = 86400.0
	days := (hi - lo) / day
	step := 1.0
	for _, s := range []float64{1, 2, 7, 14, 28, 56, 91, 182, 364} {
		step = s
		if days/s <= 8 {
			break
		}
	}
	first, last := time.Unix(int64(lo), 0).UTC(), time.Unix(int64(hi), 0).UTC()
	layout := "Jan 2"
	if first.Year() != last.Year() {
		layout = "Jan 2 2006"
	}
	start := math.Ceil(lo/day) * day
	if step >= 7 { // weeks start on a Monday
		for time.Unix(int64(start), 0).UTC().Weekday() != time.Monday {
			start += day
		}
	}
	var ts []plot.Tick
	for v := start; v <= hi; v += step * day {
		ts = append(ts, plot.Tick{Value: v, Label: time.Unix(int64(v), 0).UTC().Format(layout)})
	}
	return ts
}

// newCurvePlot is an empty power-duration plot: log time, watts.
func newCurvePlot(title string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.X.Label.Text = "duration"
	p.Y.Label.Text = "mean power (W)"
	p.X.Scale = plot.LogScale{}
	p.X.Tick.Marker = timeTicks{}
	p.Y.Min = 0
	p.Y.Tick.Marker = NiceTicks{}
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

func PlotCurve(path string, out Curve, title string) error {
	p := newCurvePlot(title)
	label := fmt.Sprintf("%s to %s", OrOpen(out.Window.From), OrOpen(out.Window.To))
	if err := addLine(p, curveXYs(out.Points), label, inkMain, false, 2); err != nil {
		return err
	}
	if out.Compare != nil {
		cl := fmt.Sprintf("%s to %s (compared)", OrOpen(out.Compare.Window.From), OrOpen(out.Compare.Window.To))
		if err := addLine(p, curveXYs(out.Compare.Points), cl, inkCompare, true, 1.5); err != nil {
			return err
		}
	}
	p.X.Min = 1
	p.X.Max = math.Max(float64(out.Points[len(out.Points)-1].DurationS), 60)
	return p.Save(22*vg.Centimeter, 14*vg.Centimeter, path)
}

func PlotEstimate(path string, rep estimate.Report, title string) error {
	p, err := EstimatePlot(rep, title)
	if err != nil {
		return err
	}
	return p.Save(22*vg.Centimeter, 14*vg.Centimeter, path)
}

// estimatePlot is the curve, each fit over the durations it was fitted on,
// the headline threshold and the efforts found.
func EstimatePlot(rep estimate.Report, title string) (*plot.Plot, error) {
	p := newCurvePlot(title)
	if err := addLine(p, curveXYs(rep.Curve.Points), "best mean power", inkMain, false, 2); err != nil {
		return nil, err
	}
	maxS := math.Max(float64(rep.Curve.Points[len(rep.Curve.Points)-1].DurationS), 60)
	k := 0
	for _, f := range rep.Models {
		if f.Model == estimate.ModelCP2Work || f.Model == estimate.ModelCP2Inverse {
			continue
		}
		// draw each model over the durations it was fitted on, no further:
		// a fit drawn flat to 2 h would read as power sustainable for 2 h
		lo, hi := 1.0, maxS
		if len(f.Efforts) > 0 {
			lo, hi = maxS, 1.0
			for _, e := range f.Efforts {
				lo, hi = math.Min(lo, float64(e.DurationS)), math.Max(hi, float64(e.DurationS))
			}
		}
		var xy plotter.XYs
		for _, pt := range modelCurve(f, maxS) {
			if pt[0] >= lo && pt[0] <= hi {
				xy = append(xy, plotter.XY{X: pt[0], Y: pt[1]})
			}
		}
		label := fmt.Sprintf("%s: CP %.0f W, W′ %.1f kJ (%s)", f.Model, f.CPW, f.WPrimeJ/1000, f.Confidence)
		if err := addLine(p, xy, label, inkModel[k%len(inkModel)], true, 1.2); err != nil {
			return nil, err
		}
		k++
	}
	// the headline threshold, across the plot
	if th := rep.Threshold; th.Estimated() {
		line := plotter.XYs{{X: 1, Y: th.Watts}, {X: maxS, Y: th.Watts}}
		label := fmt.Sprintf("threshold %.0f W (%s, %s; range %.0f–%.0f W)", th.Watts, th.Model, th.Confidence, th.LowW, th.HighW)
		if err := addLine(p, line, label, inkMain, true, 0.8); err != nil {
			return nil, err
		}
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
			return nil, err
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
	return p, nil
}

// modelCurve samples a fit over the plotted durations.
func modelCurve(f estimate.Fit, maxS float64) [][2]float64 {
	var pts [][2]float64
	for t := 1.0; t <= maxS; t *= 1.08 {
		if p := f.Power(t); !math.IsNaN(p) && p > 0 {
			pts = append(pts, [2]float64{t, p})
		}
	}
	return pts
}
