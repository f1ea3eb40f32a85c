package main

import (
	"fmt"
	"path/filepath"
	"strings"

	"github.com/sustain-cycling/sustain/estimate"
	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/powerduration"
	"github.com/sustain-cycling/sustain/view"
	"github.com/urfave/cli/v2"
)

func compareCommand() *cli.Command {
	flags := append(ingestFlags(), estimateFlags()...)
	flags = append(flags,
		&cli.StringFlag{Name: "methods", Value: strings.Join(estimate.Methods, ","), Usage: "methods to compare: " + strings.Join(append(append([]string{}, estimate.Methods...), lactateMethods()...), ", ") + " (the lactate methods need --lactate or --trials)"},
		&cli.StringSliceFlag{Name: "lactate", Usage: "step-test CSV(s) with an athlete column (a squad) or dates (windows): their thresholds become methods obla4, lt2, base1, dmax, moddmax, loglog; repeat for more"},
		&cli.StringSliceFlag{Name: "trials", Usage: "MLSS trial CSV(s) with an athlete column or dates: the MLSS bracket's middle becomes method mlss; repeat for more"},
		squadFlag(),
		&cli.StringFlag{Name: "window", Value: "90d", Usage: "each athlete's window, ending at their newest ride; for one athlete, the length of each of the consecutive windows compared"},
		&cli.BoolFlag{Name: "csv", Usage: "print each subject's estimate by each method as CSV rows"},
		&cli.StringFlag{Name: "plot", Usage: "Bland–Altman plots (difference against mean) of the first method against each other, to FILE.png or FILE.svg"},
		forceFlag(),
	)
	return &cli.Command{
		Name:      "compare",
		Usage:     "how far apart threshold methods are across a squad (one subfolder per athlete) or across windows of one athlete: bias and limits of agreement",
		ArgsUsage: "PATH...",
		Flags:     flags,
		Action:    compareAction,
	}
}

func compareAction(c *cli.Context) error {
	eo, err := estimateOptions(c)
	if err != nil {
		return err
	}
	extra := lactateMethods()
	for _, r := range eo.Rules { // each rule of thumb named is a method
		extra = append(extra, r.Method())
	}
	methods, err := estimate.ParseMethods(c.String("methods"), extra...)
	if err != nil {
		return usageError{"--methods: " + err.Error()}
	}
	lab, labSkipped := readLab(c.StringSlice("lactate"), c.StringSlice("trials"))
	days, err := powerduration.ParseDays(c.String("window"))
	if err != nil {
		return usageError{"--window: " + err.Error()}
	}
	if err := checkMassAndPlot(c); err != nil {
		return err
	}
	if c.Bool("json") && c.Bool("csv") {
		return usageError{"choose one of --json and --csv"}
	}
	if _, err := ingestOptions(c); err != nil {
		return err
	}
	var subjects []estimate.Subject
	skipped := labSkipped
	kind := "windows"
	members, err := squadOf(c)
	if err != nil {
		return err
	}
	masses := map[string]float64{} // each subject's mass at its window's end, when known
	if members != nil {
		kind = "athletes"
		for _, m := range members {
			n := m.Name
			res, curves, err := scanPaths(c, []string{m.Folder})
			if err != nil {
				return err
			}
			skipped = append(skipped, res.Skipped...)
			if len(res.Rides) == 0 {
				continue
			}
			win := powerduration.LastDays(powerduration.Newest(curves), days)
			rep := estimate.Estimate(res.Rides, curves, win, eo)
			subjects = append(subjects, estimate.Subject{Name: n, Estimates: lab.add(estimate.ByMethod(rep), n, powerduration.Window{})})
			if masses[n], err = massOn(c, []string{m.Folder}, win.To); err != nil {
				return err
			}
		}
	} else {
		res, curves, err := scan(c)
		if err != nil {
			return err
		}
		skipped = append(skipped, res.Skipped...)
		for _, w := range powerduration.Consecutive(curves, days) {
			if rep := estimate.Estimate(res.Rides, curves, w, eo); rep.Rides > 0 {
				name := w.From + "–" + w.To
				subjects = append(subjects, estimate.Subject{Name: name, Estimates: lab.add(estimate.ByMethod(rep), "", w)})
				if masses[name], err = massOn(c, c.Args().Slice(), w.To); err != nil {
					return err
				}
			}
		}
	}
	pairs := estimate.Compare(subjects, methods)
	w := c.App.Writer
	switch {
	case c.Bool("json"):
		err = view.WriteJSON(w, view.NewComparison(subjects, pairs, skipped, masses))
	case c.Bool("csv"):
		err = view.WriteComparisonCSV(w, subjects, pairs, methods, masses)
	default:
		view.RenderComparison(w, kind, subjects, pairs, methods, skipped)
		reportSkipped(c.App.ErrWriter, skipped)
	}
	if err != nil {
		return err
	}
	if p := c.String("plot"); p != "" {
		if err := view.PlotAgreement(p, pairs, methods[0]); err != nil {
			return fmt.Errorf("plot %s: %w", p, err)
		}
		if !c.Bool("json") && !c.Bool("csv") {
			fmt.Fprintf(c.App.ErrWriter, "plot written to %s\n", p)
		}
	}
	if len(subjects) == 0 {
		return cli.Exit("no ride could be read", exitNothing)
	}
	return nil
}

// squadFlag declares the one folder named a squad: a subfolder per
// athlete. A folder is never taken for a squad from its layout.
func squadFlag() cli.Flag {
	return &cli.BoolFlag{Name: "squad", Usage: "the folder named holds one subfolder per athlete (without it, a folder is one rider's, however it is arranged)"}
}

// member is an athlete of a squad and the folder of their rides.
type member struct{ Name, Folder string }

// squadOf is the squad declared: the athletes of an athletes file
// (--athletes), or the subfolders of the one folder named with --squad;
// nil when none was declared.
func squadOf(c *cli.Context) ([]member, error) {
	if !c.Bool("squad") && !(c.String("athletes") != "" && c.NArg() == 0) {
		return nil, nil
	}
	if f, ok, err := athletesFile(c); err != nil || ok {
		if err != nil {
			return nil, err
		}
		var ms []member
		for _, a := range f.Athletes {
			ms = append(ms, member{a.Name, a.Folder})
		}
		return ms, nil
	}
	if c.NArg() != 1 {
		return nil, usageError{"--squad takes one folder, with a subfolder per athlete (or --athletes FILE)"}
	}
	names, err := ingest.Athletes(c.Args().First())
	if err != nil {
		return nil, usageError{err.Error()}
	}
	var ms []member
	for _, n := range names {
		ms = append(ms, member{n, filepath.Join(c.Args().First(), n)})
	}
	return ms, nil
}
