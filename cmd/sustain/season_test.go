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

func writeAthlete(t *testing.T, dir, name string, prog synth.Progression, weeks int, seed uint64) {
	t.Helper()
	files := synth.Season(name, time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC), weeks, prog, seed)
	if err := synth.WriteSeason(dir, files); err != nil {
		t.Fatal(err)
	}
}

type seasonJS struct {
	Windows []struct {
		From, To   string
		Rides      int      `json:"rides"`
		Estimated  bool     `json:"estimated"`
		CPW        *float64 `json:"cp_w"`
		WPrimeJ    *float64 `json:"w_prime_j"`
		PmaxW      *float64 `json:"pmax_w"`
		ThresholdW *float64 `json:"threshold_w"`
		Confidence *string  `json:"confidence"`
	} `json:"windows"`
	Changes []struct {
		Component string   `json:"component"`
		DeltaW    *float64 `json:"delta_w"`
		DeltaJ    *float64 `json:"delta_j"`
	} `json:"changes"`
}

func TestSeasonJSONBlock(t *testing.T) {
	dir := t.TempDir()
	base := synth.Athlete{CPW: 250, WPrimeJ: 22000, PmaxW: 1000}
	writeAthlete(t, dir, "me", synth.Block(base, 25, 4000), 16, 1)
	plot := filepath.Join(t.TempDir(), "season.png")
	// Morton's components: the invented athlete's own truth, with Pmax
	code, out, _ := runCmd(t, "season", filepath.Join(dir, "me"), "--json", "--plot", plot, "--components", "morton3")
	if code != exitOK {
		t.Fatalf("exit %d", code)
	}
	var js seasonJS
	if err := json.Unmarshal([]byte(out), &js); err != nil {
		t.Fatal(err)
	}
	first, last := js.Windows[0], js.Windows[len(js.Windows)-1]
	if !first.Estimated || !last.Estimated || first.CPW == nil || last.PmaxW == nil || last.ThresholdW == nil || last.Confidence == nil {
		t.Fatalf("windows %+v … %+v", first, last)
	}
	if math.Abs(*first.CPW-250) > 0.03*250 || math.Abs(*last.CPW-275) > 0.03*275 {
		t.Errorf("CP %.1f → %.1f, invented 250 → 275", *first.CPW, *last.CPW)
	}
	up, down := false, false
	for _, c := range js.Changes {
		if (c.DeltaW == nil) == (c.DeltaJ == nil) || (c.Component == "w_prime") != (c.DeltaJ != nil) {
			t.Errorf("change %+v: watts in delta_w, joules in delta_j", c)
			continue
		}
		up = up || (c.Component == "cp" && *c.DeltaW > 0)
		down = down || (c.Component == "w_prime" && *c.DeltaJ < 0)
		if c.Component == "cp" && *c.DeltaW < 0 {
			t.Errorf("CP fall reported: %+v", c)
		}
	}
	if !up || !down {
		t.Errorf("changes %+v", js.Changes)
	}
	if st, err := os.Stat(plot); err != nil || st.Size() < 10000 {
		t.Errorf("plot: %v", err)
	}
}

// A coach's folder of three invented athletes: one row each.
func TestSquadFolder(t *testing.T) {
	dir := t.TempDir()
	steady := func(a synth.Athlete) synth.Progression { return func(int) synth.Athlete { return a } }
	writeAthlete(t, dir, "ana", steady(synth.Athlete{CPW: 240, WPrimeJ: 18000, PmaxW: 900}), 10, 1)
	writeAthlete(t, dir, "ben", synth.Block(synth.Athlete{CPW: 300, WPrimeJ: 22000, PmaxW: 1200}, 25, 3000), 14, 2)
	writeAthlete(t, dir, "cai", steady(synth.Athlete{CPW: 200, WPrimeJ: 15000, PmaxW: 800}), 8, 3)
	code, out, _ := runCmd(t, "season", dir, "--squad")
	if code != exitOK {
		t.Fatalf("exit %d\n%s", code, out)
	}
	lines := 0
	for _, name := range []string{"ana", "ben", "cai"} {
		for _, l := range strings.Split(out, "\n") {
			if strings.HasPrefix(l, name+" ") {
				lines++
			}
		}
	}
	if lines != 3 {
		t.Errorf("%d athlete rows:\n%s", lines, out)
	}
	code, out, _ = runCmd(t, "season", dir, "--squad", "--json")
	var js struct {
		Athletes []struct {
			Athlete   string `json:"athlete"`
			Rides     int    `json:"rides"`
			LastRide  string `json:"last_ride"`
			Threshold *struct {
				Watts float64 `json:"watts"`
			} `json:"threshold"`
			Change *float64 `json:"cp_change_6w_w"`
			Sig    bool     `json:"cp_change_significant"`
		} `json:"athletes"`
	}
	if err := json.Unmarshal([]byte(out), &js); err != nil || code != exitOK {
		t.Fatal(err, code)
	}
	want := map[string]float64{"ana": 240, "ben": 325, "cai": 200}
	for _, a := range js.Athletes {
		if a.Threshold == nil || math.Abs(a.Threshold.Watts-want[a.Athlete]) > 0.03*want[a.Athlete] || a.Rides == 0 || a.LastRide == "" {
			t.Errorf("%+v", a)
		}
		if a.Athlete == "ana" && a.Sig {
			t.Errorf("ana is steady but a significant change was reported: %+v", a)
		}
	}
	if len(js.Athletes) != 3 {
		t.Errorf("%d athletes", len(js.Athletes))
	}
	if code, out, _ := runCmd(t, "season", dir, "--squad", "--athlete", "ben"); code != exitOK || !strings.Contains(out, "CP rose") {
		t.Errorf("ben's season: exit %d\n%s", code, out)
	}
	if code, _, _ := runCmd(t, "season", dir, "--squad", "--athlete", "zed"); code != exitUsage {
		t.Errorf("unknown athlete: exit %d", code)
	}
}

// A squad is a squad because the user said so: a rider who keeps rides in
// folders by season is one rider in season, compare and export alike, and
// --squad on a folder holding rides of no athlete is refused.
func TestSquadIsDeclared(t *testing.T) {
	dir := t.TempDir()
	a := synth.Athlete{CPW: 260, WPrimeJ: 20000, PmaxW: 1000}
	writeAthlete(t, dir, "2026-spring", func(int) synth.Athlete { return a }, 8, 1)
	writeAthlete(t, dir, "2026-summer", func(int) synth.Athlete { return a }, 8, 2)
	writeAthlete(t, dir, "2026-autumn-extra", func(int) synth.Athlete { return a }, 2, 3)
	code, out, errs := runCmd(t, "season", dir, "--json", "--no-store")
	var js seasonJS
	if err := json.Unmarshal([]byte(out), &js); code != exitOK || err != nil || len(js.Windows) == 0 {
		t.Fatalf("one rider's folders: exit %d, %v %s", code, err, errs)
	}
	if strings.Contains(out, `"athletes"`) {
		t.Error("a rider's folders were taken for a squad")
	}
	code, out, _ = runCmd(t, "season", dir, "--squad", "--no-store")
	if code != exitOK || !strings.Contains(out, "2026-spring") || !strings.Contains(out, "2026-summer") || !strings.Contains(out, "--squad --athlete NAME") {
		t.Errorf("declared a squad (and how to see one athlete): exit %d\n%s", code, out)
	}
	loose := filepath.Join(dir, "one.csv")
	os.WriteFile(loose, []byte("time,power\n0,200\n1,210\n"), 0o644)
	if code, out, errs := runCmd(t, "compare", dir, "--squad", "--no-store"); code != exitUsage || out != "" || !strings.Contains(errs, "one.csv") {
		t.Errorf("a squad with a loose ride: exit %d %q %q", code, out, errs)
	}
}

// No empty plots: a season with no window estimated writes no plot and
// says so; a squad's --plot needs the athlete it is of.
func TestNoDegeneratePlots(t *testing.T) {
	dir := seasonFolder(t, synth.Athlete{CPW: 270, WPrimeJ: 20000, PmaxW: 1000}, 8, false) // endurance only
	plot := filepath.Join(t.TempDir(), "season.png")
	code, _, errs := runCmd(t, "season", dir, "--plot", plot, "--no-store")
	if _, err := os.Stat(plot); code != exitOK || err == nil || !strings.Contains(errs, "no plot written") {
		t.Errorf("endurance-only season: exit %d, plot written %v, stderr %q", code, err == nil, errs)
	}
	squad := t.TempDir()
	a := synth.Athlete{CPW: 260, WPrimeJ: 20000, PmaxW: 1000}
	writeAthlete(t, squad, "ana", func(int) synth.Athlete { return a }, 4, 1)
	writeAthlete(t, squad, "ben", func(int) synth.Athlete { return a }, 4, 2)
	if code, out, _ := runCmd(t, "season", squad, "--squad", "--plot", plot, "--no-store"); code != exitUsage || out != "" {
		t.Errorf("squad --plot without --athlete: exit %d", code)
	}
}

// An athletes file declares the squad and each athlete's mass by date:
// every window carries W/kg with the mass in force at its end, the
// estimate with the mass at its window's end, and --mass overrides it for
// one run.
func TestAthletesFileMassByDate(t *testing.T) {
	dir := t.TempDir()
	a := synth.Athlete{CPW: 260, WPrimeJ: 20000, PmaxW: 1000}
	writeAthlete(t, dir, "ana", func(int) synth.Athlete { return a }, 12, 1)
	writeAthlete(t, dir, "ben", func(int) synth.Athlete { return a }, 6, 2)
	file := filepath.Join(dir, "athletes.csv")
	os.WriteFile(file, []byte("athlete,folder,date,mass_kg\nana,ana,2026-01-01,64\nana,,2026-04-15,62\nben,ben,,75\n"), 0o644)

	code, out, errs := runCmd(t, "season", filepath.Join(dir, "ana"), "--athletes", file, "--json", "--no-store")
	var js struct {
		Windows []struct {
			To        string   `json:"to"`
			Estimated bool     `json:"estimated"`
			CPW       *float64 `json:"cp_w"`
			MassKG    *float64 `json:"mass_kg"`
			CPWPerKG  *float64 `json:"cp_w_per_kg"`
		} `json:"windows"`
	}
	if err := json.Unmarshal([]byte(out), &js); code != exitOK || err != nil {
		t.Fatalf("exit %d, %v %s", code, err, errs)
	}
	checked := 0
	for _, w := range js.Windows {
		if !w.Estimated {
			continue
		}
		want := 64.0
		if w.To >= "2026-04-15" {
			want = 62
		}
		if w.MassKG == nil || *w.MassKG != want || math.Abs(*w.CPWPerKG-*w.CPW/want) > 1e-12 {
			t.Errorf("window to %s: mass %v, W/kg %v", w.To, w.MassKG, w.CPWPerKG)
		}
		checked++
	}
	if checked < 3 {
		t.Fatalf("%d estimated windows", checked)
	}
	// the estimate: the mass at its window's end; --mass overrides
	_, out, _ = runCmd(t, "estimate", filepath.Join(dir, "ana"), "--athletes", file, "--json", "--no-store")
	if !strings.Contains(out, `"mass_kg": 62`) {
		t.Errorf("estimate without the mass at its window's end:\n%.600s", out)
	}
	_, out, _ = runCmd(t, "estimate", filepath.Join(dir, "ana"), "--athletes", file, "--mass", "70", "--json", "--no-store")
	if !strings.Contains(out, `"mass_kg": 70`) {
		t.Error("--mass did not override the athletes file")
	}
	// alone, the file is the squad
	code, out, _ = runCmd(t, "season", "--athletes", file, "--no-store")
	if code != exitOK || !strings.Contains(out, "ana ") || !strings.Contains(out, "ben ") || !strings.Contains(out, "W/kg") {
		t.Errorf("squad from the file: exit %d\n%s", code, out)
	}
	os.WriteFile(file, []byte("athlete,folder,mass_kg\nana,ana,900\n"), 0o644)
	if code, out, errs := runCmd(t, "season", "--athletes", file, "--no-store"); code != exitUsage || out != "" || !strings.Contains(errs, "line 2") {
		t.Errorf("a bad athletes file: exit %d %q", code, errs)
	}
}
