package synth

import (
	"fmt"
	"math"
)

// LactateAthlete is invented lactate physiology around a known MLSS: the
// end-of-step lactate of a step test rises exponentially above the resting
// level, and in a 30-min constant-power trial lactate rises from minute 10
// to 30 by 1 mmol/L exactly at MLSS, less below it and more above (1 mmol/L
// more per 10 W). Everything here is invented.
type LactateAthlete struct {
	MLSSW    float64 // the maximal lactate steady state, watts
	RestMmol float64 // resting lactate
}

// StepLactate is the lactate at the end of a step of power p.
func (a LactateAthlete) StepLactate(p float64) float64 {
	return a.RestMmol + 0.9*math.Exp((p-a.MLSSW)/35)
}

// Trial is the lactate at minutes 10 and 30 of a constant-power trial at p.
func (a LactateAthlete) Trial(p float64) (la10, la30 float64) {
	la10 = a.StepLactate(p)
	rise := math.Max(0.05, 1+(p-a.MLSSW)/10)
	return la10, la10 + rise
}

// StepTestCSV writes a step test of the athlete on date as a lactate
// analyser's user would: power, lactate to 0.1 mmol/L, heart rate, 4-min
// steps.
func (a LactateAthlete) StepTestCSV(date string, powers []float64) string {
	s := "date,power_w,lactate_mmol,heart_rate,step_min\n"
	for _, p := range powers {
		s += fmt.Sprintf("%s,%.0f,%.1f,%.0f,4\n", date, p, a.StepLactate(p), math.Round(95+0.24*p))
	}
	return s
}

// TrialsCSV writes constant-power MLSS trials on the given dates and powers.
func (a LactateAthlete) TrialsCSV(dates []string, powers []float64) string {
	s := "date,power_w,lactate_10_mmol,lactate_30_mmol\n"
	for i, p := range powers {
		la10, la30 := a.Trial(p)
		s += fmt.Sprintf("%s,%.0f,%.1f,%.1f\n", dates[i], p, la10, la30)
	}
	return s
}
