package estimate

import (
	"fmt"
	"math"
	"slices"
	"time"

	"github.com/sustain-cycling/sustain/powerduration"
)

// Physiological ranges (common practice, from memory of published values
// for trained and untrained adults; wide on purpose).
const (
	minCPW, maxCPW         = 50.0, 600.0
	minWPrimeJ, maxWPrimeJ = 2000.0, 60000.0
	maxPmaxW               = 2600.0
	// allOutRatio: any rider's best 5 s, over weeks of riding that hold
	// maximal efforts, is several times CP (Pmax of cyclists is about 3–5×
	// CP, from memory of published values); a best 5 s below 1.8× CP says
	// nothing was ridden all out, so the 2–20 min bests may be tempo
	// riding rather than maximal efforts.
	allOutRatio = 1.8
	// noisyShare: share of the efforts' seconds that cleaning repaired or
	// flagged before the estimate is called noisy.
	noisyShare = 0.02
)

type gradeContext struct {
	efforts []Effort
	curve   powerduration.Curve
	newest  string
	opts    Options
}

func (c gradeContext) cp2Band() []Effort { return used(c.efforts, c.opts.CP2MinS, c.opts.CP2MaxS) }

// thin reports whether the window holds fewer than two distinct maximal
// efforts in the 2–20 min band, the efforts CP rests on.
func (c gradeContext) thin() (bool, int) {
	n := distinct(c.cp2Band())
	return n < 2, n
}

func flaggedShare(es []Effort) (share float64, seconds int) {
	total := 0
	for _, e := range es {
		seconds += e.FlaggedS
		total += e.DurationS
	}
	if total == 0 {
		return 0, 0
	}
	return float64(seconds) / float64(total), seconds
}

func (c gradeContext) newestEffort(es []Effort) string {
	newest := ""
	for _, e := range es {
		if e.Status == EffortUsed && e.Date > newest {
			newest = e.Date
		}
	}
	return newest
}

func daysBetween(a, b string) int {
	ta, err1 := time.Parse("2006-01-02", a)
	tb, err2 := time.Parse("2006-01-02", b)
	if err1 != nil || err2 != nil {
		return 0
	}
	return int(tb.Sub(ta).Hours() / 24)
}

func implausible(f *Fit) string {
	switch {
	case f.CPW < minCPW || f.CPW > maxCPW || math.IsNaN(f.CPW):
		return fmt.Sprintf("CP %.0f W is outside the physiological range (%.0f–%.0f W)", f.CPW, minCPW, maxCPW)
	case f.WPrimeJ < minWPrimeJ || f.WPrimeJ > maxWPrimeJ || math.IsNaN(f.WPrimeJ):
		return fmt.Sprintf("W′ %.1f kJ is outside the physiological range (%.0f–%.0f kJ)", f.WPrimeJ/1000, minWPrimeJ/1000, maxWPrimeJ/1000)
	case f.PmaxW != 0 && (f.PmaxW > maxPmaxW || f.PmaxW < f.CPW*1.2):
		return fmt.Sprintf("Pmax %.0f W is implausible for CP %.0f W", f.PmaxW, f.CPW)
	}
	return ""
}

// grade judges one fit.
func (c gradeContext) grade(f *Fit) Grade {
	g := Grade{Confidence: High}
	es := f.Efforts
	n := distinct(es)
	switch {
	case n < 2:
		g.cap(Low, fmt.Sprintf("only %d distinct maximal effort", n))
	case n < 3:
		g.cap(Medium, fmt.Sprintf("only %d distinct maximal efforts", n))
	}
	if len(f.Efforts) > 0 && f.Model != ModelOmni {
		lo, hi := f.Efforts[0].DurationS, f.Efforts[len(f.Efforts)-1].DurationS
		if float64(hi) < 3*float64(lo) {
			g.cap(Medium, fmt.Sprintf("efforts span only %s to %s", minutes(lo), minutes(hi)))
		}
	}
	nested := 0
	for _, e := range c.efforts {
		if e.Status == EffortNested && e.DurationS >= c.opts.CP2MinS && e.DurationS <= c.opts.CP2MaxS {
			nested++
		}
	}
	if nested > 0 && distinct(c.cp2Band()) < 3 {
		g.cap(Low, fmt.Sprintf("%d of the best 2–20 min powers are parts of longer efforts", nested))
	}
	if thin, k := c.thin(); thin {
		g.cap(Low, fmt.Sprintf("only %d distinct maximal effort(s) between %s and %s, where CP is decided", k, minutes(c.opts.CP2MinS), minutes(c.opts.CP2MaxS)))
	}
	if why := shortMisfit(f); why != "" {
		g.cap(Low, "the fit "+why)
	}
	if p, ok := c.curve.At(5); ok && f.CPW > 0 && p.Watts < allOutRatio*f.CPW {
		g.cap(Low, fmt.Sprintf("the best 5 s (%.0f W) is only %.1f× CP: nothing in these rides looks ridden all out, so the 2–20 min bests may be submaximal", p.Watts, p.Watts/f.CPW))
	}
	cpRel, wRel := f.CPSEW/f.CPW, f.WPrimeSEJ/f.WPrimeJ
	switch {
	case math.IsNaN(cpRel) || math.IsNaN(wRel) || f.CPSEW == 0:
		g.cap(Medium, "standard errors could not be computed")
	default:
		// lab practice asks for about 2 % on CP and 10 % on W′ (design note)
		if cpRel > 0.05 {
			g.cap(Low, fmt.Sprintf("CP standard error %.1f %% (lab practice asks for about 2 %%)", 100*cpRel))
		} else if cpRel > 0.02 {
			g.cap(Medium, fmt.Sprintf("CP standard error %.1f %% (lab practice asks for about 2 %%)", 100*cpRel))
		}
		if math.Abs(wRel) > 0.25 {
			g.cap(Low, fmt.Sprintf("W′ standard error %.0f %% (lab practice asks for about 10 %%)", 100*math.Abs(wRel)))
		} else if math.Abs(wRel) > 0.10 {
			g.cap(Medium, fmt.Sprintf("W′ standard error %.0f %% (lab practice asks for about 10 %%)", 100*math.Abs(wRel)))
		}
	}
	if why := implausible(f); why != "" {
		g.cap(Low, why)
	}
	if share, s := flaggedShare(used(es, 1, math.MaxInt)); share > noisyShare {
		g.cap(Medium, fmt.Sprintf("%d s (%.0f %%) of the efforts were repaired or look suspect (dropouts, gaps, spikes, stuck power)", s, 100*share))
	}
	// CP rests on the 2–20 min efforts, whatever the model
	if ne := c.newestEffort(c.cp2Band()); ne != "" && c.newest != "" {
		if days := daysBetween(ne, c.newest); days > c.opts.StaleDays {
			g.cap(Medium, fmt.Sprintf("the newest maximal effort used is from %s, %d days before the latest ride", ne, days))
		}
	}
	if len(g.Reasons) == 0 {
		g.Reasons = []string{fmt.Sprintf("%d distinct maximal efforts, CP standard error %.1f %%", n, 100*cpRel)}
	}
	if len(f.Dropped) > 0 {
		g.Reasons = append(g.Reasons, fmt.Sprintf("%d best(s) more than %.0f %% below the first fit's curve left out as submaximal", len(f.Dropped), 100*DropShare))
	}
	if f.Model == ModelOmni && !f.AIdentified {
		g.Reasons = append(g.Reasons, "A (the decline beyond 30 min) not identified: no maximal effort longer than 30 min")
	}
	return g
}

// warnings describe the data as a whole.
// OldDays: a window whose newest ride is older than this before today is
// warned of (a threshold moves within weeks of training or rest; common
// practice is to retest every 4–6 weeks).
const OldDays = 42

func (c gradeContext) warnings(rep Report) []Warning {
	var ws []Warning
	band := c.cp2Band()
	lo, hi := minutes(c.opts.CP2MinS), minutes(c.opts.CP2MaxS)
	thin, k := c.thin()
	switch {
	case rep.Rides < 3:
		ws = append(ws, Warning{WarnThinData, fmt.Sprintf("Only %d ride(s) in this window: too little to estimate threshold with confidence.", rep.Rides)})
	case k == 0:
		ws = append(ws, Warning{WarnThinData, fmt.Sprintf("No maximal effort between %s and %s in this window: the rides look like endurance riding. Any threshold from them is a floor, not an estimate.", lo, hi)})
	case thin:
		ws = append(ws, Warning{WarnThinData, fmt.Sprintf("Only one distinct maximal effort between %s and %s in this window: at least two, better three, of clearly different durations are needed.", lo, hi)})
	}
	// the longer effort that holds most of the nested bests
	nested, most := 0, 0
	var host Effort
	holds := map[string]int{}
	for _, e := range c.efforts {
		if e.Status == EffortNested && e.DurationS >= c.opts.CP2MinS && e.DurationS <= c.opts.CP2MaxS {
			nested++
			k := fmt.Sprintf("%s|%d|%d", e.File, e.Session, e.InsideS)
			if holds[k]++; holds[k] > most {
				most, host = holds[k], e
			}
		}
	}
	n := distinct(band)
	if nested > 0 && n < 3 {
		where := ""
		if host.Source != nil {
			where = fmt.Sprintf(" (a %s effort, %s on %s)", minutes(host.InsideS), host.File, host.Date)
		}
		ws = append(ws, Warning{WarnNested, fmt.Sprintf("%d of your best powers between %s and %s are only parts of a longer effort%s, not efforts of their own: they cannot show how power falls with duration.", nested, lo, hi, where)})
	}
	if n > 0 && n < 3 {
		ws = append(ws, Warning{WarnFewEfforts, fmt.Sprintf("Only %d distinct maximal effort(s) between %s and %s; at least 3 of clearly different durations are needed for a trustworthy fit.", n, lo, hi)})
	}
	if share, s := flaggedShare(band); share > noisyShare {
		ws = append(ws, Warning{WarnNoisyData, fmt.Sprintf("%d s of the efforts used (%.0f %%) were repaired by cleaning or look suspect (dropouts, gaps, spikes, stuck power); check those rides with sustain inspect.", s, 100*share)})
	}
	if ne := c.newestEffort(band); ne != "" {
		if days := daysBetween(ne, c.newest); days > c.opts.StaleDays {
			ws = append(ws, Warning{WarnStaleData, fmt.Sprintf("The newest maximal effort between %s and %s is from %s, %d days before your latest ride: threshold may have moved since.", lo, hi, ne, days)})
		}
	}
	if c.opts.Today != "" && c.newest != "" {
		if days := daysBetween(c.newest, c.opts.Today); days > OldDays {
			ws = append(ws, Warning{WarnOldData, fmt.Sprintf("The newest ride in this window is from %s, more than %d days before today (%s): this is the threshold of then, and it may have moved since.", c.newest, OldDays, c.opts.Today)})
		}
	}
	for _, f := range rep.Models {
		if why := implausible(&f); why != "" && slices.Contains(headlineModels, f.Model) {
			ws = append(ws, Warning{WarnImplausible, fmt.Sprintf("%s fit: %s.", f.Model, why)})
		}
	}
	return ws
}
