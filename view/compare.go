package view

import (
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/sustain-cycling/sustain/estimate"
	"github.com/sustain-cycling/sustain/ingest"
)

type Pair struct {
	A       string   `json:"a"`
	B       string   `json:"b"`
	N       int      `json:"n"`
	BiasW   *float64 `json:"bias_w"`
	SDW     *float64 `json:"sd_w"`
	LowerW  *float64 `json:"lower_limit_w"`
	UpperW  *float64 `json:"upper_limit_w"`
	R       *float64 `json:"r"`
	LeftOut []string `json:"left_out"`
	Note    string   `json:"note,omitempty"`
}

// Small samples: a correlation of fewer than minPairsForR subjects means
// little (two points always lie on a line) and is not given; limits of
// agreement from fewer than fewPairs subjects are given with a note.
const (
	minPairsForR = 5
	fewPairs     = 10
)

// pairNote says what a pair's sample size leaves uncertain, or "".
func pairNote(p estimate.PairAgreement) string {
	switch {
	case p.N < 2:
		return "fewer than 2 subjects with both estimates: nothing to compare"
	case p.N < minPairsForR:
		return fmt.Sprintf("only %d subjects: the limits of agreement are rough and r is not given (it needs %d)", p.N, minPairsForR)
	case p.N < fewPairs:
		return fmt.Sprintf("only %d subjects: the limits of agreement are rough", p.N)
	case math.IsNaN(p.R):
		return "one method gave the same value for every subject: r is undefined"
	}
	return ""
}

// pairR is r where the sample allows it.
func pairR(p estimate.PairAgreement) *float64 {
	if p.N < minPairsForR {
		return nil
	}
	return Finite(p.R)
}

// Subject is a subject of a comparison: each method's threshold, and with
// a mass (masses, by subject: the mass in force at the subject's window's
// end) per kilogram.
type Subject struct {
	Name      string                     `json:"name"`
	MassKG    *float64                   `json:"mass_kg,omitempty"`
	Estimates map[string]SubjectEstimate `json:"estimates"`
}

// SubjectEstimate is one method's threshold for one subject.
type SubjectEstimate struct {
	Watts      float64  `json:"watts"`
	WPerKG     *float64 `json:"w_per_kg,omitempty"`
	Confidence string   `json:"confidence"`
}

func subjectsOf(subjects []estimate.Subject, masses map[string]float64) []Subject {
	out := []Subject{}
	for _, s := range subjects {
		j := Subject{Name: s.Name, Estimates: map[string]SubjectEstimate{}}
		kg := masses[s.Name]
		if kg > 0 {
			j.MassKG = Ptr(kg)
		}
		for m, e := range s.Estimates {
			se := SubjectEstimate{Watts: e.Watts, Confidence: e.Confidence}
			if kg > 0 {
				se.WPerKG = Ptr(e.Watts / kg)
			}
			j.Estimates[m] = se
		}
		out = append(out, j)
	}
	return out
}

func NewComparison(subjects []estimate.Subject, pairs []estimate.PairAgreement, skipped []ingest.Skipped, masses map[string]float64) map[string]any {
	ps := []Pair{}
	for _, p := range pairs {
		j := Pair{A: p.A, B: p.B, N: p.N, LeftOut: p.LeftOut, Note: pairNote(p)}
		if j.LeftOut == nil {
			j.LeftOut = []string{}
		}
		if p.N >= 2 {
			j.BiasW, j.SDW, j.LowerW, j.UpperW, j.R = Finite(p.Bias), Finite(p.SD), Finite(p.LowerL), Finite(p.UpperL), pairR(p)
		}
		ps = append(ps, j)
	}
	return map[string]any{"subjects": subjectsOf(subjects, masses), "pairs": ps, "skipped": NonNil(skipped)}
}

// writeCompareCSV writes one table of two kinds of rows: each subject's
// estimate by each method (table "estimate"), then each pair's agreement
// (table "agreement"); a column a row kind does not have is empty.
func WriteComparisonCSV(w io.Writer, subjects []estimate.Subject, pairs []estimate.PairAgreement, methods []string, masses map[string]float64) error {
	cw := csv.NewWriter(w)
	cw.Write([]string{"table", "subject", "method", "watts", "confidence",
		"a", "b", "n", "bias_w", "sd_w", "lower_limit_w", "upper_limit_w", "r", "left_out", "note", "mass_kg", "w_per_kg"})
	num := func(v *float64) string {
		if v == nil {
			return ""
		}
		return strconv.FormatFloat(*v, 'f', 2, 64)
	}
	for _, s := range subjects {
		for _, m := range methods {
			if e, ok := s.Estimates[m]; ok {
				kg, perKG := "", ""
				if m := masses[s.Name]; m > 0 {
					kg, perKG = strconv.FormatFloat(m, 'f', 1, 64), strconv.FormatFloat(e.Watts/m, 'f', 3, 64)
				}
				cw.Write([]string{"estimate", s.Name, m, strconv.FormatFloat(e.Watts, 'f', 1, 64), e.Confidence,
					"", "", "", "", "", "", "", "", "", "", kg, perKG})
			}
		}
	}
	for _, p := range pairs {
		j := NewComparison(nil, []estimate.PairAgreement{p}, nil, nil)["pairs"].([]Pair)[0]
		cw.Write([]string{"agreement", "", "", "", "", j.A, j.B, strconv.Itoa(j.N), num(j.BiasW), num(j.SDW),
			num(j.LowerW), num(j.UpperW), num(j.R), strings.Join(j.LeftOut, "; "), j.Note, "", ""})
	}
	cw.Flush()
	return cw.Error()
}

func RenderComparison(w io.Writer, kind string, subjects []estimate.Subject, pairs []estimate.PairAgreement, methods []string, skipped []ingest.Skipped) {
	fmt.Fprintf(w, "Threshold by method (W; grade h/m/l), %d %s\n\n", len(subjects), kind)
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintf(tw, "%s\t%s\t\n", strings.TrimSuffix(kind, "s"), strings.Join(methods, "\t"))
	for _, s := range subjects {
		cells := []string{s.Name}
		for _, m := range methods {
			if e, ok := s.Estimates[m]; ok {
				cells = append(cells, fmt.Sprintf("%.0f %c", e.Watts, e.Confidence[0]))
			} else {
				cells = append(cells, "-")
			}
		}
		fmt.Fprintln(tw, strings.Join(cells, "\t")+"\t")
	}
	tw.Flush()
	fmt.Fprintln(w, "\nAgreement (Bland & Altman 1986): difference a − b; limits of agreement = bias ± 1.96 SD; estimates graded low left out")
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "a − b\tn\tbias (W)\tSD (W)\t95% limits (W)\tr\tleft out\t")
	var notes []string // each note once, with the pairs it is about
	notedPairs := map[string][]string{}
	for _, p := range pairs {
		if note := pairNote(p); note != "" {
			if notedPairs[note] == nil {
				notes = append(notes, note)
			}
			notedPairs[note] = append(notedPairs[note], p.A+" − "+p.B)
		}
		if p.N < 2 {
			fmt.Fprintf(tw, "%s − %s\t%d\t-\t-\t-\t-\t%d\t\n", p.A, p.B, p.N, len(p.LeftOut))
			continue
		}
		r := "-"
		if v := pairR(p); v != nil {
			r = fmt.Sprintf("%.2f", *v)
		}
		fmt.Fprintf(tw, "%s − %s\t%d\t%+.1f\t%.1f\t%+.1f to %+.1f\t%s\t%d\t\n", p.A, p.B, p.N, p.Bias, p.SD, p.LowerL, p.UpperL, r, len(p.LeftOut))
	}
	tw.Flush()
	for _, n := range notes {
		which := strings.Join(notedPairs[n], ", ")
		if len(notedPairs[n]) == len(pairs) {
			which = "every pair"
		}
		fmt.Fprintf(w, "  %s: %s\n", which, n)
	}
	header := false
	for _, s := range subjects {
		var low, missing []string
		for _, m := range methods {
			e, ok := s.Estimates[m]
			switch {
			case !ok:
				missing = append(missing, m)
			case e.Confidence == estimate.Low:
				low = append(low, m)
			}
		}
		if len(low)+len(missing) == 0 {
			continue
		}
		if !header {
			fmt.Fprintln(w, "\nLeft out of the pairs they belong to:")
			header = true
		}
		var parts []string
		if len(low) > 0 {
			parts = append(parts, strings.Join(low, ", ")+" graded low")
		}
		if len(missing) > 0 {
			parts = append(parts, strings.Join(missing, ", ")+" not estimated")
		}
		fmt.Fprintf(w, "  %s: %s\n", s.Name, strings.Join(parts, "; "))
	}
}
