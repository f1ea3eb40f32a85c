package main

import (
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"time"

	"github.com/sustain-cycling/sustain/internal/synth"
	"github.com/urfave/cli/v2"
)

// demoAthlete is invented: a trained amateur before a six-week block.
var demoAthlete = synth.Athlete{Name: "invented rider", CPW: 265, WPrimeJ: 21000, PmaxW: 1050}

const (
	demoWeeks   = 16
	demoCPGainW = 22
	demoWLossJ  = 3000
)

func demoCommand() *cli.Command {
	return &cli.Command{
		Name:  "demo",
		Usage: "write an invented season of rides to a folder and run inspect, curve, estimate and season on it",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "out", Usage: "folder for the invented rides and the plots (default: a new temporary folder)"},
		},
		Action: demoAction,
	}
}

func demoAction(c *cli.Context) error {
	dir := c.String("out")
	if dir == "" {
		d, err := os.MkdirTemp("", "sustain-demo-")
		if err != nil {
			return err
		}
		dir = d
	} else if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	start := time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC)
	files := synth.Season("rides", start, demoWeeks, synth.Block(demoAthlete, demoCPGainW, demoWLossJ), 7)
	if err := synth.WriteSeason(dir, files); err != nil {
		return err
	}
	rides := filepath.Join(dir, "rides")
	w := c.App.Writer
	fmt.Fprintf(w, "An invented season: %d weeks of rides (FIT, TCX and gzipped CSV) by an invented athlete with CP %.0f W, W′ %.1f kJ and\n",
		demoWeeks, demoAthlete.CPW, demoAthlete.WPrimeJ/1000)
	fmt.Fprintf(w, "Pmax %.0f W at the start; a block from week 7 to week 12 raises CP by %d W and trims W′ by %.1f kJ. A few files carry\n",
		demoAthlete.PmaxW, demoCPGainW, demoWLossJ/1000.0)
	fmt.Fprintf(w, "the ordinary faults of field data: dropouts, spikes, stuck power, a file cut short, and runs that are not rides.\n")
	fmt.Fprintf(w, "Rides written to %s\n", rides)
	curvePlot, estPlot, seasonPlot := filepath.Join(dir, "curve.png"), filepath.Join(dir, "estimate.png"), filepath.Join(dir, "season.png")
	steps := [][]string{
		{"inspect", rides, "--problems"},
		{"curve", rides, "--last", "42d", "--compare-from", "2026-03-02", "--compare-to", "2026-04-12", "--plot", curvePlot},
		{"estimate", rides, "--last", "42d", "--plot", estPlot},
		{"season", rides, "--plot", seasonPlot},
	}
	for _, args := range steps {
		fmt.Fprintf(w, "\n$ sustain %s\n", strings.Join(args, " "))
		app := newApp(w, c.App.ErrWriter)
		if err := app.Run(interspersed(app, append([]string{"sustain"}, args...))); err != nil {
			return fmt.Errorf("demo step %q: %w", args[0], err)
		}
	}
	fmt.Fprintf(w, "\nPlots: %s, %s, %s\n", curvePlot, estPlot, seasonPlot)
	fmt.Fprintf(w, "Everything above is invented data. Point the same commands at your own ride folder to analyse your season.\n")
	return nil
}
