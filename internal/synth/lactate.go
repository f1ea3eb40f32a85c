package synth

import "math"

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
