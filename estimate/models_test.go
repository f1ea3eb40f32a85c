package estimate

import (
	"math"
	"testing"
)

// Worked values recomputed by hand from the published formulas.
func TestModelFormulas(t *testing.T) {
	near := func(name string, got, want, tol float64) {
		t.Helper()
		if math.Abs(got-want) > tol {
			t.Errorf("%s = %.4f, want %.2f", name, got, want)
		}
	}
	// Morton (1996), CP 250 W, W′ 20 kJ, Pmax 1000 W:
	// P(60) = 250 + 20000/(60 + 20000/750) = 480.77
	near("Morton P(60 s)", MortonPower(60, 250, 20000, 1000), 480.77, 0.005)
	near("Morton P(180 s)", MortonPower(180, 250, 20000, 1000), 346.77, 0.005)
	near("Morton P(600 s)", MortonPower(600, 250, 20000, 1000), 281.91, 0.005)
	// Omni-domain (Puchowicz, Baker & Clarke 2020), same and A = 30:
	// P(1) = 20000·(1 − e^−0.0375) + 250 = 986.11
	near("omni P(1 s)", OmniPower(1, 250, 20000, 1000, 30), 986.11, 0.005)
	near("omni P(60 s)", OmniPower(60, 250, 20000, 1000, 30), 548.20, 0.005)
	near("omni P(1800 s)", OmniPower(1800, 250, 20000, 1000, 30), 261.11, 0.005)
	// beyond 1800 s: minus 30·ln 2
	near("omni P(3600 s)", OmniPower(3600, 250, 20000, 1000, 30), 234.76, 0.005)
	// Skiba et al. (2012): τ = 546·e^(−0.01·D_CP) + 316
	near("Skiba τ(0 W)", SkibaTau(0), 862.0, 0.005)
	near("Skiba τ(50 W)", SkibaTau(50), 647.17, 0.005)
	near("Skiba τ(100 W)", SkibaTau(100), 516.86, 0.005)
	near("Skiba τ(150 W)", SkibaTau(150), 437.83, 0.005)
	// Monod & Scherrer (1965): P(t) = CP + W′/t; 250 + 20000/400 = 300
	near("2-parameter P(400 s)", CP2Power(400, 250, 20000), 300, 1e-12)
}
