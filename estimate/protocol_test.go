package estimate

import (
	"math"
	"testing"

	"github.com/sustain-cycling/sustain/powerduration"
)

// An invented all-out effort whose power decays onto CP with exactly W′
// above it: P(t) = CP + (W′/τ)·e^(−t/τ), τ = 20 s. The analysis of
// Vanhatalo, Doust & Burnley (2007) returns both within 1 %.
func TestThreeMinuteAllOut(t *testing.T) {
	const cp, wp, tau = 290.0, 18000.0, 20.0
	power := make([]float64, 600)
	for i := range power {
		power[i] = 150
	}
	start := 200
	for k := range AllOutS {
		// mean over second k of the decaying curve, so the work is exact
		power[start+k] = cp + wp/tau*tau*(math.Exp(-float64(k)/tau)-math.Exp(-float64(k+1)/tau))
	}
	a, err := ThreeMinuteAllOut(power, start)
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(a.EndPowerW-cp) > 0.01*cp || math.Abs(a.WorkAboveJ-wp) > 0.01*wp {
		t.Errorf("EP %.1f W (CP %v), WEP %.0f J (W′ %v)", a.EndPowerW, cp, a.WorkAboveJ, wp)
	}
	if !a.WasAllOut {
		t.Errorf("problems %v", a.Problems)
	}
	// paced: 3 min at an even 330 W is not all-out
	for k := range AllOutS {
		power[start+k] = 330
	}
	a, _ = ThreeMinuteAllOut(power, start)
	if a.WasAllOut || len(a.Problems) == 0 {
		t.Errorf("an even effort passed as all-out: %+v", a)
	}
	if _, err := ThreeMinuteAllOut(power, 500); err == nil {
		t.Error("a test running past the end of the ride was accepted")
	}
}

func efforts(ds []int, watts func(d int) float64) []Effort {
	var es []Effort
	for _, d := range ds {
		es = append(es, Effort{Point: powerduration.Point{DurationS: d, Watts: watts(d)}, Status: EffortUsed})
	}
	return es
}

// Exact 2-parameter data (Monod & Scherrer 1965) returns CP and W′ exactly;
// a scattered set fails the quality bar.
func TestMultiTrial(t *testing.T) {
	tr, err := MultiTrial(efforts([]int{180, 420, 720}, func(d int) float64 { return CP2Power(float64(d), 300, 20000) }))
	if err != nil {
		t.Fatal(err)
	}
	if math.Abs(tr.Fit.CPW-300) > 1e-6 || math.Abs(tr.Fit.WPrimeJ-20000) > 1e-3 || !tr.Accepted {
		t.Errorf("%+v", tr)
	}
	scatter := map[int]float64{180: 0.92, 420: 1.08, 720: 0.95}
	tr, err = MultiTrial(efforts([]int{180, 420, 720}, func(d int) float64 { return scatter[d] * CP2Power(float64(d), 300, 20000) }))
	if err != nil {
		t.Fatal(err)
	}
	if tr.Accepted || len(tr.Problems) == 0 {
		t.Errorf("a scattered set passed: %+v", tr)
	}
	if _, err := MultiTrial(efforts([]int{180, 420}, func(int) float64 { return 300 })); err == nil {
		t.Error("two efforts accepted")
	}
}
