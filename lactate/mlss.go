package lactate

import (
	"fmt"
	"math"
)

// MLSS trials: constant power for 30 minutes with lactate sampled at
// minutes 10 and 30. A trial passes when lactate rose by no more than
// MLSSRiseMmol between them (Heck et al. 1985; Beneke 2003).
const MLSSRiseMmol = 1.0

// Trial is one constant-power MLSS trial. When it was named in a ride file
// (RideFile set), MeasuredW and CVPct are the ride's mean power and the
// variability of its 30-s means over minutes 10–30, and Wandered says the
// power was not held.
type Trial struct {
	PowerW                       float64
	Lactate10Mmol, Lactate30Mmol float64
	Athlete, Date, Source        string
	RideFile                     string
	StartS, DurationS            int
	MeasuredW, CVPct             float64
	Wandered                     bool
	Note                         string
}

// RiseMmol is the rise of lactate from minute 10 to minute 30.
func (t Trial) RiseMmol() float64 { return t.Lactate30Mmol - t.Lactate10Mmol }

// Pass reports whether lactate held steady (see MLSSRiseMmol).
func (t Trial) Pass() bool { return t.RiseMmol() <= MLSSRiseMmol }

func (t Trial) check() string {
	switch {
	case math.IsNaN(t.PowerW) || t.PowerW <= 0 || t.PowerW > 1000:
		return "a trial needs its constant power (0–1000 W)"
	case math.IsNaN(t.Lactate10Mmol) || math.IsNaN(t.Lactate30Mmol):
		return "a trial needs lactate at minute 10 and at minute 30"
	case t.Lactate10Mmol <= 0 || t.Lactate10Mmol > MaxLactate || t.Lactate30Mmol <= 0 || t.Lactate30Mmol > MaxLactate:
		return fmt.Sprintf("lactate outside 0–%.0f mmol/L", MaxLactate)
	}
	return ""
}

// Held power (the tool's rule, common practice of constant-power trials):
// over minutes 10–30 the 30-s means vary by at most WanderCVPct per cent
// of their mean, and the mean is within WanderOffPct per cent of the
// trial's stated power.
const (
	WanderCVPct  = 5.0
	WanderOffPct = 3.0
)

// CheckRide measures trial t from its ride's 1-Hz power (t.StartS is the
// trial's first second): mean and variability of minutes 10–30. Without a
// stated power the measured mean becomes the trial's power.
func (t *Trial) CheckRide(power []float64) error {
	a, b := t.StartS+600, t.StartS+1800
	if t.StartS < 0 || b > len(power) {
		return fmt.Errorf("the ride has no minutes 10–30 of a trial starting at %d s (it is %d s long)", t.StartS, len(power))
	}
	sum := 0.0
	var means []float64
	for i := a; i < b; i += 30 {
		m := 0.0
		for _, p := range power[i:min(i+30, b)] {
			m += p
		}
		means = append(means, m/float64(min(i+30, b)-i))
		sum += m
	}
	t.MeasuredW = sum / float64(b-a)
	v := 0.0
	for _, m := range means {
		v += (m - t.MeasuredW) * (m - t.MeasuredW)
	}
	t.CVPct = 100 * math.Sqrt(v/float64(len(means))) / t.MeasuredW
	if math.IsNaN(t.PowerW) || t.PowerW == 0 {
		t.PowerW = t.MeasuredW
	}
	off := 100 * math.Abs(t.MeasuredW-t.PowerW) / t.PowerW
	switch {
	case t.CVPct > WanderCVPct:
		t.Wandered, t.Note = true, fmt.Sprintf("power wandered: its 30-s means varied by %.1f %% over minutes 10–30 (more than %.0f %%)", t.CVPct, WanderCVPct)
	case off > WanderOffPct:
		t.Wandered, t.Note = true, fmt.Sprintf("the ride's mean over minutes 10–30 was %.0f W, %.1f %% from the trial's %.0f W", t.MeasuredW, off, t.PowerW)
	}
	return nil
}

// Bracket is where MLSS lies: above the highest passing trial's power and
// below the lowest failing one above it. PassW or FailW is NaN when no
// such trial exists.
type Bracket struct {
	PassW, FailW float64
	Notes        []string
}

// MidW is the middle of the bracket (NaN unless both ends exist).
func (b Bracket) MidW() float64 { return (b.PassW + b.FailW) / 2 }

// BracketOf brackets MLSS by trials. Trials whose power wandered are left
// out, and a passing trial above a failing one is pointed out.
func BracketOf(trials []Trial) Bracket {
	br := Bracket{PassW: math.NaN(), FailW: math.NaN()}
	var usable []Trial
	for _, t := range trials {
		if t.Wandered {
			br.Notes = append(br.Notes, fmt.Sprintf("the %.0f W trial is left out: %s", t.PowerW, t.Note))
			continue
		}
		usable = append(usable, t)
		if t.Pass() && (math.IsNaN(br.PassW) || t.PowerW > br.PassW) {
			br.PassW = t.PowerW
		}
	}
	for _, t := range usable {
		above := math.IsNaN(br.PassW) || t.PowerW > br.PassW
		if !t.Pass() && above && (math.IsNaN(br.FailW) || t.PowerW < br.FailW) {
			br.FailW = t.PowerW
		}
		if !t.Pass() && !above {
			br.Notes = append(br.Notes, fmt.Sprintf("the %.0f W trial failed below a passing one (%.0f W): check its samples or the athlete's state that day", t.PowerW, br.PassW))
		}
	}
	switch {
	case math.IsNaN(br.PassW) && math.IsNaN(br.FailW):
		br.Notes = append(br.Notes, "no usable trial")
	case math.IsNaN(br.PassW):
		br.Notes = append(br.Notes, fmt.Sprintf("every trial failed: MLSS is below %.0f W", br.FailW))
	case math.IsNaN(br.FailW):
		br.Notes = append(br.Notes, fmt.Sprintf("every trial passed: MLSS is at least %.0f W", br.PassW))
	}
	return br
}
