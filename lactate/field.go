package lactate

import (
	"fmt"
	"math"
	"strings"
)

// Field is the field estimate of the days around a test: the headline CP
// (with its range and grade) and the 20-min rule, from sustain estimate.
type Field struct {
	From, To    string
	Estimated   bool
	Reason      string // why not, when not estimated
	CPW         float64
	LowW, HighW float64
	Model       string
	Confidence  string
	Rule20W     float64 // 95 % of the best 20 min; NaN when none
	Rule20Conf  string
}

// Gap is how far a field figure sits from a lactate threshold.
type Gap struct {
	Method   string  // the lactate method
	LactateW float64 // its threshold
	Field    string  // "cp" or "20min"
	FieldW   float64
	DiffW    float64 // field − lactate
	DiffPct  float64 // of the lactate threshold
	Note     string
}

// BelowShare: a field CP more than this share below MLSS is the wrong way
// round, for CP usually sits above MLSS (Pringle &
// Jones 2002, Eur J Appl Physiol: CP above MLSS in every subject; the size
// of the gap from memory, several per cent) and is flagged for a second
// look.
const BelowShare = 0.05

// Gaps sets the field estimate beside each placed threshold and the MLSS
// bracket's middle (when both ends exist).
func Gaps(f Field, a *Analysis, br *Bracket) []Gap {
	type th struct {
		name string
		w    float64
	}
	var ths []th
	if a != nil {
		for _, t := range a.Thresholds {
			if t.OK() {
				ths = append(ths, th{t.Method, t.PowerW})
			}
		}
	}
	if br != nil && !math.IsNaN(br.MidW()) {
		ths = append(ths, th{MethodMLSS, br.MidW()})
	}
	var out []Gap
	for _, t := range ths {
		if f.Estimated {
			g := Gap{Method: t.name, LactateW: t.w, Field: "cp", FieldW: f.CPW, DiffW: f.CPW - t.w, DiffPct: 100 * (f.CPW - t.w) / t.w}
			if f.CPW < (1-BelowShare)*t.w && t.name == MethodMLSS {
				g.Note = fmt.Sprintf("CP is %.0f %% below MLSS, where it usually sits above it: worth a second look (were the field efforts maximal? was the trials' power held?)", -g.DiffPct)
			}
			out = append(out, g)
		}
		if !math.IsNaN(f.Rule20W) {
			out = append(out, Gap{Method: t.name, LactateW: t.w, Field: "20min", FieldW: f.Rule20W, DiffW: f.Rule20W - t.w, DiffPct: 100 * (f.Rule20W - t.w) / t.w})
		}
	}
	return out
}

// Shift is how the curve moved between two step tests of one athlete.
type Shift struct {
	From, To           string // the tests' dates (or names)
	LT2FromW, LT2ToW   float64
	OBLAFromW, OBLAToW float64
	Message            string
}

// Shifts describes each test against the one before it (tests of one
// athlete, in date order): the power at 2 and 4 mmol/L and what the move
// means in the physiology's terms.
func Shifts(as []Analysis) []Shift {
	var out []Shift
	for i := 1; i < len(as); i++ {
		a, b := as[i-1], as[i]
		s := Shift{From: a.Test.Label(), To: b.Test.Label()}
		t2a, _ := a.Threshold(MethodLT2)
		t2b, _ := b.Threshold(MethodLT2)
		t4a, _ := a.Threshold(MethodOBLA4)
		t4b, _ := b.Threshold(MethodOBLA4)
		s.LT2FromW, s.LT2ToW, s.OBLAFromW, s.OBLAToW = t2a.PowerW, t2b.PowerW, t4a.PowerW, t4b.PowerW
		var parts []string
		for _, x := range []struct {
			name   string
			lo, hi float64
		}{{"2 mmol/L", t2a.PowerW, t2b.PowerW}, {"4 mmol/L", t4a.PowerW, t4b.PowerW}} {
			if !math.IsNaN(x.lo) && !math.IsNaN(x.hi) {
				parts = append(parts, fmt.Sprintf("%s %+.0f W", x.name, x.hi-x.lo))
			}
		}
		if len(parts) == 0 {
			s.Message = "the two tests share no placed fixed-concentration threshold to compare"
			out = append(out, s)
			continue
		}
		d := 0.0
		if !math.IsNaN(t4a.PowerW) && !math.IsNaN(t4b.PowerW) {
			d = t4b.PowerW - t4a.PowerW
		} else if !math.IsNaN(t2a.PowerW) && !math.IsNaN(t2b.PowerW) {
			d = t2b.PowerW - t2a.PowerW
		}
		s.Message = strings.Join(parts, ", ") + ": "
		switch {
		case d > 0:
			s.Message += "less lactate at the same power, so removal rose (aerobic capacity) or production fell (less glycolysis at that power)"
		case d < 0:
			s.Message += "more lactate at the same power, so removal fell or production rose (detraining, fatigue, or more glycolytic training)"
		default:
			s.Message += "the curve did not move"
		}
		s.Message += "; a step test alone cannot say which side changed: the season view of CP and W′ (sustain season) can"
		out = append(out, s)
	}
	return out
}

// Label names a test by its date, else its name.
func (t StepTest) Label() string {
	if t.Date != "" {
		return t.Date
	}
	return t.Test
}
