package estimate

import (
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/stat/distuv"
)

// headlineModels may give the headline, in the order of preference among
// equally graded fits; the linear 2-parameter forms are shown for
// comparison only. The 2-parameter model on 2–20 min efforts comes first:
// of the three it is the least sensitive to the shape of the athlete's
// true curve below 2 min (measured by `make accuracy` on 2-parameter,
// Morton and omni-domain truths), which is where the models differ.
var headlineModels = []string{ModelCP2, ModelOmni, ModelMorton}

// Shortfall is the share of CP added to the top of the range: maximal
// field efforts fall a little short of the athlete's true best (paced
// imperfectly, ridden on roads), never above it, so a fitted CP errs low
// more than high (the tool's rule; its invented field efforts are 97–100 %
// of the truth).
const Shortfall = 0.02

// Confidence level of the range.
const rangeLevel = 0.95

// tQuantile is the two-sided Student-t quantile for df degrees of freedom
// (df 3: 3.182, from any statistics table).
func tQuantile(df int) float64 {
	if df < 1 {
		return math.Inf(1)
	}
	return distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(df)}.Quantile(1 - (1-rangeLevel)/2)
}

// RangeRule says in one sentence how the range is made (README, output).
const RangeRule = "95 % range: CP ± t × its standard error (Student t for the fit's residual degrees of freedom, at least ±1 % of CP, ±5 % when graded low), raised at the top by 2 % of CP because field efforts fall short of a true maximum, never above it, and widened to hold the range of every other model graded as well."

// headline picks the best-supported model among those that may give it:
// plausible parameters, no misfit at short durations, at least two
// distinct maximal efforts in the 2–20 min band; then the highest grade;
// then the order of headlineModels. choice, when set, overrides the
// choice of model (not the checks of the data). When nothing can be
// estimated the threshold says why, with a floor when the window holds a
// 60-min best.
func headline(rep Report, ctx gradeContext, choice string) *Threshold {
	var cands []Fit
	why := ""
	for _, f := range rep.Models {
		if (choice == "" && !slices.Contains(headlineModels, f.Model)) || (choice != "" && f.Model != choice) {
			continue
		}
		if r := implausible(&f); r != "" {
			why = fmt.Sprintf("the %s fit is implausible (%s)", f.Model, r)
			continue
		}
		if r := shortMisfit(&f); r != "" && choice == "" {
			why = fmt.Sprintf("the %s fit %s", f.Model, r)
			continue
		}
		cands = append(cands, f)
	}
	if n := distinct(ctx.cp2Band()); n < 2 {
		why = fmt.Sprintf("only %d distinct maximal effort(s) between %s and %s: at least 2, better 3, are needed", n, minutes(ctx.opts.CP2MinS), minutes(ctx.opts.CP2MaxS))
		cands = nil
	}
	if len(cands) == 0 {
		if why == "" {
			why = "no model could be fitted to the efforts"
			if choice != "" {
				why = fmt.Sprintf("the %s model could not be fitted", choice)
			}
		}
		t := &Threshold{Reason: why}
		if p, ok := ctx.curve.At(3600); ok && p.Watts > 0 {
			t.FloorW, t.FloorRule = p.Watts, "best 60-min power"
		}
		return t
	}
	slices.SortStableFunc(cands, func(a, b Fit) int {
		if d := rank(b.Confidence) - rank(a.Confidence); d != 0 {
			return d
		}
		return slices.Index(headlineModels, a.Model) - slices.Index(headlineModels, b.Model)
	})
	// among the best graded, a model that follows the 2–20 min efforts
	// clearly better than the preferred one takes the headline: a curve
	// bent more than 1/t between 2 and 20 min (a large W′ with a low Pmax)
	// leaves the 2-parameter fit's residuals in a pattern and its CP high
	band := ctx.cp2Band()
	best, bestRMSE := 0, bandRMSE(cands[0], band)
	for i := 1; i < len(cands) && cands[i].Confidence == cands[0].Confidence; i++ {
		if r := bandRMSE(cands[i], band); r < clearlyBetter*bandRMSE(cands[0], band) && r < bestRMSE {
			best, bestRMSE = i, r
		}
	}
	cands[0], cands[best] = cands[best], cands[0]
	f := cands[0]
	half := math.Max(tQuantile(f.DF)*f.CPSEW, 0.01*f.CPW)
	if f.Confidence == Low {
		// field CP differs from lab CP by about 5 % (SEE 5.2 %, Karsten et
		// al. 2015, Eur J Appl Physiol): a low grade gets at least that
		half = math.Max(half, 0.05*f.CPW)
	}
	th := &Threshold{Watts: f.CPW, LowW: f.CPW - half, HighW: f.CPW + half + Shortfall*f.CPW, Model: f.Model, Confidence: f.Confidence}
	// the models disagree about the curve's shape and the efforts cannot
	// say which is right: the range holds the range of every other
	// candidate graded as well as the headline's
	for _, g := range cands[1:] {
		if g.Confidence == f.Confidence {
			h := math.Max(tQuantile(g.DF)*g.CPSEW, 0.01*g.CPW)
			th.LowW, th.HighW = math.Min(th.LowW, g.CPW-h), math.Max(th.HighW, g.CPW+h+Shortfall*g.CPW)
		}
	}
	return th
}

// shortMisfit reports a 3-parameter fit whose residuals show the model
// cannot follow the shape of the curve: at its shortest efforts (up to
// 60 s) or at its longest (10 min and more), the efforts lie all on one
// side of the curve, by more than misfitShare on average. A model that
// cannot follow the sprints pulls CP and W′ to make up for it, and the
// longest efforts then lie above the curve: Morton's model fitted to an
// omni-domain-shaped athlete from 15 s puts CP 5–6 % low that way.
func shortMisfit(f *Fit) string {
	if f.PmaxW == 0 {
		return ""
	}
	for _, band := range []struct {
		lo, hi int
		name   string
	}{{1, 60, "efforts of up to 60 s"}, {600, math.MaxInt, "efforts of 10 min and more"}} {
		var rel []float64
		for _, e := range f.Efforts {
			if e.DurationS >= band.lo && e.DurationS <= band.hi {
				rel = append(rel, (e.Watts-f.Power(float64(e.DurationS)))/e.Watts)
			}
		}
		if len(rel) < 2 {
			continue
		}
		pos, sum := 0, 0.0
		for _, r := range rel {
			if r > 0 {
				pos++
			}
			sum += r
		}
		mean := sum / float64(len(rel))
		if (pos == 0 || pos == len(rel)) && math.Abs(mean) > misfitShare {
			side := "above"
			if mean < 0 {
				side = "below"
			}
			return fmt.Sprintf("does not follow the shape of this curve: its %s all lie %s it, by %.1f %% on average", band.name, side, 100*math.Abs(mean))
		}
	}
	return ""
}

// clearlyBetter: a model's relative RMSE on the 2–20 min efforts must be
// below this share of the preferred model's to take the headline from it.
const clearlyBetter = 0.6

// bandRMSE is a fit's root-mean-square relative residual on the efforts es.
func bandRMSE(f Fit, es []Effort) float64 {
	if len(es) == 0 {
		return math.Inf(1)
	}
	s := 0.0
	for _, e := range es {
		r := (e.Watts - f.Power(float64(e.DurationS))) / e.Watts
		s += r * r
	}
	return math.Sqrt(s / float64(len(es)))
}

// misfitShare: the mean relative residual of a band of efforts beyond which
// a fit is taken not to follow the curve there (maximal field efforts
// scatter by a few per cent, so a band of them averages closer).
const misfitShare = 0.02
