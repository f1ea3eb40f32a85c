package powerduration

import (
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/internal/synth"
)

var benchRider = synth.Athlete{CPW: 280, WPrimeJ: 20000, PmaxW: 1000}

// fieldPower is an invented field ride of the given hours, to 0.1 W as a
// cleaned ride is.
func fieldPower(hours int) []float64 {
	tr := synth.FieldRide(benchRider, time.Date(2026, 1, 1, 8, 0, 0, 0, time.UTC), hours*60, []int{30, 300, 1200}, 11)
	for i, p := range tr.PowerW {
		tr.PowerW[i] = math.Round(p*10) / 10
	}
	return tr.PowerW
}

func series(seconds int, f func(i int) float64) []float64 {
	p := make([]float64, seconds)
	for i := range p {
		p[i] = f(i)
	}
	return p
}

// rideShapes are the shapes of ride the curve must be fast on: field rides
// of three lengths, and the shapes that defeat one bound or another.
var rideShapes = []struct {
	name  string
	power func() []float64
}{
	{"field2h", func() []float64 { return fieldPower(2) }},
	{"field6h", func() []float64 { return fieldPower(6) }},
	{"field24h", func() []float64 { return fieldPower(24) }},
	{"constant24h", func() []float64 { return series(86400, func(int) float64 { return 200 }) }},
	{"ramp6h", func() []float64 { return series(21600, func(i int) float64 { return 100 + float64(i)/100 }) }},
	{"noise10h", func() []float64 {
		rng := rand.New(rand.NewPCG(3, 4))
		return series(36000, func(int) float64 { return math.Max(0, math.Round(220+60*rng.NormFloat64())) })
	}},
	{"trainer24h", func() []float64 { // a smart trainer held at 200 W: 198–202 W
		rng := rand.New(rand.NewPCG(5, 6))
		return series(86400, func(int) float64 { return float64(198 + rng.IntN(5)) })
	}},
	{"periodic2h", func() []float64 { // 30 s on, 30 s off
		return series(7200, func(i int) float64 { return float64(100 + 250*((i/30)%2)) })
	}},
	{"alternating2h", func() []float64 { return series(7200, func(i int) float64 { return float64(400 * (i % 2)) }) }},
}

// tightLoop is the simple method the curve replaces: running sums and
// every window of every duration, allocating nothing but the sums.
func tightLoop(power []float64, ds []int) []float64 {
	sum := make([]float64, len(power)+1)
	for i, p := range power {
		sum[i+1] = sum[i] + p
	}
	out := make([]float64, len(ds))
	for j, d := range ds {
		best, hi, lo := 0.0, sum[d:], sum[:len(sum)-d]
		for s, v := range hi {
			if v-lo[s] > best {
				best = v - lo[s]
			}
		}
		out[j] = best / float64(d)
	}
	return out
}

// Targets (issue 15): on every shape at most 0.25× the tight loop (make
// bench prints the ratios); a 2-h field ride ≤ 1.5 ms, a 6-h one ≤ 4 ms.
func BenchmarkCurve(b *testing.B) { benchShapes(b, func(p []float64, ds []int) { MeanMax(p, ds) }) }

func BenchmarkCurveTightLoop(b *testing.B) {
	benchShapes(b, func(p []float64, ds []int) { tightLoop(p, ds) })
}

// benchShapes runs curve on every ride shape, over the shared grid.
func benchShapes(b *testing.B, curve func(power []float64, ds []int)) {
	for _, shape := range rideShapes {
		p := shape.power()
		ds := Durations(len(p))
		b.Run(shape.name, func(b *testing.B) {
			for b.Loop() {
				curve(p, ds)
			}
		})
	}
}

// benchCurves are n rides' curves: a few rides of 1–4 h, each ridden again
// at another power (a rider's season, to the merge).
func benchCurves(n int) []RideCurve {
	rng := rand.New(rand.NewPCG(9, 9))
	var base []RideCurve
	for h := 1; h <= 4; h++ {
		r := ingest.Ride{File: "base.fit", PowerW: fieldPower(h)}
		base = append(base, OfRide(&r))
	}
	out := make([]RideCurve, n)
	for k := range out {
		b := base[k%len(base)]
		f := 0.9 + 0.2*rng.Float64()
		sums := make([]uint32, b.Len())
		for i, s := range b.TenthsSums() {
			sums[i] = uint32(math.Round(float64(s) * f))
		}
		start := time.Date(2026, 1, 1, 8, 0, 0, 0, time.UTC).AddDate(0, 0, k)
		out[k] = RideCurveOfSums(&Source{File: fmt.Sprintf("r%04d.fit", k), Date: start.Format("2006-01-02"), RideStart: start},
			sums, b.off16, b.off32)
	}
	return out
}

// Target (issue 15): the best of 1,000 rides' curves ≤ 15 ms.
func BenchmarkBestOf1000(b *testing.B) {
	curves := benchCurves(1000)
	for b.Loop() {
		BestOf(curves)
	}
}
