package main

import (
	"fmt"
	"os"
	"path/filepath"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/internal/synth"
	"github.com/urfave/cli/v2"
)

// demoAthlete is invented: a trained amateur before a six-week block.
var demoAthlete = synth.Athlete{Name: "invented rider", CPW: 265, WPrimeJ: 21000, PmaxW: 1050}

func demoCommand() *cli.Command {
	return &cli.Command{
		Name:  "demo",
		Usage: "write an invented season of rides to a folder and analyse it",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "out", Usage: "folder for the invented rides and plots (default: a new temporary folder)"},
		},
		Action: func(c *cli.Context) error {
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
			files := synth.Season("rides", start, 16, synth.Block(demoAthlete, 22, 3000), 7)
			if err := synth.WriteSeason(dir, files); err != nil {
				return err
			}
			rides := filepath.Join(dir, "rides")
			w := c.App.Writer
			fmt.Fprintf(w, "An invented season: 16 weeks of rides by an invented athlete (CP %.0f W, W′ %.1f kJ, Pmax %.0f W at the start),\n", demoAthlete.CPW, demoAthlete.WPrimeJ/1000, demoAthlete.PmaxW)
			fmt.Fprintf(w, "with a six-week block from week 7 that raises CP by 22 W and trims W′ by 3 kJ, and a few ordinary data faults.\n")
			fmt.Fprintf(w, "Files: %s\n\n", rides)
			fmt.Fprintf(w, "$ sustain inspect %s\n", rides)
			res := ingest.Scan([]string{rides}, ingest.Options{})
			renderInspect(w, res)
			return nil
		},
	}
}
