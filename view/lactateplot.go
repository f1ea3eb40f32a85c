package view

import (
	"fmt"
	"image/color"
	"math"

	"github.com/sustain-cycling/sustain/lactate"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// plotLactate draws each step test's lactate against power, the
// third-order polynomial of Dmax through its steps, every placed
// threshold on the curve, and the MLSS bracket as two vertical lines.
func PlotLactate(path string, as []lactate.Analysis, br *lactate.Bracket) error {
	p := plot.New()
	p.Title.Text = "Blood lactate against power"
	p.X.Label.Text = "power (W)"
	p.Y.Label.Text = "blood lactate (mmol/L)"
	p.X.Tick.Marker, p.Y.Tick.Marker = NiceTicks{}, NiceTicks{}
	p.Y.Min = 0
	p.Legend.Top, p.Legend.Left = true, true
	p.Add(&plotter.Grid{Vertical: draw.LineStyle{Color: inkGrid, Width: vg.Points(0.5)},
		Horizontal: draw.LineStyle{Color: inkGrid, Width: vg.Points(0.5)}})
	inks := append([]color.Color{inkMain, inkCompare}, inkModel...)
	shapes := []draw.GlyphDrawer{draw.TriangleGlyph{}, draw.SquareGlyph{}, draw.PyramidGlyph{}, draw.RingGlyph{}, draw.CrossGlyph{}, draw.PlusGlyph{}}
	maxLa := 0.0
	for k, a := range as {
		ink := inks[k%len(inks)]
		steps := a.Test.Steps
		var xy plotter.XYs
		for _, s := range steps {
			xy = append(xy, plotter.XY{X: s.PowerW, Y: s.LactateMmol})
			maxLa = math.Max(maxLa, s.LactateMmol)
		}
		sc, err := plotter.NewScatter(xy)
		if err != nil {
			return err
		}
		sc.GlyphStyle = draw.GlyphStyle{Color: ink, Radius: vg.Points(3.5), Shape: draw.CircleGlyph{}}
		p.Add(sc)
		p.Legend.Add(fmt.Sprintf("%s %s steps", a.Test.Athlete, a.Test.Label()), sc)
		if a.CurveOK {
			var cxy plotter.XYs
			lo, hi := steps[0].PowerW, steps[len(steps)-1].PowerW
			for x := lo; x <= hi; x += (hi - lo) / 100 {
				if y := a.Curve.At(x); y > 0 {
					cxy = append(cxy, plotter.XY{X: x, Y: y})
				}
			}
			if err := addLine(p, cxy, "third-order polynomial (Dmax)", ink, true, 1); err != nil {
				return err
			}
		}
		for i, th := range a.Thresholds {
			if !th.OK() {
				continue
			}
			y := th.LactateMmol
			if a.CurveOK && (th.Method == lactate.MethodDmax || th.Method == lactate.MethodModDmax) {
				y = a.Curve.At(th.PowerW)
			}
			m, err := plotter.NewScatter(plotter.XYs{{X: th.PowerW, Y: y}})
			if err != nil {
				return err
			}
			m.GlyphStyle = draw.GlyphStyle{Color: ink, Radius: vg.Points(5), Shape: shapes[i%len(shapes)]}
			p.Add(m)
			p.Legend.Add(fmt.Sprintf("%s %.0f W", th.Label, th.PowerW), m)
		}
	}
	if br != nil {
		for _, v := range []struct {
			w    float64
			name string
			ink  color.Color
			dash []vg.Length
		}{{br.PassW, "highest MLSS trial passed", inkModel[0], []vg.Length{vg.Points(6), vg.Points(3)}},
			{br.FailW, "lowest MLSS trial failed", inkModel[2], []vg.Length{vg.Points(2), vg.Points(2)}}} {
			if math.IsNaN(v.w) {
				continue
			}
			l, err := plotter.NewLine(plotter.XYs{{X: v.w, Y: 0}, {X: v.w, Y: math.Max(maxLa, 4)}})
			if err != nil {
				return err
			}
			l.Color, l.Dashes, l.Width = v.ink, v.dash, vg.Points(1.2)
			p.Add(l)
			p.Legend.Add(fmt.Sprintf("%s (%.0f W)", v.name, v.w), l)
		}
	}
	return p.Save(22*vg.Centimeter, 15*vg.Centimeter, path)
}
