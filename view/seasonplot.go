package view

import (
	"fmt"
	"image/color"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/sustain-cycling/sustain/estimate"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// gradeMark: a filled disc for high, a triangle for medium, a ring for low.
func gradeMark(conf string, ink color.Color) draw.GlyphStyle {
	g := draw.GlyphStyle{Color: ink, Radius: vg.Points(3.5), Shape: draw.RingGlyph{}}
	switch conf {
	case estimate.High:
		g.Shape = draw.CircleGlyph{}
	case estimate.Medium:
		g.Shape = draw.TriangleGlyph{}
	}
	return g
}

func PlotSeason(path string, rep estimate.SeasonReport, title string, mass func(date string) float64) error {
	plots, err := SeasonPlots(rep, title, mass)
	if err != nil {
		return err
	}
	return saveTiles(path, plots, 22*vg.Centimeter, 22*vg.Centimeter)
}

// seasonPlots are the season's panels: CP, W′ and (for a model with it)
// Pmax against the windows' ends, with 95 % bars and grade marks; with a
// mass by date (mass, nil for none), CP per kilogram too.
func SeasonPlots(rep estimate.SeasonReport, title string, mass func(date string) float64) ([]*plot.Plot, error) {
	type series struct {
		name  string
		ink   color.Color
		value func(estimate.SeasonWindow) (float64, float64)
	}
	all := []series{
		{"CP (W)", inkMain, func(w estimate.SeasonWindow) (float64, float64) { return w.CPW, w.CPSEW }},
		{"W′ (kJ)", inkCompare, func(w estimate.SeasonWindow) (float64, float64) { return w.WPrimeJ / 1000, w.WPrimeSEJ / 1000 }},
	}
	// Pmax only where the components model has it (cp2 has none)
	if len(rep.Windows) > 0 && rep.Windows[0].Model != estimate.ModelCP2 {
		all = append(all, series{"Pmax (W)", inkModel[1], func(w estimate.SeasonWindow) (float64, float64) { return w.PmaxW, w.PmaxSEW }})
	}
	if mass != nil && len(rep.Windows) > 0 && mass(rep.Windows[len(rep.Windows)-1].To) > 0 {
		all = append(all, series{"CP (W/kg)", inkModel[0], func(w estimate.SeasonWindow) (float64, float64) {
			kg := mass(w.To) // the mass in force at the window's end
			if kg <= 0 {
				return 0, 0
			}
			return w.CPW / kg, w.CPSEW / kg
		}})
	}
	var plots []*plot.Plot
	for k, s := range all {
		p := plot.New()
		if k == 0 {
			p.Title.Text = title
		}
		p.Y.Label.Text = s.name
		p.X.Tick.Marker = DateTicks{}
		p.Y.Tick.Marker = NiceTicks{}
		p.Add(&plotter.Grid{Vertical: draw.LineStyle{Color: inkGrid, Width: vg.Points(0.5)},
			Horizontal: draw.LineStyle{Color: inkGrid, Width: vg.Points(0.5)}})
		var lines []plotter.XYs // broken where a window was not estimated
		var line plotter.XYs
		type mark struct {
			xy  plotter.XYs
			err plotter.YErrors
		}
		byGrade := map[string]*mark{}
		for _, w := range rep.Windows {
			v, se := s.value(w)
			if !w.Estimated || v <= 0 {
				if len(line) > 0 {
					lines, line = append(lines, line), nil
				}
				continue
			}
			end, _ := time.Parse("2006-01-02", w.To)
			x := float64(end.Unix())
			line = append(line, plotter.XY{X: x, Y: v})
			m := byGrade[w.Confidence]
			if m == nil {
				m = &mark{}
				byGrade[w.Confidence] = m
			}
			m.xy = append(m.xy, plotter.XY{X: x, Y: v})
			h := w.HalfW(se) // the season's one "±": the 95 % half-width
			m.err = append(m.err, struct{ Low, High float64 }{h, h})
		}
		if len(line) > 0 {
			lines = append(lines, line)
		}
		if len(lines) == 0 {
			p.Title.Text += fmt.Sprintf("   (%s: no window with enough data)", strings.TrimSuffix(s.name, " (W)"))
		}
		for _, seg := range lines {
			l, err := plotter.NewLine(seg)
			if err != nil {
				return nil, err
			}
			l.Color, l.Width = s.ink, vg.Points(1.2)
			p.Add(l)
		}
		for _, g := range []string{estimate.High, estimate.Medium, estimate.Low} {
			m := byGrade[g]
			if m == nil {
				continue
			}
			sc, err := plotter.NewScatter(m.xy)
			if err != nil {
				return nil, err
			}
			sc.GlyphStyle = gradeMark(g, s.ink)
			eb := &plotter.YErrorBars{XYs: m.xy, YErrors: m.err, LineStyle: draw.LineStyle{Color: s.ink, Width: vg.Points(0.8)}, CapWidth: vg.Points(4)}
			p.Add(eb, sc)
			if k == 0 {
				p.Legend.Add(g+" confidence (bars: 95 % range)", sc)
			}
		}
		p.Legend.Top, p.Legend.Left = false, false // the lower right: clear of a rising line
		if k == len(all)-1 {
			p.X.Label.Text = "end of window"
		}
		plots = append(plots, p)
	}
	return plots, nil
}

// saveTiles draws plots one above the other into a PNG or SVG file.
func saveTiles(path string, plots []*plot.Plot, width, height vg.Length) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	if err := WriteTiles(f, strings.ToLower(filepath.Ext(path)) == ".svg", plots, width, height); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// writeTiles draws plots one above the other, as SVG or PNG, to w.
func WriteTiles(w io.Writer, svg bool, plots []*plot.Plot, width, height vg.Length) error {
	var canvas vg.CanvasWriterTo
	if svg { // the fonts embedded: the text keeps its size in any browser
		canvas = vgsvg.NewWith(vgsvg.UseWH(width, height), vgsvg.EmbedFonts(true))
	} else {
		canvas = vgimg.PngCanvas{Canvas: vgimg.New(width, height)}
	}
	grid := make([][]*plot.Plot, len(plots))
	for i, p := range plots {
		grid[i] = []*plot.Plot{p}
	}
	tiles := draw.Tiles{Rows: len(plots), Cols: 1, PadTop: vg.Points(4), PadBottom: vg.Points(4), PadX: vg.Points(4), PadY: vg.Points(8)}
	canvases := plot.Align(grid, tiles, draw.New(canvas))
	for i := range grid {
		grid[i][0].Draw(canvases[i][0])
	}
	_, err := canvas.WriteTo(w)
	return err
}

// plotAgreement draws a Bland–Altman plot for each pair with the first
// method: each subject's difference against its mean, the bias and the
// 95 % limits of agreement.
func PlotAgreement(path string, pairs []estimate.PairAgreement, first string) error {
	var plots []*plot.Plot
	for _, pa := range pairs {
		if pa.A != first {
			continue
		}
		p := plot.New()
		p.Title.Text = fmt.Sprintf("%s − %s: bias %+.1f W, limits %+.1f to %+.1f W (n = %d)", pa.A, pa.B, pa.Bias, pa.LowerL, pa.UpperL, pa.N)
		p.X.Label.Text = fmt.Sprintf("mean of %s and %s (W)", pa.A, pa.B)
		p.Y.Label.Text = "difference (W)"
		p.X.Tick.Marker, p.Y.Tick.Marker = NiceTicks{}, NiceTicks{}
		p.Add(&plotter.Grid{Vertical: draw.LineStyle{Color: inkGrid, Width: vg.Points(0.5)},
			Horizontal: draw.LineStyle{Color: inkGrid, Width: vg.Points(0.5)}})
		if pa.N < 2 {
			continue // said in the table; an empty panel shows nothing
		}
		var xy plotter.XYs
		lo, hi := math.Inf(1), math.Inf(-1)
		for i := range pa.Diffs {
			xy = append(xy, plotter.XY{X: pa.Means[i], Y: pa.Diffs[i]})
			lo, hi = math.Min(lo, pa.Means[i]), math.Max(hi, pa.Means[i])
		}
		pad := math.Max(5, 0.05*(hi-lo))
		for _, h := range []struct {
			y      float64
			dashed bool
		}{{pa.Bias, false}, {pa.LowerL, true}, {pa.UpperL, true}} {
			l, err := plotter.NewLine(plotter.XYs{{X: lo - pad, Y: h.y}, {X: hi + pad, Y: h.y}})
			if err != nil {
				return err
			}
			l.Color = inkCompare
			if h.dashed {
				l.Dashes = []vg.Length{vg.Points(5), vg.Points(3)}
			}
			p.Add(l)
		}
		sc, err := plotter.NewScatter(xy)
		if err != nil {
			return err
		}
		sc.GlyphStyle = draw.GlyphStyle{Color: inkMain, Radius: vg.Points(3.5), Shape: draw.CircleGlyph{}}
		p.Add(sc)
		plots = append(plots, p)
	}
	if len(plots) == 0 {
		return fmt.Errorf("no pair with %s has 2 or more subjects to plot", first)
	}
	return saveTiles(path, plots, 20*vg.Centimeter, vg.Length(len(plots))*7*vg.Centimeter)
}
