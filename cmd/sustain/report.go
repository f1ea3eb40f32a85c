package main

import (
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/sustain-cycling/sustain/estimate"
	"github.com/sustain-cycling/sustain/powerduration"
	"github.com/sustain-cycling/sustain/view"
	"github.com/urfave/cli/v2"
)

func reportCommand() *cli.Command {
	flags := append(ingestFlags(), windowFlags()...)
	flags = append(flags, estimateFlags()...)
	flags = append(flags,
		&cli.StringFlag{Name: "out", Required: true, Usage: "the page to write, FILE.html (never a file that exists unless --force, never inside a folder being read)"},
		&cli.StringFlag{Name: "name", Usage: "the athlete's name on the page (default: the folder's name)"},
		massFlag(),
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

func reportAction(c *cli.Context) error {
	opts, err := estimateOptions(c)
	if err != nil {
		return err
	}
	out := c.String("out")
	if ext := strings.ToLower(filepath.Ext(out)); ext != ".html" && ext != ".htm" {
		return usageError{"--out takes a file name ending in .html"}
	}
	if err := checkMass(c); err != nil {
		return err
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
	page := view.Page{Name: c.String("name"), Made: time.Now().Format("2006-01-02"), Version: version(),
		Estimate: view.NewEstimate(rep, res.Skipped), Season: view.NewSeason(season, res.Skipped, len(res.Rides)),
		MassKG: massKG, Caution: estimate.Caution}
	page.Season.PerKG(massFunc(c, c.Args().Slice()))
	page.Estimate.Threshold.PerKG(page.MassKG)
	if page.Name == "" {
		page.Name = filepath.Base(filepath.Clean(c.Args().First()))
	}
	var html bytes.Buffer
	if err := view.RenderPage(&html, page, rep, season, massFunc(c, c.Args().Slice())); err != nil {
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
