package main

import (
	"fmt"
	"strings"

	"github.com/sustain-cycling/sustain/estimate"
	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/powerduration"
	"github.com/sustain-cycling/sustain/view"
	"github.com/urfave/cli/v2"
)

func seasonCommand() *cli.Command {
	flags := append(ingestFlags(), estimateFlags()...)
	flags = append(flags,
		&cli.StringFlag{Name: "window", Value: "42d", Usage: "length of each rolling window"},
		&cli.StringFlag{Name: "step", Value: "7d", Usage: "distance between the ends of consecutive windows"},
		&cli.StringFlag{Name: "components", Value: estimate.ModelCP2, Usage: "model whose CP and W′ (and Pmax, for morton3 and omni) are followed: cp2, omni or morton3"},
		squadFlag(),
		&cli.StringFlag{Name: "athlete", Usage: "with --squad, show this athlete's season"},
		&cli.StringFlag{Name: "plot", Usage: "write CP, W′ and Pmax over the season to FILE.png or FILE.svg"},
		forceFlag(),
	)
	return &cli.Command{
		Name:      "season",
		Usage:     "rolling estimates across a season: which of CP, W′ and Pmax moved; one row per athlete for a folder of athletes",
		ArgsUsage: "PATH...",
		Flags:     flags,
		Action:    seasonAction,
	}
}

func seasonOptions(c *cli.Context) (estimate.SeasonOptions, error) {
	var so estimate.SeasonOptions
	o, err := estimateOptions(c)
	if err != nil {
		return so, err
	}
	so.Options = o
	if so.WindowDays, err = powerduration.ParseDays(c.String("window")); err != nil {
		return so, usageError{"--window: " + err.Error()}
	}
	if so.StepDays, err = powerduration.ParseDays(c.String("step")); err != nil {
		return so, usageError{"--step: " + err.Error()}
	}
	switch m, _ := estimate.ModelName(c.String("components")); m {
	case estimate.ModelMorton, estimate.ModelOmni, estimate.ModelCP2:
		so.Components = m
	default:
		return so, usageError{fmt.Sprintf("--components takes cp2, morton3 or omni, not %q", c.String("components"))}
	}
	return so, nil
}

func seasonAction(c *cli.Context) error {
	so, err := seasonOptions(c)
	if err != nil {
		return err
	}
	if err := checkMassAndPlot(c); err != nil {
		return err
	}
	members, err := squadOf(c)
	if err != nil {
		return err
	}
	if members != nil {
		return squadAction(c, so, members)
	}
	if c.String("athlete") != "" {
		return usageError{"--athlete goes with --squad (a folder with a subfolder per athlete)"}
	}
	res, curves, err := scan(c)
	if err != nil {
		return err
	}
	rep := estimate.Season(res.Rides, curves, so)
	return writeSeason(c, res, rep, so, plotTitle("Season", c.Args().Slice(), powerduration.Window{From: firstDate(res), To: lastDate(res)}, len(res.Rides)), c.Args().Slice())
}

func firstDate(res ingest.Result) string {
	if len(res.Rides) == 0 {
		return ""
	}
	return res.Rides[0].Date()
}

func lastDate(res ingest.Result) string {
	if len(res.Rides) == 0 {
		return ""
	}
	return res.Rides[len(res.Rides)-1].Date()
}

func writeSeason(c *cli.Context, res ingest.Result, rep estimate.SeasonReport, so estimate.SeasonOptions, title string, paths []string) error {
	out := view.NewSeason(rep, res.Skipped, len(res.Rides))
	if _, _, err := athletesFile(c); err != nil {
		return err
	}
	out.PerKG(massFunc(c, paths))
	w := c.App.Writer
	if c.Bool("json") {
		if err := view.WriteJSON(w, out); err != nil {
			return err
		}
	} else {
		view.RenderSeason(w, out, so, firstDate(res), lastDate(res))
		reportSkipped(c.App.ErrWriter, out.Skipped)
	}
	if p := c.String("plot"); p != "" && !anyEstimated(rep) {
		fmt.Fprintf(c.App.ErrWriter, "no plot written to %s: no window had enough data for an estimate\n", p)
	} else if p != "" {
		if err := view.PlotSeason(p, rep, title, massFunc(c, paths)); err != nil {
			return fmt.Errorf("plot %s: %w", p, err)
		}
		if !c.Bool("json") {
			fmt.Fprintf(c.App.ErrWriter, "plot written to %s\n", p)
		}
	}
	return nothingRead(res)
}

// anyEstimated reports whether any window of the season was estimated.
func anyEstimated(rep estimate.SeasonReport) bool {
	for _, w := range rep.Windows {
		if w.Estimated {
			return true
		}
	}
	return false
}

// squad: one row per athlete, or one athlete's season with --athlete.

func squadAction(c *cli.Context, so estimate.SeasonOptions, members []member) error {
	dir := c.Args().First()
	if dir == "" {
		dir = c.String("athletes")
	}
	if _, err := ingestOptions(c); err != nil {
		return err
	}
	if a := c.String("athlete"); a != "" {
		var names []string
		for _, m := range members {
			if m.Name == a {
				res, curves, err := scanPaths(c, []string{m.Folder})
				if err != nil {
					return err
				}
				rep := estimate.Season(res.Rides, curves, so)
				return writeSeason(c, res, rep, so, plotTitle("Season", []string{m.Folder}, powerduration.Window{From: firstDate(res), To: lastDate(res)}, len(res.Rides)), []string{m.Folder})
			}
			names = append(names, m.Name)
		}
		return usageError{fmt.Sprintf("no athlete %q in %s (its athletes: %s)", a, dir, strings.Join(names, ", "))}
	}
	if c.String("plot") != "" {
		return usageError{"--plot draws one athlete's season: add --athlete NAME"}
	}
	var rows []view.SquadRow
	anyRide := false
	for _, m := range members {
		n := m.Name
		res, curves, err := scanPaths(c, []string{m.Folder})
		if err != nil {
			return err
		}
		row := view.SquadRow{Athlete: n, Rides: len(res.Rides), Skipped: view.NonNil(res.Skipped), LastRide: lastDate(res)}
		if len(res.Rides) > 0 {
			anyRide = true
			rep := estimate.Season(res.Rides, curves, so)
			last := rep.Windows[len(rep.Windows)-1]
			th := view.ThresholdOf(last.Threshold)
			kg, err := massOn(c, []string{m.Folder}, last.To)
			if err != nil {
				return err
			}
			th.PerKG(kg)
			row.Threshold, row.Window = &th, last.Window
			if d, sig, ok := estimate.RecentChange(rep, 42); ok {
				row.Change6wW, row.Significant = view.Ptr(d), sig
			}
		}
		rows = append(rows, row)
	}
	w := c.App.Writer
	if c.Bool("json") {
		if err := view.WriteJSON(w, map[string]any{"athletes": rows}); err != nil {
			return err
		}
	} else {
		detail := "sustain season " + dir + " --squad --athlete NAME"
		if c.String("athletes") != "" && c.NArg() == 0 {
			detail = "sustain season --athletes " + c.String("athletes") + " --athlete NAME"
		}
		view.RenderSquad(w, dir, so.WindowDays, rows, detail)
	}
	if !anyRide {
		return cli.Exit("no ride could be read for any athlete", exitNothing)
	}
	return nil
}
