package lactate

import (
	"math"
	"strings"
	"testing"

	"github.com/sustain-cycling/sustain/internal/synth"
)

// stepsOf samples a lactate curve at powers from lo to hi by step.
func stepsOf(lo, hi, step float64, la func(p float64) float64) []Step {
	var s []Step
	for p := lo; p <= hi+1e-9; p += step {
		s = append(s, Step{PowerW: p, LactateMmol: la(p), HeartRateBPM: 100 + 0.3*p})
	}
	return s
}

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.IsNaN(got) || math.Abs(got-want) > tol {
		t.Errorf("%s = %.4f, want %.4f (±%g)", what, got, want, tol)
	}
}

// Fixed concentrations on an exponential curve L = 0.5·e^(0.01·P): by
// hand, P(c) = ln(c/0.5)/0.01, so 2 mmol/L at 138.63 W (Kindermann, Simon
// & Keul 1979) and 4 mmol/L at 207.94 W (OBLA, Heck et al. 1985); the
// log-linear interpolation between steps is exact on an exponential.
func TestFixedConcentrationsOnExponential(t *testing.T) {
	s := stepsOf(100, 300, 25, func(p float64) float64 { return 0.5 * math.Exp(0.01*p) })
	p2, _ := FixedConcentration(s, 2)
	p4, _ := FixedConcentration(s, 4)
	near(t, "2 mmol/L", p2, math.Log(4)/0.01, 1e-9)
	near(t, "4 mmol/L", p4, math.Log(8)/0.01, 1e-9)
	if _, note := FixedConcentration(s, 20); !strings.Contains(note, "never reached 20.0") {
		t.Errorf("note %q", note)
	}
}

// Dmax on a cubic, L = 1 + 0.002x + 3e-7x³ with x = P − 100 (Cheng et al.
// 1992): the polynomial through the steps is the cubic itself, the line
// joins (100 W, 1) and (300 W, 3.8), slope 0.014 per W, and the farthest
// point is where L′ = 0.002 + 9e-7x² equals it: x² = 0.012/9e-7, by hand
// P = 100 + 115.470 = 215.470 W.
func TestDmaxOnCubic(t *testing.T) {
	cubic := func(p float64) float64 { x := p - 100; return 1 + 0.002*x + 3e-7*x*x*x }
	s := stepsOf(100, 300, 25, cubic)
	p, _, note := Dmax(s)
	near(t, "Dmax", p, 100+math.Sqrt(0.012/9e-7), 1e-6)
	if note != "" {
		t.Error(note)
	}
	// modified Dmax (Bishop, Jenkins & Mackinnon 1998): the first rise of
	// 0.4 mmol/L or more is from 225 W (1.836) to 250 W (2.313), so the line
	// runs from (225, L(225)) to (300, 3.8); by hand its slope is
	// s = (3.8 − L(225))/75 and the point solves 0.002 + 9e-7x² = s
	slope := (3.8 - cubic(225)) / 75
	pm, note := ModDmax(s)
	near(t, "modified Dmax", pm, 100+math.Sqrt((slope-0.002)/9e-7), 1e-6)
	if note != "" {
		t.Error(note)
	}
}

// The 0.4 mmol/L rule on a hand-built series: rises of 0.1, 0.2, 0.3, 0.5
// and 0.9; the first of 0.4 or more is from step 4 to step 5, so the line
// starts at step 4 (index 3).
func TestFirstRise(t *testing.T) {
	s := []Step{{100, 1.0, 0, 0}, {130, 1.1, 0, 0}, {160, 1.3, 0, 0}, {190, 1.6, 0, 0}, {220, 2.1, 0, 0}, {250, 3.0, 0, 0}}
	if k := firstRise(s); k != 3 {
		t.Errorf("first rise from index %d, want 3", k)
	}
	// baseline + 1.0 (common practice): the lowest value before that rise
	// is 1.0 at 100 W, so 2.0 mmol/L between 190 W (1.6) and 220 W (2.1),
	// log-linear: 190 + 30·ln(2/1.6)/ln(2.1/1.6)
	p, _ := BaselinePlus(s, 1)
	near(t, "baseline + 1", p, 190+30*math.Log(2/1.6)/math.Log(2.1/1.6), 1e-9)
}

// Baseline is the lowest value before the rise: a dip over the first easy
// steps does not count as the curve's start.
func TestBaselineAfterDip(t *testing.T) {
	s := []Step{{100, 1.4, 0, 0}, {130, 0.9, 0, 0}, {160, 1.0, 0, 0}, {190, 1.3, 0, 0}, {220, 2.0, 0, 0}, {250, 3.5, 0, 0}}
	if b, at := Baseline(s); b != 0.9 || at != 1 {
		t.Errorf("baseline %.1f at %d", b, at)
	}
	p, _ := BaselinePlus(s, 1)
	near(t, "baseline + 1", p, 190+30*math.Log(1.9/1.3)/math.Log(2.0/1.3), 1e-9)
}

// Log-log breakpoint (Beaver, Wasserman & Whipp 1985) on data exactly
// piecewise linear in log–log, breaking at 212.5 W: L = 1.5·(P/212.5)^0.2
// below, 1.5·(P/212.5)^4 above; the two fitted lines meet at 212.5 W.
func TestLogLogOnPiecewiseData(t *testing.T) {
	s := stepsOf(100, 300, 25, func(p float64) float64 {
		if p <= 212.5 {
			return 1.5 * math.Pow(p/212.5, 0.2)
		}
		return 1.5 * math.Pow(p/212.5, 4)
	})
	p, note := LogLog(s)
	near(t, "log-log breakpoint", p, 212.5, 1e-6)
	if note != "" {
		t.Error(note)
	}
}

// A test whose lactate barely rose places no threshold and says why.
func TestNoRise(t *testing.T) {
	s := stepsOf(100, 200, 20, func(p float64) float64 { return 1 + 0.001*p })
	a := Analyse(StepTest{Steps: s})
	if len(a.Notes) == 0 || !strings.Contains(a.Notes[0], "rose by only") {
		t.Errorf("notes %v", a.Notes)
	}
	for _, th := range a.Thresholds {
		if th.OK() {
			t.Errorf("%s placed at %.0f W on a flat curve", th.Method, th.PowerW)
		}
	}
}

// Every method on an invented athlete's step test, with heart rate and a
// bootstrap interval for the fitted methods that holds the point.
func TestAnalyseInvented(t *testing.T) {
	a := synth.LactateAthlete{MLSSW: 260, RestMmol: 1.0}
	st := StepTest{Steps: stepsOf(150, 330, 20, a.StepLactate)}
	an := Analyse(st)
	for _, th := range an.Thresholds {
		if !th.OK() {
			t.Errorf("%s: %s", th.Method, th.Note)
			continue
		}
		if math.Abs(th.HeartRateBPM-(100+0.3*th.PowerW)) > 1e-6 {
			t.Errorf("%s: heart rate %.1f at %.1f W", th.Method, th.HeartRateBPM, th.PowerW)
		}
		if isFitted := th.Method == MethodDmax || th.Method == MethodModDmax || th.Method == MethodLogLog; isFitted != !math.IsNaN(th.LowW) {
			t.Errorf("%s: interval %.1f–%.1f", th.Method, th.LowW, th.HighW)
		} else if isFitted && !(th.LowW <= th.PowerW && th.PowerW <= th.HighW) {
			t.Errorf("%s: %.1f W outside its interval %.1f–%.1f", th.Method, th.PowerW, th.LowW, th.HighW)
		}
	}
	// by hand: L = 1 + 0.9·e^((P−260)/35) reaches 4 mmol/L at 260 + 35·ln(3/0.9)
	obla, _ := an.Threshold(MethodOBLA4)
	near(t, "OBLA on the invented curve", obla.PowerW, 260+35*math.Log(3/0.9), 1.5)
}

// Bad input: each check gives its reason in one line.
func TestReadStepsValidation(t *testing.T) {
	for _, c := range []struct{ name, csv, want string }{
		{"too few steps", "power_w,lactate_mmol\n100,1\n150,1.2\n200,2\n", "only 3 steps"},
		{"powers not increasing", "power_w,lactate_mmol\n100,1\n150,1.2\n140,2\n200,3\n", "powers do not increase"},
		{"lactate out of range", "power_w,lactate_mmol\n100,1\n150,1.2\n200,42\n250,3\n", "outside 0–30 mmol/L"},
		{"missing value", "power_w,lactate_mmol\n100,1\n150,\n200,2\n250,3\n", "has no lactate value"},
		{"not a number", "power_w,lactate_mmol\n100,1\n150,x\n200,2\n250,3\n", `"x" is not a number`},
	} {
		tests, bad, err := ReadSteps(strings.NewReader(c.csv), "t.csv")
		if err != nil || len(tests) != 0 || len(bad) == 0 || !strings.Contains(bad[len(bad)-1].Error()+bad[0].Error(), c.want) {
			t.Errorf("%s: tests %d bad %v err %v", c.name, len(tests), bad, err)
		}
	}
	if _, _, err := ReadSteps(strings.NewReader("watts,hr\n100,120\n"), "t.csv"); err == nil || !strings.Contains(err.Error(), "lactate column") {
		t.Errorf("no lactate column: %v", err)
	}
}

// Headers with units and spaces, semicolons with decimal commas, and
// several tests in one file told apart by date.
func TestReadStepsLayouts(t *testing.T) {
	csv := "Date;Athlete;Power (W);Lactate [mmol/L];HR (bpm);Step (min)\n" +
		"2026-03-01;ana;150;1,1;120;4\n2026-03-01;ana;180;1,3;130;4\n2026-03-01;ana;210;2,0;140;4\n2026-03-01;ana;240;3,9;150;4\n" +
		"2026-05-01;ana;150;1,0;118;4\n2026-05-01;ana;180;1,1;127;4\n2026-05-01;ana;210;1,6;137;4\n2026-05-01;ana;240;2,9;148;4\n"
	tests, bad, err := ReadSteps(strings.NewReader(csv), "t.csv")
	if err != nil || len(bad) != 0 || len(tests) != 2 {
		t.Fatalf("tests %d bad %v err %v", len(tests), bad, err)
	}
	if s := tests[0].Steps[2]; tests[0].Date != "2026-03-01" || tests[0].Athlete != "ana" || s.LactateMmol != 2.0 || s.HeartRateBPM != 140 || s.DurationS != 240 {
		t.Errorf("first test %+v", tests[0])
	}
	// over time: less lactate at the same power after the block
	sh := Shifts([]Analysis{Analyse(tests[0]), Analyse(tests[1])})
	if len(sh) != 1 || !(sh[0].LT2ToW > sh[0].LT2FromW) || !strings.Contains(sh[0].Message, "cannot say which side changed") {
		t.Errorf("shift %+v", sh)
	}
}

// MLSS bracket on invented trials with known passes and fails (Heck et al.
// 1985; Beneke 2003: a rise of at most 1 mmol/L from minute 10 to 30).
func TestMLSSBracket(t *testing.T) {
	a := synth.LactateAthlete{MLSSW: 262, RestMmol: 1}
	var trials []Trial
	for _, p := range []float64{240, 255, 270, 285} {
		la10, la30 := a.Trial(p)
		trials = append(trials, Trial{PowerW: p, Lactate10Mmol: la10, Lactate30Mmol: la30})
	}
	br := BracketOf(trials)
	if br.PassW != 255 || br.FailW != 270 || len(br.Notes) != 0 {
		t.Errorf("bracket %+v", br)
	}
	// a failing trial below a passing one is pointed out
	trials = append(trials, Trial{PowerW: 245, Lactate10Mmol: 2, Lactate30Mmol: 3.5})
	if br := BracketOf(trials); br.PassW != 255 || br.FailW != 270 || len(br.Notes) != 1 {
		t.Errorf("bracket %+v", br)
	}
}

// A trial's power is checked from its ride: held power passes, wandering
// power is flagged and left out of the bracket.
func TestTrialFromRide(t *testing.T) {
	held := make([]float64, 3000)
	wander := make([]float64, 3000)
	for i := range held {
		held[i] = 260 + float64(i%5) - 2
		wander[i] = 260
		if (i/120)%2 == 0 {
			wander[i] = 230
		} else {
			wander[i] = 290
		}
	}
	t1 := Trial{PowerW: 260, StartS: 300, Lactate10Mmol: 2, Lactate30Mmol: 2.5}
	if err := t1.CheckRide(held); err != nil || t1.Wandered || math.Abs(t1.MeasuredW-260) > 0.5 {
		t.Errorf("held: %+v %v", t1, err)
	}
	t2 := Trial{PowerW: 260, StartS: 300, Lactate10Mmol: 2, Lactate30Mmol: 2.5}
	if err := t2.CheckRide(wander); err != nil || !t2.Wandered || !strings.Contains(t2.Note, "power wandered") {
		t.Errorf("wander: %+v %v", t2, err)
	}
	if br := BracketOf([]Trial{t2}); !math.IsNaN(br.PassW) || len(br.Notes) < 1 {
		t.Errorf("bracket %+v", br)
	}
	t3 := Trial{PowerW: 260, StartS: 2000}
	if err := t3.CheckRide(held); err == nil {
		t.Error("a trial past the end of the ride")
	}
}

// Beside the field estimate: an invented athlete whose generator places
// MLSS 15 W below CP; trials at MLSS −20, −5, +10 and +25 W bracket it at
// (MLSS − 5, MLSS + 10), so CP sits 15 − 2.5 = 12.5 W above the bracket's
// middle, as CP usually sits above MLSS (Pringle & Jones 2002). With MLSS
// placed 10 % above CP the gap is the wrong way round and is flagged.
func TestGapsBesideCP(t *testing.T) {
	cp := 280.0
	for _, c := range []struct {
		mlss    float64
		wantGap float64
		flagged bool
	}{{cp - 15, 12.5, false}, {1.1 * cp, -(0.1*cp + 2.5), true}} {
		a := synth.LactateAthlete{MLSSW: c.mlss, RestMmol: 1}
		var trials []Trial
		for _, d := range []float64{-20, -5, 10, 25} {
			la10, la30 := a.Trial(c.mlss + d)
			trials = append(trials, Trial{PowerW: c.mlss + d, Lactate10Mmol: la10, Lactate30Mmol: la30})
		}
		br := BracketOf(trials)
		gaps := Gaps(Field{Estimated: true, CPW: cp, Rule20W: math.NaN()}, nil, &br)
		if len(gaps) != 1 || gaps[0].Method != MethodMLSS {
			t.Fatalf("gaps %+v", gaps)
		}
		near(t, "CP − MLSS", gaps[0].DiffW, c.wantGap, 1e-9)
		if (gaps[0].Note != "") != c.flagged {
			t.Errorf("MLSS %.0f: note %q", c.mlss, gaps[0].Note)
		}
	}
}
