package estimate

import (
	"errors"
	"math"
)

// Agreement of two methods measured on the same subjects, after Bland &
// Altman (1986, Lancet, "Statistical methods for assessing agreement
// between two methods of clinical measurement"): the differences a − b,
// their mean (bias) and standard deviation, and the 95 % limits of
// agreement bias ± 1.96·SD; with Pearson's correlation of a and b, which
// the paper warns is not agreement but readers expect to see.
type Agreement struct {
	N      int     `json:"n"`
	Bias   float64 `json:"bias"`
	SD     float64 `json:"sd"`
	LowerL float64 `json:"lower_limit"`
	UpperL float64 `json:"upper_limit"`
	R      float64 `json:"r"`
}

// Agree computes the agreement of paired measurements a and b.
func Agree(a, b []float64) (Agreement, error) {
	if len(a) != len(b) {
		return Agreement{}, errors.New("unpaired measurements")
	}
	n := len(a)
	if n < 2 {
		return Agreement{N: n}, errors.New("fewer than 2 pairs")
	}
	var sumD, sumA, sumB float64
	for i := range a {
		sumD += a[i] - b[i]
		sumA += a[i]
		sumB += b[i]
	}
	fn := float64(n)
	bias, ma, mb := sumD/fn, sumA/fn, sumB/fn
	var ssD, sab, saa, sbb float64
	for i := range a {
		d := a[i] - b[i] - bias
		ssD += d * d
		sab += (a[i] - ma) * (b[i] - mb)
		saa += (a[i] - ma) * (a[i] - ma)
		sbb += (b[i] - mb) * (b[i] - mb)
	}
	sd := math.Sqrt(ssD / (fn - 1))
	r := math.NaN()
	if saa > 0 && sbb > 0 {
		r = sab / math.Sqrt(saa*sbb)
	}
	return Agreement{N: n, Bias: bias, SD: sd, LowerL: bias - 1.96*sd, UpperL: bias + 1.96*sd, R: r}, nil
}
