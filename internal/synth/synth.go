// Package synth invents rides for tests and the demo: an invented athlete
// whose maximal power follows a known power-duration relation, riding
// field-like sessions (mostly submaximal, a few maximal efforts, noise and
// the ordinary faults of power meters), written as FIT, TCX or CSV.
//
// Everything here is invented. Ground-truth tests use it because the true
// critical power and W′ of an invented athlete are known exactly.
package synth

import (
	"math"
	"math/rand/v2"
	"time"
)

// Truth models: the power-duration relation an invented athlete's maximal
// power follows. Ground truth comes from all of them, so that no fitted
// model is favoured by data generated from itself.
const (
	// TruthMorton is Morton's 3-parameter model (Morton 1996):
	// P(t) = CP + W′/(t + W′/(Pmax − CP)). The zero value.
	TruthMorton = ""
	// TruthCP2 is the 2-parameter model (Monod & Scherrer 1965),
	// P(t) = CP + W′/t, capped at Pmax for the shortest durations.
	TruthCP2 = "cp2"
	// TruthOmni is the omni-domain model (Puchowicz, Baker & Clarke 2020):
	// P(t) = W′/t·(1 − e^(−t·(Pmax − CP)/W′)) + CP.
	TruthOmni = "omni"
)

// Athlete is an invented rider whose best sustainable power for t seconds
// follows one truth model (Truth, Morton's by default) up to 1800 s and,
// beyond that, declines by A watts per unit of ln(t/1800) as in the
// omni-domain model's long-duration term (no one holds CP for hours).
type Athlete struct {
	Name    string
	Truth   string  // TruthMorton, TruthCP2 or TruthOmni
	CPW     float64 // critical power, watts
	WPrimeJ float64 // W′, joules
	PmaxW   float64 // peak power, watts
	A       float64 // long-duration decline, W per unit of ln(t/1800)
}

// MaxPower returns the highest mean power the athlete can hold for t seconds.
func (a Athlete) MaxPower(t float64) float64 {
	var p float64
	switch a.Truth {
	case TruthCP2:
		p = math.Min(a.PmaxW, a.CPW+a.WPrimeJ/t)
	case TruthOmni:
		p = a.WPrimeJ/t*(1-math.Exp(-t*(a.PmaxW-a.CPW)/a.WPrimeJ)) + a.CPW
	default:
		p = a.CPW + a.WPrimeJ/(t+a.WPrimeJ/(a.PmaxW-a.CPW))
	}
	if t > 1800 {
		p -= a.A * math.Log(t/1800)
	}
	return p
}

// Segment is a stretch of steady target power.
type Segment struct {
	Seconds int
	Watts   float64
	Maximal bool // a maximal effort: held without noise so its mean is exact
}

// Track is a ride's recorded samples at 1 Hz before any cleaning: NaN in
// PowerW means the sample carries no power value, and Skip[i] that sample i
// was not recorded at all.
type Track struct {
	Start        time.Time
	Sport        string // "cycling", "running", …
	PowerW       []float64
	HeartRateBPM []float64 // optional
	CadenceRPM   []float64 // optional
	Skip         []bool    // optional
	Efforts      []Mark    // the maximal efforts it holds, where known
}

// Build renders segments to 1-Hz power: Gaussian noise of noiseW on the
// submaximal segments, rounded to whole watts as meters record them; on
// maximal segments 2 % noise around a mean that is the target to within
// the rounding (a fraction of a watt).
func Build(start time.Time, segs []Segment, noiseW float64, seed uint64) Track {
	rng := rand.New(rand.NewPCG(seed, seed^0x5eed))
	var p, hr, cad []float64
	for _, s := range segs {
		seg := make([]float64, s.Seconds)
		for i := range seg {
			w := s.Watts
			if w > 0 {
				if s.Maximal {
					w += rng.NormFloat64() * 0.02 * s.Watts
				} else {
					w = math.Max(0, w+rng.NormFloat64()*noiseW)
				}
			}
			seg[i] = w
		}
		if s.Maximal && s.Seconds > 0 {
			// pedalling is never perfectly even, but the effort's mean is
			// the athlete's exact maximal power for its duration
			mean := 0.0
			for _, w := range seg {
				mean += w
			}
			shift := s.Watts - mean/float64(len(seg))
			for i := range seg {
				seg[i] += shift
			}
		}
		for _, w := range seg {
			w = math.Round(w)
			p = append(p, w)
			hr = append(hr, math.Round(math.Min(95+0.25*w, 195)))
			c := 0.0
			if w > 0 {
				c = math.Round(80 + rng.NormFloat64()*3)
			}
			cad = append(cad, c)
		}
	}
	return Track{Start: start, Sport: "cycling", PowerW: p, HeartRateBPM: hr, CadenceRPM: cad}
}

// FieldRide is a typical outdoor session: a warm-up, endurance riding at
// about 65 % of CP, and a maximal effort of each given duration (seconds)
// separated by easy recovery.
func FieldRide(a Athlete, start time.Time, minutes int, efforts []int, seed uint64) Track {
	segs := []Segment{{Seconds: 600, Watts: 0.55 * a.CPW}}
	rest := minutes*60 - 600
	for _, d := range efforts {
		segs = append(segs,
			Segment{Seconds: 600, Watts: 0.65 * a.CPW},
			Segment{Seconds: d, Watts: a.MaxPower(float64(d)), Maximal: true},
			Segment{Seconds: 600, Watts: 0.45 * a.CPW})
		rest -= 1200 + d
	}
	if rest > 0 {
		segs = append(segs, Segment{Seconds: rest, Watts: 0.65 * a.CPW})
	}
	return Build(start, segs, 0.08*a.CPW, seed)
}
