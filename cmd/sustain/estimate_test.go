package main

import (
	"encoding/json"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/internal/synth"
)

// seasonFolder writes an invented season: each week an endurance ride and
// a ride with one maximal effort, durations rotating over 3–20 min.
func seasonFolder(t *testing.T, a synth.Athlete, weeks int, withEfforts bool) string {
	t.Helper()
	dir := t.TempDir()
	rot := []int{180, 720, 300, 1200, 480, 240, 600}
	var files []synth.SeasonFile
	for w := range weeks {
		d := time.Date(2026, 2, 2, 8, 0, 0, 0, time.UTC).AddDate(0, 0, 7*w)
		files = append(files, synth.SeasonFile{Name: "r/" + d.Format("2006-01-02") + "-e.fit", Track: synth.FieldRide(a, d, 90, nil, uint64(w))})
		var eff []int
		if withEfforts {
			eff = []int{rot[w%len(rot)]}
		}
		d = d.AddDate(0, 0, 3)
		files = append(files, synth.SeasonFile{Name: "r/" + d.Format("2006-01-02") + "-x.fit", Track: synth.FieldRide(a, d, 90, eff, uint64(100+w))})
	}
	if err := synth.WriteSeason(dir, files); err != nil {
		t.Fatal(err)
	}
	return dir
}

type estimateJS struct {
	Window    struct{ From, To string } `json:"window"`
	Rides     int                       `json:"rides"`
	Skipped   []any                     `json:"skipped"`
	Threshold *struct {
		Watts      float64 `json:"watts"`
		LowW       float64 `json:"low_w"`
		HighW      float64 `json:"high_w"`
		Model      string  `json:"model"`
		Confidence string  `json:"confidence"`
	} `json:"threshold"`
	Models []struct {
		Model     string   `json:"model"`
		CPW       float64  `json:"cp_w"`
		WPrimeJ   float64  `json:"w_prime_j"`
		PmaxW     *float64 `json:"pmax_w"`
		CPSEW     float64  `json:"cp_se_w"`
		WPrimeSEJ float64  `json:"w_prime_se_j"`
		Conf      string   `json:"confidence"`
		Reasons   []string `json:"reasons"`
		Efforts   []struct {
			DurationS int    `json:"duration_s"`
			File      string `json:"file"`
			OffsetS   int    `json:"offset_s"`
		} `json:"efforts"`
	} `json:"models"`
	Rules []struct {
		Rule  string  `json:"rule"`
		Watts float64 `json:"watts"`
	} `json:"rules"`
	Warnings []struct{ Code, Message string } `json:"warnings"`
	Advice   struct {
		Message string `json:"message"`
		Caution string `json:"caution"`
	} `json:"advice"`
}

func TestEstimateJSONContract(t *testing.T) {
	a := synth.Athlete{CPW: 260, WPrimeJ: 19000, PmaxW: 950}
	dir := seasonFolder(t, a, 10, true)
	code, out, _ := runCmd(t, "estimate", dir, "--json")
	if code != exitOK {
		t.Fatalf("exit %d", code)
	}
	var js estimateJS
	if err := json.Unmarshal([]byte(out), &js); err != nil {
		t.Fatal(err)
	}
	// default window: the 90 days ending at the newest ride
	if js.Window.To != "2026-04-09" || js.Window.From != "2026-01-10" || js.Rides != 20 || js.Skipped == nil {
		t.Errorf("window %+v rides %d", js.Window, js.Rides)
	}
	th := js.Threshold
	if th == nil || math.Abs(th.Watts-a.CPW) > 0.02*a.CPW || th.LowW >= th.Watts || th.HighW <= th.Watts || th.Confidence == "" {
		t.Fatalf("threshold %+v", th)
	}
	names := map[string]bool{}
	for _, m := range js.Models {
		names[m.Model] = true
		if m.CPW <= 0 || m.Conf == "" || len(m.Reasons) == 0 || len(m.Efforts) == 0 {
			t.Errorf("model %+v", m)
		}
		if strings.HasPrefix(m.Model, "cp2") != (m.PmaxW == nil) {
			t.Errorf("%s: pmax_w %v", m.Model, m.PmaxW)
		}
	}
	for _, n := range []string{"cp2", "cp2-work", "cp2-inverse", "morton3", "omni"} {
		if !names[n] {
			t.Errorf("model %s missing", n)
		}
	}
	if len(js.Rules) != 2 || !strings.Contains(js.Advice.Caution, "medical clearance") {
		t.Errorf("rules %+v advice %+v", js.Rules, js.Advice)
	}
}

func TestEstimateSaysWhenItCannotBeSure(t *testing.T) {
	dir := seasonFolder(t, synth.Athlete{CPW: 260, WPrimeJ: 19000, PmaxW: 950}, 6, false)
	plot := filepath.Join(t.TempDir(), "fit.svg")
	code, out, _ := runCmd(t, "estimate", dir, "--plot", plot)
	if code != exitOK {
		t.Fatalf("exit %d", code)
	}
	for _, want := range []string{"Threshold: not estimated: only 0 distinct maximal effort(s) between 2 min and 20 min", "It is at least ", "(best 60-min power)",
		"[thin-data]", "Ride maximal efforts of about 3, 7 and 12 minutes", "medical clearance"} {
		if !strings.Contains(out, want) {
			t.Errorf("report lacks %q:\n%s", want, out)
		}
	}
	if b, err := os.ReadFile(plot); err != nil || !strings.Contains(string(b), "<svg") {
		t.Errorf("svg plot: %v", err)
	}
}

func TestEstimateUsage(t *testing.T) {
	dir := seasonFolder(t, synth.Athlete{CPW: 260, WPrimeJ: 19000, PmaxW: 950}, 2, true)
	for _, args := range [][]string{
		{"estimate", dir, "--model", "magic"},
		{"estimate", dir, "--cp2-range", "20m-2m"},
		{"estimate", dir, "--cp2-range", "soon"},
	} {
		if code, _, _ := runCmd(t, args...); code != exitUsage {
			t.Errorf("%v: exit %d", args, code)
		}
	}
}

// With --mass, the JSON headline carries W/kg (the watts over the mass)
// beside the watts, keys with their units.
func TestEstimateJSONPerKG(t *testing.T) {
	dir := seasonFolder(t, synth.Athlete{CPW: 270, WPrimeJ: 20000, PmaxW: 1000}, 8, true)
	code, out, errs := runCmd(t, "estimate", dir, "--json", "--mass", "68.5", "--no-store")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var raw struct {
		Threshold map[string]any `json:"threshold"`
	}
	if err := json.Unmarshal([]byte(out), &raw); err != nil {
		t.Fatal(err)
	}
	th := raw.Threshold
	w, _ := th["watts"].(float64)
	perKG, _ := th["w_per_kg"].(float64)
	mass, _ := th["mass_kg"].(float64)
	lo, _ := th["low_w"].(float64)
	loKG, _ := th["low_w_per_kg"].(float64)
	if w <= 0 || mass != 68.5 || math.Abs(perKG-w/68.5) > 1e-12 || math.Abs(loKG-lo/68.5) > 1e-12 {
		t.Errorf("threshold %v", th)
	}
}

// One set of model names everywhere: morton and ompd read as morton3 and
// omni in --model, --components and --methods alike.
func TestModelNamesAgree(t *testing.T) {
	dir := seasonFolder(t, synth.Athlete{CPW: 270, WPrimeJ: 20000, PmaxW: 1000}, 8, true)
	code, out, errs := runCmd(t, "estimate", dir, "--model", "morton", "--json", "--no-store")
	var js estimateJS
	if err := json.Unmarshal([]byte(out), &js); code != exitOK || err != nil || js.Threshold == nil || js.Threshold.Model != "morton3" {
		t.Errorf("--model morton: exit %d, %v, %+v %s", code, err, js.Threshold, errs)
	}
	if code, _, errs := runCmd(t, "season", dir, "--components", "omni-domain", "--no-store"); code != exitOK {
		t.Errorf("--components omni-domain: exit %d %s", code, errs)
	}
	if code, _, _ := runCmd(t, "estimate", dir, "--model", "monod", "--no-store"); code != exitUsage {
		t.Errorf("--model monod: exit %d", code)
	}
}

// The advice says which fit it is about and how its standard error differs
// from the table's; --differential shows in the audit's heading and JSON.
func TestAdviceAndAuditSayWhatTheyUse(t *testing.T) {
	dir := seasonFolder(t, synth.Athlete{CPW: 270, WPrimeJ: 20000, PmaxW: 1000}, 8, true)
	_, out, _ := runCmd(t, "estimate", dir, "--differential", "--no-store")
	if !strings.Contains(out, "(on the cp2 fit)") || !strings.Contains(out, "models table's") || !strings.Contains(out, "differential form, Skiba et al. 2015") {
		t.Errorf("text:\n%s", out)
	}
	_, out, _ = runCmd(t, "estimate", dir, "--json", "--no-store")
	if !strings.Contains(out, `"wbal_form": "integral"`) {
		t.Errorf("json lacks the audit's form")
	}
}
