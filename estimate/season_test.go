package estimate

import (
	"math"
	"testing"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/internal/synth"
	"github.com/sustain-cycling/sustain/powerduration"
)

func seasonOf(t *testing.T, prog synth.Progression, weeks int) ([]ingest.Ride, []powerduration.RideCurve) {
	t.Helper()
	var tracks []synth.Track
	for _, f := range synth.Season("s", day0, weeks, prog, 3) {
		if f.Fault == "" {
			tracks = append(tracks, f.Track)
		}
	}
	return ridesOf(t, tracks)
}

func changed(cs []Change, component string, sign float64) bool {
	for _, c := range cs {
		if c.Component == component && c.Delta*sign > 0 {
			return true
		}
	}
	return false
}

// An invented block (weeks 7–12) raises CP by 25 W and trims W′ by 4 kJ:
// the season, following the components of Morton's model (the athlete's
// own truth here), reports CP up and W′ down, and Pmax unchanged.
func TestSeasonBlock(t *testing.T) {
	base := synth.Athlete{CPW: 260, WPrimeJ: 21000, PmaxW: 1000}
	rides, curves := seasonOf(t, synth.Block(base, 25, 4000), 18)
	rep := Season(rides, curves, SeasonOptions{Components: ModelMorton})
	if len(rep.Windows) < 10 {
		t.Fatalf("%d windows", len(rep.Windows))
	}
	firstEst, lastEst := SeasonWindow{}, SeasonWindow{}
	for _, w := range rep.Windows {
		if w.Estimated {
			if !firstEst.Estimated {
				firstEst = w
			}
			lastEst = w
		}
	}
	if !firstEst.Estimated || firstEst == lastEst {
		t.Fatalf("windows %+v", rep.Windows)
	}
	within(t, "first CP", firstEst.CPW, 260, 0.03)
	within(t, "last CP", lastEst.CPW, 285, 0.03)
	within(t, "last W′", lastEst.WPrimeJ, 17000, 0.15)
	overall := compare(firstEst, lastEst)
	if !changed(overall, "cp", +1) || !changed(overall, "w_prime", -1) || changed(overall, "pmax", 1) || changed(overall, "pmax", -1) {
		t.Errorf("first→last changes %+v", overall)
	}
	if !changed(rep.Changes, "cp", +1) {
		t.Errorf("no window-to-window CP rise: %+v", rep.Changes)
	}
	if changed(rep.Changes, "cp", -1) {
		t.Errorf("a CP fall in a season that only rose: %+v", rep.Changes)
	}
}

// A stable invented season reports no change.
func TestSeasonStable(t *testing.T) {
	a := synth.Athlete{CPW: 270, WPrimeJ: 20000, PmaxW: 1000}
	rides, curves := seasonOf(t, func(int) synth.Athlete { return a }, 16)
	rep := Season(rides, curves, SeasonOptions{})
	if len(rep.Changes) != 0 {
		t.Errorf("changes in a stable season: %+v", rep.Changes)
	}
	n := 0
	for _, w := range rep.Windows {
		if w.Estimated {
			n++
			within(t, "CP "+w.To, w.CPW, 270, 0.03)
		}
	}
	if n < len(rep.Windows)/2 {
		t.Errorf("only %d of %d windows estimated", n, len(rep.Windows))
	}
}

// A window with no maximal effort is marked, not estimated.
func TestSeasonWindowWithoutEfforts(t *testing.T) {
	a := synth.Athlete{CPW: 270, WPrimeJ: 20000, PmaxW: 1000}
	rides, curves := seasonOf(t, func(int) synth.Athlete { return a }, 8)
	var tracks []synth.Track
	for d := range 20 { // then ten weeks of endurance only
		tracks = append(tracks, synth.FieldRide(a, day0.AddDate(0, 0, 60+3*d), 90, nil, uint64(900+d)))
	}
	r2, c2 := ridesOf(t, tracks)
	rides, curves = append(rides, r2...), append(curves, c2...)
	rep := Season(rides, curves, SeasonOptions{})
	last := rep.Windows[len(rep.Windows)-1]
	if last.Estimated || last.Reason == "" || last.CPW != 0 || math.IsNaN(last.CPW) {
		t.Errorf("last window %+v", last)
	}
}

// A season reads each ride's power (left in a store) at most once, however
// many windows the ride lies in, and gives the same windows as rides whose
// power is in memory.
func TestSeasonReadsPowerOnce(t *testing.T) {
	base := synth.Athlete{CPW: 260, WPrimeJ: 21000, PmaxW: 1000}
	var tracks []synth.Track // with spikes and stuck runs: efforts avoid them, reading the power
	for _, f := range synth.Season("s", day0, 10, synth.Block(base, 25, 4000), 3) {
		if f.Fault != "running" && f.Fault != "truncated" {
			tracks = append(tracks, f.Track)
		}
	}
	rides, curves := ridesOf(t, tracks)
	want := Season(rides, curves, SeasonOptions{})
	reads := make([]int, len(rides))
	stored := make([]ingest.Ride, len(rides))
	for i := range rides {
		stored[i] = rides[i]
		power := rides[i].PowerW
		stored[i].LeavePower(func() ([]float64, error) { reads[i]++; return power, nil })
	}
	got := Season(stored, curves, SeasonOptions{})
	read := 0
	for i, n := range reads {
		if n > 1 {
			t.Errorf("ride %d: power read %d times", i, n)
		}
		read += n
	}
	if read == 0 {
		t.Error("no ride's power was read (the test reads nothing)")
	}
	if len(got.Windows) != len(want.Windows) {
		t.Fatalf("%d windows, want %d", len(got.Windows), len(want.Windows))
	}
	for i := range want.Windows {
		if g, w := got.Windows[i], want.Windows[i]; g.CPW != w.CPW || g.WPrimeJ != w.WPrimeJ || g.Reason != w.Reason {
			t.Errorf("window %d: %+v, want %+v", i, g, w)
		}
	}
}

// A window whose newest ride is more than OldDays before today is warned
// of (old-data); one read the week after is not; without Today, nothing
// is compared with the clock.
func TestOldDataWarning(t *testing.T) {
	rides, curves := seasonOf(t, synth.Block(synth.Athlete{CPW: 260, WPrimeJ: 21000, PmaxW: 1000}, 0, 0), 8)
	newest := powerduration.Newest(curves)
	w := powerduration.LastDays(newest, 42)
	day, _ := powerduration.ParseDate(newest)
	for _, c := range []struct {
		today string
		want  bool
	}{{"", false}, {day.AddDate(0, 0, 7).Format("2006-01-02"), false}, {day.AddDate(0, 0, OldDays).Format("2006-01-02"), false},
		{day.AddDate(0, 0, OldDays+1).Format("2006-01-02"), true}} {
		rep := Estimate(rides, curves, w, Options{Today: c.today})
		if got := hasCode(rep.Warnings, WarnOldData); got != c.want {
			t.Errorf("today %q: old-data %v, want %v (%+v)", c.today, got, c.want, rep.Warnings)
		}
	}
}
