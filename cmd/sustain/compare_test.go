package main

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/internal/synth"
)

// A synthetic squad: every invented athlete's 20-min rule sits a known
// amount from their CP (0.95·P(1200) − CP on Morton's curve), and the
// comparison reproduces that bias.
func TestCompareSquadBias(t *testing.T) {
	dir := t.TempDir()
	squad := []synth.Athlete{
		{Name: "a1", CPW: 220, WPrimeJ: 16000, PmaxW: 850},
		{Name: "a2", CPW: 250, WPrimeJ: 20000, PmaxW: 1000},
		{Name: "a3", CPW: 280, WPrimeJ: 18000, PmaxW: 1100},
		{Name: "a4", CPW: 310, WPrimeJ: 24000, PmaxW: 1250},
		{Name: "a5", CPW: 265, WPrimeJ: 14000, PmaxW: 900},
	}
	want := 0.0
	for i, a := range squad {
		writeAthlete(t, dir, a.Name, func(int) synth.Athlete { return a }, 12, uint64(i+1))
		want += 0.95*a.MaxPower(1200) - a.CPW
	}
	want /= float64(len(squad))
	plot := filepath.Join(t.TempDir(), "ba.png")
	code, out, _ := runCmd(t, "compare", dir, "--squad", "--methods", "morton,20min,cp2", "--json", "--plot", plot)
	if code != exitOK {
		t.Fatalf("exit %d\n%s", code, out)
	}
	var js struct {
		Subjects []struct {
			Name      string `json:"name"`
			Estimates map[string]struct {
				Watts      float64 `json:"watts"`
				Confidence string  `json:"confidence"`
			} `json:"estimates"`
		} `json:"subjects"`
		Pairs []struct {
			A, B  string
			N     int      `json:"n"`
			BiasW *float64 `json:"bias_w"`
			SDW   *float64 `json:"sd_w"`
			LoW   *float64 `json:"lower_limit_w"`
			HiW   *float64 `json:"upper_limit_w"`
			R     *float64 `json:"r"`
			Note  string   `json:"note"`
		} `json:"pairs"`
	}
	if err := json.Unmarshal([]byte(out), &js); err != nil {
		t.Fatal(err)
	}
	if len(js.Subjects) != 5 || len(js.Pairs) != 3 {
		t.Fatalf("%d subjects, %d pairs", len(js.Subjects), len(js.Pairs))
	}
	p := js.Pairs[0] // morton3 − 20min
	if p.A != "morton3" || p.B != "20min" || p.N != 5 || p.BiasW == nil {
		t.Fatalf("pair %+v", p)
	}
	// morton − 20min = −(20-min rule − CP)
	if math.Abs(*p.BiasW-(-want)) > 1 {
		t.Errorf("bias %.2f W, want %.2f W", *p.BiasW, -want)
	}
	if *p.LoW > *p.BiasW || *p.HiW < *p.BiasW || math.Abs(*p.HiW-*p.BiasW-1.96**p.SDW) > 1e-9 {
		t.Errorf("limits %+v", p)
	}
	if st, err := os.Stat(plot); err != nil || st.Size() < 5000 {
		t.Errorf("plot: %v", err)
	}
	code, out, _ = runCmd(t, "compare", dir, "--squad", "--methods", "morton,20min") // morton reads as morton3
	if code != exitOK || !strings.Contains(out, "morton3 − 20min") || !strings.Contains(out, "Bland & Altman") {
		t.Errorf("table:\n%s", out)
	}
	if code, _, _ := runCmd(t, "compare", dir, "--squad", "--methods", "morton"); code != exitUsage {
		t.Errorf("one method: exit %d", code)
	}
	// five subjects: r is given, the limits come with a note; --csv holds
	// the agreement rows too
	if p.R == nil || p.Note == "" || !strings.Contains(p.Note, "only 5 subjects") {
		t.Errorf("n = 5: r %v, note %q", p.R, p.Note)
	}
	code, out, _ = runCmd(t, "compare", dir, "--squad", "--methods", "morton,20min", "--csv")
	if code != exitOK || !strings.Contains(out, "\nagreement,,,,,morton3,20min,5,") {
		t.Errorf("csv:\n%s", out)
	}
	// two athletes: no r (two points always lie on a line), and a note
	two := t.TempDir()
	for i, a := range squad[:2] {
		writeAthlete(t, two, a.Name, func(int) synth.Athlete { return a }, 12, uint64(i+1))
	}
	code, out, _ = runCmd(t, "compare", two, "--squad", "--methods", "cp2,20min", "--json")
	var small struct {
		Pairs []struct {
			N    int      `json:"n"`
			R    *float64 `json:"r"`
			Note string   `json:"note"`
		} `json:"pairs"`
	}
	if err := json.Unmarshal([]byte(out), &small); code != exitOK || err != nil || len(small.Pairs) != 1 ||
		small.Pairs[0].N != 2 || small.Pairs[0].R != nil || !strings.Contains(small.Pairs[0].Note, "r is not given") {
		t.Errorf("two athletes: exit %d, %v, %+v", code, err, small)
	}
}

func TestProtocolCommands(t *testing.T) {
	dir := t.TempDir()
	a := synth.Athlete{CPW: 280, WPrimeJ: 20000, PmaxW: 1000}
	day := time.Date(2026, 6, 1, 8, 0, 0, 0, time.UTC)
	var files []synth.SeasonFile
	for i, d := range []int{180, 420, 720} {
		files = append(files, synth.SeasonFile{Name: "t" + string(rune('0'+i)) + ".fit", Track: synth.FieldRide(a, day.AddDate(0, 0, 2*i), 60, []int{d}, uint64(i))})
	}
	// an all-out test: decaying onto CP with W′ above it, from 0:20:00
	tr := synth.Build(day.AddDate(0, 0, 10), []synth.Segment{{Seconds: 1200, Watts: 180}}, 5, 9)
	for k := range 180 {
		tr.PowerW = append(tr.PowerW, math.Round(a.CPW+a.WPrimeJ*(math.Exp(-float64(k)/20)-math.Exp(-float64(k+1)/20))))
	}
	for range 600 {
		tr.PowerW = append(tr.PowerW, 120)
	}
	files = append(files, synth.SeasonFile{Name: "allout.fit", Track: tr})
	if err := synth.WriteSeason(dir, files); err != nil {
		t.Fatal(err)
	}
	code, out, _ := runCmd(t, "protocol", "all-out", filepath.Join(dir, "allout.fit"), "--start", "0:20:00", "--json")
	if code != exitOK {
		t.Fatalf("all-out: exit %d\n%s", code, out)
	}
	var ao struct {
		Test struct {
			EP     float64 `json:"end_power_w"`
			WEP    float64 `json:"work_above_end_power_j"`
			AllOut bool    `json:"all_out"`
		} `json:"test"`
		Caution string `json:"caution"`
	}
	json.Unmarshal([]byte(out), &ao)
	if math.Abs(ao.Test.EP-a.CPW) > 0.01*a.CPW || math.Abs(ao.Test.WEP-a.WPrimeJ) > 0.02*a.WPrimeJ || !ao.Test.AllOut || ao.Caution == "" {
		t.Errorf("all-out %+v", ao)
	}
	// the multi-trial test named effort by effort: FieldRide puts each
	// effort at 0:20:00
	var args []string
	for i, d := range []string{"3m", "7m", "12m"} {
		args = append(args, filepath.Join(dir, "t"+string(rune('0'+i))+".fit")+"@0:20:00+"+d)
	}
	code, out, _ = runCmd(t, append([]string{"protocol", "trials"}, args...)...)
	if code != exitOK || !strings.Contains(out, "CP ") || !strings.Contains(out, "medical clearance") {
		t.Fatalf("trials: exit %d\n%s", code, out)
	}
	code, out, _ = runCmd(t, "protocol", "trials", "--find", "--json", dir)
	var tj struct {
		CPW float64 `json:"cp_w"`
	}
	json.Unmarshal([]byte(out), &tj)
	// the 2-parameter fit of Morton efforts at 3, 7 and 12 min sits a
	// little above the invented CP
	if code != exitOK || math.Abs(tj.CPW-a.CPW) > 0.03*a.CPW {
		t.Errorf("trials --find: exit %d, CP %.1f", code, tj.CPW)
	}
	if code, _, _ := runCmd(t, "protocol", "trials", "ride.fit@noon+3m"); code != exitUsage {
		t.Errorf("bad effort: exit %d", code)
	}
}

// Lactate methods across a squad: each invented athlete's MLSS is placed
// 15 W below CP and bracketed by trials at MLSS −20, −5, +10 and +25 W, so
// cp2 − mlss is about 15 − 2.5 = 12.5 W for every athlete (plus the field
// CP's own error of a few watts).
func TestCompareWithLactate(t *testing.T) {
	dir := t.TempDir()
	squad := []synth.Athlete{
		{Name: "ana", CPW: 240, WPrimeJ: 17000, PmaxW: 900},
		{Name: "ben", CPW: 275, WPrimeJ: 20000, PmaxW: 1050},
		{Name: "cai", CPW: 300, WPrimeJ: 22000, PmaxW: 1150},
	}
	var steps, trials strings.Builder
	steps.WriteString("athlete,power_w,lactate_mmol\n")
	trials.WriteString("athlete,power_w,lactate_10_mmol,lactate_30_mmol\n")
	for i, a := range squad {
		writeAthlete(t, dir, a.Name, func(int) synth.Athlete { return a }, 12, uint64(i+1))
		la := synth.LactateAthlete{MLSSW: a.CPW - 15, RestMmol: 1}
		for p := 150.0; p <= 350; p += 25 {
			fmt.Fprintf(&steps, "%s,%.0f,%.3f\n", a.Name, p, la.StepLactate(p))
		}
		for _, d := range []float64{-20, -5, 10, 25} {
			x, y := la.Trial(la.MLSSW + d)
			fmt.Fprintf(&trials, "%s,%.1f,%.2f,%.2f\n", a.Name, la.MLSSW+d, x, y)
		}
	}
	sp, tp := filepath.Join(t.TempDir(), "steps.csv"), filepath.Join(t.TempDir(), "trials.csv")
	os.WriteFile(sp, []byte(steps.String()), 0o644)
	os.WriteFile(tp, []byte(trials.String()), 0o644)
	code, out, errs := runCmd(t, "compare", dir, "--squad", "--methods", "cp2,mlss,obla4,dmax", "--lactate", sp, "--trials", tp, "--json")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var js struct {
		Pairs []struct {
			A, B  string
			N     int      `json:"n"`
			BiasW *float64 `json:"bias_w"`
		} `json:"pairs"`
	}
	if err := json.Unmarshal([]byte(out), &js); err != nil {
		t.Fatal(err)
	}
	p := js.Pairs[0]
	if p.A != "cp2" || p.B != "mlss" || p.N != 3 || p.BiasW == nil || math.Abs(*p.BiasW-12.5) > 6 {
		t.Errorf("cp2 − mlss %+v (bias %v)", p, p.BiasW)
	}
	if code, _, _ := runCmd(t, "compare", dir, "--squad", "--methods", "cp2,lactate9"); code != exitUsage {
		t.Errorf("unknown method: exit %d", code)
	}
}
