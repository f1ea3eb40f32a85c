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
