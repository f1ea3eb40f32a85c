package lactate

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// Cubic is a third-order polynomial in power, kept in a scaled variable
// u = (P − Mid)/Scale for a well-conditioned fit:
// L(P) = C[0] + C[1]·u + C[2]·u² + C[3]·u³.
type Cubic struct {
	C          [4]float64
	Mid, Scale float64
}

// At is the polynomial's lactate at power p.
func (c Cubic) At(p float64) float64 {
	u := (p - c.Mid) / c.Scale
	return c.C[0] + u*(c.C[1]+u*(c.C[2]+u*c.C[3]))
}

// FitCubic fits the polynomial to the steps by least squares.
func FitCubic(steps []Step) (Cubic, error) {
	n := len(steps)
	if n < 4 {
		return Cubic{}, errors.New("a third-order polynomial needs at least 4 steps")
	}
	lo, hi := steps[0].PowerW, steps[n-1].PowerW
	c := Cubic{Mid: (lo + hi) / 2, Scale: math.Max((hi-lo)/2, 1)}
	a := mat.NewDense(n, 4, nil)
	y := mat.NewVecDense(n, nil)
	for i, s := range steps {
		u := (s.PowerW - c.Mid) / c.Scale
		a.Set(i, 0, 1)
		a.Set(i, 1, u)
		a.Set(i, 2, u*u)
		a.Set(i, 3, u*u*u)
		y.SetVec(i, s.LactateMmol)
	}
	var qr mat.QR
	qr.Factorize(a)
	var x mat.VecDense
	if err := qr.SolveVecTo(&x, false, y); err != nil {
		return Cubic{}, errors.New("the steps do not determine a polynomial")
	}
	for k := range 4 {
		c.C[k] = x.AtVec(k)
	}
	return c, nil
}

// farthest is the power in [a.PowerW, b.PowerW] where the polynomial lies
// farthest below the straight line from a to b: where its slope equals
// the line's, a root of a quadratic.
func farthest(c Cubic, a, b Step) (float64, string) {
	ua, ub := (a.PowerW-c.Mid)/c.Scale, (b.PowerW-c.Mid)/c.Scale
	slope := (b.LactateMmol - a.LactateMmol) / (ub - ua) // per unit of u
	// c1 + 2 c2 u + 3 c3 u² = slope
	qa, qb, qc := 3*c.C[3], 2*c.C[2], c.C[1]-slope
	var roots []float64
	switch {
	case math.Abs(qa) < 1e-12:
		if qb != 0 {
			roots = []float64{-qc / qb}
		}
	default:
		d := qb*qb - 4*qa*qc
		if d >= 0 {
			roots = []float64{(-qb + math.Sqrt(d)) / (2 * qa), (-qb - math.Sqrt(d)) / (2 * qa)}
		}
	}
	best, bestD := math.NaN(), 0.0
	for _, u := range roots {
		if u <= ua || u >= ub {
			continue
		}
		p := c.Mid + u*c.Scale
		line := a.LactateMmol + slope*(u-ua)
		if d := line - c.At(p); d > bestD {
			best, bestD = p, d
		}
	}
	if math.IsNaN(best) {
		return best, "the fitted curve does not bend below the line between its ends: no Dmax point"
	}
	return best, ""
}

// Dmax is the power of Cheng et al. (1992): the point of the fitted
// third-order polynomial farthest from the straight line joining the first
// and last steps (their measured values). The perpendicular distance to a
// fixed line is the vertical distance times a constant, so the farthest
// point is where the polynomial's slope equals the line's.
func Dmax(steps []Step) (float64, Cubic, string) {
	c, err := FitCubic(steps)
	if err != nil {
		return math.NaN(), c, err.Error()
	}
	p, note := farthest(c, steps[0], steps[len(steps)-1])
	return p, c, note
}

// ModDmax is modified Dmax (Bishop, Jenkins & Mackinnon 1998): as Dmax,
// with the line starting at the step before the first rise of RiseMmol
// (0.4 mmol/L) or more.
func ModDmax(steps []Step) (float64, string) {
	k := firstRise(steps)
	if k < 0 {
		return math.NaN(), fmt.Sprintf("lactate never rose by %.1f mmol/L from one step to the next", RiseMmol)
	}
	if len(steps)-1-k < 2 {
		return math.NaN(), fmt.Sprintf("only %d step(s) after the first rise of %.1f mmol/L: too few to place the point", len(steps)-1-k, RiseMmol)
	}
	c, err := FitCubic(steps)
	if err != nil {
		return math.NaN(), err.Error()
	}
	return farthest(c, steps[k], steps[len(steps)-1])
}
