package estimate

import (
	"errors"
	"fmt"
	"math"
)

// AllOutS is the length of the 3-minute all-out test.
const AllOutS = 180

// AllOut is a 3-minute all-out test analysed by its published rules
// (Vanhatalo, Doust & Burnley 2007, MSSE, "Determination of critical power
// using a 3-min all-out cycling test"): the end-test power (EP), mean power
// of the final 30 s, estimates CP; the work done above EP (WEP), the
// power–time integral above EP over the test, estimates W′.
type AllOut struct {
	StartS     int      `json:"start_s"`
	EndPowerW  float64  `json:"end_power_w"`
	WorkAboveJ float64  `json:"work_above_end_power_j"`
	MeanW      float64  `json:"mean_w"`
	First30W   float64  `json:"first_30s_w"`
	PeakW      float64  `json:"peak_w"`
	CoastingS  int      `json:"coasting_s"` // longest run below 10 % of EP
	WasAllOut  bool     `json:"all_out"`
	Problems   []string `json:"problems"`
}

// Checks that the effort really was all-out (common practice, the ratio
// from memory of published all-out profiles, where the first 30 s average
// about twice the end-test power): the first 30 s well above the end, no
// coasting, and no rise of power towards the end, which would mean the
// rider paced.
const (
	minFirstToEnd = 1.5
	maxCoastingS  = 3
	maxEndRise    = 1.05
)

// ThreeMinuteAllOut analyses the 180 s of power from start.
func ThreeMinuteAllOut(power []float64, start int) (AllOut, error) {
	if start < 0 || start+AllOutS > len(power) {
		return AllOut{}, fmt.Errorf("the test needs %d s from %d s, the ride has %d s", AllOutS, start, len(power))
	}
	p := power[start : start+AllOutS]
	mean := func(a, b int) float64 {
		s := 0.0
		for _, v := range p[a:b] {
			s += v
		}
		return s / float64(b-a)
	}
	a := AllOut{StartS: start, EndPowerW: mean(150, 180), MeanW: mean(0, 180), First30W: mean(0, 30)}
	run := 0
	for _, v := range p {
		a.PeakW = math.Max(a.PeakW, v)
		if v > a.EndPowerW {
			a.WorkAboveJ += v - a.EndPowerW
		}
		if v < 0.1*a.EndPowerW || v == 0 {
			run++
			a.CoastingS = max(a.CoastingS, run)
		} else {
			run = 0
		}
	}
	if a.EndPowerW <= 0 {
		return a, errors.New("no power in the final 30 s")
	}
	if r := a.First30W / a.EndPowerW; r < minFirstToEnd {
		a.Problems = append(a.Problems, fmt.Sprintf("paced, not all-out: the first 30 s were only %.2f× the end-test power (an all-out start is well above %.1f×)", r, minFirstToEnd))
	}
	if a.CoastingS >= maxCoastingS {
		a.Problems = append(a.Problems, fmt.Sprintf("coasting for %d s: an all-out test never eases off", a.CoastingS))
	}
	if mid := mean(120, 150); a.EndPowerW > maxEndRise*mid {
		a.Problems = append(a.Problems, fmt.Sprintf("power rose at the end (%.0f W after %.0f W): the rider held back earlier", a.EndPowerW, mid))
	}
	a.WasAllOut = len(a.Problems) == 0
	if a.Problems == nil {
		a.Problems = []string{}
	}
	return a, nil
}

// Trials is a multi-trial critical-power test: separate maximal efforts
// fitted with the hyperbolic 2-parameter model.
type Trials struct {
	Fit      Fit
	CPSEPct  float64
	WSEPct   float64
	Accepted bool
	Problems []string
}

// Quality bar of lab practice for a multi-trial fit (from memory, not a
// single source): a standard error of CP within about 2–5 % and of W′
// within about 10 %.
const (
	trialsMaxCPSE = 0.05
	trialsMaxWSE  = 0.10
)

// MultiTrial fits the 2-parameter model to the efforts (at least 3, of
// different durations).
func MultiTrial(es []Effort) (Trials, error) {
	if len(es) < 3 {
		return Trials{}, fmt.Errorf("a multi-trial test needs at least 3 efforts, got %d", len(es))
	}
	fits, err := fitCP2(es)
	if err != nil {
		return Trials{}, err
	}
	f := fits[0]
	t := Trials{Fit: f, CPSEPct: 100 * f.CPSEW / f.CPW, WSEPct: 100 * math.Abs(f.WPrimeSEJ/f.WPrimeJ), Problems: []string{}}
	if t.CPSEPct > 100*trialsMaxCPSE {
		t.Problems = append(t.Problems, fmt.Sprintf("CP standard error %.1f %% is above the usual bar of about 2–5 %%: the efforts are scattered (not all maximal, or ridden on different days of form)", t.CPSEPct))
	}
	if t.WSEPct > 100*trialsMaxWSE {
		t.Problems = append(t.Problems, fmt.Sprintf("W′ standard error %.0f %% is above the usual bar of about 10 %%", t.WSEPct))
	}
	if why := implausible(&f); why != "" {
		t.Problems = append(t.Problems, why)
	}
	lo, hi := es[0].DurationS, es[0].DurationS
	for _, e := range es {
		lo, hi = min(lo, e.DurationS), max(hi, e.DurationS)
	}
	if hi < 3*lo {
		t.Problems = append(t.Problems, fmt.Sprintf("efforts span only %s to %s; trials of about 3 to 12–15 min separate CP from W′ best", minutes(lo), minutes(hi)))
	}
	t.Accepted = len(t.Problems) == 0
	return t, nil
}
