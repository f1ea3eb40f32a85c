package lactate

import (
	"math"
)

// LogLog is the breakpoint of Beaver, Wasserman & Whipp (1985): log
// lactate against log power split into two straight lines, each fitted by
// least squares to at least two steps, at the split with the least total
// squared error; the threshold is the power where the two lines meet.
func LogLog(steps []Step) (float64, string) {
	n := len(steps)
	x, y := make([]float64, n), make([]float64, n)
	for i, s := range steps {
		x[i], y[i] = math.Log(s.PowerW), math.Log(s.LactateMmol)
	}
	bestRSS, bestX := math.Inf(1), math.NaN()
	for k := 2; k <= n-2; k++ { // first line on steps [0, k), second on [k, n)
		a1, b1, r1 := line(x[:k], y[:k])
		a2, b2, r2 := line(x[k:], y[k:])
		if b2 <= b1 || r1+r2 >= bestRSS { // the second line must be the steeper one
			continue
		}
		bestRSS = r1 + r2
		bestX = (a1 - a2) / (b2 - b1)
	}
	if math.IsNaN(bestX) {
		return math.NaN(), "log lactate does not bend upwards against log power: no breakpoint"
	}
	if bestX < x[0] || bestX > x[n-1] {
		return math.NaN(), "the two lines meet outside the test's powers"
	}
	return math.Exp(bestX), ""
}

// line fits y = a + b·x by least squares and returns its squared error (a
// vertical line of one x has slope 0).
func line(x, y []float64) (a, b, rss float64) {
	n := float64(len(x))
	var mx, my float64
	for i := range x {
		mx += x[i]
		my += y[i]
	}
	mx /= n
	my /= n
	var sxx, sxy float64
	for i := range x {
		sxx += (x[i] - mx) * (x[i] - mx)
		sxy += (x[i] - mx) * (y[i] - my)
	}
	if sxx > 0 {
		b = sxy / sxx
	}
	a = my - b*mx
	for i := range x {
		e := y[i] - a - b*x[i]
		rss += e * e
	}
	return a, b, rss
}
