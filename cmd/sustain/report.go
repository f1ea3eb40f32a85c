package main

import (
	"bytes"
	_ "embed"
	"encoding/json"
	"fmt"
	"html/template"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/sustain-cycling/sustain/estimate"
	"github.com/sustain-cycling/sustain/powerduration"
	"github.com/sustain-cycling/sustain/view"
	"github.com/urfave/cli/v2"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
)

func reportCommand() *cli.Command {
	flags := append(ingestFlags(), windowFlags()...)
	flags = append(flags, estimateFlags()...)
	flags = append(flags,
		&cli.StringFlag{Name: "out", Required: true, Usage: "the page to write, FILE.html (never a file that exists unless --force, never inside a folder being read)"},
		&cli.StringFlag{Name: "name", Usage: "the athlete's name on the page (default: the folder's name)"},
		&cli.Float64Flag{Name: "mass", Usage: "rider mass in kg, to add W/kg"},
		forceFlag(),
	)
	return &cli.Command{
		Name:      "report",
		Usage:     "one self-contained page for an athlete (prints on one or two A4 pages): the threshold with its range and grade, what moved this season, the curve, the season, warnings, advice and the efforts behind the number",
		ArgsUsage: "PATH...",
		Flags:     flags,
		Action:    reportAction,
	}
}

// reportPage is what the page shows: the same results as estimate --json
// and season --json (embedded in the page as they are), and the plots.
type reportPage struct {
	Name, Made, Version string
	Estimate            view.Estimate
	Season              view.Season
	EstimateJSON        template.JS // estimate --json, as it is
	SeasonJSON          template.JS // season --json, as it is
	CurveSVG, SeasonSVG template.HTML
	Efforts             []estimate.Effort
	MassKG              float64
	Caution             string
}

//go:embed report.html
var reportHTML string

var reportTemplate = template.Must(template.New("report").Funcs(template.FuncMap{
	"w":     func(v *float64) string { return fmt.Sprintf("%.0f", deref(v)) },
	"w1":    func(v float64) string { return fmt.Sprintf("%.1f", v) },
	"kj":    func(v float64) string { return fmt.Sprintf("%.1f", v/1000) },
	"wkg":   func(v *float64) string { return fmt.Sprintf("%.2f", deref(v)) },
	"dur":   view.DurationLabel,
	"clock": view.Clock,
	"base":  func(p string) string { return filepath.Base(p) },
	"span":  view.Span,
	"deref": deref,
}).Parse(reportHTML))

func deref(v *float64) float64 {
	if v == nil {
		return 0
	}
	return *v
}

func reportAction(c *cli.Context) error {
	opts, err := estimateOptions(c)
	if err != nil {
		return err
	}
	out := c.String("out")
	if ext := strings.ToLower(filepath.Ext(out)); ext != ".html" && ext != ".htm" {
		return usageError{"--out takes a file name ending in .html"}
	}
	if c.IsSet("mass") && !(c.Float64("mass") > 0) {
		return usageError{"--mass must be above 0 kg"}
	}
	if err := checkNewFile(c, "out", out, c.Args().Slice()); err != nil {
		return err
	}
	res, curves, err := scan(c) // the season needs every ride
	if err != nil {
		return err
	}
	if err := nothingRead(res); err != nil {
		return err
	}
	win, err := window(c, powerduration.Newest(curves), "90d")
	if err != nil {
		return err
	}
	rep := estimate.Estimate(res.Rides, curves, win, opts)
	season := estimate.Season(res.Rides, curves, estimate.SeasonOptions{Options: opts})
	massKG, err := massOn(c, c.Args().Slice(), win.To)
	if err != nil {
		return err
	}
	page := reportPage{Name: c.String("name"), Made: time.Now().Format("2006-01-02"), Version: version(),
		Estimate: view.NewEstimate(rep, res.Skipped), Season: view.NewSeason(season, res.Skipped, len(res.Rides)),
		MassKG: massKG, Caution: estimate.Caution}
	page.Season.PerKG(massFunc(c, c.Args().Slice()))
	page.Estimate.Threshold.PerKG(page.MassKG)
	page.Estimate.AuditForm = "integral"
	if opts.Differential {
		page.Estimate.AuditForm = "differential"
	}
	if page.Name == "" {
		page.Name = filepath.Base(filepath.Clean(c.Args().First()))
	}
	for _, e := range rep.Efforts {
		if e.Status == estimate.EffortUsed {
			page.Efforts = append(page.Efforts, e)
		}
	}
	ej, err := json.Marshal(page.Estimate) // HTML-safe: <, > and & are escaped
	if err != nil {
		return err
	}
	sj, err := json.Marshal(page.Season)
	if err != nil {
		return err
	}
	page.EstimateJSON, page.SeasonJSON = template.JS(ej), template.JS(sj)
	if len(rep.Curve.Points) > 0 {
		p, err := estimatePlot(rep, "Best mean power and the fits")
		if err != nil {
			return err
		}
		var svg bytes.Buffer
		if err := writeTiles(&svg, true, []*plot.Plot{p}, 18*vg.Centimeter, 11*vg.Centimeter); err != nil {
			return err
		}
		page.CurveSVG = template.HTML(svg.String()) // drawn by the plot library from numbers and fixed labels
	}
	if len(season.Windows) > 0 {
		plots, err := seasonPlots(season, "Season: CP, W′ (and Pmax) by 42-day window", massFunc(c, c.Args().Slice()))
		if err != nil {
			return err
		}
		var svg bytes.Buffer
		if err := writeTiles(&svg, true, plots, 18*vg.Centimeter, 16*vg.Centimeter); err != nil {
			return err
		}
		page.SeasonSVG = template.HTML(svg.String())
	}
	var html bytes.Buffer
	if err := reportTemplate.Execute(&html, page); err != nil {
		return err
	}
	if err := os.WriteFile(out, html.Bytes(), 0o644); err != nil {
		return fmt.Errorf("report %s: %w", out, err)
	}
	if c.Bool("json") {
		return view.WriteJSON(c.App.Writer, map[string]any{"out": out, "estimate": page.Estimate, "season": page.Season})
	}
	fmt.Fprintf(c.App.Writer, "wrote the report of %s (%s, %s) to %s\n", page.Name, view.Count(rep.Rides, "ride"), view.Span(win), out)
	reportSkipped(c.App.ErrWriter, res.Skipped)
	return nil
}
