package view

import (
	"bytes"
	_ "embed"
	"encoding/json"
	"fmt"
	"html/template"
	"io"
	"path/filepath"

	"github.com/sustain-cycling/sustain/estimate"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
)

// Page is the athlete's page: the estimate's and the season's models (the
// same that --json prints, embedded in the page as they are) and their
// plots, one self-contained HTML page that prints on A4.
type Page struct {
	Name, Made, Version string
	Estimate            Estimate
	Season              Season
	Efforts             []estimate.Effort // the efforts behind the number
	MassKG              float64
	Caution             string

	// filled by RenderPage
	EstimateJSON        template.JS // Estimate as JSON
	SeasonJSON          template.JS // Season as JSON
	CurveSVG, SeasonSVG template.HTML
}

//go:embed page.html
var pageHTML string

var pageTemplate = template.Must(template.New("page").Funcs(template.FuncMap{
	"w":     func(v *float64) string { return fmt.Sprintf("%.0f", deref(v)) },
	"w1":    func(v float64) string { return fmt.Sprintf("%.1f", v) },
	"kj":    func(v float64) string { return fmt.Sprintf("%.1f", v/1000) },
	"wkg":   func(v *float64) string { return fmt.Sprintf("%.2f", deref(v)) },
	"dur":   DurationLabel,
	"clock": Clock,
	"base":  func(p string) string { return filepath.Base(p) },
	"span":  Span,
	"deref": deref,
}).Parse(pageHTML))

func deref(v *float64) float64 {
	if v == nil {
		return 0
	}
	return *v
}

// RenderPage writes the page: rep and season are the reports its models
// were made from (for the plots), mass the mass by date (nil: none).
func RenderPage(w io.Writer, p Page, rep estimate.Report, season estimate.SeasonReport, mass func(date string) float64) error {
	for _, e := range rep.Efforts {
		if e.Status == estimate.EffortUsed {
			p.Efforts = append(p.Efforts, e)
		}
	}
	ej, err := json.Marshal(p.Estimate) // HTML-safe: <, > and & are escaped
	if err != nil {
		return err
	}
	sj, err := json.Marshal(p.Season)
	if err != nil {
		return err
	}
	p.EstimateJSON, p.SeasonJSON = template.JS(ej), template.JS(sj)
	if len(rep.Curve.Points) > 0 {
		plt, err := EstimatePlot(rep, "Best mean power and the fits")
		if err != nil {
			return err
		}
		var svg bytes.Buffer
		if err := WriteTiles(&svg, true, []*plot.Plot{plt}, 18*vg.Centimeter, 11*vg.Centimeter); err != nil {
			return err
		}
		p.CurveSVG = template.HTML(svg.String()) // drawn by the plot library from numbers and fixed labels
	}
	if len(season.Windows) > 0 {
		plots, err := SeasonPlots(season, "Season: CP, W′ (and Pmax) by 42-day window", mass)
		if err != nil {
			return err
		}
		var svg bytes.Buffer
		if err := WriteTiles(&svg, true, plots, 18*vg.Centimeter, 16*vg.Centimeter); err != nil {
			return err
		}
		p.SeasonSVG = template.HTML(svg.String())
	}
	return pageTemplate.Execute(w, p)
}
