package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"github.com/sustain-cycling/sustain/view"
	"io"
	"os"
	"path/filepath"
	"slices"
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
		Usage: "write an invented season of rides and lactate tests to a folder and run inspect, curve, estimate, season and lactate on it",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "out", Usage: "folder for the invented rides and the plots (default: a new temporary folder); a folder that holds anything is refused unless --force"},
			&cli.BoolFlag{Name: "force", Usage: "write into --out even when it holds files (the demo's own files are replaced)"},
			&cli.BoolFlag{Name: "json", Usage: "print the invented season and each command's JSON result in one JSON object"},
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
	} else {
		if es, err := os.ReadDir(dir); err == nil && len(es) > 0 && !c.Bool("force") {
			return usageError{fmt.Sprintf("--out %s holds files already: name a new or empty folder, or --force to write the demo's files into it", dir)}
		} else if fi, err := os.Lstat(dir); err == nil && !fi.IsDir() {
			return usageError{fmt.Sprintf("--out %s is not a folder", dir)}
		}
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return err
		}
	}
	start := time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC)
	files := synth.Season("rides", start, demoWeeks, synth.Block(demoAthlete, demoCPGainW, demoWLossJ), 7)
	if err := synth.WriteSeason(dir, files); err != nil {
		return err
	}
	rides := filepath.Join(dir, "rides")
	// a lactate step test before the block and one after it, and three
	// MLSS trials after it; the invented MLSS sits 15 W below CP
	lab := filepath.Join(dir, "lab")
	if err := os.MkdirAll(lab, 0o755); err != nil {
		return err
	}
	prog := synth.Block(demoAthlete, demoCPGainW, demoWLossJ)
	before, after := synth.LactateAthlete{MLSSW: prog(39).CPW - 15, RestMmol: 1}, synth.LactateAthlete{MLSSW: prog(109).CPW - 15, RestMmol: 1}
	powers := []float64{150, 180, 210, 240, 270, 300, 330}
	stepsCSV, trialsCSV := filepath.Join(lab, "steps.csv"), filepath.Join(lab, "trials.csv")
	if err := os.WriteFile(stepsCSV, []byte(before.StepTestCSV("2026-04-10", powers)+strings.SplitN(after.StepTestCSV("2026-06-19", powers), "\n", 2)[1]), 0o644); err != nil {
		return err
	}
	if err := os.WriteFile(trialsCSV, []byte(after.TrialsCSV([]string{"2026-06-22", "2026-06-24", "2026-06-26"}, []float64{260, 275, 290})), 0o644); err != nil {
		return err
	}
	w := c.App.Writer
	asJSON := c.Bool("json")
	if asJSON {
		w = io.Discard // the text; the JSON is written at the end
	}
	fmt.Fprintf(w, "An invented season: %d weeks of rides (FIT, TCX and gzipped CSV) by an invented athlete with CP %.0f W, W′ %.1f kJ and\n",
		demoWeeks, demoAthlete.CPW, demoAthlete.WPrimeJ/1000)
	fmt.Fprintf(w, "Pmax %.0f W at the start; a block from week 7 to week 12 raises CP by %d W and trims W′ by %.1f kJ. A few files carry\n",
		demoAthlete.PmaxW, demoCPGainW, demoWLossJ/1000.0)
	fmt.Fprintf(w, "the ordinary faults of field data: dropouts, spikes, stuck power, a file cut short, and runs that are not rides.\n")
	fmt.Fprintf(w, "Rides written to %s; two lactate step tests (before and after the block) and three MLSS trials to %s\n", rides, lab)
	curvePlot, estPlot, seasonPlot, labPlot := filepath.Join(dir, "curve.png"), filepath.Join(dir, "estimate.png"), filepath.Join(dir, "season.png"), filepath.Join(dir, "lactate.png")
	steps := [][]string{
		{"inspect", rides, "--problems"},
		{"curve", rides, "--last", "42d", "--compare-from", "2026-03-02", "--compare-to", "2026-04-12", "--plot", curvePlot},
		{"estimate", rides, "--last", "42d", "--plot", estPlot},
		{"season", rides, "--plot", seasonPlot},
		{"lactate", stepsCSV, "--trials", trialsCSV, "--rides", rides, "--plot", labPlot},
	}
	type stepJSON struct {
		Command []string        `json:"command"`
		Result  json.RawMessage `json:"result"`
	}
	var results []stepJSON
	for _, args := range steps {
		if c.Bool("force") && slices.Contains(args, "--plot") {
			args = append(args, "--force") // the plots of an earlier demo in the same folder
		}
		fmt.Fprintf(w, "\n$ sustain %s\n", strings.Join(args, " "))
		out, errs := w, w // the commands' messages in line with their results, as a terminal shows them
		var buf bytes.Buffer
		if asJSON {
			args = append(args, "--json")
			out, errs = &buf, c.App.ErrWriter
		}
		app := newApp(out, errs)
		if err := app.Run(interspersed(app, append([]string{"sustain"}, args...))); err != nil {
			return fmt.Errorf("demo step %q: %w", args[0], err)
		}
		if asJSON {
			results = append(results, stepJSON{Command: append([]string{"sustain"}, args...), Result: json.RawMessage(bytes.TrimSpace(buf.Bytes()))})
		}
	}
	fmt.Fprintf(w, "\nPlots: %s, %s, %s, %s\n", curvePlot, estPlot, seasonPlot, labPlot)
	fmt.Fprintf(w, "Everything above is invented data. Point the same commands at your own ride folder to analyse your season.\n")
	if asJSON {
		return view.WriteJSON(c.App.Writer, map[string]any{
			"invented": true, "rides_folder": rides, "lab_folder": lab,
			"athlete": map[string]float64{"cp_w": demoAthlete.CPW, "w_prime_j": demoAthlete.WPrimeJ, "pmax_w": demoAthlete.PmaxW},
			"block":   map[string]any{"weeks": "7-12", "cp_gain_w": demoCPGainW, "w_prime_loss_j": demoWLossJ},
			"steps":   results,
			"plots":   []string{curvePlot, estPlot, seasonPlot, labPlot},
		})
	}
	return nil
}
