package main

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"
	"text/tabwriter"

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
			rep := estimate.Estimate(res.Rides, curves, powerduration.LastDays(powerduration.Newest(curves), days), eo)
			subjects = append(subjects, estimate.Subject{Name: n, Estimates: lab.add(estimate.ByMethod(rep), n, powerduration.Window{})})
		}
	} else {
		res, curves, err := scan(c)
		if err != nil {
			return err
		}
		skipped = append(skipped, res.Skipped...)
		for _, w := range powerduration.Consecutive(curves, days) {
			if rep := estimate.Estimate(res.Rides, curves, w, eo); rep.Rides > 0 {
				subjects = append(subjects, estimate.Subject{Name: w.From + "–" + w.To, Estimates: lab.add(estimate.ByMethod(rep), "", w)})
			}
		}
	}
	pairs := estimate.Compare(subjects, methods)
	w := c.App.Writer
	switch {
	case c.Bool("json"):
		err = writeJSON(w, compareJSON(subjects, pairs, skipped))
	case c.Bool("csv"):
		err = writeCompareCSV(w, subjects, pairs, methods)
	default:
		renderCompare(w, kind, subjects, pairs, methods, skipped)
		reportSkipped(c.App.ErrWriter, skipped)
	}
	if err != nil {
		return err
	}
	if p := c.String("plot"); p != "" {
		if err := plotAgreement(p, pairs, methods[0]); err != nil {
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

type pairJSON struct {
	A       string   `json:"a"`
	B       string   `json:"b"`
	N       int      `json:"n"`
	BiasW   *float64 `json:"bias_w"`
	SDW     *float64 `json:"sd_w"`
	LowerW  *float64 `json:"lower_limit_w"`
	UpperW  *float64 `json:"upper_limit_w"`
	R       *float64 `json:"r"`
	LeftOut []string `json:"left_out"`
	Note    string   `json:"note,omitempty"`
}

// Small samples: a correlation of fewer than minPairsForR subjects means
// little (two points always lie on a line) and is not given; limits of
// agreement from fewer than fewPairs subjects are given with a note.
const (
	minPairsForR = 5
	fewPairs     = 10
)

// pairNote says what a pair's sample size leaves uncertain, or "".
func pairNote(p estimate.PairAgreement) string {
	switch {
	case p.N < 2:
		return "fewer than 2 subjects with both estimates: nothing to compare"
	case p.N < minPairsForR:
		return fmt.Sprintf("only %d subjects: the limits of agreement are rough and r is not given (it needs %d)", p.N, minPairsForR)
	case p.N < fewPairs:
		return fmt.Sprintf("only %d subjects: the limits of agreement are rough", p.N)
	case math.IsNaN(p.R):
		return "one method gave the same value for every subject: r is undefined"
	}
	return ""
}

// pairR is r where the sample allows it.
func pairR(p estimate.PairAgreement) *float64 {
	if p.N < minPairsForR {
		return nil
	}
	return view.Finite(p.R)
}

func compareJSON(subjects []estimate.Subject, pairs []estimate.PairAgreement, skipped []ingest.Skipped) map[string]any {
	ps := []pairJSON{}
	for _, p := range pairs {
		j := pairJSON{A: p.A, B: p.B, N: p.N, LeftOut: p.LeftOut, Note: pairNote(p)}
		if j.LeftOut == nil {
			j.LeftOut = []string{}
		}
		if p.N >= 2 {
			j.BiasW, j.SDW, j.LowerW, j.UpperW, j.R = view.Finite(p.Bias), view.Finite(p.SD), view.Finite(p.LowerL), view.Finite(p.UpperL), pairR(p)
		}
		ps = append(ps, j)
	}
	if subjects == nil {
		subjects = []estimate.Subject{}
	}
	return map[string]any{"subjects": subjects, "pairs": ps, "skipped": view.NonNil(skipped)}
}

// writeCompareCSV writes one table of two kinds of rows: each subject's
// estimate by each method (table "estimate"), then each pair's agreement
// (table "agreement"); a column a row kind does not have is empty.
func writeCompareCSV(w io.Writer, subjects []estimate.Subject, pairs []estimate.PairAgreement, methods []string) error {
	cw := csv.NewWriter(w)
	cw.Write([]string{"table", "subject", "method", "watts", "confidence",
		"a", "b", "n", "bias_w", "sd_w", "lower_limit_w", "upper_limit_w", "r", "left_out", "note"})
	num := func(v *float64) string {
		if v == nil {
			return ""
		}
		return strconv.FormatFloat(*v, 'f', 2, 64)
	}
	for _, s := range subjects {
		for _, m := range methods {
			if e, ok := s.Estimates[m]; ok {
				cw.Write([]string{"estimate", s.Name, m, strconv.FormatFloat(e.Watts, 'f', 1, 64), e.Confidence,
					"", "", "", "", "", "", "", "", "", ""})
			}
		}
	}
	for _, p := range pairs {
		j := compareJSON(nil, []estimate.PairAgreement{p}, nil)["pairs"].([]pairJSON)[0]
		cw.Write([]string{"agreement", "", "", "", "", j.A, j.B, strconv.Itoa(j.N), num(j.BiasW), num(j.SDW),
			num(j.LowerW), num(j.UpperW), num(j.R), strings.Join(j.LeftOut, "; "), j.Note})
	}
	cw.Flush()
	return cw.Error()
}

func renderCompare(w io.Writer, kind string, subjects []estimate.Subject, pairs []estimate.PairAgreement, methods []string, skipped []ingest.Skipped) {
	fmt.Fprintf(w, "Threshold by method (W; grade h/m/l), %d %s\n\n", len(subjects), kind)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "%s\t%s\t\n", strings.TrimSuffix(kind, "s"), strings.Join(methods, "\t"))
	for _, s := range subjects {
		cells := []string{s.Name}
		for _, m := range methods {
			if e, ok := s.Estimates[m]; ok {
				cells = append(cells, fmt.Sprintf("%.0f %c", e.Watts, e.Confidence[0]))
			} else {
				cells = append(cells, "-")
			}
		}
		fmt.Fprintln(tw, strings.Join(cells, "\t")+"\t")
	}
	tw.Flush()
	fmt.Fprintln(w, "\nAgreement (Bland & Altman 1986): difference a − b; limits of agreement = bias ± 1.96 SD; estimates graded low left out")
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "a − b\tn\tbias (W)\tSD (W)\t95% limits (W)\tr\tleft out\t")
	var notes []string // each note once, with the pairs it is about
	notedPairs := map[string][]string{}
	for _, p := range pairs {
		if note := pairNote(p); note != "" {
			if notedPairs[note] == nil {
				notes = append(notes, note)
			}
			notedPairs[note] = append(notedPairs[note], p.A+" − "+p.B)
		}
		if p.N < 2 {
			fmt.Fprintf(tw, "%s − %s\t%d\t-\t-\t-\t-\t%d\t\n", p.A, p.B, p.N, len(p.LeftOut))
			continue
		}
		r := "-"
		if v := pairR(p); v != nil {
			r = fmt.Sprintf("%.2f", *v)
		}
		fmt.Fprintf(tw, "%s − %s\t%d\t%+.1f\t%.1f\t%+.1f to %+.1f\t%s\t%d\t\n", p.A, p.B, p.N, p.Bias, p.SD, p.LowerL, p.UpperL, r, len(p.LeftOut))
	}
	tw.Flush()
	for _, n := range notes {
		which := strings.Join(notedPairs[n], ", ")
		if len(notedPairs[n]) == len(pairs) {
			which = "every pair"
		}
		fmt.Fprintf(w, "  %s: %s\n", which, n)
	}
	header := false
	for _, s := range subjects {
		var low, missing []string
		for _, m := range methods {
			e, ok := s.Estimates[m]
			switch {
			case !ok:
				missing = append(missing, m)
			case e.Confidence == estimate.Low:
				low = append(low, m)
			}
		}
		if len(low)+len(missing) == 0 {
			continue
		}
		if !header {
			fmt.Fprintln(w, "\nLeft out of the pairs they belong to:")
			header = true
		}
		var parts []string
		if len(low) > 0 {
			parts = append(parts, strings.Join(low, ", ")+" graded low")
		}
		if len(missing) > 0 {
			parts = append(parts, strings.Join(missing, ", ")+" not estimated")
		}
		fmt.Fprintf(w, "  %s: %s\n", s.Name, strings.Join(parts, "; "))
	}
}
