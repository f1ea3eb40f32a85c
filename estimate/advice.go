package estimate

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
)

// adviceBands are the duration bands an extra maximal effort could fill.
var adviceBands = [][2]int{{120, 180}, {180, 300}, {300, 480}, {480, 720}, {720, 1200}}

// advise finds the band where one more maximal effort would shrink the
// standard error of CP the most, on the current 2-parameter fit: with rows
// j(t) = [1, 1/t], cov = s²·(Σ j jᵀ)⁻¹, and one more row for the
// hypothetical effort.
func advise(rep Report, opts Options) Advice {
	var a Advice
	band := used(rep.Efforts, opts.CP2MinS, opts.CP2MaxS)
	for _, b := range adviceBands {
		if b[0] < opts.CP2MinS || b[1] > opts.CP2MaxS {
			continue
		}
		found := false
		for _, e := range band {
			found = found || (e.DurationS >= b[0] && e.DurationS <= b[1])
		}
		if !found {
			a.Gaps = append(a.Gaps, fmt.Sprintf("no maximal effort of %s in this window", bandText(b)))
		}
	}
	f := rep.model(ModelCP2)
	if f == nil {
		a.Message = "Ride maximal efforts of about 3, 7 and 12 minutes (a common field protocol), on separate days or with full recovery between them, so that CP and W′ can be fitted."
		return a
	}
	// noise of a maximal effort: the fit's own, but at least 1 % of CP
	s2 := math.Max(f.s2, math.Pow(0.01*f.CPW, 2))
	info := mat.NewSymDense(2, nil)
	for _, e := range f.Efforts {
		x := 1 / float64(e.DurationS)
		info.SetSym(0, 0, info.At(0, 0)+1)
		info.SetSym(0, 1, info.At(0, 1)+x)
		info.SetSym(1, 1, info.At(1, 1)+x*x)
	}
	seCP := func(m *mat.SymDense) float64 {
		var ch mat.Cholesky
		if !ch.Factorize(m) {
			return math.Inf(1)
		}
		var inv mat.SymDense
		if ch.InverseTo(&inv) != nil {
			return math.Inf(1)
		}
		return math.Sqrt(s2 * inv.At(0, 0))
	}
	a.CPSEW = seCP(info)
	a.NewCPSEW = a.CPSEW
	for _, b := range adviceBands {
		if b[0] < opts.CP2MinS || b[1] > opts.CP2MaxS {
			continue
		}
		t := math.Sqrt(float64(b[0]) * float64(b[1]))
		m := mat.NewSymDense(2, nil)
		m.CopySym(info)
		m.SetSym(0, 0, m.At(0, 0)+1)
		m.SetSym(0, 1, m.At(0, 1)+1/t)
		m.SetSym(1, 1, m.At(1, 1)+1/(t*t))
		if se := seCP(m); se < a.NewCPSEW {
			a.NewCPSEW, a.FromS, a.ToS = se, b[0], b[1]
		}
	}
	if a.FromS == 0 {
		a.Message = "No single extra effort would tighten CP noticeably."
		return a
	}
	a.Message = fmt.Sprintf("One more maximal effort of %s would tighten CP the most (on the cp2 fit): the standard error of CP, counting each maximal effort as uncertain by at least 1 %% of CP, would fall from about %.1f W to %.1f W (the models table's %.1f W counts the fit's residuals alone).",
		bandText([2]int{a.FromS, a.ToS}), a.CPSEW, a.NewCPSEW, f.CPSEW)
	return a
}

func bandText(b [2]int) string { return band(b[0], b[1]) }
