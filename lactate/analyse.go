package lactate

import (
	"fmt"
	"math"
	"math/rand/v2"
	"slices"
)

// Method names, as they appear in output, JSON and `compare --methods`.
const (
	MethodLT2     = "lt2"     // 2 mmol/L
	MethodOBLA4   = "obla4"   // 4 mmol/L, onset of blood lactate accumulation
	MethodBase1   = "base1"   // baseline + 1.0 mmol/L
	MethodDmax    = "dmax"    // Cheng et al. 1992
	MethodModDmax = "moddmax" // Bishop, Jenkins & Mackinnon 1998
	MethodLogLog  = "loglog"  // Beaver, Wasserman & Whipp 1985
	MethodMLSS    = "mlss"    // constant-power trials (Heck et al. 1985; Beneke 2003)
)

// Methods are the step-test methods in the order they are reported, with
// their sources.
var Methods = []struct{ Name, Label, Source string }{
	{MethodLT2, "2 mmol/L", "Kindermann, Simon & Keul 1979"},
	{MethodOBLA4, "4 mmol/L (OBLA)", "Heck et al. 1985"},
	{MethodBase1, "baseline + 1.0 mmol/L", "common practice"},
	{MethodDmax, "Dmax", "Cheng et al. 1992"},
	{MethodModDmax, "modified Dmax", "Bishop, Jenkins & Mackinnon 1998"},
	{MethodLogLog, "log-log breakpoint", "Beaver, Wasserman & Whipp 1985"},
}

// Threshold is one method's threshold of a step test. PowerW is NaN when
// the method could not place it, and Note says why; LowW and HighW are a
// 95 % bootstrap interval over the steps where the method allows one
// (NaN otherwise); HeartRateBPM is interpolated at the threshold where
// heart rate was recorded (NaN otherwise).
type Threshold struct {
	Method       string
	Label        string
	Source       string
	PowerW       float64
	LowW, HighW  float64
	HeartRateBPM float64
	LactateMmol  float64 // lactate at the threshold, on the test's curve
	Note         string
}

// OK reports whether the method placed a threshold.
func (t Threshold) OK() bool { return !math.IsNaN(t.PowerW) }

// Analysis is a step test analysed by every method.
type Analysis struct {
	Test          StepTest
	BaselineMmol  float64
	Curve         Cubic // the third-order polynomial of Dmax, for plots
	CurveOK       bool
	Thresholds    []Threshold
	Notes         []string // about the test as a whole
	BootstrapRuns int
}

// Threshold returns the named method's threshold.
func (a Analysis) Threshold(method string) (Threshold, bool) {
	i := slices.IndexFunc(a.Thresholds, func(t Threshold) bool { return t.Method == method })
	if i < 0 {
		return Threshold{}, false
	}
	return a.Thresholds[i], true
}

// MinRiseMmol: a test whose lactate rose by less than this from its
// lowest to its highest value shows no threshold at all (its steps stayed
// below it, or the samples were bad).
const MinRiseMmol = 1.0

// BootstrapRuns is how many resamplings of the steps the interval of a
// fitted method rests on.
const BootstrapRuns = 400

// method places one threshold on steps.
func method(name string, steps []Step) (float64, string) {
	switch name {
	case MethodLT2:
		return FixedConcentration(steps, 2)
	case MethodOBLA4:
		return FixedConcentration(steps, 4)
	case MethodBase1:
		return BaselinePlus(steps, 1.0)
	case MethodDmax:
		p, _, note := Dmax(steps)
		return p, note
	case MethodModDmax:
		return ModDmax(steps)
	case MethodLogLog:
		return LogLog(steps)
	}
	return math.NaN(), "unknown method " + name
}

// fitted methods rest on a curve through all the steps; a bootstrap over
// steps gives their interval. The interpolating methods' uncertainty is
// the analyser's and the step length's, which the steps cannot show.
var fitted = []string{MethodDmax, MethodModDmax, MethodLogLog}

// Analyse places every method's threshold on a checked step test.
func Analyse(t StepTest) Analysis {
	a := Analysis{Test: t, BootstrapRuns: BootstrapRuns}
	steps := t.Steps
	a.BaselineMmol, _ = Baseline(steps)
	if c, err := FitCubic(steps); err == nil {
		a.Curve, a.CurveOK = c, true
	}
	lo, hi := steps[0].LactateMmol, steps[0].LactateMmol
	for _, s := range steps {
		lo, hi = math.Min(lo, s.LactateMmol), math.Max(hi, s.LactateMmol)
	}
	flat := hi-lo < MinRiseMmol
	if flat {
		a.Notes = append(a.Notes, fmt.Sprintf("lactate rose by only %.1f mmol/L over the test (less than %.1f): the steps did not reach the threshold, or the samples are doubtful", hi-lo, MinRiseMmol))
	}
	for _, m := range Methods {
		th := Threshold{Method: m.Name, Label: m.Label, Source: m.Source, LowW: math.NaN(), HighW: math.NaN(), HeartRateBPM: math.NaN(), LactateMmol: math.NaN()}
		if flat {
			th.PowerW, th.Note = math.NaN(), "no rise in lactate"
		} else {
			th.PowerW, th.Note = method(m.Name, steps)
		}
		if th.OK() {
			th.HeartRateBPM = atPower(steps, th.PowerW, func(s Step) float64 { return s.HeartRateBPM })
			th.LactateMmol = lactateAt(steps, th.PowerW)
			if slices.Contains(fitted, m.Name) {
				th.LowW, th.HighW = bootstrap(m.Name, t)
			}
		}
		a.Thresholds = append(a.Thresholds, th)
	}
	return a
}

// atPower interpolates a step value linearly at power p (NaN when either
// bracketing step lacks it).
func atPower(steps []Step, p float64, v func(Step) float64) float64 {
	for j := 1; j < len(steps); j++ {
		a, b := steps[j-1], steps[j]
		if p >= a.PowerW && p <= b.PowerW {
			f := (p - a.PowerW) / (b.PowerW - a.PowerW)
			return v(a) + f*(v(b)-v(a))
		}
	}
	return math.NaN()
}

// lactateAt is the lactate at power p, log-linear between steps.
func lactateAt(steps []Step, p float64) float64 {
	return math.Exp(atPower(steps, p, func(s Step) float64 { return math.Log(s.LactateMmol) }))
}

// bootstrap is the 2.5th and 97.5th percentiles of a method's threshold
// over resamplings of the steps with replacement (each resample keeps each
// chosen power once, in order; it needs MinSteps distinct steps). NaN when
// fewer than half the resamplings place a threshold. The resampling is
// seeded from the test, so a report is repeatable.
func bootstrap(name string, t StepTest) (lo, hi float64) {
	seed := uint64(len(t.Steps))
	for _, s := range t.Steps {
		seed = seed*31 + uint64(math.Float64bits(s.PowerW)^math.Float64bits(s.LactateMmol))
	}
	rng := rand.New(rand.NewPCG(seed, 0x1ac7a7e))
	n := len(t.Steps)
	var got []float64
	pick := make([]bool, n)
	for range BootstrapRuns {
		clear(pick)
		for range n {
			pick[rng.IntN(n)] = true
		}
		var s []Step
		for i, ok := range pick {
			if ok {
				s = append(s, t.Steps[i])
			}
		}
		if len(s) < MinSteps {
			continue
		}
		if p, _ := method(name, s); !math.IsNaN(p) {
			got = append(got, p)
		}
	}
	if len(got) < BootstrapRuns/2 {
		return math.NaN(), math.NaN()
	}
	slices.Sort(got)
	q := func(f float64) float64 { return got[int(math.Round(f*float64(len(got)-1)))] }
	return q(0.025), q(0.975)
}
