package main

import (
	"fmt"
	"math"
	"path/filepath"
	"strings"

	"github.com/sustain-cycling/sustain/estimate"
	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/internal/export"
	"github.com/sustain-cycling/sustain/powerduration"
	"github.com/sustain-cycling/sustain/view"
	"github.com/urfave/cli/v2"
)

func exportCommand() *cli.Command {
	flags := append(ingestFlags(), estimateFlags()...)
	flags = append(flags,
		&cli.StringFlag{Name: "format", Value: "sqlite", Usage: "sqlite (one database file), csv or jsonl (a folder of one file per table)"},
		&cli.StringFlag{Name: "out", Usage: "the database file (sqlite) or folder (csv, jsonl) to write; never a file that exists unless --force, never inside a folder being read", Required: true},
		forceFlag(),
		squadFlag(),
		&cli.StringFlag{Name: "window", Value: "42d", Usage: "length of the rolling windows of the estimates table"},
		&cli.StringFlag{Name: "step", Value: "7d", Usage: "distance between the ends of those windows"},
	)
	return &cli.Command{
		Name:      "export",
		Usage:     "write rides, every curve point and rolling estimates as tables for SQL or a dataframe (schema in the README)",
		ArgsUsage: "PATH...",
		Flags:     flags,
		Action:    exportAction,
	}
}

// The export tables. Their columns are documented in the README; add
// columns at the end, never rename.
var (
	ridesColumns = export.Cols(`athlete TEXT, file TEXT, session INTEGER, date TEXT, start TEXT, sport TEXT, seconds INTEGER,
		power_coverage REAL, recording_interval_s REAL, gaps INTEGER, gap_s INTEGER, dropouts INTEGER, dropout_s INTEGER,
		spikes_removed INTEGER, stuck_runs INTEGER, stuck_s INTEGER, truncated INTEGER, salvaged INTEGER`)
	pointColumns    = export.Cols(`athlete TEXT, file TEXT, session INTEGER, date TEXT, duration_s INTEGER, watts REAL, offset_s INTEGER`)
	estimateColumns = export.Cols(`athlete TEXT, window_from TEXT, window_to TEXT, rides INTEGER, model TEXT, cp_w REAL, cp_se_w REAL,
		w_prime_j REAL, w_prime_se_j REAL, pmax_w REAL, pmax_se_w REAL, rmse_w REAL, confidence TEXT, headline INTEGER, reasons TEXT,
		mass_kg REAL, cp_w_per_kg REAL`)
)

func exportAction(c *cli.Context) error {
	format := c.String("format")
	if !strings.Contains(strings.Join(export.Formats, ","), format) || format == "" {
		return usageError{fmt.Sprintf("--format takes %s, not %q", strings.Join(export.Formats, ", "), format)}
	}
	eo, err := estimateOptions(c)
	if err != nil {
		return err
	}
	windowDays, err := powerduration.ParseDays(c.String("window"))
	if err != nil {
		return usageError{"--window: " + err.Error()}
	}
	stepDays, err := powerduration.ParseDays(c.String("step"))
	if err != nil {
		return usageError{"--step: " + err.Error()}
	}
	if c.NArg() == 0 {
		return usageError{"name at least one ride file or folder"}
	}
	out := c.String("out")
	if format == "sqlite" {
		if err := checkNewFile(c, "out", out, c.Args().Slice()); err != nil {
			return err
		}
	} else {
		if in := inside(filepath.Join(out, "x"), c.Args().Slice()); in != "" {
			return usageError{fmt.Sprintf("--out %s is inside %s, which is being read: write it elsewhere", out, in)}
		}
		for _, t := range []string{"rides", "curve_points", "estimates"} {
			if err := checkNewFile(c, "out", filepath.Join(out, t+"."+format), nil); err != nil {
				return err
			}
		}
	}
	groups := map[string][]string{"": c.Args().Slice()}
	order := []string{""}
	members, err := squadOf(c)
	if err != nil {
		return err
	}
	if members != nil {
		groups, order = map[string][]string{}, nil
		for _, m := range members {
			groups[m.Name], order = []string{m.Folder}, append(order, m.Name)
		}
	}
	rides := export.Table{Name: "rides", Columns: ridesColumns}
	points := export.Table{Name: "curve_points", Columns: pointColumns}
	ests := export.Table{Name: "estimates", Columns: estimateColumns}
	var skipped []ingest.Skipped
	n := 0
	for _, athlete := range order {
		res, curves, err := scanPaths(c, groups[athlete])
		if err != nil {
			return err
		}
		skipped = append(skipped, res.Skipped...)
		n += len(res.Rides)
		for i := range res.Rides {
			r := &res.Rides[i]
			q := r.Quality
			stuck := 0
			for _, s := range q.StuckRuns {
				stuck += s.Seconds
			}
			rides.Rows = append(rides.Rows, []any{athlete, r.File, r.Session, r.Date(), r.Start.Format("2006-01-02T15:04:05Z07:00"),
				r.Sport, q.Seconds, q.PowerCoverage, q.RecordingIntervalS, len(q.Gaps), q.GapSeconds, len(q.Dropouts),
				q.DropoutSeconds, q.SpikesRemoved, len(q.StuckRuns), stuck, q.Truncated, q.Salvaged})
			rc := curves[i]
			for k, d := range rc.DurationsS() {
				points.Rows = append(points.Rows, []any{athlete, rc.File, rc.Session, rc.Date, d, rc.WattsAt(k), rc.OffsetAt(k)})
			}
		}
		for _, w := range estimate.SeasonWindows(res.Rides, windowDays, stepDays) {
			rep := estimate.Estimate(res.Rides, curves, w, eo)
			kg, err := massOn(c, groups[athlete], w.To) // the mass in force at the window's end
			if err != nil {
				return err
			}
			for _, f := range rep.Models {
				headline := rep.Threshold.Estimated() && rep.Threshold.Model == f.Model
				perKG := math.NaN()
				if kg > 0 {
					perKG = f.CPW / kg
				}
				ests.Rows = append(ests.Rows, []any{athlete, w.From, w.To, rep.Rides, f.Model, f.CPW, f.CPSEW, f.WPrimeJ,
					f.WPrimeSEJ, orNaN(f.PmaxW), orNaN(f.PmaxSEW), f.RMSEW, f.Confidence, headline, strings.Join(f.Reasons, "; "),
					orNaN(kg), perKG})
			}
		}
	}
	if err := export.Write(format, out, []export.Table{rides, points, ests}, c.Bool("force")); err != nil {
		return fmt.Errorf("export to %s: %w", c.String("out"), err)
	}
	w := c.App.Writer
	if c.Bool("json") {
		if err := view.WriteJSON(w, map[string]any{"format": format, "out": c.String("out"), "rides": len(rides.Rows),
			"curve_points": len(points.Rows), "estimates": len(ests.Rows), "skipped": view.NonNil(skipped)}); err != nil {
			return err
		}
	} else {
		fmt.Fprintf(w, "wrote %d rides, %d curve points and %d estimates to %s (%s)\n", len(rides.Rows), len(points.Rows), len(ests.Rows), c.String("out"), format)
		reportSkipped(c.App.ErrWriter, skipped)
	}
	if n == 0 {
		return cli.Exit("no ride could be read", exitNothing)
	}
	return nil
}

// orNaN writes a parameter a model does not have (0) as NULL.
func orNaN(v float64) float64 {
	if v == 0 {
		return math.NaN()
	}
	return v
}
