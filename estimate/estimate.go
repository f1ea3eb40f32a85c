package estimate

import (
	"fmt"
	"math"
	"slices"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/powerduration"
)

// Confidence grades.
const (
	High   = "high"
	Medium = "medium"
	Low    = "low"
)

func rank(g string) int { return map[string]int{High: 2, Medium: 1, Low: 0}[g] }

// Grade is how far an estimate can be trusted, and why.
type Grade struct {
	Confidence string
	Reasons    []string
}

// cap lowers the grade to at most g, recording why.
func (gr *Grade) cap(g, reason string) {
	if rank(g) < rank(gr.Confidence) {
		gr.Confidence = g
	}
	gr.Reasons = append(gr.Reasons, reason)
}

// Warning codes (stable: scripts depend on them).
const (
	WarnThinData    = "thin-data"
	WarnNoisyData   = "noisy-data"
	WarnStaleData   = "stale-data"
	WarnNested      = "nested-efforts"
	WarnFewEfforts  = "few-efforts"
	WarnImplausible = "implausible"
	WarnOldData     = "old-data"
)

// Warning is something wrong with the data as a whole.
type Warning struct {
	Code    string `json:"code"`
	Message string `json:"message"`
}

// Rule is a rule-of-thumb threshold (common practice, no single source).
type Rule struct {
	Rule       string              `json:"rule"`
	Watts      float64             `json:"watts"`
	Effort     powerduration.Point `json:"effort"`
	Note       string              `json:"note"`
	Confidence string              `json:"confidence"`
	Reason     string              `json:"reason"`
}

// Threshold is the headline: the critical power of the best-supported
// model, with a range. When the data cannot support a number, Reason says
// why, Watts and the range are zero, and FloorW (when not zero) is a power
// the threshold is at least (FloorRule says which).
type Threshold struct {
	Watts      float64 `json:"watts"`
	LowW       float64 `json:"low_w"`
	HighW      float64 `json:"high_w"`
	Model      string  `json:"model"`
	Confidence string  `json:"confidence"`
	Reason     string  `json:"reason,omitempty"`
	FloorW     float64 `json:"floor_w,omitempty"`
	FloorRule  string  `json:"floor_rule,omitempty"`
}

// Estimated reports whether the threshold is a number (not "not estimated").
func (t *Threshold) Estimated() bool { return t != nil && t.Reason == "" }

// Advice names the effort that would tighten CP the most.
type Advice struct {
	FromS    int      `json:"from_s"`
	ToS      int      `json:"to_s"`
	CPSEW    float64  `json:"cp_se_w"`     // the standard error now
	NewCPSEW float64  `json:"new_cp_se_w"` // the standard error with one more maximal effort in the band
	Message  string   `json:"message"`
	Gaps     []string `json:"gaps"` // duration bands with no maximal effort
}

// Caution is shown wherever the tool suggests a maximal effort.
const Caution = "Maximal efforts are strenuous: if you are unsure about your health, get medical clearance first. This is not medical advice."

// Options tune an estimate.
type Options struct {
	// CP2MinS and CP2MaxS bound the efforts of the 2-parameter fit
	// (default 120 and 1200 s).
	CP2MinS, CP2MaxS int
	// Model, when set, chooses the headline model instead of the
	// best-supported one.
	Model string
	// StaleDays: efforts older than this before the window's end make the
	// estimate stale (default 42).
	StaleDays int
	// Differential selects the 2015 differential form of W′ balance
	// (Skiba et al. 2015) instead of the 2012 integral form.
	Differential bool
	// Today (YYYY-MM-DD), when set, is the day the estimate is read: a
	// window whose newest ride is more than OldDays before it is warned of
	// (old-data). Left empty, nothing is compared with the clock.
	Today string
	// Rules are the rules of thumb shown beside the models (default
	// DefaultRules).
	Rules []RuleSpec
	// NoAudit leaves out the W′ balance audit (a replay of every ride in
	// the window), for callers that do not show it (a season's windows).
	NoAudit bool
}

func (o *Options) defaults() {
	if o.CP2MinS <= 0 {
		o.CP2MinS = 120
	}
	if o.CP2MaxS <= 0 {
		o.CP2MaxS = 1200
	}
	if o.StaleDays <= 0 {
		o.StaleDays = 42
	}
	if o.Rules == nil {
		o.Rules = DefaultRules
	}
}

// Report is a complete estimate for one window.
type Report struct {
	Window    powerduration.Window
	Rides     int
	Curve     powerduration.Curve
	Efforts   []Effort
	Threshold *Threshold // nil when nothing could be estimated
	Models    []Fit
	Failed    map[string]string // model → why it could not be fitted
	Rules     []Rule
	Warnings  []Warning
	Advice    Advice
	Audit     []AuditRide
	// AuditForm is the form of W′ balance the audit replays: "integral"
	// (Skiba et al. 2012) or "differential" (2015).
	AuditForm string
}

// Estimate fits the models to the maximal efforts among the rides within
// w. curves are the rides' curves in the same order as rides.
//
// The stages, in order: the efforts (best clean windows judged against
// their own rides, efforts.go), the fits (fit.go; each refitted without
// efforts far below its curve), the grades and warnings (grade.go), the
// headline and its range (headline.go), the advice and the W′ balance
// audit.
func Estimate(rides []ingest.Ride, curves []powerduration.RideCurve, w powerduration.Window, opts Options) Report {
	opts.defaults()
	index := map[rideKey]*ingest.Ride{}
	own := map[rideKey]powerduration.RideCurve{}
	var inRides []*ingest.Ride
	var inCurves, effortCurves []powerduration.RideCurve
	for i := range rides {
		r := &rides[i]
		if !w.Contains(r.Date()) {
			continue
		}
		// efforts never rest on suspect power: the ride's best clean windows
		ec := curves[i]
		if stuck, margins := r.Quality.StuckSpans(), r.Quality.SpikeMargins(); len(stuck)+len(margins) > 0 {
			if pw, err := r.Power(); err == nil && len(pw) > 0 {
				ec = powerduration.OfRideAvoiding(r, pw, stuck, margins)
			}
		}
		k := rideKey{r.File, r.Session}
		index[k], own[k] = r, ec
		inRides = append(inRides, r)
		inCurves = append(inCurves, curves[i])
		effortCurves = append(effortCurves, ec)
	}
	rep := Report{Window: w, Rides: len(inRides), Failed: map[string]string{}, AuditForm: "integral"}
	if opts.Differential {
		rep.AuditForm = "differential"
	}
	rep.Curve = powerduration.BestOf(inCurves)
	if len(rep.Curve.Points) == 0 {
		rep.Warnings = append(rep.Warnings, Warning{WarnThinData, "No rides in this window."})
		rep.Threshold = &Threshold{Reason: "no rides in this window"}
		return rep
	}
	clean := powerduration.BestOf(effortCurves)
	rep.Efforts = SelectEfforts(clean, 1, math.MaxInt, index, own)

	cp2Efforts := used(rep.Efforts, opts.CP2MinS, opts.CP2MaxS)
	var cp0, w0 float64
	if fits, err := refit(cp2Efforts, 3, fitCP2); err == nil {
		rep.Models = append(rep.Models, fits...)
		cp0, w0 = fits[0].CPW, fits[0].WPrimeJ
		confirmLong(rep.Efforts, opts.CP2MaxS, cp0, index)
	} else {
		rep.Failed[ModelCP2] = fitFailure(err, len(cp2Efforts))
		confirmLong(rep.Efforts, opts.CP2MaxS, 0, index)
		cp0, w0 = startValues(clean)
	}
	rep.Rules = rules(clean, rep.Efforts, rep.model(ModelCP2), opts.Rules)
	pmax0 := 0.0
	if p, ok := clean.At(1); ok {
		pmax0 = p.Watts
	}
	mortonEfforts := used(rep.Efforts, 15, opts.CP2MaxS)
	if fs, err := refit(mortonEfforts, 4, func(es []Effort) ([]Fit, error) { return one(fitMorton(es, cp0, w0, pmax0)) }); err == nil {
		rep.Models = append(rep.Models, fs...)
	} else {
		rep.Failed[ModelMorton] = fitFailure(err, len(mortonEfforts))
	}
	// omni-domain: maximal efforts up to 30 min, and A only when a maximal
	// effort beyond 30 min exists
	omniEfforts := used(rep.Efforts, 1, int(OmniTCPMaxS))
	long := used(rep.Efforts, int(OmniTCPMaxS)+1, math.MaxInt)
	withA := len(long) > 0
	omniEfforts = append(omniEfforts, long...)
	np := 3
	if withA {
		np = 4
	}
	if fs, err := refit(omniEfforts, np+1, func(es []Effort) ([]Fit, error) {
		a := slices.ContainsFunc(es, func(e Effort) bool { return e.DurationS > int(OmniTCPMaxS) })
		return one(fitOmni(es, cp0, w0, pmax0, a))
	}); err == nil {
		rep.Models = append(rep.Models, fs...)
	} else {
		rep.Failed[ModelOmni] = fitFailure(err, len(omniEfforts))
	}

	newest := powerduration.Newest(inCurves)
	ctx := gradeContext{efforts: rep.Efforts, curve: clean, newest: newest, opts: opts}
	for i := range rep.Models {
		rep.Models[i].Grade = ctx.grade(&rep.Models[i])
	}
	rep.Warnings = ctx.warnings(rep)
	rep.Threshold = headline(rep, ctx, opts.Model)
	rep.Advice = advise(rep, opts)
	if rep.Threshold.Estimated() && !opts.NoAudit {
		if f := rep.model(rep.Threshold.Model); f != nil {
			rep.Audit = audit(inRides, *f, opts.Differential)
		}
	}
	return rep
}

func fitFailure(err error, n int) string {
	if err == ErrTooFewPoints {
		return fmt.Sprintf("too few maximal efforts to fit (%d)", n)
	}
	return err.Error()
}

// startValues guesses CP and W′ from the curve when no 2-parameter fit exists.
func startValues(c powerduration.Curve) (cp, wPrime float64) {
	cp = 200
	if p, ok := c.At(1200); ok {
		cp = 0.93 * p.Watts
	} else if n := len(c.Points); n > 0 {
		cp = 0.9 * c.Points[n-1].Watts
	}
	return cp, 20000
}

func (r *Report) model(name string) *Fit {
	for i := range r.Models {
		if r.Models[i].Model == name {
			return &r.Models[i]
		}
	}
	return nil
}

// rules computes the rules of thumb with the provenance of their effort,
// each graded by the effort behind it: medium when that effort is a
// maximal effort of its own (for the 60-min rule: consistent with the CP of
// the 2–20 min efforts, see LongShare), low otherwise. A rule of thumb is
// never graded high: it has no standard error.
func rules(c powerduration.Curve, es []Effort, cp2 *Fit, specs []RuleSpec) []Rule {
	var out []Rule
	for _, spec := range specs {
		r := struct {
			d int
			f float64
		}{spec.DurationS, spec.Share}
		p, ok := c.At(r.d)
		if !ok || p.Watts <= 0 {
			continue
		}
		rule := Rule{Rule: spec.Name(), Watts: r.f * p.Watts, Effort: p, Note: "common practice", Confidence: Low}
		i := slices.IndexFunc(es, func(e Effort) bool { return e.DurationS == r.d })
		switch {
		case i < 0:
			rule.Reason = "no effort of that duration was looked for or found"
		case es[i].Status == EffortUsed && (r.d <= 1200 || cp2 != nil):
			rule.Confidence = Medium
			rule.Reason = "a maximal effort of its own; a rule of thumb has no standard error"
			if r.d <= 1200 && cp2 != nil && p.Watts < (1-DropShare)*cp2.Power(float64(r.d)) {
				rule.Confidence = Low
				rule.Reason = fmt.Sprintf("the best %s is more than %.0f %% below what the 2–20 min efforts predict: not a maximal effort", minutes(r.d), 100*DropShare)
			}
		case es[i].Status == EffortUnconfirmed:
			rule.Reason = fmt.Sprintf("the best %s is not consistent with the CP of the 2–20 min efforts: endurance riding, not a maximal effort", minutes(r.d))
			if cp2 == nil {
				rule.Reason = fmt.Sprintf("no 2–20 min efforts to show that the best %s was a maximal effort", minutes(r.d))
			}
		default:
			rule.Reason = fmt.Sprintf("the best %s is %s, not a maximal effort of its own", minutes(r.d), es[i].Status)
		}
		if r.d <= 1200 && cp2 == nil && rule.Confidence == Medium {
			rule.Confidence = Low
			rule.Reason = fmt.Sprintf("no other maximal efforts between 2 and 20 min to show that the best %s was maximal", minutes(r.d))
		}
		out = append(out, rule)
	}
	return out
}
