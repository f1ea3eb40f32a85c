package main

import (
	"bytes"
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

type lactateJS struct {
	Tests []struct {
		Date       string `json:"date"`
		Thresholds []struct {
			Method string   `json:"method"`
			PowerW *float64 `json:"power_w"`
			LowW   *float64 `json:"low_w"`
			Source string   `json:"source"`
		} `json:"thresholds"`
		Field *struct {
			Threshold struct {
				Watts *float64 `json:"watts"`
			} `json:"threshold"`
		} `json:"field"`
		Gaps []struct {
			Method string  `json:"method"`
			Field  string  `json:"field"`
			DiffW  float64 `json:"diff_w"`
		} `json:"gaps"`
	} `json:"tests"`
	Trials []struct {
		PowerW    float64  `json:"power_w"`
		Pass      bool     `json:"pass"`
		Wandered  bool     `json:"wandered"`
		MeasuredW *float64 `json:"measured_w"`
	} `json:"trials"`
	MLSS *struct {
		PassW *float64 `json:"pass_w"`
		FailW *float64 `json:"fail_w"`
	} `json:"mlss"`
	Caution string `json:"caution"`
}

// An invented athlete with MLSS at 255 W and CP 270 W: a step test, three
// MLSS trials in a CSV, one trial in a ride file whose power wandered, and
// eight weeks of rides for the field estimate.
func TestLactateCommand(t *testing.T) {
	la := synth.LactateAthlete{MLSSW: 255, RestMmol: 1}
	dir := seasonFolder(t, synth.Athlete{CPW: 270, WPrimeJ: 18000, PmaxW: 950}, 8, true)
	var steps strings.Builder
	steps.WriteString("date,power_w,lactate_mmol,heart_rate\n")
	for p := 150.0; p <= 330; p += 20 {
		fmt.Fprintf(&steps, "2026-03-20,%.0f,%.3f,%.0f\n", p, la.StepLactate(p), 100+0.3*p)
	}
	var trials strings.Builder
	trials.WriteString("date,power_w,lactate_10_mmol,lactate_30_mmol\n")
	for _, p := range []float64{240, 250, 265, 280} {
		a, b := la.Trial(p)
		fmt.Fprintf(&trials, "2026-03-22,%.0f,%.2f,%.2f\n", p, a, b)
	}
	put := func(name, body string) string {
		p := filepath.Join(t.TempDir(), name)
		if err := os.WriteFile(p, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
		return p
	}
	stepsCSV, trialsCSV := put("steps.csv", steps.String()), put("trials.csv", trials.String())
	// a 30-min trial at 260 W whose power swings 40 W every two minutes
	var segs []synth.Segment
	segs = append(segs, synth.Segment{Seconds: 600, Watts: 150})
	for i := range 15 {
		segs = append(segs, synth.Segment{Seconds: 120, Watts: 240 + 40*float64(i%2)})
	}
	var fit bytes.Buffer
	synth.WriteFIT(&fit, synth.Build(time.Date(2026, 3, 24, 9, 0, 0, 0, time.UTC), segs, 0, 5))
	ride := put("trial.fit", fit.String())
	plot := filepath.Join(t.TempDir(), "lactate.svg")

	code, out, errs := runCmd(t, "lactate", stepsCSV, "--trials", trialsCSV, "--trial", ride+"@0:10:00+30m=2.0,2.4", "--rides", dir, "--json", "--plot", plot)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var js lactateJS
	if err := json.Unmarshal([]byte(out), &js); err != nil {
		t.Fatalf("stdout is not JSON only: %v\n%s", err, out)
	}
	if len(js.Tests) != 2 || js.MLSS == nil || !strings.Contains(js.Caution, "medical clearance") {
		t.Fatalf("tests %d, mlss %v", len(js.Tests), js.MLSS)
	}
	// by hand: 1 + 0.9·e^((P − 255)/35) = 4 at P = 255 + 35·ln(3/0.9)
	for _, th := range js.Tests[0].Thresholds {
		if th.Method == "obla4" && (th.PowerW == nil || math.Abs(*th.PowerW-(255+35*math.Log(3/0.9))) > 1.5 || th.Source != "Heck et al. 1985") {
			t.Errorf("obla4 %+v", th)
		}
		if th.PowerW == nil {
			t.Errorf("%s not placed", th.Method)
		}
	}
	// trials: 240 and 250 W pass, 265 and 280 W fail; the ride's trial wandered
	if *js.MLSS.PassW != 250 || *js.MLSS.FailW != 265 {
		t.Errorf("MLSS bracket %v–%v", *js.MLSS.PassW, *js.MLSS.FailW)
	}
	last := js.Trials[len(js.Trials)-1]
	if !last.Wandered || last.MeasuredW == nil || math.Abs(*last.MeasuredW-260) > 1 {
		t.Errorf("ride trial %+v", last)
	}
	// CP beside MLSS: the field CP (about 270 W) sits above the bracket's
	// middle (257.5 W)
	mlssBlock := js.Tests[1]
	if mlssBlock.Field == nil || mlssBlock.Field.Threshold.Watts == nil {
		t.Fatalf("no field estimate beside the trials: %+v", mlssBlock)
	}
	cp := *mlssBlock.Field.Threshold.Watts
	if math.Abs(cp-270) > 0.03*270 {
		t.Errorf("field CP %.1f, invented 270", cp)
	}
	found := false
	for _, g := range mlssBlock.Gaps {
		if g.Method == "mlss" && g.Field == "cp" {
			found = true
			if math.Abs(g.DiffW-(cp-257.5)) > 1e-6 {
				t.Errorf("CP − MLSS %.2f, want %.2f", g.DiffW, cp-257.5)
			}
		}
	}
	if !found {
		t.Errorf("no CP − MLSS gap: %+v", mlssBlock.Gaps)
	}
	if !strings.Contains(errs, "plot written to") {
		t.Errorf("stderr: %s", errs)
	}
	if b, err := os.ReadFile(plot); err != nil || !strings.Contains(string(b), "<svg") {
		t.Errorf("plot: %v", err)
	}
	// the table and CSV carry the same figures
	code, text, _ := runCmd(t, "lactate", stepsCSV, "--trials", trialsCSV)
	if code != exitOK || !strings.Contains(text, "MLSS between 250 and 265 W") || !strings.Contains(text, "Dmax") || !strings.Contains(text, "Caution:") {
		t.Errorf("table:\n%s", text)
	}
	code, csvOut, _ := runCmd(t, "lactate", stepsCSV, "--csv")
	if code != exitOK || strings.Count(csvOut, "\n") != 7 || !strings.HasPrefix(csvOut, "athlete,date,test,method,power_w") {
		t.Errorf("csv:\n%s", csvOut)
	}
}

// A test that cannot be analysed is one line on stderr naming the file and
// the reason; with nothing else to read the exit status is 1.
func TestLactateBadInput(t *testing.T) {
	p := filepath.Join(t.TempDir(), "short.csv")
	os.WriteFile(p, []byte("power_w,lactate_mmol\n100,1\n150,1.5\n200,3\n"), 0o644)
	code, out, errs := runCmd(t, "lactate", p)
	if code != exitNothing || out != "" && !strings.Contains(out, "Caution") {
		t.Errorf("exit %d, stdout %q", code, out)
	}
	if !strings.Contains(errs, p) || !strings.Contains(errs, "only 3 steps") {
		t.Errorf("stderr %q", errs)
	}
	if code, _, _ := runCmd(t, "lactate", "--trial", "x.fit@0:10:00=2,3"); code != exitUsage {
		t.Errorf("a trial without its length: exit %d", code)
	}
}
