package estimate

import (
	"fmt"
	"math"
	"slices"
	"sort"

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
)

// Warning is something wrong with the data as a whole.
type Warning struct {
	Code    string `json:"code"`
	Message string `json:"message"`
}

// Rule is a rule-of-thumb threshold (common practice, no single source).
type Rule struct {
	Rule   string              `json:"rule"`
	Watts  float64             `json:"watts"`
	Effort powerduration.Point `json:"effort"`
	Note   string              `json:"note"`
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
}

// Estimate fits the models to the best-of curve of the rides within w.
// curves are the rides' curves in the same order as rides.
func Estimate(rides []ingest.Ride, curves []powerduration.RideCurve, w powerduration.Window, opts Options) Report {
	opts.defaults()
	index := map[rideKey]*ingest.Ride{}
	own := map[rideKey]powerduration.RideCurve{}
	var inRides []*ingest.Ride
	var inCurves []powerduration.RideCurve
	for i := range rides {
		if w.Contains(rides[i].Date()) {
			k := rideKey{rides[i].File, rides[i].Session}
			index[k], own[k] = &rides[i], curves[i]
			inRides = append(inRides, &rides[i])
			inCurves = append(inCurves, curves[i])
		}
	}
	rep := Report{Window: w, Rides: len(inRides), Failed: map[string]string{}}
	rep.Curve = powerduration.BestOf(inCurves)
	if len(rep.Curve.Points) == 0 {
		rep.Warnings = append(rep.Warnings, Warning{WarnThinData, "No rides in this window."})
		return rep
	}
	rep.Efforts = SelectEfforts(rep.Curve, 1, math.MaxInt, index, own)
	rep.Rules = rules(rep.Curve)

	cp2Efforts := used(rep.Efforts, opts.CP2MinS, opts.CP2MaxS)
	var cp0, w0 float64
	if fits, err := fitCP2(cp2Efforts); err == nil {
		rep.Models = append(rep.Models, fits...)
		cp0, w0 = fits[0].CPW, fits[0].WPrimeJ
	} else {
		rep.Failed[ModelCP2] = fitFailure(err, len(cp2Efforts))
		cp0, w0 = startValues(rep.Curve)
	}
	pmax0 := 0.0
	if p, ok := rep.Curve.At(1); ok {
		pmax0 = p.Watts
	}
	mortonEfforts := used(rep.Efforts, 15, opts.CP2MaxS)
	if f, err := fitMorton(mortonEfforts, cp0, w0, pmax0); err == nil {
		rep.Models = append(rep.Models, f)
	} else {
		rep.Failed[ModelMorton] = fitFailure(err, len(mortonEfforts))
	}
	var omniPts []Effort
	for _, d := range omniDurations {
		if p, ok := rep.Curve.At(d); ok && p.Watts > 0 {
			omniPts = append(omniPts, Effort{Point: p, Status: EffortUsed})
		}
	}
	if f, err := fitOmni(omniPts, cp0, w0, pmax0); err == nil {
		rep.Models = append(rep.Models, f)
	} else {
		rep.Failed[ModelOmni] = fitFailure(err, len(omniPts))
	}

	newest := powerduration.Newest(inCurves)
	ctx := gradeContext{efforts: rep.Efforts, curve: rep.Curve, newest: newest, opts: opts}
	for i := range rep.Models {
		rep.Models[i].Grade = ctx.grade(&rep.Models[i])
	}
	rep.Warnings = ctx.warnings(rep)
	rep.Threshold = headline(rep, opts.Model)
	rep.Advice = advise(rep, opts)
	if rep.Threshold != nil {
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

// rules computes the rules of thumb with the provenance of their effort.
func rules(c powerduration.Curve) []Rule {
	var out []Rule
	for _, r := range []struct {
		name string
		d    int
		f    float64
	}{{"95% of best 20 min", 1200, 0.95}, {"90% of best 8 min", 480, 0.90}, {"best 60 min", 3600, 1}} {
		if p, ok := c.At(r.d); ok && p.Watts > 0 {
			out = append(out, Rule{Rule: r.name, Watts: r.f * p.Watts, Effort: p, Note: "common practice"})
		}
	}
	return out
}

// headlineModels may give the headline; the linear 2-parameter forms are
// shown for comparison only.
var headlineModels = []string{ModelCP2, ModelMorton, ModelOmni}

// headline picks the best-supported model: highest grade, then the smallest
// relative standard error of CP; choice, when set, overrides.
func headline(rep Report, choice string) *Threshold {
	var cands []Fit
	for _, f := range rep.Models {
		if (choice == "" && slices.Contains(headlineModels, f.Model)) || f.Model == choice {
			cands = append(cands, f)
		}
	}
	if len(cands) == 0 {
		for _, r := range rep.Rules {
			if r.Rule == "95% of best 20 min" && choice == "" {
				return &Threshold{Watts: r.Watts, LowW: 0.9 * r.Watts, HighW: 1.05 * r.Watts, Model: "20min-rule", Confidence: Low}
			}
		}
		return nil
	}
	sort.SliceStable(cands, func(i, j int) bool {
		a, b := cands[i], cands[j]
		if rank(a.Confidence) != rank(b.Confidence) {
			return rank(a.Confidence) > rank(b.Confidence)
		}
		return a.CPSEW/a.CPW < b.CPSEW/b.CPW
	})
	f := cands[0]
	half := math.Max(1.96*f.CPSEW, 0.01*f.CPW)
	if f.Confidence == Low {
		// field CP differs from lab CP by about 5 % (SEE 5.2 %, Karsten et
		// al. 2015, Eur J Appl Physiol): a low grade gets at least that
		half = math.Max(half, 0.05*f.CPW)
	}
	return &Threshold{Watts: f.CPW, LowW: f.CPW - half, HighW: f.CPW + half, Model: f.Model, Confidence: f.Confidence}
}
