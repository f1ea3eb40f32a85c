package view

import (
	"fmt"
	"io"
	"strings"
	"text/tabwriter"

	"github.com/sustain-cycling/sustain/estimate"
	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/powerduration"
)

// JSON shapes of the output contract.
type Model struct {
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

type Failed struct {
	Model  string `json:"model"`
	Reason string `json:"reason"`
}

type Advice struct {
	estimate.Advice
	Caution string `json:"caution"`
}

// Threshold is the headline: watts, low_w and high_w are null when the
// data cannot support a number, and reason says why.
type Threshold struct {
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
func (t *Threshold) PerKG(massKG float64) {
	if massKG <= 0 {
		return
	}
	per := func(w *float64) *float64 {
		if w == nil {
			return nil
		}
		return Ptr(*w / massKG)
	}
	t.MassKG = Ptr(massKG)
	t.WattsPerKG, t.LowWPerKG, t.HighWPerKG, t.FloorWPerKG = per(t.Watts), per(t.LowW), per(t.HighW), per(t.FloorW)
}

func ThresholdOf(th *estimate.Threshold) Threshold {
	out := Threshold{RangeRule: estimate.RangeRule}
	if th == nil {
		out.Reason = "nothing to estimate from"
		return out
	}
	if !th.Estimated() {
		out.Reason = th.Reason
		if th.FloorW > 0 {
			out.FloorW, out.FloorRule = Ptr(th.FloorW), th.FloorRule
		}
		return out
	}
	out.Watts, out.LowW, out.HighW = Ptr(th.Watts), Ptr(th.LowW), Ptr(th.HighW)
	out.Model, out.Confidence = th.Model, th.Confidence
	return out
}

type Estimate struct {
	Window    powerduration.Window `json:"window"`
	Rides     int                  `json:"rides"`
	Skipped   []ingest.Skipped     `json:"skipped"`
	Threshold Threshold            `json:"threshold"`
	Models    []Model              `json:"models"`
	Failed    []Failed             `json:"failed"`
	Rules     []estimate.Rule      `json:"rules"`
	Warnings  []estimate.Warning   `json:"warnings"`
	Advice    Advice               `json:"advice"`
	Audit     []estimate.AuditRide `json:"wbal_audit"`
	AuditForm string               `json:"wbal_form"` // integral (Skiba et al. 2012) or differential (2015)
	Efforts   []estimate.Effort    `json:"efforts"`
}

// AuditFormText names the form of W′ balance the audit replayed.
var AuditFormText = map[string]string{
	"integral":     "integral form, Skiba et al. 2012",
	"differential": "differential form, Skiba et al. 2015",
}

func NewEstimate(rep estimate.Report, skipped []ingest.Skipped) Estimate {
	out := Estimate{Window: rep.Window, Rides: rep.Rides, Skipped: NonNil(skipped), Threshold: ThresholdOf(rep.Threshold),
		Models: []Model{}, Failed: []Failed{}, Rules: rep.Rules, Warnings: rep.Warnings,
		Advice: Advice{rep.Advice, estimate.Caution}, Audit: rep.Audit, AuditForm: rep.AuditForm, Efforts: rep.Efforts}
	for _, f := range rep.Models {
		m := Model{Model: f.Model, CPW: f.CPW, WPrimeJ: f.WPrimeJ, CPSEW: f.CPSEW, WPrimeSEJ: f.WPrimeSEJ,
			RMSEW: f.RMSEW, Conf: f.Confidence, Reasons: f.Reasons, Efforts: f.Efforts}
		if f.PmaxW != 0 {
			m.PmaxW, m.PmaxSEW = Ptr(f.PmaxW), Ptr(f.PmaxSEW)
		}
		if f.Model == estimate.ModelOmni {
			m.AW = Ptr(f.A)
		}
		out.Models = append(out.Models, m)
	}
	for _, name := range estimate.ModelNames {
		if why, ok := rep.Failed[name]; ok {
			out.Failed = append(out.Failed, Failed{name, why})
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

func RenderEstimate(w io.Writer, out Estimate, massKG float64) {
	fmt.Fprintf(w, "Window %s: %s\n\n", strings.TrimPrefix(Span(out.Window), "from "), Count(out.Rides, "ride"))
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
			fmt.Fprintf(tw, "  %s\t%.0f W\t%s\tfrom %.0f W on %s at %s in %s\n", r.Rule, r.Watts, r.Confidence, r.Effort.Watts, r.Effort.Date, Clock(r.Effort.OffsetS), Shown(r.Effort.File))
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
			fmt.Fprintln(tw, EffortRow(e.Point)+flag)
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
		fmt.Fprintf(w, "\nW′ balance audit (%s fit, %s)\n", out.Threshold.Model, AuditFormText[out.AuditForm])
		if len(out.Audit) == 0 {
			fmt.Fprintln(w, "  No ride drove W′ balance below −10 % of W′: the fit is consistent with every ride in the window.")
		}
		for _, a := range out.Audit {
			fmt.Fprintf(w, "  %s %s: balance fell to %.1f kJ at %s: CP or W′ is probably too low\n", a.Date, Shown(a.File), a.MinBalanceJ/1000, Clock(a.AtS))
		}
	}
}
