package main

import (
	"fmt"
	"io"
	"math"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/sustain-cycling/sustain/estimate"
	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/powerduration"
	"github.com/urfave/cli/v2"
)

var modelNames = []string{estimate.ModelCP2, estimate.ModelCP2Work, estimate.ModelCP2Inverse, estimate.ModelMorton, estimate.ModelOmni}

func estimateFlags() []cli.Flag {
	return []cli.Flag{
		&cli.StringFlag{Name: "model", Usage: "headline model instead of the best-supported one: " + strings.Join(modelNames, ", ")},
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
			return o, usageError{fmt.Sprintf("--model takes one of %s, not %q", strings.Join(modelNames, ", "), m)}
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
		&cli.Float64Flag{Name: "mass", Usage: "rider mass in kg, to add W/kg"},
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
	out := estimateJSON(rep, res.Skipped)
	massKG, err := massOn(c, c.Args().Slice(), win.To)
	if err != nil {
		return err
	}
	out.Threshold.perKG(massKG)
	out.AuditForm = "integral"
	if opts.Differential {
		out.AuditForm = "differential"
	}
	w := c.App.Writer
	if c.Bool("json") {
		if err := writeJSON(w, out); err != nil {
			return err
		}
	} else {
		renderEstimate(w, out, massKG)
		reportSkipped(c.App.ErrWriter, out.Skipped)
	}
	if p := c.String("plot"); p != "" && len(rep.Curve.Points) > 0 {
		if err := plotEstimate(p, rep, plotTitle("Power-duration fit", c.Args().Slice(), win, rep.Rides)); err != nil {
			return fmt.Errorf("plot %s: %w", p, err)
		}
		if !c.Bool("json") {
			fmt.Fprintf(c.App.ErrWriter, "plot written to %s\n", p)
		}
	}
	if len(res.Rides) > 0 && rep.Rides == 0 {
		return cli.Exit(fmt.Sprintf("no ride between %s and %s", orOpen(win.From), orOpen(win.To)), exitNothing)
	}
	return nothingRead(res)
}

// JSON shapes of the output contract.
type modelJSON struct {
	Model     string            `json:"model"`
	CPW       float64           `json:"cp_w"`
	WPrimeJ   float64           `json:"w_prime_j"`
	PmaxW     *float64          `json:"pmax_w"`
	AW        *float64          `json:"a_w,omitempty"`
	CPSEW     float64           `json:"cp_se_w"`
	WPrimeSEJ float64           `json:"w_prime_se_j"`
	PmaxSEW   *float64          `json:"pmax_se_w,omitempty"`
	RMSEW     float64           `json:"rmse_w"`
	Conf      string            `json:"confidence"`
	Reasons   []string          `json:"reasons"`
	Efforts   []estimate.Effort `json:"efforts"`
}

type failedJSON struct {
	Model  string `json:"model"`
	Reason string `json:"reason"`
}

type adviceJSON struct {
	estimate.Advice
	Caution string `json:"caution"`
}

// thresholdJSON is the headline: watts, low_w and high_w are null when the
// data cannot support a number, and reason says why.
type thresholdJSON struct {
	Watts      *float64 `json:"watts"`
	LowW       *float64 `json:"low_w"`
	HighW      *float64 `json:"high_w"`
	Model      string   `json:"model"`
	Confidence string   `json:"confidence"`
	Reason     string   `json:"reason,omitempty"`
	FloorW     *float64 `json:"floor_w,omitempty"`
	FloorRule  string   `json:"floor_rule,omitempty"`
	RangeRule  string   `json:"range_rule"`
	// with --mass: the same per kilogram, and the mass
	MassKG      *float64 `json:"mass_kg,omitempty"`
	WattsPerKG  *float64 `json:"w_per_kg,omitempty"`
	LowWPerKG   *float64 `json:"low_w_per_kg,omitempty"`
	HighWPerKG  *float64 `json:"high_w_per_kg,omitempty"`
	FloorWPerKG *float64 `json:"floor_w_per_kg,omitempty"`
}

// perKG adds the threshold per kilogram of a rider of massKG (> 0).
func (t *thresholdJSON) perKG(massKG float64) {
	if massKG <= 0 {
		return
	}
	per := func(w *float64) *float64 {
		if w == nil {
			return nil
		}
		return ptr(*w / massKG)
	}
	t.MassKG = ptr(massKG)
	t.WattsPerKG, t.LowWPerKG, t.HighWPerKG, t.FloorWPerKG = per(t.Watts), per(t.LowW), per(t.HighW), per(t.FloorW)
}

func thresholdOf(th *estimate.Threshold) thresholdJSON {
	out := thresholdJSON{RangeRule: estimate.RangeRule}
	if th == nil {
		out.Reason = "nothing to estimate from"
		return out
	}
	if !th.Estimated() {
		out.Reason = th.Reason
		if th.FloorW > 0 {
			out.FloorW, out.FloorRule = ptr(th.FloorW), th.FloorRule
		}
		return out
	}
	out.Watts, out.LowW, out.HighW = ptr(th.Watts), ptr(th.LowW), ptr(th.HighW)
	out.Model, out.Confidence = th.Model, th.Confidence
	return out
}

type estimateOut struct {
	Window    powerduration.Window `json:"window"`
	Rides     int                  `json:"rides"`
	Skipped   []ingest.Skipped     `json:"skipped"`
	Threshold thresholdJSON        `json:"threshold"`
	Models    []modelJSON          `json:"models"`
	Failed    []failedJSON         `json:"failed"`
	Rules     []estimate.Rule      `json:"rules"`
	Warnings  []estimate.Warning   `json:"warnings"`
	Advice    adviceJSON           `json:"advice"`
	Audit     []estimate.AuditRide `json:"wbal_audit"`
	AuditForm string               `json:"wbal_form"` // integral (Skiba et al. 2012) or differential (2015)
	Efforts   []estimate.Effort    `json:"efforts"`
}

func ptr(v float64) *float64 { return &v }

// auditFormText names the form of W′ balance the audit replayed.
var auditFormText = map[string]string{
	"integral":     "integral form, Skiba et al. 2012",
	"differential": "differential form, Skiba et al. 2015",
}

func estimateJSON(rep estimate.Report, skipped []ingest.Skipped) estimateOut {
	out := estimateOut{Window: rep.Window, Rides: rep.Rides, Skipped: nonNil(skipped), Threshold: thresholdOf(rep.Threshold),
		Models: []modelJSON{}, Failed: []failedJSON{}, Rules: rep.Rules, Warnings: rep.Warnings,
		Advice: adviceJSON{rep.Advice, estimate.Caution}, Audit: rep.Audit, Efforts: rep.Efforts}
	for _, f := range rep.Models {
		m := modelJSON{Model: f.Model, CPW: f.CPW, WPrimeJ: f.WPrimeJ, CPSEW: f.CPSEW, WPrimeSEJ: f.WPrimeSEJ,
			RMSEW: f.RMSEW, Conf: f.Confidence, Reasons: f.Reasons, Efforts: f.Efforts}
		if f.PmaxW != 0 {
			m.PmaxW, m.PmaxSEW = ptr(f.PmaxW), ptr(f.PmaxSEW)
		}
		if f.Model == estimate.ModelOmni {
			m.AW = ptr(f.A)
		}
		out.Models = append(out.Models, m)
	}
	for _, name := range modelNames {
		if why, ok := rep.Failed[name]; ok {
			out.Failed = append(out.Failed, failedJSON{name, why})
		}
	}
	if out.Rules == nil {
		out.Rules = []estimate.Rule{}
	}
	if out.Warnings == nil {
		out.Warnings = []estimate.Warning{}
	}
	if out.Audit == nil {
		out.Audit = []estimate.AuditRide{}
	}
	if out.Efforts == nil {
		out.Efforts = []estimate.Effort{}
	}
	if out.Advice.Gaps == nil {
		out.Advice.Gaps = []string{}
	}
	return out
}

func renderEstimate(w io.Writer, out estimateOut, massKG float64) {
	fmt.Fprintf(w, "Window %s: %s\n\n", strings.TrimPrefix(span(out.Window), "from "), count(out.Rides, "ride"))
	if th := out.Threshold; th.Watts != nil {
		fmt.Fprintf(w, "Threshold (critical power): %.0f W, likely between %.0f and %.0f W; confidence %s (%s)\n",
			*th.Watts, *th.LowW, *th.HighW, th.Confidence, th.Model)
		if massKG > 0 {
			fmt.Fprintf(w, "  %.2f W/kg at %.1f kg\n", *th.Watts/massKG, massKG)
		}
		if th.Confidence == estimate.Low {
			fmt.Fprintln(w, "  The data cannot support a confident figure; the warnings below say why.")
		}
		fmt.Fprintf(w, "  (%s)\n", th.RangeRule)
	} else {
		fmt.Fprintf(w, "Threshold: not estimated: %s.\n", th.Reason)
		if th.FloorW != nil {
			fmt.Fprintf(w, "  It is at least %.0f W (%s).\n", *th.FloorW, th.FloorRule)
		}
	}
	if len(out.Models) > 0 {
		fmt.Fprintln(w, "\nModels")
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintln(tw, "  model\tCP (W)\tW′ (kJ)\tPmax (W)\tfit error\tconfidence\treasons")
		for _, m := range out.Models {
			pmax := "-"
			if m.PmaxW != nil {
				pmax = fmt.Sprintf("%.0f ± %.0f", *m.PmaxW, *m.PmaxSEW)
			}
			fmt.Fprintf(tw, "  %s\t%.1f ± %.1f\t%.1f ± %.1f\t%s\t%.1f W\t%s\t%s\n", m.Model, m.CPW, m.CPSEW, m.WPrimeJ/1000, m.WPrimeSEJ/1000,
				pmax, m.RMSEW, m.Conf, strings.Join(m.Reasons, "; "))
		}
		tw.Flush()
		fmt.Fprintln(w, "  (± one standard error; cp2-work and cp2-inverse are the linear forms of cp2, shown for comparison)")
	}
	for _, f := range out.Failed {
		fmt.Fprintf(w, "  %s: not fitted: %s\n", f.Model, f.Reason)
	}
	if len(out.Rules) > 0 {
		fmt.Fprintln(w, "\nRules of thumb (common practice)")
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		for _, r := range out.Rules {
			fmt.Fprintf(tw, "  %s\t%.0f W\t%s\tfrom %.0f W on %s at %s in %s\n", r.Rule, r.Watts, r.Confidence, r.Effort.Watts, r.Effort.Date, clock(r.Effort.OffsetS), shown(r.Effort.File))
		}
		tw.Flush()
		for _, r := range out.Rules {
			if r.Confidence == estimate.Low {
				fmt.Fprintf(w, "  %s is graded low: %s.\n", r.Rule, r.Reason)
			}
		}
	}
	var usedEfforts []estimate.Effort
	for _, e := range out.Efforts {
		if e.Status == estimate.EffortUsed {
			usedEfforts = append(usedEfforts, e)
		}
	}
	if len(usedEfforts) > 0 {
		fmt.Fprintln(w, "\nMaximal efforts found")
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		for _, e := range usedEfforts {
			flag := ""
			if e.FlaggedS > 0 {
				flag = fmt.Sprintf("  (%d s repaired or suspect)", e.FlaggedS)
			}
			fmt.Fprintln(tw, effortRow(e.Point)+flag)
		}
		tw.Flush()
		nested, padded, unconfirmed := 0, 0, 0
		for _, e := range out.Efforts {
			switch e.Status {
			case estimate.EffortNested:
				nested++
			case estimate.EffortPadded:
				padded++
			case estimate.EffortUnconfirmed:
				unconfirmed++
			}
		}
		if nested+padded+unconfirmed > 0 {
			fmt.Fprintf(w, "  (left out: %d bests that were parts of longer efforts, %d shorter efforts padded with easy riding, %d long bests below what the 2–20 min efforts' CP allows)\n", nested, padded, unconfirmed)
		}
	}
	if len(out.Warnings) > 0 {
		fmt.Fprintln(w, "\nWarnings")
		for _, x := range out.Warnings {
			fmt.Fprintf(w, "  [%s] %s\n", x.Code, x.Message)
		}
	}
	fmt.Fprintln(w, "\nAdvice")
	fmt.Fprintf(w, "  %s\n", out.Advice.Message)
	for _, g := range out.Advice.Gaps {
		fmt.Fprintf(w, "  - %s\n", g)
	}
	fmt.Fprintf(w, "  Caution: %s\n", estimate.Caution)
	if out.Threshold.Watts != nil {
		fmt.Fprintf(w, "\nW′ balance audit (%s fit, %s)\n", out.Threshold.Model, auditFormText[out.AuditForm])
		if len(out.Audit) == 0 {
			fmt.Fprintln(w, "  No ride drove W′ balance below −10 % of W′: the fit is consistent with every ride in the window.")
		}
		for _, a := range out.Audit {
			fmt.Fprintf(w, "  %s %s: balance fell to %.1f kJ at %s: CP or W′ is probably too low\n", a.Date, shown(a.File), a.MinBalanceJ/1000, clock(a.AtS))
		}
	}
}

// modelCurve samples a fit over the plotted durations.
func modelCurve(f estimate.Fit, maxS float64) [][2]float64 {
	var pts [][2]float64
	for t := 1.0; t <= maxS; t *= 1.08 {
		if p := f.Power(t); !math.IsNaN(p) && p > 0 {
			pts = append(pts, [2]float64{t, p})
		}
	}
	return pts
}
