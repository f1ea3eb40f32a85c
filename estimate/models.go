// Package estimate turns a best-of power curve into threshold estimates:
// power-duration model fits with standard errors, the trade's rules of
// thumb, a confidence grade with reasons, warnings about the data, advice
// on the effort that would help most, a W′ balance audit of the fit, and
// rolling estimates across a season.
//
// Critical power (CP) is the boundary between power that can be held in a
// metabolic steady state and power that cannot; it usually sits a little
// above the maximal lactate steady state (MLSS), which field "threshold" or
// FTP approximates. W′ is the finite work available above CP, Pmax the peak
// power. Models (t in seconds, P in watts, W′ in joules):
//
//   - 2-parameter CP, Monod & Scherrer (1965); review Hill (1993):
//     P(t) = CP + W′/t, fitted on maximal efforts of about 2 to 20 min, in
//     three forms: hyperbolic P–t (nonlinear), linear work–time
//     W = CP·t + W′, and linear P against 1/t.
//   - 3-parameter, Morton (1996): P(t) = CP + W′/(t + W′/(Pmax − CP)).
//   - Omni-domain, Puchowicz, Baker & Clarke (2020, J Sports Sci):
//     P(t) = W′/t·(1 − e^(−t·(Pmax − CP)/W′)) + CP for t ≤ 1800 s, and
//     beyond that minus A·ln(t/1800).
//
// Rules of thumb (common practice, no single source): threshold ≈ 95 % of
// the best 20-min power, ≈ 90 % of the best 8-min power, or the best 60-min
// power.
package estimate

import "math"

// Model names, as they appear in reports and JSON.
const (
	ModelCP2        = "cp2"         // 2-parameter, hyperbolic P–t
	ModelCP2Work    = "cp2-work"    // 2-parameter, linear work–time
	ModelCP2Inverse = "cp2-inverse" // 2-parameter, linear P vs 1/t
	ModelMorton     = "morton3"     // Morton 3-parameter
	ModelOmni       = "omni"        // omni-domain (Puchowicz et al. 2020)
)

// OmniTCPMaxS is the omni-domain model's TCPmax: the duration (1800 s)
// beyond which power declines log-linearly (Puchowicz et al. 2020).
const OmniTCPMaxS = 1800.0

// CP2Power is the 2-parameter model: P(t) = CP + W′/t.
func CP2Power(t, cp, wPrime float64) float64 { return cp + wPrime/t }

// MortonPower is Morton's 3-parameter model:
// P(t) = CP + W′/(t + W′/(Pmax − CP)).
func MortonPower(t, cp, wPrime, pmax float64) float64 {
	return cp + wPrime/(t+wPrime/(pmax-cp))
}

// OmniPower is the omni-domain model with its long-duration slope a (W per
// unit of ln t).
func OmniPower(t, cp, wPrime, pmax, a float64) float64 {
	p := wPrime/t*(1-math.Exp(-t*(pmax-cp)/wPrime)) + cp
	if t > OmniTCPMaxS {
		p -= a * math.Log(t/OmniTCPMaxS)
	}
	return p
}

// SkibaTau is the time constant of W′ recovery below CP (Skiba et al. 2012,
// MSSE): τ = 546·e^(−0.01·D_CP) + 316 s, D_CP = CP − mean power below CP.
func SkibaTau(dcpW float64) float64 { return 546*math.Exp(-0.01*dcpW) + 316 }
