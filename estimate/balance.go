package estimate

import (
	"math"

	"github.com/sustain-cycling/sustain/ingest"
)

// Balance returns W′ balance (joules) for every second of a ride, given CP
// and W′. The default is the integral form of Skiba et al. (2012, MSSE):
// W′bal(t) = W′ − Σ_{u≤t} max(0, P(u) − CP)·e^(−(t−u)/τ), with τ from
// SkibaTau and D_CP = CP − the mean of the ride's power below CP.
// differential selects the form of Skiba et al. (2015): above CP the
// balance falls by P − CP each second; below, it recovers as
// W′ − (W′ − W′bal)·e^(−(CP − P)/W′).
func Balance(power []float64, cp, wPrime float64, differential bool) []float64 {
	bal := make([]float64, len(power))
	if differential {
		b := wPrime
		for i, p := range power {
			if p >= cp {
				b -= p - cp
			} else {
				b = wPrime - (wPrime-b)*math.Exp(-(cp-p)/wPrime)
			}
			bal[i] = b
		}
		return bal
	}
	below, n := 0.0, 0
	for _, p := range power {
		if p < cp {
			below += p
			n++
		}
	}
	dcp := 0.0
	if n > 0 {
		dcp = cp - below/float64(n)
	}
	decay := math.Exp(-1 / SkibaTau(dcp))
	spent := 0.0
	for i, p := range power {
		spent = spent*decay + math.Max(0, p-cp)
		bal[i] = wPrime - spent
	}
	return bal
}

// AuditRide is a ride whose W′ balance, replayed against a fit, fell well
// below zero: evidence that CP or W′ is too low.
type AuditRide struct {
	File        string  `json:"file"`
	Date        string  `json:"date"`
	MinBalanceJ float64 `json:"min_balance_j"`
	AtS         int     `json:"at_s"`
}

// AuditLimit: a balance below −10 % of W′ is listed.
const AuditLimit = -0.10

func audit(rides []*ingest.Ride, f Fit, differential bool) []AuditRide {
	var out []AuditRide
	for _, r := range rides {
		power, err := r.Power()
		if err != nil {
			continue // a ride whose power cannot be fetched gives no evidence
		}
		bal := Balance(power, f.CPW, f.WPrimeJ, differential)
		lowest, at := math.Inf(1), 0
		for i, b := range bal {
			if b < lowest {
				lowest, at = b, i
			}
		}
		if lowest < AuditLimit*f.WPrimeJ {
			out = append(out, AuditRide{File: r.File, Date: r.Date(), MinBalanceJ: lowest, AtS: at})
		}
	}
	return out
}
