package estimate

import (
	"errors"
	"fmt"
	"math"
)

// Fit is one model fitted to efforts. Pmax and A are zero where the model
// has no such parameter; standard errors are zero where they could not be
// computed.
type Fit struct {
	Model     string
	CPW       float64
	WPrimeJ   float64
	PmaxW     float64
	A         float64 // omni-domain: W per unit of ln(t/1800)
	CPSEW     float64
	WPrimeSEJ float64
	PmaxSEW   float64
	RMSEW     float64 // root-mean-square residual, watts
	Efforts   []Effort
	// s2 is the residual variance of the hyperbolic 2-parameter fit,
	// which the advice scales its hypothetical covariance by.
	s2 float64
	Grade
}

// Power is the fitted model's power for t seconds.
func (f Fit) Power(t float64) float64 {
	switch f.Model {
	case ModelMorton:
		return MortonPower(t, f.CPW, f.WPrimeJ, f.PmaxW)
	case ModelOmni:
		return OmniPower(t, f.CPW, f.WPrimeJ, f.PmaxW, f.A)
	}
	return CP2Power(t, f.CPW, f.WPrimeJ)
}

func xy(es []Effort) (t, p []float64) {
	for _, e := range es {
		t = append(t, float64(e.DurationS))
		p = append(p, e.Watts)
	}
	return t, p
}

// linear fits y = a + b·x by ordinary least squares, with standard errors.
func linear(x, y []float64) (a, b, seA, seB, rss float64, err error) {
	n := float64(len(x))
	if len(x) < 3 {
		return 0, 0, 0, 0, 0, ErrTooFewPoints
	}
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
	if sxx == 0 {
		return 0, 0, 0, 0, 0, errors.New("all efforts have the same duration")
	}
	b = sxy / sxx
	a = my - b*mx
	for i := range x {
		e := y[i] - a - b*x[i]
		rss += e * e
	}
	s2 := rss / (n - 2)
	seB = math.Sqrt(s2 / sxx)
	seA = math.Sqrt(s2 * (1/n + mx*mx/sxx))
	return a, b, seA, seB, rss, nil
}

// fitCP2 fits the 2-parameter model in its three forms.
func fitCP2(es []Effort) ([]Fit, error) {
	t, p := xy(es)
	if len(t) < 3 {
		return nil, ErrTooFewPoints
	}
	// P = CP + W′·(1/t)
	inv := make([]float64, len(t))
	work := make([]float64, len(t))
	for i := range t {
		inv[i] = 1 / t[i]
		work[i] = p[i] * t[i]
	}
	cpI, wI, seCPI, seWI, rssI, err := linear(inv, p)
	if err != nil {
		return nil, err
	}
	// W = W′ + CP·t
	wW, cpW, seWW, seCPW, _, err := linear(t, work)
	if err != nil {
		return nil, err
	}
	// hyperbolic, from the 1/t solution
	sol, err := LevenbergMarquardt(Problem{X: t, Y: p,
		F:    func(x float64, b []float64) float64 { return b[0] + b[1]/x },
		Grad: func(x float64, b []float64, g []float64) { g[0], g[1] = 1, 1/x },
	}, []float64{cpI, wI})
	if err != nil {
		return nil, err
	}
	hyper := Fit{Model: ModelCP2, CPW: sol.Params[0], WPrimeJ: sol.Params[1], CPSEW: sol.StdErr[0], WPrimeSEJ: sol.StdErr[1],
		Efforts: es, s2: sol.RSS / float64(len(t)-2)}
	hyper.RMSEW = math.Sqrt(sol.RSS / float64(len(t)))
	invFit := Fit{Model: ModelCP2Inverse, CPW: cpI, WPrimeJ: wI, CPSEW: seCPI, WPrimeSEJ: seWI, Efforts: es, RMSEW: math.Sqrt(rssI / float64(len(t)))}
	workFit := Fit{Model: ModelCP2Work, CPW: cpW, WPrimeJ: wW, CPSEW: seCPW, WPrimeSEJ: seWW, Efforts: es}
	workFit.RMSEW = rmse(workFit, t, p)
	return []Fit{hyper, workFit, invFit}, nil
}

func rmse(f Fit, t, p []float64) float64 {
	s := 0.0
	for i := range t {
		e := p[i] - f.Power(t[i])
		s += e * e
	}
	return math.Sqrt(s / float64(len(t)))
}

// fitMorton fits Morton's 3-parameter model, started from a 2-parameter
// solution and the highest power seen.
func fitMorton(es []Effort, cp0, w0, pmax0 float64) (Fit, error) {
	t, p := xy(es)
	if len(t) < 4 {
		return Fit{}, ErrTooFewPoints
	}
	pmax0 = math.Max(pmax0, cp0*1.5)
	sol, err := LevenbergMarquardt(Problem{X: t, Y: p,
		F: func(x float64, b []float64) float64 { return MortonPower(x, b[0], b[1], b[2]) },
		Grad: func(x float64, b []float64, g []float64) {
			cp, w, pm := b[0], b[1], b[2]
			k := w / (pm - cp)
			den := x + k
			// P = cp + w/den, den = x + w/(pm − cp)
			dk := [3]float64{w / ((pm - cp) * (pm - cp)), 1 / (pm - cp), -w / ((pm - cp) * (pm - cp))}
			g[0] = 1 - w/(den*den)*dk[0]
			g[1] = 1/den - w/(den*den)*dk[1]
			g[2] = -w / (den * den) * dk[2]
		},
	}, []float64{cp0, w0, pmax0})
	if err != nil {
		return Fit{}, err
	}
	f := Fit{Model: ModelMorton, CPW: sol.Params[0], WPrimeJ: sol.Params[1], PmaxW: sol.Params[2],
		CPSEW: sol.StdErr[0], WPrimeSEJ: sol.StdErr[1], PmaxSEW: sol.StdErr[2], Efforts: es}
	f.RMSEW = rmse(f, t, p)
	if !(f.PmaxW > f.CPW) || math.IsNaN(f.CPW) {
		return f, fmt.Errorf("fit has Pmax (%.0f W) at or below CP (%.0f W)", f.PmaxW, f.CPW)
	}
	return f, nil
}

// omniDurations samples the whole curve for the omni-domain fit.
var omniDurations = []int{1, 2, 3, 5, 8, 10, 15, 20, 30, 45, 60, 90, 120, 180, 240, 300, 420, 600, 900, 1200, 1500, 1800,
	2400, 3000, 3600, 5400, 7200, 10800, 14400, 18000, 21600}

// fitOmni fits the omni-domain model on the whole curve; A is fitted only
// when the curve reaches well beyond 1800 s.
func fitOmni(es []Effort, cp0, w0, pmax0 float64) (Fit, error) {
	t, p := xy(es)
	withA := len(t) > 0 && t[len(t)-1] >= 2*OmniTCPMaxS
	np := 3
	if withA {
		np = 4
	}
	if len(t) <= np {
		return Fit{}, ErrTooFewPoints
	}
	start := []float64{cp0, w0, math.Max(pmax0, cp0*1.5)}
	if withA {
		start = append(start, 0.05*cp0)
	}
	f := func(x float64, b []float64) float64 {
		a := 0.0
		if withA {
			a = b[3]
		}
		return OmniPower(x, b[0], b[1], b[2], a)
	}
	sol, err := LevenbergMarquardt(Problem{X: t, Y: p, F: f}, start)
	if err != nil {
		return Fit{}, err
	}
	fit := Fit{Model: ModelOmni, CPW: sol.Params[0], WPrimeJ: sol.Params[1], PmaxW: sol.Params[2],
		CPSEW: sol.StdErr[0], WPrimeSEJ: sol.StdErr[1], PmaxSEW: sol.StdErr[2], Efforts: es}
	if withA {
		fit.A = sol.Params[3]
	}
	fit.RMSEW = rmse(fit, t, p)
	return fit, nil
}
