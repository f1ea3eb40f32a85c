package view

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"strings"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/estimate"
	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/internal/synth"
	"github.com/sustain-cycling/sustain/lactate"
	"github.com/sustain-cycling/sustain/powerduration"
)

// season is an invented 10-week season with a block (ground truth only).
func season(t *testing.T) ([]ingest.Ride, []powerduration.RideCurve) {
	t.Helper()
	var rides []ingest.Ride
	for _, f := range synth.Season("v", time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC), 10, synth.Block(synth.Athlete{CPW: 270, WPrimeJ: 20000, PmaxW: 1000}, 20, 3000), 5) {
		if f.Fault != "" {
			continue
		}
		var samples []ingest.Sample
		for k, p := range f.Track.PowerW {
			samples = append(samples, ingest.Sample{UnixS: float64(f.Track.Start.Unix() + int64(k)), Power: p, HeartRate: math.NaN(), Cadence: math.NaN()})
		}
		r, err := ingest.Clean(samples, 0, time.UTC)
		if err != nil {
			t.Fatal(err)
		}
		r.File = f.Name
		rides = append(rides, r)
	}
	ingest.SortRides(rides)
	return rides, powerduration.OfRides(rides, 1)
}

// The text and the JSON of an estimate are renderings of one model: the
// headline the text prints is the JSON's, rounded; per kilogram too.
func TestEstimateRenderingsAgree(t *testing.T) {
	rides, curves := season(t)
	rep := estimate.Estimate(rides, curves, powerduration.LastDays(powerduration.Newest(curves), 42), estimate.Options{})
	m := NewEstimate(rep, nil)
	m.Threshold.PerKG(65)
	js, err := json.Marshal(m)
	if err != nil {
		t.Fatal(err)
	}
	var back struct {
		Threshold struct {
			Watts  float64 `json:"watts"`
			WPerKG float64 `json:"w_per_kg"`
		} `json:"threshold"`
	}
	if err := json.Unmarshal(js, &back); err != nil || back.Threshold.Watts <= 0 {
		t.Fatalf("json: %v %s", err, js)
	}
	var text bytes.Buffer
	RenderEstimate(&text, m, 65)
	if want := fmt.Sprintf("Threshold (critical power): %.0f W", back.Threshold.Watts); !strings.Contains(text.String(), want) {
		t.Errorf("the text lacks %q:\n%s", want, text.String())
	}
	if want := fmt.Sprintf("%.2f W/kg at 65.0 kg", back.Threshold.WPerKG); !strings.Contains(text.String(), want) {
		t.Errorf("the text lacks %q", want)
	}
}

// The season's text table and JSON are renderings of one model: each
// estimated window's CP, as the table prints it, is the JSON's.
func TestSeasonRenderingsAgree(t *testing.T) {
	rides, curves := season(t)
	so := estimate.SeasonOptions{}
	rep := estimate.Season(rides, curves, so)
	m := NewSeason(rep, nil, len(rides))
	m.PerKG(func(string) float64 { return 70 })
	var text bytes.Buffer
	RenderSeason(&text, m, estimate.SeasonOptions{WindowDays: 42, StepDays: 7, Components: estimate.ModelCP2}, "", "")
	estimated := 0
	for _, w := range m.Windows {
		if !w.Estimated {
			continue
		}
		estimated++
		row := fmt.Sprintf("%s – %s  ", w.From, w.To)
		if !strings.Contains(text.String(), row) || !strings.Contains(text.String(), Num(w.CPW, 1, w.CPHalfW)) {
			t.Errorf("window %s–%s: the table lacks it or its CP %s", w.From, w.To, Num(w.CPW, 1, w.CPHalfW))
		}
		if w.MassKG == nil || *w.CPWPerKG != *w.CPW/70 {
			t.Errorf("window %s–%s: per kilogram %v", w.From, w.To, w.CPWPerKG)
		}
	}
	if estimated == 0 {
		t.Fatal("no window estimated")
	}
}

// The curve's table and CSV are renderings of one model: every key
// duration's watts in the table are the model's, rounded; the CSV has a
// row per point.
func TestCurveRenderingsAgree(t *testing.T) {
	_, curves := season(t)
	best := powerduration.BestOf(curves)
	m := Curve{Rides: len(curves), Points: best.Points}
	var text, csvOut bytes.Buffer
	RenderCurve(&text, m, []string{"rides"})
	if err := WriteCurveCSV(&csvOut, m); err != nil {
		t.Fatal(err)
	}
	for _, d := range []int{60, 300, 1200} {
		p, _ := best.At(d)
		if row := fmt.Sprintf("%s    %.0f", DurationLabel(d), p.Watts); !strings.Contains(text.String(), row) {
			t.Errorf("the table lacks %q", row)
		}
	}
	if rows := strings.Count(csvOut.String(), "\n"); rows != len(best.Points)+1 {
		t.Errorf("csv: %d lines for %d points", rows, len(best.Points))
	}
}

// A comparison's table, JSON and CSV are renderings of one model: the
// bias each prints is the agreement's.
func TestComparisonRenderingsAgree(t *testing.T) {
	subjects := []estimate.Subject{}
	var a, b []float64
	for i, w := range []float64{250, 262, 281, 300, 318, 240} {
		subjects = append(subjects, estimate.Subject{Name: fmt.Sprintf("s%d", i), Estimates: map[string]estimate.MethodEstimate{
			"cp2": {Watts: w, Confidence: estimate.High}, "20min": {Watts: w + 4 + float64(i%3), Confidence: estimate.Medium}}})
		a, b = append(a, w), append(b, w+4+float64(i%3))
	}
	ag, err := estimate.Agree(a, b)
	if err != nil {
		t.Fatal(err)
	}
	pairs := []estimate.PairAgreement{{A: "cp2", B: "20min", Agreement: ag}}
	js, _ := json.Marshal(NewComparison(subjects, pairs, nil, map[string]float64{"s0": 64}))
	var back struct {
		Pairs []struct {
			BiasW float64 `json:"bias_w"`
			Note  string  `json:"note"`
		} `json:"pairs"`
	}
	if err := json.Unmarshal(js, &back); err != nil || len(back.Pairs) != 1 || back.Pairs[0].BiasW != ag.Bias {
		t.Fatalf("json %s", js)
	}
	var text, csvOut bytes.Buffer
	RenderComparison(&text, "athletes", subjects, pairs, []string{"cp2", "20min"}, nil)
	WriteComparisonCSV(&csvOut, subjects, pairs, []string{"cp2", "20min"}, map[string]float64{"s0": 64})
	if want := fmt.Sprintf("cp2 − 20min  6  %+.1f", ag.Bias); !strings.Contains(text.String(), want) {
		t.Errorf("the table lacks %q:\n%s", want, text.String())
	}
	if !strings.Contains(string(js), `"w_per_kg":3.90625`) || !strings.Contains(csvOut.String(), "estimate,s0,cp2,250.0,high,,,,,,,,,,,64.0,3.906") {
		t.Errorf("per kilogram: json %s\ncsv %s", js, csvOut.String())
	}
	if want := fmt.Sprintf("agreement,,,,,cp2,20min,6,%.2f,", ag.Bias); !strings.Contains(csvOut.String(), want) {
		t.Errorf("the csv lacks %q:\n%s", want, csvOut.String())
	}
}

// The inspection's table and JSON are renderings of one model: the rides
// the table counts are the JSON's, each with its coverage as the table
// writes it.
func TestInspectionRenderingsAgree(t *testing.T) {
	rides, _ := season(t)
	res := ingest.Result{Rides: rides[:3], Skipped: []ingest.Skipped{{File: "x.fit", Reason: "empty file"}}}
	js, _ := json.Marshal(NewInspection(res))
	var back struct {
		Rides   int `json:"rides"`
		Quality []struct {
			Coverage float64 `json:"power_coverage"`
		} `json:"quality"`
	}
	if err := json.Unmarshal(js, &back); err != nil || back.Rides != 3 || len(back.Quality) != 3 {
		t.Fatalf("json %s", js)
	}
	var text bytes.Buffer
	RenderInspection(&text, res)
	if !strings.Contains(text.String(), "3 rides read, 1 file skipped") {
		t.Errorf("table:\n%s", text.String())
	}
	for _, q := range back.Quality {
		if !strings.Contains(text.String(), "  "+Percent(q.Coverage)+" ") {
			t.Errorf("the table lacks the coverage %s", Percent(q.Coverage))
		}
	}
}

// A lactate test's table, JSON and CSV are renderings of one model: each
// method's threshold the table prints is the JSON's, rounded, and the CSV
// has a row per method.
func TestLactateRenderingsAgree(t *testing.T) {
	csvText := synth.LactateAthlete{MLSSW: 260, RestMmol: 1}.StepTestCSV("2026-04-10", []float64{150, 180, 210, 240, 270, 300, 330})
	tests, _, err := lactate.ReadSteps(strings.NewReader(csvText), "steps.csv")
	if err != nil || len(tests) != 1 {
		t.Fatalf("%v %d", err, len(tests))
	}
	m := Lactate{Tests: []LactateTest{NewLactateTest(lactate.Analyse(tests[0]))}, Caution: estimate.Caution}
	var text, csvOut bytes.Buffer
	RenderLactate(&text, m)
	if err := WriteLactateCSV(&csvOut, m); err != nil {
		t.Fatal(err)
	}
	shown := 0
	for _, th := range m.Tests[0].Thresholds {
		if th.PowerW == nil {
			continue
		}
		shown++
		row := ""
		for _, l := range strings.Split(text.String(), "\n") {
			if strings.HasPrefix(strings.TrimSpace(l), th.Label+" ") {
				row = l
			}
		}
		if want := fmt.Sprintf(" %.0f ", *th.PowerW); !strings.Contains(row, want) {
			t.Errorf("%s: the table's row %q lacks %q", th.Method, row, want)
		}
		if !strings.Contains(csvOut.String(), ","+th.Method+",") {
			t.Errorf("%s: no CSV row", th.Method)
		}
	}
	if shown < 4 {
		t.Errorf("%d thresholds placed", shown)
	}
}
