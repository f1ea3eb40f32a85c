package main

import (
	"fmt"
	"strings"
	"time"

	"github.com/sustain-cycling/sustain/estimate"
	"github.com/sustain-cycling/sustain/powerduration"
	"github.com/sustain-cycling/sustain/view"
	"github.com/urfave/cli/v2"
)

func estimateFlags() []cli.Flag {
	return []cli.Flag{
		&cli.StringFlag{Name: "model", Usage: "headline model instead of the best-supported one: " + strings.Join(estimate.ModelNames, ", ")},
		&cli.StringFlag{Name: "cp2-range", Value: "2m-20m", Usage: "durations of the efforts the 2-parameter fit uses, e.g. 3m-15m"},
		&cli.BoolFlag{Name: "differential", Usage: "W′ balance audit with the differential form (Skiba et al. 2015) instead of the integral form (2012)"},
		&cli.StringFlag{Name: "rule", Value: "20m:0.95,60m:1", Usage: "rules of thumb beside the models, DURATION:SHARE of its best mean power (common practice: 20m:0.95 and 60m:1); each is also a method of compare (20min, 60min, …)"},
	}
}

func estimateOptions(c *cli.Context) (estimate.Options, error) {
	var o estimate.Options
	if m := c.String("model"); m != "" {
		name, ok := estimate.ModelName(m)
		if !ok {
			return o, usageError{fmt.Sprintf("--model takes one of %s, not %q", strings.Join(estimate.ModelNames, ", "), m)}
		}
		o.Model = name
	}
	lo, hi, err := parseRange(c.String("cp2-range"))
	if err != nil {
		return o, usageError{err.Error()}
	}
	o.CP2MinS, o.CP2MaxS = lo, hi
	o.Differential = c.Bool("differential")
	o.Today = time.Now().Format("2006-01-02")
	if o.Rules, err = estimate.ParseRules(c.String("rule")); err != nil {
		return o, usageError{"--rule: " + err.Error()}
	}
	return o, nil
}

// parseRange reads "2m-20m" or "120-1200" (seconds).
func parseRange(s string) (int, int, error) {
	parts := strings.Split(s, "-")
	if len(parts) != 2 {
		return 0, 0, fmt.Errorf("range %q is not like 2m-20m", s)
	}
	var v [2]int
	for i, p := range parts {
		p = strings.TrimSpace(p)
		mult := 1
		switch {
		case strings.HasSuffix(p, "m"):
			p, mult = strings.TrimSuffix(p, "m"), 60
		case strings.HasSuffix(p, "s"):
			p = strings.TrimSuffix(p, "s")
		}
		var n int
		if _, err := fmt.Sscanf(p, "%d", &n); err != nil || n <= 0 || fmt.Sprint(n) != p {
			return 0, 0, fmt.Errorf("range %q is not like 2m-20m", s)
		}
		v[i] = n * mult
	}
	if v[0] >= v[1] {
		return 0, 0, fmt.Errorf("range %q: the first duration must be the shorter", s)
	}
	return v[0], v[1], nil
}

func estimateCommand() *cli.Command {
	flags := append(ingestFlags(), windowFlags()...)
	flags = append(flags, estimateFlags()...)
	flags = append(flags,
		massFlag(),
		&cli.StringFlag{Name: "plot", Usage: "write the curve, each model's fit and the efforts used to FILE.png or FILE.svg"},
		forceFlag(),
	)
	return &cli.Command{
		Name:      "estimate",
		Usage:     "threshold power (critical power) with its range, confidence, reasons and advice (default window: the 90 days ending at the newest ride)",
		ArgsUsage: "PATH...",
		Flags:     flags,
		Action:    estimateAction,
	}
}

func estimateAction(c *cli.Context) error {
	opts, err := estimateOptions(c)
	if err != nil {
		return err
	}
	if err := checkMassAndPlot(c); err != nil {
		return err
	}
	only, err := windowFilter(c, "90d")
	if err != nil {
		return err
	}
	res, curves, err := scanIn(c, only)
	if err != nil {
		return err
	}
	win, err := window(c, powerduration.Newest(curves), "90d")
	if err != nil {
		return err
	}
	rep := estimate.Estimate(res.Rides, curves, win, opts)
	out := view.NewEstimate(rep, res.Skipped)
	massKG, err := massOn(c, c.Args().Slice(), win.To)
	if err != nil {
		return err
	}
	out.Threshold.PerKG(massKG)
	w := c.App.Writer
	if c.Bool("json") {
		if err := view.WriteJSON(w, out); err != nil {
			return err
		}
	} else {
		view.RenderEstimate(w, out, massKG)
		reportSkipped(c.App.ErrWriter, out.Skipped)
	}
	if p := c.String("plot"); p != "" && len(rep.Curve.Points) > 0 {
		if err := view.PlotEstimate(p, rep, plotTitle("Power-duration fit", c.Args().Slice(), win, rep.Rides)); err != nil {
			return fmt.Errorf("plot %s: %w", p, err)
		}
		if !c.Bool("json") {
			fmt.Fprintf(c.App.ErrWriter, "plot written to %s\n", p)
		}
	}
	if len(res.Rides) > 0 && rep.Rides == 0 {
		return cli.Exit(fmt.Sprintf("no ride between %s and %s", view.OrOpen(win.From), view.OrOpen(win.To)), exitNothing)
	}
	return nothingRead(res)
}
