package main

import (
	"fmt"
	"math"
	"os"
	"strconv"
	"strings"
	"time"

	"github.com/sustain-cycling/sustain/estimate"
	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/lactate"
	"github.com/sustain-cycling/sustain/powerduration"
	"github.com/sustain-cycling/sustain/view"
	"github.com/urfave/cli/v2"
)

func lactateCommand() *cli.Command {
	flags := append(ingestFlags(),
		&cli.StringSliceFlag{Name: "trials", Usage: "a CSV of MLSS trials (power_w, lactate_10_mmol, lactate_30_mmol; optional date, athlete); repeat for more"},
		&cli.StringSliceFlag{Name: "trial", Usage: "an MLSS trial in a ride file, FILE@H:MM:SS+30m=LA10,LA30 (lactate at minutes 10 and 30, mmol/L); its power is measured from the ride; repeat for more"},
		&cli.StringSliceFlag{Name: "rides", Usage: "ride files or folders of the same athlete: the field CP and 20-min rule of the days around each test go beside the lactate thresholds; repeat for more"},
		&cli.BoolFlag{Name: "csv", Usage: "one CSV row per test and method"},
		&cli.StringFlag{Name: "plot", Usage: "write lactate against power with each method's threshold to FILE.png or FILE.svg"},
		forceFlag(),
	)
	return &cli.Command{
		Name:      "lactate",
		Usage:     "blood-lactate step tests by their published methods (2 and 4 mmol/L, baseline + 1, Dmax, modified Dmax, log-log), MLSS trials, and the field estimate beside them",
		ArgsUsage: "STEPTEST.csv... (columns power_w and lactate_mmol; optional heart_rate, step_s, athlete, test, date)",
		Flags:     flags,
		Action:    lactateAction,
	}
}

func lactateAction(c *cli.Context) error {
	if c.NArg() == 0 && len(c.StringSlice("trials")) == 0 && len(c.StringSlice("trial")) == 0 {
		return usageError{"name at least one step-test CSV, --trials CSV or --trial FILE@H:MM:SS+30m=LA10,LA30"}
	}
	if c.Bool("json") && c.Bool("csv") {
		return usageError{"choose one of --json and --csv"}
	}
	if p := c.String("plot"); p != "" && !isPlotName(p) {
		return usageError{fmt.Sprintf("--plot %s: name a .png or .svg file", p)}
	}
	if err := checkNewFile(c, "plot", c.String("plot"), c.StringSlice("rides")); err != nil {
		return err
	}
	var specs []trialSpec
	for _, s := range c.StringSlice("trial") {
		t, err := parseTrialSpec(s)
		if err != nil {
			return usageError{"--trial " + err.Error()}
		}
		specs = append(specs, t)
	}
	out := view.Lactate{Tests: []view.LactateTest{}, Trials: []view.LactateTrial{}, Shifts: []view.LactateShift{}, Skipped: []ingest.Skipped{}, Caution: estimate.Caution}
	lab, skipped := readLab(c.Args().Slice(), c.StringSlice("trials"))
	out.Skipped = append(out.Skipped, skipped...)
	analyses, trials := lab.analyses, lab.trials
	for _, sp := range specs {
		t, err := sp.measure(c)
		if err != nil {
			out.Skipped = append(out.Skipped, ingest.Skipped{File: sp.file, Reason: err.Error()})
			continue
		}
		trials = append(trials, t)
	}
	var bracket *lactate.Bracket
	if len(trials) > 0 {
		br := lactate.BracketOf(trials)
		bracket = &br
	}

	// the field estimate around each test, from the athlete's rides
	var rides ingest.Result
	var curves []powerduration.RideCurve
	if paths := c.StringSlice("rides"); len(paths) > 0 {
		var err error
		if rides, curves, err = scanPaths(c, paths); err != nil {
			return err
		}
		out.Skipped = append(out.Skipped, rides.Skipped...)
	}
	eo := estimate.Options{}
	for _, a := range analyses {
		tj := view.NewLactateTest(a)
		if len(rides.Rides) > 0 {
			win := aroundTest(a.Test.Date, powerduration.Newest(curves))
			rep := estimate.Estimate(rides.Rides, curves, win, eo)
			field := fieldOf(rep)
			fj := &view.LactateField{Window: win, Rides: rep.Rides, Threshold: view.ThresholdOf(rep.Threshold), Rule20W: view.Finite(field.Rule20W), Rule20Conf: field.Rule20Conf}
			tj.Field = fj
			for _, g := range lactate.Gaps(field, &a, nil) {
				tj.Gaps = append(tj.Gaps, view.LactateGap(g))
			}
		}
		out.Tests = append(out.Tests, tj)
	}
	for _, t := range trials {
		j := view.LactateTrial{Source: t.Source, Athlete: t.Athlete, Date: t.Date, PowerW: t.PowerW, La10Mmol: t.Lactate10Mmol, La30Mmol: t.Lactate30Mmol,
			RiseMmol: t.RiseMmol(), Pass: t.Pass(), Wandered: t.Wandered, Note: t.Note}
		if t.RideFile != "" {
			j.MeasuredW, j.CVPct = view.Finite(t.MeasuredW), view.Finite(t.CVPct)
		}
		out.Trials = append(out.Trials, j)
	}
	if bracket != nil {
		out.MLSS = &view.LactateMLSS{Date: trialDate(trials), PassW: view.Finite(bracket.PassW), FailW: view.Finite(bracket.FailW), MidW: view.Finite(bracket.MidW()),
			Notes: append([]string{}, bracket.Notes...),
			Rule:  fmt.Sprintf("a trial passes when lactate rises by no more than %.1f mmol/L from minute 10 to 30 (Heck et al. 1985; Beneke 2003)", lactate.MLSSRiseMmol)}
		// MLSS beside the field estimate of the days around the trials
		if len(rides.Rides) > 0 {
			rep := estimate.Estimate(rides.Rides, curves, aroundTest(trialDate(trials), powerduration.Newest(curves)), eo)
			tj := view.LactateTest{Test: "MLSS trials", Steps: []view.LactateStep{}, Thresholds: []view.LactateThreshold{}, Notes: []string{}}
			field := fieldOf(rep)
			tj.Field = &view.LactateField{Window: rep.Window, Rides: rep.Rides, Threshold: view.ThresholdOf(rep.Threshold), Rule20W: view.Finite(field.Rule20W), Rule20Conf: field.Rule20Conf}
			for _, g := range lactate.Gaps(field, nil, bracket) {
				tj.Gaps = append(tj.Gaps, view.LactateGap(g))
			}
			out.Tests = append(out.Tests, tj)
		}
	}
	for _, byAthlete := range groupByAthlete(analyses) {
		for _, s := range lactate.Shifts(byAthlete) {
			out.Shifts = append(out.Shifts, view.LactateShift{From: s.From, To: s.To, LT2FromW: view.Finite(s.LT2FromW), LT2ToW: view.Finite(s.LT2ToW),
				OBLAFromW: view.Finite(s.OBLAFromW), OBLAToW: view.Finite(s.OBLAToW), Message: s.Message})
		}
	}

	w := c.App.Writer
	var err error
	switch {
	case c.Bool("json"):
		err = view.WriteJSON(w, out)
	case c.Bool("csv"):
		err = view.WriteLactateCSV(w, out)
	default:
		view.RenderLactate(w, out)
	}
	if err != nil {
		return err
	}
	reportSkipped(c.App.ErrWriter, out.Skipped)
	if p := c.String("plot"); p != "" && len(analyses) > 0 {
		if err := view.PlotLactate(p, analyses, bracket); err != nil {
			return fmt.Errorf("plot %s: %w", p, err)
		}
		fmt.Fprintf(c.App.ErrWriter, "plot written to %s\n", p)
	}
	if len(analyses) == 0 && len(trials) == 0 {
		return cli.Exit("no lactate test could be read", exitNothing)
	}
	return nil
}

// plainErr drops the path from an os error (the line names the file).
func plainErr(err error) error {
	if pe, ok := err.(*os.PathError); ok {
		return pe.Err
	}
	return err
}

// aroundTest is the window of the field estimate beside a test: the 42
// days ending a week after it (efforts of the block the test closes, and
// the week after it); without a date, the 90 days ending at the newest ride.
func aroundTest(date, newest string) powerduration.Window {
	d, err := time.Parse("2006-01-02", date)
	if err != nil {
		return powerduration.LastDays(newest, 90)
	}
	return powerduration.LastDays(d.AddDate(0, 0, 7).Format("2006-01-02"), 42)
}

func trialDate(ts []lactate.Trial) string {
	d := ""
	for _, t := range ts {
		d = max(d, t.Date)
	}
	return d
}

// fieldOf is the field estimate a test is set beside.
func fieldOf(rep estimate.Report) lactate.Field {
	f := lactate.Field{From: rep.Window.From, To: rep.Window.To, Rule20W: math.NaN()}
	if th := rep.Threshold; th.Estimated() {
		f.Estimated, f.CPW, f.LowW, f.HighW, f.Model, f.Confidence = true, th.Watts, th.LowW, th.HighW, th.Model, th.Confidence
	} else if th != nil {
		f.Reason = th.Reason
	}
	for _, r := range rep.Rules {
		if r.Effort.DurationS == 1200 {
			f.Rule20W, f.Rule20Conf = r.Watts, r.Confidence
		}
	}
	return f
}

func groupByAthlete(as []lactate.Analysis) [][]lactate.Analysis {
	var order []string
	by := map[string][]lactate.Analysis{}
	for _, a := range as {
		if _, ok := by[a.Test.Athlete]; !ok {
			order = append(order, a.Test.Athlete)
		}
		by[a.Test.Athlete] = append(by[a.Test.Athlete], a)
	}
	var out [][]lactate.Analysis
	for _, k := range order {
		out = append(out, by[k])
	}
	return out
}

// trialSpec is FILE@H:MM:SS+30m=LA10,LA30.
type trialSpec struct {
	file            string
	startS, lengthS int
	la10, la30      float64
}

func parseTrialSpec(s string) (trialSpec, error) {
	var t trialSpec
	at := strings.LastIndex(s, "@")
	eq := strings.LastIndex(s, "=")
	if at <= 0 || eq < at {
		return t, fmt.Errorf("%q is not FILE@H:MM:SS+30m=LA10,LA30", s)
	}
	t.file = s[:at]
	when, la := s[at+1:eq], s[eq+1:]
	plus := strings.Index(when, "+")
	if plus < 0 {
		return t, fmt.Errorf("%q: give the trial's length, e.g. @0:15:00+30m", s)
	}
	var err error
	if t.startS, err = parseClock(when[:plus]); err != nil {
		return t, err
	}
	if t.lengthS, err = parseLength(when[plus+1:]); err != nil {
		return t, err
	}
	if t.lengthS < 1800 {
		return t, fmt.Errorf("%q: an MLSS trial lasts 30 minutes", s)
	}
	vals := strings.Split(la, ",")
	if len(vals) != 2 {
		return t, fmt.Errorf("%q: give lactate at minutes 10 and 30 after =, e.g. =2.1,2.6", s)
	}
	if t.la10, err = strconv.ParseFloat(strings.TrimSpace(vals[0]), 64); err != nil {
		return t, fmt.Errorf("%q: lactate %q is not a number", s, vals[0])
	}
	if t.la30, err = strconv.ParseFloat(strings.TrimSpace(vals[1]), 64); err != nil {
		return t, fmt.Errorf("%q: lactate %q is not a number", s, vals[1])
	}
	return t, nil
}

// measure reads the trial's ride and measures minutes 10–30.
func (sp trialSpec) measure(c *cli.Context) (lactate.Trial, error) {
	t := lactate.Trial{PowerW: math.NaN(), Lactate10Mmol: sp.la10, Lactate30Mmol: sp.la30, RideFile: sp.file, StartS: sp.startS, DurationS: sp.lengthS,
		Source: fmt.Sprintf("%s@%s", sp.file, view.Clock(sp.startS))}
	opts, err := ingestOptions(c)
	if err != nil {
		return t, err
	}
	rides, err := ingest.ReadFile(sp.file, opts)
	if err != nil {
		return t, err
	}
	r := &rides[0]
	t.Date = r.Date()
	power, err := r.Power()
	if err != nil {
		return t, err
	}
	if err := t.CheckRide(power); err != nil {
		return t, err
	}
	if t.Lactate10Mmol <= 0 || t.Lactate10Mmol > lactate.MaxLactate || t.Lactate30Mmol <= 0 || t.Lactate30Mmol > lactate.MaxLactate {
		return t, fmt.Errorf("lactate outside 0–%.0f mmol/L", lactate.MaxLactate)
	}
	return t, nil
}

// lactateMethods are the lactate-based methods `compare` takes.
func lactateMethods() []string {
	var ms []string
	for _, m := range lactate.Methods {
		ms = append(ms, m.Name)
	}
	return append(ms, lactate.MethodMLSS)
}

// labTests are the lactate tests and trials `compare` sets beside the
// field methods.
type labTests struct {
	analyses []lactate.Analysis
	trials   []lactate.Trial
}

// readLab reads step-test and MLSS-trial CSVs, one skipped line for each
// file or test that cannot be used.
func readLab(stepFiles, trialFiles []string) (labTests, []ingest.Skipped) {
	var lab labTests
	var skipped []ingest.Skipped
	read := func(path string, parse func(f *os.File) ([]error, error)) {
		f, err := os.Open(path)
		if err != nil {
			skipped = append(skipped, ingest.Skipped{File: path, Reason: fmt.Sprintf("cannot be opened (%v)", plainErr(err))})
			return
		}
		defer f.Close()
		bad, err := parse(f)
		if err != nil {
			bad = append(bad, err)
		}
		for _, b := range bad {
			skipped = append(skipped, ingest.Skipped{File: path, Reason: b.Error()})
		}
	}
	for _, path := range stepFiles {
		read(path, func(f *os.File) ([]error, error) {
			tests, bad, err := lactate.ReadSteps(f, path)
			for _, t := range tests {
				lab.analyses = append(lab.analyses, lactate.Analyse(t))
			}
			return bad, err
		})
	}
	for _, path := range trialFiles {
		read(path, func(f *os.File) ([]error, error) {
			ts, bad, err := lactate.ReadTrials(f, path)
			lab.trials = append(lab.trials, ts...)
			return bad, err
		})
	}
	return lab, skipped
}

// add puts the lactate methods of one subject into its estimates: the
// latest step test of the athlete (or dated within the window), and the
// MLSS bracket of its trials. A placed threshold is graded medium (a
// measured curve, but one test), an MLSS bracket medium when both its ends
// exist.
func (lab labTests) add(es map[string]estimate.MethodEstimate, athlete string, w powerduration.Window) map[string]estimate.MethodEstimate {
	mine := func(a, date string) bool {
		if athlete != "" {
			return a == athlete
		}
		return date != "" && w.Contains(date)
	}
	var latest *lactate.Analysis
	for i := range lab.analyses {
		a := &lab.analyses[i]
		if mine(a.Test.Athlete, a.Test.Date) && (latest == nil || a.Test.Date >= latest.Test.Date) {
			latest = a
		}
	}
	if latest != nil {
		for _, th := range latest.Thresholds {
			if th.OK() {
				es[th.Method] = estimate.MethodEstimate{Watts: th.PowerW, Confidence: estimate.Medium}
			}
		}
	}
	var ts []lactate.Trial
	for _, t := range lab.trials {
		if mine(t.Athlete, t.Date) {
			ts = append(ts, t)
		}
	}
	if br := lactate.BracketOf(ts); len(ts) > 0 && !math.IsNaN(br.MidW()) {
		es[lactate.MethodMLSS] = estimate.MethodEstimate{Watts: br.MidW(), Confidence: estimate.Medium}
	}
	return es
}
