package main

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/powerduration"
	"github.com/sustain-cycling/sustain/view"
	"github.com/urfave/cli/v2"
)

// windowFlags select rides by date.
func windowFlags() []cli.Flag {
	return []cli.Flag{
		&cli.StringFlag{Name: "from", Usage: "first ride date to use, YYYY-MM-DD"},
		&cli.StringFlag{Name: "to", Usage: "last ride date to use, YYYY-MM-DD"},
		&cli.StringFlag{Name: "last", Usage: "use the span ending at the newest ride, e.g. 90d or 6w"},
	}
}

// window reads --from/--to/--last; newest is the newest ride's date.
func window(c *cli.Context, newest, defaultLast string) (powerduration.Window, error) {
	w := powerduration.Window{From: c.String("from"), To: c.String("to")}
	for _, d := range []string{w.From, w.To} {
		if d != "" {
			if _, err := powerduration.ParseDate(d); err != nil {
				return w, usageError{err.Error()}
			}
		}
	}
	last := c.String("last")
	if last != "" && (w.From != "" || w.To != "") {
		return w, usageError{"--last goes without --from and --to"}
	}
	if last == "" && w.From == "" && w.To == "" {
		last = defaultLast
	}
	if last != "" {
		days, err := powerduration.ParseDays(last)
		if err != nil {
			return w, usageError{err.Error()}
		}
		w = powerduration.LastDays(newest, days)
	}
	if w.From != "" && w.To != "" && w.From > w.To {
		return w, usageError{fmt.Sprintf("--from %s is after --to %s", w.From, w.To)}
	}
	return w, nil
}

func curveCommand() *cli.Command {
	flags := append(ingestFlags(), windowFlags()...)
	flags = append(flags,
		&cli.BoolFlag{Name: "csv", Usage: "print one CSV row per point of the curve"},
		&cli.BoolFlag{Name: "per-ride", Usage: "print each ride's curve as one line of JSON (the map step of a batch job)"},
		&cli.BoolFlag{Name: "reduce", Usage: "read the paths as files of --per-ride lines instead of ride files (the reduce step)"},
		massFlag(),
		&cli.StringFlag{Name: "plot", Usage: "write the curve to FILE.png or FILE.svg"},
		forceFlag(),
		&cli.StringFlag{Name: "compare-from", Usage: "first date of a second window to compare with (before/after a block)"},
		&cli.StringFlag{Name: "compare-to", Usage: "last date of the compared window"},
	)
	return &cli.Command{
		Name:      "curve",
		Usage:     "best mean power for every duration (mean-maximal power), and where each was ridden",
		ArgsUsage: "PATH...",
		Flags:     flags,
		Action:    curveAction,
	}
}

func curveAction(c *cli.Context) error {
	if n := countTrue(c.Bool("json"), c.Bool("csv"), c.Bool("per-ride")); n > 1 {
		return usageError{"choose one of --json, --csv and --per-ride"}
	}
	if err := checkMassAndPlot(c); err != nil {
		return err
	}
	var res ingest.Result
	var curves []powerduration.RideCurve
	var err error
	if c.Bool("reduce") {
		res, curves, err = readCurveLines(c)
	} else {
		// a window alone (not each ride's curve, no compared window): the
		// files outside it are not decoded
		var only func(string) bool
		if !c.Bool("per-ride") && c.String("compare-from") == "" && c.String("compare-to") == "" {
			if only, err = windowFilter(c, ""); err != nil {
				return err
			}
		}
		res, curves, err = scanIn(c, only)
	}
	if err != nil {
		return err
	}
	w := c.App.Writer
	if c.Bool("per-ride") {
		enc := json.NewEncoder(w)
		for _, cv := range curves {
			if err := enc.Encode(cv.Compacted()); err != nil {
				return err
			}
		}
		reportSkipped(c.App.ErrWriter, res.Skipped)
		return nothingCurves(curves, res.Skipped)
	}
	win, err := window(c, powerduration.Newest(curves), "")
	if err != nil {
		return err
	}
	inWin := powerduration.InWindow(curves, win)
	end := win.To
	if end == "" {
		end = powerduration.Newest(inWin)
	}
	massKG, err := massOn(c, c.Args().Slice(), end) // the mass at the window's end
	if err != nil {
		return err
	}
	out := view.Curve{Window: win, Rides: len(inWin), Skipped: view.NonNil(res.Skipped), MassKG: massKG,
		Points: powerduration.BestOf(inWin).Points}
	if cf, ct := c.String("compare-from"), c.String("compare-to"); cf != "" || ct != "" {
		cw := powerduration.Window{From: cf, To: ct}
		for _, d := range []string{cf, ct} {
			if _, err := powerduration.ParseDate(d); d != "" && err != nil {
				return usageError{err.Error()}
			}
		}
		cc := powerduration.InWindow(curves, cw)
		out.Compare = &view.CurveCompared{Window: cw, Rides: len(cc), Points: powerduration.BestOf(cc).Points}
	}
	switch {
	case c.Bool("json"):
		err = view.WriteJSON(w, out)
	case c.Bool("csv"):
		err = view.WriteCurveCSV(w, out)
	default:
		view.RenderCurve(w, out, c.Args().Slice())
		reportSkipped(c.App.ErrWriter, out.Skipped)
	}
	if err != nil {
		return err
	}
	if p := c.String("plot"); p != "" && len(out.Points) > 0 {
		if err := view.PlotCurve(p, out, plotTitle("Best mean power", c.Args().Slice(), out.Window, out.Rides)); err != nil {
			return fmt.Errorf("plot %s: %w", p, err)
		}
		if !c.Bool("json") && !c.Bool("csv") {
			fmt.Fprintf(c.App.ErrWriter, "plot written to %s\n", p)
		}
	}
	if len(curves) > 0 && out.Rides == 0 {
		return cli.Exit(fmt.Sprintf("no ride between %s and %s", view.OrOpen(win.From), view.OrOpen(win.To)), exitNothing)
	}
	return nothingCurves(curves, res.Skipped)
}

// nothingCurves is the exit for a run that found no ride's curve.
func nothingCurves(curves []powerduration.RideCurve, skipped []ingest.Skipped) error {
	if len(curves) > 0 {
		return nil
	}
	return cli.Exit(fmt.Sprintf("no ride could be read (%d files skipped)", len(skipped)), exitNothing)
}

// readCurveLines reads --per-ride lines back; a bad line skips its file.
func readCurveLines(c *cli.Context) (ingest.Result, []powerduration.RideCurve, error) {
	if c.NArg() == 0 {
		return ingest.Result{}, nil, usageError{"name at least one file of --per-ride lines"}
	}
	var res ingest.Result
	var curves []powerduration.RideCurve
	for _, path := range c.Args().Slice() {
		f, err := os.Open(path)
		if err != nil {
			res.Skipped = append(res.Skipped, ingest.Skipped{File: path, Reason: err.Error()})
			continue
		}
		dec := json.NewDecoder(bufio.NewReader(f))
		var got []powerduration.RideCurve
		for line := 1; ; line++ {
			var k powerduration.Compact
			if err = dec.Decode(&k); err != nil {
				break
			}
			rc, e := k.Expand()
			if e != nil {
				err = fmt.Errorf("curve %d: %v", line, e)
				break
			}
			got = append(got, rc)
		}
		f.Close()
		if err != io.EOF {
			res.Skipped = append(res.Skipped, ingest.Skipped{File: path, Reason: "not --per-ride lines: " + err.Error()})
			continue
		}
		curves = append(curves, got...)
	}
	return res, curves, nil
}

func countTrue(bs ...bool) int {
	n := 0
	for _, b := range bs {
		if b {
			n++
		}
	}
	return n
}

// checkMassAndPlot checks --mass (above 0 kg when given) and --plot (a
// new .png or .svg file, outside the folders read).
func checkMassAndPlot(c *cli.Context) error {
	if err := checkMass(c); err != nil {
		return err
	}
	if p := c.String("plot"); p != "" && !isPlotName(p) {
		return usageError{"--plot takes a file name ending in .png or .svg"}
	}
	return checkNewFile(c, "plot", c.String("plot"), c.Args().Slice())
}

func isPlotName(p string) bool {
	ext := strings.ToLower(filepath.Ext(p))
	return ext == ".png" || ext == ".svg"
}

// plotTitle names what is plotted, the folder and the window.
func plotTitle(what string, paths []string, win powerduration.Window, rides int) string {
	name := "rides"
	if len(paths) == 1 {
		name = filepath.Base(filepath.Clean(paths[0]))
	} else if len(paths) > 1 {
		name = fmt.Sprintf("%s and %d more", filepath.Base(filepath.Clean(paths[0])), len(paths)-1)
	}
	return fmt.Sprintf("%s: %s, %s (%s)", what, name, strings.TrimPrefix(view.Span(win), "from "), view.Count(rides, "ride"))
}
