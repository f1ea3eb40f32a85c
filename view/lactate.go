package view

import (
	"encoding/csv"
	"fmt"
	"io"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/sustain-cycling/sustain/estimate"
	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/lactate"
	"github.com/sustain-cycling/sustain/powerduration"
)

// The lactate view: what `sustain lactate` shows, in every rendering.
type LactateThreshold struct {
	Method       string   `json:"method"`
	Label        string   `json:"label"`
	Source       string   `json:"source"`
	PowerW       *float64 `json:"power_w"`
	LowW         *float64 `json:"low_w"`
	HighW        *float64 `json:"high_w"`
	HeartRateBPM *float64 `json:"heart_rate_bpm"`
	LactateMmol  *float64 `json:"lactate_mmol"`
	Note         string   `json:"note,omitempty"`
}

type LactateField struct {
	Window     powerduration.Window `json:"window"`
	Rides      int                  `json:"rides"`
	Threshold  Threshold            `json:"threshold"`
	Rule20W    *float64             `json:"rule_20min_w"`
	Rule20Conf string               `json:"rule_20min_confidence,omitempty"`
}

type LactateGap struct {
	Method   string  `json:"method"`
	LactateW float64 `json:"lactate_w"`
	Field    string  `json:"field"`
	FieldW   float64 `json:"field_w"`
	DiffW    float64 `json:"diff_w"`
	DiffPct  float64 `json:"diff_pct"`
	Note     string  `json:"note,omitempty"`
}

type LactateTest struct {
	File         string             `json:"file"`
	Test         string             `json:"test"`
	Athlete      string             `json:"athlete"`
	Date         string             `json:"date"`
	Steps        []LactateStep      `json:"steps"`
	BaselineMmol float64            `json:"baseline_mmol"`
	Thresholds   []LactateThreshold `json:"thresholds"`
	Notes        []string           `json:"notes"`
	Field        *LactateField      `json:"field"`
	Gaps         []LactateGap       `json:"gaps"`
}

type LactateStep struct {
	PowerW       float64  `json:"power_w"`
	LactateMmol  float64  `json:"lactate_mmol"`
	HeartRateBPM *float64 `json:"heart_rate_bpm"`
	StepS        int      `json:"step_s,omitempty"`
}

type LactateTrial struct {
	Source    string   `json:"source"`
	Athlete   string   `json:"athlete,omitempty"`
	Date      string   `json:"date,omitempty"`
	PowerW    float64  `json:"power_w"`
	La10Mmol  float64  `json:"lactate_10_mmol"`
	La30Mmol  float64  `json:"lactate_30_mmol"`
	RiseMmol  float64  `json:"rise_mmol"`
	Pass      bool     `json:"pass"`
	MeasuredW *float64 `json:"measured_w,omitempty"`
	CVPct     *float64 `json:"cv_pct,omitempty"`
	Wandered  bool     `json:"wandered"`
	Note      string   `json:"note,omitempty"`
}

type LactateMLSS struct {
	Date  string   `json:"date,omitempty"` // the latest trial's
	PassW *float64 `json:"pass_w"`
	FailW *float64 `json:"fail_w"`
	MidW  *float64 `json:"mid_w"`
	Notes []string `json:"notes"`
	Rule  string   `json:"rule"`
}

type LactateShift struct {
	From      string   `json:"from"`
	To        string   `json:"to"`
	LT2FromW  *float64 `json:"lt2_from_w"`
	LT2ToW    *float64 `json:"lt2_to_w"`
	OBLAFromW *float64 `json:"obla4_from_w"`
	OBLAToW   *float64 `json:"obla4_to_w"`
	Message   string   `json:"message"`
}

type Lactate struct {
	Tests   []LactateTest    `json:"tests"`
	Trials  []LactateTrial   `json:"trials"`
	MLSS    *LactateMLSS     `json:"mlss"`
	Shifts  []LactateShift   `json:"shifts"`
	Skipped []ingest.Skipped `json:"skipped"`
	Caution string           `json:"caution"`
}

func NewLactateTest(a lactate.Analysis) LactateTest {
	t := a.Test
	j := LactateTest{File: t.File, Test: t.Test, Athlete: t.Athlete, Date: t.Date, BaselineMmol: a.BaselineMmol,
		Steps: []LactateStep{}, Thresholds: []LactateThreshold{}, Notes: append([]string{}, a.Notes...), Gaps: []LactateGap{}}
	for _, s := range t.Steps {
		j.Steps = append(j.Steps, LactateStep{PowerW: s.PowerW, LactateMmol: s.LactateMmol, HeartRateBPM: Finite(s.HeartRateBPM), StepS: s.DurationS})
	}
	for _, th := range a.Thresholds {
		j.Thresholds = append(j.Thresholds, LactateThreshold{Method: th.Method, Label: th.Label, Source: th.Source,
			PowerW: Finite(th.PowerW), LowW: Finite(th.LowW), HighW: Finite(th.HighW),
			HeartRateBPM: Finite(th.HeartRateBPM), LactateMmol: Finite(th.LactateMmol), Note: th.Note})
	}
	return j
}

func fmtW(v *float64) string {
	if v == nil {
		return "-"
	}
	return fmt.Sprintf("%.0f", *v)
}

func RenderLactate(w io.Writer, out Lactate) {
	for i, t := range out.Tests {
		if i > 0 {
			fmt.Fprintln(w)
		}
		if len(t.Steps) > 0 {
			name := strings.Join(strings.Fields(t.Athlete+" "+OrOpen(t.Date)), " ")
			fmt.Fprintf(w, "Step test %s (%s): %d steps, baseline %.1f mmol/L (the lowest before the curve starts rising)\n",
				name, t.File, len(t.Steps), t.BaselineMmol)
			tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
			fmt.Fprintln(tw, "  method\tpower (W)\t95 % interval (W)\theart rate\tlactate (mmol/L)\tsource\tnote")
			for _, th := range t.Thresholds {
				iv, hr, la := "-", "-", "-"
				if th.LowW != nil && th.HighW != nil {
					iv = fmt.Sprintf("%.0f–%.0f", *th.LowW, *th.HighW)
				}
				if th.HeartRateBPM != nil {
					hr = fmt.Sprintf("%.0f bpm", *th.HeartRateBPM)
				}
				if th.LactateMmol != nil {
					la = fmt.Sprintf("%.1f", *th.LactateMmol)
				}
				fmt.Fprintf(tw, "  %s\t%s\t%s\t%s\t%s\t%s\t%s\n", th.Label, fmtW(th.PowerW), iv, hr, la, th.Source, th.Note)
			}
			tw.Flush()
			fmt.Fprintln(w, "  (interval: bootstrap over the steps, for the methods fitted through all of them)")
			for _, n := range t.Notes {
				fmt.Fprintf(w, "  Note: %s\n", n)
			}
		} else {
			fmt.Fprintln(w, "MLSS trials beside the field estimate")
		}
		if f := t.Field; f != nil {
			fmt.Fprintf(w, "  Field estimate, %s to %s (%d rides): ", f.Window.From, f.Window.To, f.Rides)
			if th := f.Threshold; th.Watts != nil {
				fmt.Fprintf(w, "CP %.0f W (%.0f–%.0f, %s, %s)", *th.Watts, *th.LowW, *th.HighW, th.Confidence, th.Model)
			} else {
				fmt.Fprintf(w, "CP not estimated: %s", th.Reason)
			}
			if f.Rule20W != nil {
				fmt.Fprintf(w, "; 95%% of best 20 min %.0f W (%s)", *f.Rule20W, f.Rule20Conf)
			}
			fmt.Fprintln(w)
			for _, g := range t.Gaps {
				if g.Field != "cp" {
					continue
				}
				fmt.Fprintf(w, "    CP − %s: %+.0f W (%+.1f %%)", g.Method, g.DiffW, g.DiffPct)
				if g.Note != "" {
					fmt.Fprintf(w, "  %s", g.Note)
				}
				fmt.Fprintln(w)
			}
			fmt.Fprintln(w, "    (CP usually sits a little above MLSS: Pringle & Jones 2002)")
		}
	}
	if len(out.Trials) > 0 {
		if len(out.Tests) > 0 {
			fmt.Fprintln(w)
		}
		fmt.Fprintln(w, "MLSS trials")
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintln(tw, "  power (W)\tlactate 10 min\t30 min\trise\tresult\tfrom the ride\tsource")
		for _, t := range out.Trials {
			res := "fail"
			if t.Pass {
				res = "pass"
			}
			ride := "-"
			if t.MeasuredW != nil {
				ride = fmt.Sprintf("%.0f W, 30-s means vary %.1f %%", *t.MeasuredW, *t.CVPct)
			}
			if t.Wandered {
				res += " (left out: " + t.Note + ")"
			}
			fmt.Fprintf(tw, "  %.0f\t%.1f\t%.1f\t%+.1f\t%s\t%s\t%s\n", t.PowerW, t.La10Mmol, t.La30Mmol, t.RiseMmol, res, ride, t.Source)
		}
		tw.Flush()
		if m := out.MLSS; m != nil {
			fmt.Fprintf(w, "  MLSS between %s and %s W (%s)\n", fmtW(m.PassW), fmtW(m.FailW), m.Rule)
			for _, n := range m.Notes {
				fmt.Fprintf(w, "  Note: %s\n", n)
			}
		}
	}
	if len(out.Shifts) > 0 {
		fmt.Fprintln(w, "\nOver time")
		for _, s := range out.Shifts {
			fmt.Fprintf(w, "  %s → %s: %s\n", s.From, s.To, s.Message)
		}
	}
	fmt.Fprintf(w, "\nCaution: %s\n", estimate.Caution)
}

func WriteLactateCSV(w io.Writer, out Lactate) error {
	cw := csv.NewWriter(w)
	cw.Write([]string{"athlete", "date", "test", "method", "power_w", "low_w", "high_w", "heart_rate_bpm", "source", "note"})
	num := func(v *float64) string {
		if v == nil {
			return ""
		}
		return strconv.FormatFloat(*v, 'f', 1, 64)
	}
	for _, t := range out.Tests {
		for _, th := range t.Thresholds {
			cw.Write([]string{t.Athlete, t.Date, t.Test, th.Method, num(th.PowerW), num(th.LowW), num(th.HighW), num(th.HeartRateBPM), th.Source, th.Note})
		}
	}
	if m := out.MLSS; m != nil {
		cw.Write([]string{"", m.Date, "MLSS trials", lactate.MethodMLSS, num(m.MidW), num(m.PassW), num(m.FailW), "", "Heck et al. 1985; Beneke 2003", strings.Join(m.Notes, "; ")})
	}
	cw.Flush()
	return cw.Error()
}
