package accuracy

import (
	"fmt"
	"io"
	"math"
	"slices"
	"strings"

	"github.com/sustain-cycling/sustain/estimate"
	"github.com/sustain-cycling/sustain/internal/synth"
)

// stats are the mean, SD and worst (largest in size, sign kept) of errors
// in percent.
type stats struct {
	n                int
	mean, sd, worstE float64
}

func statsOf(xs []float64) stats {
	s := stats{n: len(xs)}
	if s.n == 0 {
		return s
	}
	for _, x := range xs {
		s.mean += x
		if math.Abs(x) > math.Abs(s.worstE) {
			s.worstE = x
		}
	}
	s.mean /= float64(s.n)
	for _, x := range xs {
		s.sd += (x - s.mean) * (x - s.mean)
	}
	if s.n > 1 {
		s.sd = math.Sqrt(s.sd / float64(s.n-1))
	}
	return s
}

func (s stats) String() string {
	if s.n == 0 {
		return "–"
	}
	return fmt.Sprintf("%+.1f ± %.1f (worst %+.1f)", s.mean, s.sd, s.worstE)
}

func pct(got, want float64) float64 { return 100 * (got - want) / want }

// group is the outcomes of one kind and truth model.
type group struct {
	kind, truth string
	os          []Outcome
}

func groups(os []Outcome) []group {
	var gs []group
	for _, o := range os {
		i := slices.IndexFunc(gs, func(g group) bool { return g.kind == o.Kind && g.truth == o.Truth })
		if i < 0 {
			gs = append(gs, group{kind: o.Kind, truth: o.Truth})
			i = len(gs) - 1
		}
		gs[i].os = append(gs[i].os, o)
	}
	return gs
}

func truthName(t string) string {
	switch t {
	case synth.TruthCP2:
		return "2-parameter"
	case synth.TruthOmni:
		return "omni-domain"
	}
	return "Morton"
}

// Summary is the figures the targets are stated in, over all outcomes.
type Summary struct {
	// Coverage: share of printed headlines whose range holds the true CP.
	Coverage float64
	// FalseConfident: high or medium headlines more than 5 % off.
	FalseConfident int
	// RiseNamed: share of block seasons whose CP rise was named.
	RiseNamed float64
	// FalseChange: share of stable seasons that named any change.
	FalseChange float64
	// EnduranceNumbers: endurance-only seasons given a number graded above
	// low; FloorsAbove: floors printed above the truth.
	EnduranceNumbers, FloorsAbove int
}

// Summarise computes the Summary.
func Summarise(os []Outcome) Summary {
	var s Summary
	var printed, covered, blocks, rises, stable, falses int
	for _, o := range os {
		if o.Estimated {
			printed++
			if o.LowW <= o.TrueCPW && o.TrueCPW <= o.HighW {
				covered++
			}
			if o.Confidence != estimate.Low && math.Abs(pct(o.CPW, o.TrueCPW)) > 5 {
				s.FalseConfident++
			}
			if o.Kind == synth.KindEndurance && o.Confidence != estimate.Low {
				s.EnduranceNumbers++
			}
		}
		if o.FloorW > o.TrueCPW {
			s.FloorsAbove++
		}
		switch o.Kind {
		case synth.KindBlock:
			blocks++
			if o.CPRiseNamed {
				rises++
			}
		case synth.KindWellTested, synth.KindSparse, synth.KindNoisy:
			stable++
			if o.ChangeNamed {
				falses++
			}
		}
	}
	ratio := func(a, b int) float64 {
		if b == 0 {
			return math.NaN()
		}
		return float64(a) / float64(b)
	}
	s.Coverage, s.RiseNamed, s.FalseChange = ratio(covered, printed), ratio(rises, blocks), ratio(falses, stable)
	return s
}

// Write prints the report as Markdown tables.
func Write(w io.Writer, os []Outcome, seeds int) {
	fmt.Fprintf(w, "Accuracy on invented seasons: %d seeds per kind and truth model; errors in %% of the truth at the season's end (mean ± SD, worst).\n\n", seeds)
	fmt.Fprintln(w, "Headline (`sustain estimate`, last 90 days):")
	fmt.Fprintln(w)
	fmt.Fprintln(w, "| kind | truth | printed | CP error % | W′ error % (headline model) | range covers | high/medium > 5 % off | models chosen |")
	fmt.Fprintln(w, "|---|---|---|---|---|---|---|---|")
	gs := groups(os)
	for _, g := range gs {
		var cp, wp []float64
		printed, covered, bad := 0, 0, 0
		chosen := map[string]int{}
		for _, o := range g.os {
			if !o.Estimated {
				chosen["not estimated"]++
				continue
			}
			printed++
			chosen[o.Model+" "+o.Confidence]++
			cp = append(cp, pct(o.CPW, o.TrueCPW))
			if m, ok := o.Models[o.Model]; ok {
				wp = append(wp, pct(m[1], o.TrueWPrimeJ))
			}
			if o.LowW <= o.TrueCPW && o.TrueCPW <= o.HighW {
				covered++
			}
			if o.Confidence != estimate.Low && math.Abs(pct(o.CPW, o.TrueCPW)) > 5 {
				bad++
			}
		}
		cov := "–"
		if printed > 0 {
			cov = fmt.Sprintf("%.0f %%", 100*float64(covered)/float64(printed))
		}
		fmt.Fprintf(w, "| %s | %s | %d/%d | %s | %s | %s | %d | %s |\n", g.kind, truthName(g.truth), printed, len(g.os),
			statsOf(cp), statsOf(wp), cov, bad, counts(chosen))
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, "Every model, fitted to the same efforts (CP error %, W′ error %):")
	fmt.Fprintln(w)
	models := []string{estimate.ModelCP2, estimate.ModelMorton, estimate.ModelOmni}
	fmt.Fprint(w, "| kind | truth |")
	for _, m := range models {
		fmt.Fprintf(w, " %s CP | %s W′ |", m, m)
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, "|---|---|"+strings.Repeat("---|---|", len(models)))
	for _, g := range gs {
		fmt.Fprintf(w, "| %s | %s |", g.kind, truthName(g.truth))
		for _, m := range models {
			var cp, wp []float64
			for _, o := range g.os {
				if v, ok := o.Models[m]; ok {
					cp = append(cp, pct(v[0], o.TrueCPW))
					wp = append(wp, pct(v[1], o.TrueWPrimeJ))
				}
			}
			fmt.Fprintf(w, " %s | %s |", statsOf(cp), statsOf(wp))
		}
		fmt.Fprintln(w)
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, "Season (`sustain season`, defaults):")
	fmt.Fprintln(w)
	fmt.Fprintln(w, "| kind | truth | CP rise named | any change named | last window's CP error % |")
	fmt.Fprintln(w, "|---|---|---|---|---|")
	for _, g := range gs {
		if g.kind == synth.KindEndurance {
			continue
		}
		rise, any := 0, 0
		var end []float64
		for _, o := range g.os {
			if o.CPRiseNamed {
				rise++
			}
			if o.ChangeNamed {
				any++
			}
			if o.SeasonEndCPW > 0 {
				end = append(end, pct(o.SeasonEndCPW, o.TrueCPW))
			}
		}
		riseText := "(no rise)"
		if g.kind == synth.KindBlock {
			riseText = fmt.Sprintf("%d/%d", rise, len(g.os))
		}
		fmt.Fprintf(w, "| %s | %s | %s | %d/%d | %s |\n", g.kind, truthName(g.truth), riseText, any, len(g.os), statsOf(end))
	}
	var rmse []float64
	for _, o := range os {
		if o.Truth == synth.TruthOmni && o.OmniRMSEW > 0 {
			rmse = append(rmse, o.OmniRMSEW)
		}
	}
	if len(rmse) > 0 {
		s := statsOf(rmse)
		fmt.Fprintf(w, "\nOmni-domain fit on omni-domain truth: RMSE on its own efforts %.1f W mean, %.1f W worst.\n", s.mean, slices.Max(rmse))
	}
	s := Summarise(os)
	fmt.Fprintf(w, "\nSummary: range covers the truth in %.0f %% of printed headlines; %d high/medium headlines more than 5 %% off; "+
		"CP rise named in %.0f %% of block seasons; a change named in %.0f %% of stable seasons; "+
		"%d endurance-only numbers above low; %d floors above the truth.\n",
		100*s.Coverage, s.FalseConfident, 100*s.RiseNamed, 100*s.FalseChange, s.EnduranceNumbers, s.FloorsAbove)
}

func counts(m map[string]int) string {
	var keys []string
	for k := range m {
		keys = append(keys, k)
	}
	slices.Sort(keys)
	var parts []string
	for _, k := range keys {
		parts = append(parts, fmt.Sprintf("%s ×%d", k, m[k]))
	}
	return strings.Join(parts, ", ")
}
