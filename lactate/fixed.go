package lactate

import (
	"fmt"
	"math"
)

// Fixed concentrations and baseline + 1: the power where the lactate
// curve first reaches a concentration, interpolated between the two
// steps that bracket it. Interpolation is log-linear (linear in ln
// lactate), exact when lactate rises exponentially with power, which it
// about does between two steps.

// crossing is the power at which the steps' lactate first reaches c at
// or after step from, and a note when it does not.
func crossing(steps []Step, from int, c float64) (float64, string) {
	if steps[from].LactateMmol >= c {
		return math.NaN(), fmt.Sprintf("lactate is already %.1f mmol/L at %.0f W, at or above %.1f mmol/L", steps[from].LactateMmol, steps[from].PowerW, c)
	}
	for j := from + 1; j < len(steps); j++ {
		a, b := steps[j-1], steps[j]
		if b.LactateMmol >= c {
			f := (math.Log(c) - math.Log(a.LactateMmol)) / (math.Log(b.LactateMmol) - math.Log(a.LactateMmol))
			return a.PowerW + f*(b.PowerW-a.PowerW), ""
		}
	}
	last := steps[len(steps)-1]
	return math.NaN(), fmt.Sprintf("lactate never reached %.1f mmol/L (%.1f mmol/L at the last step, %.0f W)", c, last.LactateMmol, last.PowerW)
}

// FixedConcentration is the power at c mmol/L.
func FixedConcentration(steps []Step, c float64) (float64, string) { return crossing(steps, 0, c) }

// RiseMmol is the step-to-step rise that marks the start of the curve's
// climb (Bishop, Jenkins & Mackinnon 1998 use it for modified Dmax).
const RiseMmol = 0.4

// firstRise is the index of the step before the first rise of RiseMmol or
// more from one step to the next, or -1.
func firstRise(steps []Step) int {
	for j := 1; j < len(steps); j++ {
		if steps[j].LactateMmol-steps[j-1].LactateMmol >= RiseMmol {
			return j - 1
		}
	}
	return -1
}

// Baseline is the lowest lactate among the steps up to the one before the
// first rise of RiseMmol (all steps when there is none), and the index of
// that step: the resting level the curve climbs from (the tool's rule;
// lactate often dips over the first easy steps, so the lowest value, not
// the first, is the baseline).
func Baseline(steps []Step) (float64, int) {
	end := firstRise(steps)
	if end < 0 {
		end = len(steps) - 1
	}
	at := 0
	for j := 1; j <= end; j++ {
		if steps[j].LactateMmol < steps[at].LactateMmol {
			at = j
		}
	}
	return steps[at].LactateMmol, at
}

// BaselinePlus is the power where lactate first exceeds the baseline by
// delta mmol/L (common practice: delta = 1.0) after the baseline step.
func BaselinePlus(steps []Step, delta float64) (float64, string) {
	b, at := Baseline(steps)
	return crossing(steps, at, b+delta)
}
