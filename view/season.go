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

type Window struct {
	From       string   `json:"from"`
	To         string   `json:"to"`
	Rides      int      `json:"rides"`
	Estimated  bool     `json:"estimated"`
	Reason     string   `json:"reason,omitempty"`
	Model      string   `json:"model"`
	CPW        *float64 `json:"cp_w"`
	CPSEW      *float64 `json:"cp_se_w"`
	CPHalfW    *float64 `json:"cp_half_w"`
	WPrimeJ    *float64 `json:"w_prime_j"`
	WPrimeSEJ  *float64 `json:"w_prime_se_j"`
	WPrimeHalf *float64 `json:"w_prime_half_j"`
	PmaxW      *float64 `json:"pmax_w"`
	PmaxSEW    *float64 `json:"pmax_se_w"`
	PmaxHalfW  *float64 `json:"pmax_half_w"`
	ThresholdW *float64 `json:"threshold_w"`
	LowW       *float64 `json:"threshold_low_w"`
	HighW      *float64 `json:"threshold_high_w"`
	Headline   string   `json:"threshold_model,omitempty"`
	Confidence *string  `json:"confidence"`
	// with a mass (--mass, or the athletes file's in force at the
	// window's end): per kilogram
	MassKG          *float64 `json:"mass_kg,omitempty"`
	CPWPerKG        *float64 `json:"cp_w_per_kg,omitempty"`
	ThresholdWPerKG *float64 `json:"threshold_w_per_kg,omitempty"`
}

// Change: CP and Pmax changes are in watts (the _w keys), W′ changes
// in joules (the _j keys); the other pair is absent.
type Change struct {
	From      powerduration.Window `json:"from"`
	To        powerduration.Window `json:"to"`
	Component string               `json:"component"`
	DeltaW    *float64             `json:"delta_w,omitempty"`
	SEW       *float64             `json:"se_w,omitempty"`
	HalfW     *float64             `json:"half_w,omitempty"`
	DeltaJ    *float64             `json:"delta_j,omitempty"`
	SEJ       *float64             `json:"se_j,omitempty"`
	HalfJ     *float64             `json:"half_j,omitempty"`
	Message   string               `json:"message"`
}

func ChangeOf(c estimate.Change) Change {
	j := Change{From: c.From, To: c.To, Component: c.Component, Message: c.Message}
	if c.Component == "w_prime" {
		j.DeltaJ, j.SEJ, j.HalfJ = Ptr(c.Delta), Ptr(c.SE), Ptr(c.HalfWidth)
	} else {
		j.DeltaW, j.SEW, j.HalfW = Ptr(c.Delta), Ptr(c.SE), Ptr(c.HalfWidth)
	}
	return j
}

type Season struct {
	Rides   int              `json:"rides"`
	Skipped []ingest.Skipped `json:"skipped"`
	Windows []Window         `json:"windows"`
	Changes []Change         `json:"changes"`
	Overall string           `json:"overall"`
}

func NewSeason(rep estimate.SeasonReport, skipped []ingest.Skipped, rides int) Season {
	out := Season{Rides: rides, Skipped: NonNil(skipped), Windows: []Window{}, Changes: []Change{}, Overall: rep.Overall}
	for _, w := range rep.Windows {
		j := Window{From: w.From, To: w.To, Rides: w.Rides, Estimated: w.Estimated, Reason: w.Reason, Model: w.Model}
		if w.Estimated {
			j.CPW, j.CPSEW, j.CPHalfW = Ptr(w.CPW), Ptr(w.CPSEW), Ptr(w.HalfW(w.CPSEW))
			j.WPrimeJ, j.WPrimeSEJ, j.WPrimeHalf = Ptr(w.WPrimeJ), Ptr(w.WPrimeSEJ), Ptr(w.HalfW(w.WPrimeSEJ))
			if w.PmaxW > 0 {
				j.PmaxW, j.PmaxSEW, j.PmaxHalfW = Ptr(w.PmaxW), Ptr(w.PmaxSEW), Ptr(w.HalfW(w.PmaxSEW))
			}
			if t := w.Threshold; t.Estimated() {
				j.ThresholdW, j.LowW, j.HighW, j.Headline = Ptr(t.Watts), Ptr(t.LowW), Ptr(t.HighW), t.Model
			}
			conf := w.Confidence
			j.Confidence = &conf
		}
		out.Windows = append(out.Windows, j)
	}
	for _, c := range rep.Changes {
		out.Changes = append(out.Changes, ChangeOf(c))
	}
	return out
}

func Num(v *float64, scale float64, se *float64) string {
	if v == nil {
		return "-"
	}
	if se == nil {
		return fmt.Sprintf("%.0f", *v/scale)
	}
	if scale == 1 {
		return fmt.Sprintf("%.0f ± %.0f", *v, *se)
	}
	return fmt.Sprintf("%.1f ± %.1f", *v/scale, *se/scale)
}

func RenderSeason(w io.Writer, out Season, so estimate.SeasonOptions, first, last string) {
	comps := "CP, W′ and Pmax"
	if so.Components == estimate.ModelCP2 {
		comps = "CP and W′"
	}
	fmt.Fprintf(w, "Season %s to %s: %s; windows of %d days every %d days; %s from the %s model\n",
		OrOpen(first), OrOpen(last), Count(out.Rides, "ride"), so.WindowDays, so.StepDays, comps, so.Components)
	fmt.Fprintln(w, "(every ± below is the 95 % half-width: Student t for the fit's degrees of freedom × its standard error)")
	fmt.Fprintln(w)
	// a Pmax column only for a components model that has Pmax
	withPmax := so.Components != estimate.ModelCP2
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	pmaxHead, pmaxNone := "", ""
	if withPmax {
		pmaxHead, pmaxNone = "Pmax (W)\t", "-\t"
	}
	fmt.Fprintf(tw, "window\trides\tCP (W)\tW′ (kJ)\t%sthreshold (W, model)\tconfidence\t\n", pmaxHead)
	for _, x := range out.Windows {
		if !x.Estimated {
			fmt.Fprintf(tw, "%s – %s\t%d\t-\t-\t%s-\t-\tnot estimated: %s\n", x.From, x.To, x.Rides, pmaxNone, x.Reason)
			continue
		}
		th := "not estimated"
		if x.ThresholdW != nil {
			th = fmt.Sprintf("%.0f (%.0f–%.0f, %s)", *x.ThresholdW, *x.LowW, *x.HighW, x.Headline)
			if x.ThresholdWPerKG != nil {
				th += fmt.Sprintf(", %.2f W/kg at %.1f kg", *x.ThresholdWPerKG, *x.MassKG)
			}
		}
		pmax := ""
		if withPmax {
			pmax = Num(x.PmaxW, 1, x.PmaxHalfW) + "\t"
		}
		fmt.Fprintf(tw, "%s – %s\t%d\t%s\t%s\t%s%s\t%s\t\n", x.From, x.To, x.Rides, Num(x.CPW, 1, x.CPHalfW), Num(x.WPrimeJ, 1000, x.WPrimeHalf),
			pmax, th, *x.Confidence)
	}
	tw.Flush()
	fmt.Fprintf(w, "\nWhat changed (each window against the one %d days earlier, beyond both windows' uncertainty)\n", so.WindowDays)
	if len(out.Changes) == 0 {
		fmt.Fprintln(w, "  Nothing moved beyond its uncertainty.")
	}
	for i := 0; i < len(out.Changes); {
		j, parts := i, []string{}
		for ; j < len(out.Changes) && out.Changes[j].From == out.Changes[i].From && out.Changes[j].To == out.Changes[i].To; j++ {
			parts = append(parts, ShortChange(out.Changes[j]))
		}
		fmt.Fprintf(w, "  window ending %s → window ending %s: %s\n", out.Changes[i].From.To, out.Changes[i].To.To, strings.Join(parts, ", "))
		i = j
	}
	fmt.Fprintf(w, "\nOverall: %s\n", out.Overall)
}

func ShortChange(c Change) string {
	switch c.Component {
	case "cp":
		return fmt.Sprintf("CP %+.1f W (± %.1f)", *c.DeltaW, *c.HalfW)
	case "w_prime":
		return fmt.Sprintf("W′ %+.1f kJ (± %.1f)", *c.DeltaJ/1000, *c.HalfJ/1000)
	}
	return fmt.Sprintf("Pmax %+.0f W (± %.0f)", *c.DeltaW, *c.HalfW)
}

// PerKG adds to each estimated window its CP and threshold per kilogram,
// with the mass in force at the window's end (mass: kg on a date, nil or
// 0 when unknown).
func (out *Season) PerKG(mass func(date string) float64) {
	if mass == nil {
		return
	}
	for i := range out.Windows {
		w := &out.Windows[i]
		if !w.Estimated {
			continue
		}
		kg := mass(w.To)
		if kg <= 0 {
			continue
		}
		w.MassKG, w.CPWPerKG = Ptr(kg), Ptr(*w.CPW/kg)
		if w.ThresholdW != nil {
			w.ThresholdWPerKG = Ptr(*w.ThresholdW / kg)
		}
	}
}

// SquadRow is one athlete of a squad: the threshold of their latest
// window and how CP moved over the last six weeks.
type SquadRow struct {
	Athlete     string               `json:"athlete"`
	Rides       int                  `json:"rides"`
	Skipped     []ingest.Skipped     `json:"skipped"`
	LastRide    string               `json:"last_ride"`
	Threshold   *Threshold           `json:"threshold"`
	Change6wW   *float64             `json:"cp_change_6w_w"`
	Significant bool                 `json:"cp_change_significant"`
	Window      powerduration.Window `json:"window"`
}

// RenderSquad writes a squad's table, a row per athlete; detail is the
// command that shows one athlete's season.
func RenderSquad(w io.Writer, squad string, windowDays int, rows []SquadRow, detail string) {
	fmt.Fprintf(w, "Squad %s: %s; threshold from each athlete's latest %d-day window\n\n", squad, Count(len(rows), "athlete"), windowDays)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "athlete\tthreshold (W)\tconfidence\tCP change, 6 weeks\trides\tlast ride\t")
	for _, r := range rows {
		th, conf, ch := "-", "-", "-"
		if t := r.Threshold; t != nil && t.Watts != nil {
			th = fmt.Sprintf("%.0f (%.0f–%.0f, %s)", *t.Watts, *t.LowW, *t.HighW, t.Model)
			if t.WattsPerKG != nil {
				th += fmt.Sprintf(", %.2f W/kg", *t.WattsPerKG)
			}
			conf = t.Confidence
		} else if t != nil {
			th = "not estimated"
		}
		if r.Change6wW != nil {
			ch = fmt.Sprintf("%+.0f W", *r.Change6wW)
			if !r.Significant {
				ch += " (within uncertainty)"
			}
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%d\t%s\t\n", r.Athlete, th, conf, ch, r.Rides, OrOpen(r.LastRide))
	}
	tw.Flush()
	fmt.Fprintf(w, "\nDetail for one athlete: %s\n", detail)
}
