package powerduration

import (
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/internal/synth"
)

var benchRider = synth.Athlete{CPW: 280, WPrimeJ: 20000, PmaxW: 1000}

func fieldPower(hours int) []float64 {
	tr := synth.FieldRide(benchRider, time.Date(2026, 1, 1, 8, 0, 0, 0, time.UTC), hours*60, []int{30, 300, 1200}, 11)
	return tr.PowerW
}

func benchMeanMax(b *testing.B, power []float64) {
	ds := Durations(len(power))
	b.ResetTimer()
	for b.Loop() {
		MeanMax(power, ds)
	}
}

// Targets (issue 3): a 6-hour 1-Hz ride ≤ 10 ms, a 2-hour ride ≤ 3 ms.
func BenchmarkCurve6h(b *testing.B) { benchMeanMax(b, fieldPower(6)) }
func BenchmarkCurve2h(b *testing.B) { benchMeanMax(b, fieldPower(2)) }

// Worst cases for the block bound: constant power and trainer steps.
func BenchmarkCurve2hConstant(b *testing.B) {
	p := make([]float64, 7200)
	for i := range p {
		p[i] = 200
	}
	benchMeanMax(b, p)
}

func BenchmarkCurve2hTrainerSteps(b *testing.B) {
	p := make([]float64, 7200)
	for i := range p {
		p[i] = float64(150 + 10*(i/120))
	}
	benchMeanMax(b, p)
}

// The brute-force scan the fast path is measured against (running sums,
// every window of every duration).
func BenchmarkCurve2hBruteForce(b *testing.B) {
	p := fieldPower(2)
	ds := Durations(len(p))
	b.ResetTimer()
	for b.Loop() {
		bruteForce(p, ds)
	}
}
