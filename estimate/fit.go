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
	// DF is the fit's residual degrees of freedom (efforts − parameters).
	DF      int
	Efforts []Effort
	// Dropped are the efforts left out of the refit for lying far below
	// the first fit's curve (submaximal for their duration).
	Dropped []Effort
	// AIdentified: the omni-domain model's long-duration term A was fitted
	// (a maximal effort beyond 30 min exists); otherwise A is not
	// identified and is 0.
	AIdentified bool
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
	df := len(t) - 2
	hyper := Fit{Model: ModelCP2, CPW: sol.Params[0], WPrimeJ: sol.Params[1], CPSEW: sol.StdErr[0], WPrimeSEJ: sol.StdErr[1],
		Efforts: es, s2: sol.RSS / float64(df), DF: df}
	hyper.RMSEW = math.Sqrt(sol.RSS / float64(len(t)))
	invFit := Fit{Model: ModelCP2Inverse, CPW: cpI, WPrimeJ: wI, CPSEW: seCPI, WPrimeSEJ: seWI, Efforts: es, RMSEW: math.Sqrt(rssI / float64(len(t))), DF: df}
	workFit := Fit{Model: ModelCP2Work, CPW: cpW, WPrimeJ: wW, CPSEW: seCPW, WPrimeSEJ: seWW, Efforts: es, DF: df}
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
		CPSEW: sol.StdErr[0], WPrimeSEJ: sol.StdErr[1], PmaxSEW: sol.StdErr[2], Efforts: es, DF: len(t) - 3}
	f.RMSEW = rmse(f, t, p)
	if !(f.PmaxW > f.CPW) || math.IsNaN(f.CPW) {
		return f, fmt.Errorf("fit has Pmax (%.0f W) at or below CP (%.0f W)", f.PmaxW, f.CPW)
	}
	return f, nil
}

// Omni-domain bounds (common practice, wide on purpose): W′ and Pmax are
// kept inside these while fitting, so that a few noisy points cannot send
// them to thousands of kilojoules or watts.
const (
	omniMinWPrimeJ, omniMaxWPrimeJ = 3000.0, 60000.0
	omniMaxPmaxW                   = 2500.0
)

// fitOmni fits the omni-domain model to maximal efforts by relative least
// squares (each residual in proportion to the effort's power, so that
// sprints and 20-min efforts weigh alike). A is fitted only when withA
// (a maximal effort beyond 30 min exists); W′ and Pmax are bounded.
func fitOmni(es []Effort, cp0, w0, pmax0 float64, withA bool) (Fit, error) {
	t, p := xy(es)
	np := 3
	if withA {
		np = 4
	}
	if len(t) <= np {
		return Fit{}, ErrTooFewPoints
	}
	// parameters: CP, W′ and Pmax mapped into their bounds
	bound := func(x, lo, hi float64) float64 { return lo + (hi-lo)/(1+math.Exp(-x)) }
	unbound := func(v, lo, hi float64) float64 {
		f := math.Min(0.999, math.Max(0.001, (v-lo)/(hi-lo)))
		return math.Log(f / (1 - f))
	}
	params := func(b []float64) (cp, w, pm, a float64) {
		cp = b[0]
		w = bound(b[1], omniMinWPrimeJ, omniMaxWPrimeJ)
		pm = bound(b[2], 1.2*math.Max(cp, 1), omniMaxPmaxW)
		if withA {
			a = b[3]
		}
		return
	}
	start := []float64{cp0, unbound(w0, omniMinWPrimeJ, omniMaxWPrimeJ), unbound(math.Max(pmax0, cp0*1.5), 1.2*cp0, omniMaxPmaxW)}
	if withA {
		start = append(start, 0.05*cp0)
	}
	idx := make([]float64, len(t))
	ones := make([]float64, len(t))
	for i := range idx {
		idx[i], ones[i] = float64(i), 1
	}
	sol, err := LevenbergMarquardt(Problem{X: idx, Y: ones, F: func(x float64, b []float64) float64 {
		i := int(x)
		cp, w, pm, a := params(b)
		return OmniPower(t[i], cp, w, pm, a) / p[i]
	}}, start)
	if err != nil {
		return Fit{}, err
	}
	cp, w, pm, a := params(sol.Params)
	// standard errors through the bounds' derivatives (delta method)
	dw := (w - omniMinWPrimeJ) * (omniMaxWPrimeJ - w) / (omniMaxWPrimeJ - omniMinWPrimeJ)
	lo := 1.2 * math.Max(cp, 1)
	dp := (pm - lo) * (omniMaxPmaxW - pm) / (omniMaxPmaxW - lo)
	fit := Fit{Model: ModelOmni, CPW: cp, WPrimeJ: w, PmaxW: pm, A: a, AIdentified: withA,
		CPSEW: sol.StdErr[0], WPrimeSEJ: sol.StdErr[1] * dw, PmaxSEW: sol.StdErr[2] * dp, Efforts: es, DF: len(t) - np}
	fit.RMSEW = rmse(fit, t, p)
	return fit, nil
}

// DropShare: an effort more than this far below a fit's curve is taken as
// submaximal for its duration and left out of the refit (a field best at a
// duration nobody rode hard; maximal field efforts scatter by a few
// per cent).
const DropShare = 0.03

// refit fits the efforts, leaves out those more than DropShare below the
// first fit's curve (its first model), and fits again on the rest when at
// least minN efforts remain.
func refit(es []Effort, minN int, fit func([]Effort) ([]Fit, error)) ([]Fit, error) {
	fs, err := fit(es)
	if err != nil {
		return nil, err
	}
	var keep, drop []Effort
	for _, e := range es {
		if e.Watts < (1-DropShare)*fs[0].Power(float64(e.DurationS)) {
			drop = append(drop, e)
		} else {
			keep = append(keep, e)
		}
	}
	if len(drop) == 0 || len(keep) < minN {
		return fs, nil
	}
	gs, err := fit(keep)
	if err != nil {
		return fs, nil
	}
	for i := range gs {
		gs[i].Dropped = drop
	}
	return gs, nil
}

func one(f Fit, err error) ([]Fit, error) {
	if err != nil {
		return nil, err
	}
	return []Fit{f}, nil
}
