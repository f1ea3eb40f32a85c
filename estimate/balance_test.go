package estimate

import (
	"math"
	"testing"

	"github.com/sustain-cycling/sustain/ingest"
)

// W′ balance against closed forms of the published equations.
func TestBalance(t *testing.T) {
	const cp, wp = 250.0, 20000.0
	// 300 s at 350 W after 600 s at 150 W.
	p := make([]float64, 900)
	for i := range p {
		p[i] = 150
		if i >= 600 {
			p[i] = 350
		}
	}
	// Skiba et al. (2012): D_CP = 250 − 150 = 100 W, τ = 516.86 s; with
	// constant 100 W above CP the expended sum is a geometric series:
	// 100·(1 − e^(−300/τ))/(1 − e^(−1/τ)).
	tau := SkibaTau(100)
	want := wp - 100*(1-math.Exp(-300/tau))/(1-math.Exp(-1/tau))
	if got := Balance(p, cp, wp, false)[899]; math.Abs(got-want) > 1e-6 {
		t.Errorf("integral form: %.4f J, want %.4f", got, want)
	}
	// Skiba et al. (2015): above CP the balance falls by exactly P − CP.
	if got := Balance(p, cp, wp, true)[899]; math.Abs(got-(wp-300*100)) > 1e-9 {
		t.Errorf("differential form: %.4f J, want %.4f", got, wp-300*100)
	}
	// and below CP recovers as W′ − (W′ − bal)·e^(−D_CP·t/W′)
	q := append(make([]float64, 0, 700), p[600:]...) // 300 s hard
	for range 400 {
		q = append(q, 150)
	}
	b := Balance(q, cp, wp, true)
	deficit := wp - b[299]
	want = wp - deficit*math.Exp(-100*400/wp)
	if math.Abs(b[699]-want) > 1e-6 {
		t.Errorf("differential recovery: %.4f, want %.4f", b[699], want)
	}
}

func TestAuditFlagsTooLowFit(t *testing.T) {
	p := make([]float64, 1200)
	for i := range p {
		p[i] = 200
		if i >= 300 && i < 600 {
			p[i] = 400 // 300 s at 150 W above a CP of 250 W: 45 kJ, far beyond 20 kJ
		}
	}
	r := &ingest.Ride{File: "hard.fit", PowerW: p}
	out := audit([]*ingest.Ride{r}, Fit{CPW: 250, WPrimeJ: 20000}, false)
	if len(out) != 1 || out[0].MinBalanceJ > -2000 || out[0].AtS != 599 {
		t.Errorf("audit %+v", out)
	}
	if out := audit([]*ingest.Ride{r}, Fit{CPW: 320, WPrimeJ: 30000}, false); len(out) != 0 {
		t.Errorf("a fit the ride fits was flagged: %+v", out)
	}
}
