package estimate

import (
	"fmt"
	"math"
	"strings"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/powerduration"
)

// SeasonOptions control rolling estimates.
type SeasonOptions struct {
	Options
	WindowDays int // length of each window (default 42)
	StepDays   int // distance between window ends (default 7)
	// Components is the model whose CP, W′ and Pmax are followed across
	// the season (default the 2-parameter model, which named real changes
	// most often and false ones least on the accuracy report's invented
	// seasons of every truth model); one model for every window, so that a
	// change is never a change of model.
	Components string
}

// SeasonWindow is the estimate over one rolling window. When Estimated is
// false the window had too little data and Reason says why; the figures
// are then zero.
type SeasonWindow struct {
	powerduration.Window
	Rides      int
	Estimated  bool
	Reason     string
	Model      string // the components model
	CPW        float64
	CPSEW      float64
	WPrimeJ    float64
	WPrimeSEJ  float64
	PmaxW      float64
	PmaxSEW    float64
	Threshold  *Threshold
	Confidence string // of the components model's fit
	// DF is the components fit's residual degrees of freedom; the "±" of
	// every season figure is Student t for it times the standard error.
	DF int
}

// HalfW is the 95 % half-width of a season figure with standard error se:
// the one meaning of "±" in a season (table, changes and plot bars).
func (w SeasonWindow) HalfW(se float64) float64 { return tQuantile(w.DF) * se }

// Change is a component that moved between two windows beyond their
// combined uncertainty.
type Change struct {
	From, To  powerduration.Window
	Component string  // "cp", "w_prime" or "pmax"
	Delta     float64 // watts, or joules for W′
	SE        float64 // combined standard error of the difference
	// HalfWidth is the 95 % half-width of the difference (Student t for
	// the smaller of the two fits' degrees of freedom times SE): the "±"
	// of its message.
	HalfWidth float64
	Message   string
}

// SeasonReport is the whole season.
type SeasonReport struct {
	Windows []SeasonWindow
	// Changes between windows that do not overlap (each window against the
	// one a window length earlier) and from the first estimated window to
	// the last.
	Changes []Change
	// OverallChanges are the changes from the first estimated window to
	// the last.
	OverallChanges []Change
	// Overall names what moved from first to last, or that nothing did.
	Overall string
}

// Practical floors below which a change is not reported however small its
// standard error: which efforts happen to fall in a window moves field CP
// by 2–3 % and W′ by 10–15 % between windows of a stable athlete
// (measured by `make accuracy` on invented stable seasons, where the
// fits' own standard errors are smaller than that).
const (
	floorCP     = 0.03 // of CP
	floorWPrime = 0.15 // of W′
	floorPmax   = 0.08 // of Pmax (sprints vary more from day to day)
)

// Season estimates over rolling windows spanning all the rides.
func Season(rides []ingest.Ride, curves []powerduration.RideCurve, opts SeasonOptions) SeasonReport {
	if opts.WindowDays <= 0 {
		opts.WindowDays = 42
	}
	if opts.StepDays <= 0 {
		opts.StepDays = 7
	}
	if opts.Components == "" {
		opts.Components = ModelCP2
	}
	// A ride lies in several overlapping windows: its power (kept in a
	// store until needed) is read once for the run, and let go with it.
	// The windows' W′ balance audits are not shown, so not replayed.
	own := make([]ingest.Ride, len(rides))
	for i := range rides {
		own[i] = rides[i]
		own[i].ReadPowerOnce()
	}
	opts.NoAudit = true
	var rep SeasonReport
	for _, w := range SeasonWindows(rides, opts.WindowDays, opts.StepDays) {
		r := Estimate(own, curves, w, opts.Options)
		rep.Windows = append(rep.Windows, seasonWindow(r, opts.Components))
	}
	rep.Changes, rep.OverallChanges, rep.Overall = changes(rep.Windows, opts.WindowDays/opts.StepDays)
	return rep
}

// SeasonWindows are the rolling windows over the rides: windowDays long,
// ending every stepDays back from the newest ride, until one reaches back to
// the first ride.
func SeasonWindows(rides []ingest.Ride, windowDays, stepDays int) []powerduration.Window {
	if len(rides) == 0 || windowDays <= 0 || stepDays <= 0 {
		return nil
	}
	first, last := rides[0].Date(), rides[0].Date()
	for i := range rides {
		d := rides[i].Date()
		first, last = min(first, d), max(last, d)
	}
	lastT, _ := time.Parse("2006-01-02", last)
	firstT, _ := time.Parse("2006-01-02", first)
	var ws []powerduration.Window
	for end := lastT; ; end = end.AddDate(0, 0, -stepDays) {
		ws = append([]powerduration.Window{powerduration.LastDays(end.Format("2006-01-02"), windowDays)}, ws...)
		if !end.AddDate(0, 0, -(windowDays - 1)).After(firstT) {
			break
		}
	}
	return ws
}

func seasonWindow(r Report, model string) SeasonWindow {
	sw := SeasonWindow{Window: r.Window, Rides: r.Rides, Model: model, Threshold: r.Threshold}
	f := r.model(model)
	switch {
	case r.Rides == 0:
		sw.Reason = "no rides"
	case hasCode(r.Warnings, WarnThinData):
		sw.Reason = "no maximal efforts in this window"
	case f == nil:
		sw.Reason = fmt.Sprintf("%s could not be fitted: %s", model, r.Failed[model])
	case f.Confidence == Low:
		sw.Reason = "too uncertain: " + strings.Join(f.Reasons, "; ")
	}
	if sw.Reason != "" {
		return sw
	}
	sw.Estimated = true
	sw.CPW, sw.CPSEW, sw.WPrimeJ, sw.WPrimeSEJ = f.CPW, f.CPSEW, f.WPrimeJ, f.WPrimeSEJ
	sw.PmaxW, sw.PmaxSEW = f.PmaxW, f.PmaxSEW
	sw.Confidence = f.Confidence
	sw.DF = f.DF
	return sw
}

func hasCode(ws []Warning, code string) bool {
	for _, w := range ws {
		if w.Code == code {
			return true
		}
	}
	return false
}

// changes compares each estimated window with the estimated window `apart`
// steps earlier (so the two share no ride), and the first with the last.
func changes(ws []SeasonWindow, apart int) ([]Change, []Change, string) {
	apart = max(apart, 1)
	// only windows graded high are compared: a medium window's CP rests on
	// thin or partly suspect efforts, and the accuracy report measured
	// that comparing them names false changes in noisy seasons
	sure := func(w SeasonWindow) bool { return w.Estimated && w.Confidence == High }
	var out []Change
	for i := range ws {
		j := i - apart
		if j < 0 || !sure(ws[i]) || !sure(ws[j]) {
			continue
		}
		out = append(out, compare(ws[j], ws[i])...)
	}
	var est []SeasonWindow
	for _, w := range ws {
		if sure(w) {
			est = append(est, w)
		}
	}
	if len(est) < 2 {
		return out, nil, "Too few windows graded high to say what changed."
	}
	a, b := est[0], est[len(est)-1]
	overall := compare(a, b)
	if len(overall) == 0 {
		return out, nil, fmt.Sprintf("From %s–%s to %s–%s no component moved beyond its uncertainty.", a.From, a.To, b.From, b.To)
	}
	s := fmt.Sprintf("From %s–%s to %s–%s:", a.From, a.To, b.From, b.To)
	for _, c := range overall {
		s += " " + c.Message
	}
	return out, overall, s
}

// compare names the components that moved from a to b.
func compare(a, b SeasonWindow) []Change {
	var out []Change
	type comp struct {
		name                string
		va, sa, vb, sb, flo float64
		unit                string
		scale               float64
	}
	comps := []comp{
		{"cp", a.CPW, a.CPSEW, b.CPW, b.CPSEW, floorCP * a.CPW, "W", 1},
		{"w_prime", a.WPrimeJ, a.WPrimeSEJ, b.WPrimeJ, b.WPrimeSEJ, floorWPrime * a.WPrimeJ, "kJ", 1000},
	}
	if a.PmaxW > 0 && b.PmaxW > 0 {
		comps = append(comps, comp{"pmax", a.PmaxW, a.PmaxSEW, b.PmaxW, b.PmaxSEW, floorPmax * a.PmaxW, "W", 1})
	}
	for _, c := range comps {
		d := c.vb - c.va
		se := math.Hypot(c.sa, c.sb)
		half := tQuantile(min(a.DF, b.DF)) * se
		if math.Abs(d) <= half || math.Abs(d) <= c.flo {
			continue
		}
		out = append(out, Change{From: a.Window, To: b.Window, Component: c.name, Delta: d, SE: se, HalfWidth: half,
			Message: changeMessage(c.name, d/c.scale, half/c.scale, c.unit)})
	}
	return out
}

func changeMessage(component string, d, half float64, unit string) string {
	amount := fmt.Sprintf("%.1f %s (± %.1f)", math.Abs(d), unit, half)
	switch {
	case component == "cp" && d > 0:
		return "CP rose by " + amount + ": the boundary of sustainable power moved up, the sign of a larger aerobic capacity or less glycolytic production at a given power."
	case component == "cp":
		return "CP fell by " + amount + ": the sustainable boundary moved down (detraining or fatigue), or this window's efforts were not fully maximal."
	case component == "w_prime" && d > 0:
		return "W′ rose by " + amount + ": more work is available above CP, as after high-intensity or sprint work."
	case component == "w_prime":
		return "W′ fell by " + amount + ": less work is available above CP; common when CP rises after aerobic work, or when short hard efforts were missing."
	case d > 0:
		return "Pmax rose by " + amount + ": more peak (neuromuscular) power."
	default:
		return "Pmax fell by " + amount + ": less peak power, or no true sprint in this window."
	}
}

// RecentChange is the change of CP from the estimated window ending about
// days before the last estimated window to the last one, and whether it is
// beyond their combined uncertainty (and the practical floor).
func RecentChange(rep SeasonReport, days int) (delta float64, significant bool, ok bool) {
	var last *SeasonWindow
	for i := len(rep.Windows) - 1; i >= 0; i-- {
		if rep.Windows[i].Estimated {
			last = &rep.Windows[i]
			break
		}
	}
	if last == nil {
		return 0, false, false
	}
	end, err := time.Parse("2006-01-02", last.To)
	if err != nil {
		return 0, false, false
	}
	target := end.AddDate(0, 0, -days).Format("2006-01-02")
	for i := len(rep.Windows) - 1; i >= 0; i-- {
		w := rep.Windows[i]
		if w.To <= target && w.Estimated {
			d := last.CPW - w.CPW
			for _, c := range compare(w, *last) {
				significant = significant || c.Component == "cp"
			}
			return d, significant, true
		}
	}
	return 0, false, false
}
