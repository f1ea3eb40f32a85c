package estimate

import (
	"fmt"
	"slices"
	"strings"
)

// Method names for comparing estimates: the three model fits (by the
// models' own names, as everywhere) and the default rules of thumb (others
// are named by their duration, see RuleSpec.Method).
const (
	MethodCP2    = ModelCP2
	MethodMorton = ModelMorton
	MethodOmni   = ModelOmni
	Method20Min  = "20min"
	Method60Min  = "60min"
)

// ModelNames are the models every command names, in their usual order.
var ModelNames = []string{ModelCP2, ModelCP2Work, ModelCP2Inverse, ModelMorton, ModelOmni}

// ModelName is the model a name means, one set of names for every command:
// cp2, cp2-work, cp2-inverse, morton3 and omni, also written morton,
// ompd and omni-domain. ok is false for a name that is none of them.
func ModelName(s string) (name string, ok bool) {
	switch s = strings.TrimSpace(strings.ToLower(s)); s {
	case ModelCP2, ModelCP2Work, ModelCP2Inverse, ModelMorton, ModelOmni:
		return s, true
	case "morton":
		return ModelMorton, true
	case "ompd", "omni-domain":
		return ModelOmni, true
	}
	return s, false
}

// Methods lists every method in its usual order.
var Methods = []string{MethodCP2, MethodMorton, MethodOmni, Method20Min, Method60Min}

// ParseMethods reads a comma-separated list of Methods and of the extra
// names given (methods of other sources, such as lactate tests); a model
// may be named as ModelName reads it.
func ParseMethods(s string, extra ...string) ([]string, error) {
	var out []string
	for _, m := range strings.Split(s, ",") {
		m = strings.TrimSpace(strings.ToLower(m))
		if model, ok := ModelName(m); ok {
			m = model
		}
		known := append(append([]string(nil), Methods...), extra...)
		if !slices.Contains(known, m) {
			return nil, fmt.Errorf("unknown method %q (methods: %s)", m, strings.Join(known, ", "))
		}
		out = append(out, m)
	}
	if len(out) < 2 {
		return nil, fmt.Errorf("name at least two methods to compare")
	}
	return out, nil
}

// MethodEstimate is one method's threshold for one subject.
type MethodEstimate struct {
	Watts      float64 `json:"watts"`
	Confidence string  `json:"confidence"`
}

// ByMethod gives each method's estimate from a report, with its grade (a
// rule of thumb's is the grade of the effort behind it, see rules).
func ByMethod(rep Report) map[string]MethodEstimate {
	out := map[string]MethodEstimate{}
	for m, model := range map[string]string{MethodCP2: ModelCP2, MethodMorton: ModelMorton, MethodOmni: ModelOmni} {
		if f := rep.model(model); f != nil {
			out[m] = MethodEstimate{f.CPW, f.Confidence}
		}
	}
	for _, r := range rep.Rules {
		out[RuleMethod(r.Effort.DurationS)] = MethodEstimate{r.Watts, r.Confidence}
	}
	return out
}

// Subject is an athlete (or one athlete's window) with its estimates.
type Subject struct {
	Name      string                    `json:"name"`
	Estimates map[string]MethodEstimate `json:"estimates"`
}

// PairAgreement is the agreement of two methods across subjects.
type PairAgreement struct {
	A, B string
	Agreement
	// Diffs and Means are the subjects' a − b and (a + b)/2, for the plot.
	Diffs, Means []float64
	Names        []string
	// LeftOut names the subjects left out, with the reason.
	LeftOut []string
}

// Compare computes the agreement of every pair of methods. A subject is
// left out of a pair when either estimate is missing or graded low.
func Compare(subjects []Subject, methods []string) []PairAgreement {
	var out []PairAgreement
	for i, a := range methods {
		for _, b := range methods[i+1:] {
			pa := PairAgreement{A: a, B: b, LeftOut: []string{}}
			var xs, ys []float64
			for _, s := range subjects {
				ea, okA := s.Estimates[a]
				eb, okB := s.Estimates[b]
				switch {
				case !okA || !okB:
					pa.LeftOut = append(pa.LeftOut, s.Name+": no estimate")
				case ea.Confidence == Low || eb.Confidence == Low:
					pa.LeftOut = append(pa.LeftOut, s.Name+": graded low")
				default:
					xs, ys = append(xs, ea.Watts), append(ys, eb.Watts)
					pa.Diffs = append(pa.Diffs, ea.Watts-eb.Watts)
					pa.Means = append(pa.Means, (ea.Watts+eb.Watts)/2)
					pa.Names = append(pa.Names, s.Name)
				}
			}
			ag, err := Agree(xs, ys)
			if err == nil {
				pa.Agreement = ag
			} else {
				pa.Agreement = Agreement{N: len(xs)}
			}
			out = append(out, pa)
		}
	}
	return out
}
