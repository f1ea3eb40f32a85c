package ingest

import (
	"math"
	"reflect"
	"testing"
)

// One case per rule of the cleaning policy (../shared/design.md, "Cleaning
// policy"), with the expected timeline worked out by hand.
func TestCleanRules(t *testing.T) {
	nan := math.NaN()
	type pt = [2]float64 // seconds from start, power
	cases := []struct {
		name   string
		points []pt
		want   []float64
		check  func(t *testing.T, q Quality)
	}{
		{"rule 1: bins of 1 s from the first sample",
			[]pt{{0.4, 100}, {1.4, 200}, {2.9, 300}},
			// origin is floor(0.4) = 0: bins 0, 1, 2
			[]float64{100, 200, 300}, nil},
		{"rule 2: several samples in a bin are averaged",
			[]pt{{0, 100}, {0.25, 200}, {0.5, nan}, {0.75, 300}, {1, 50}},
			[]float64{200, 50}, nil},
		{"rule 3: negative, NaN and spikes are missing; spikes counted",
			[]pt{{0, 100}, {1, -5}, {2, 3000}, {3, 100}, {4, math.Inf(1)}, {5, 100}},
			// bins 1, 2 and 4 are missing and short: interpolated between 100 and 100
			[]float64{100, 100, 100, 100, 100, 100},
			func(t *testing.T, q Quality) {
				if q.SpikesRemoved != 1 || !reflect.DeepEqual(q.SpikeOffsetsS, []int{2}) || q.InvalidValues != 2 {
					t.Errorf("spikes %d at %v, invalid %d", q.SpikesRemoved, q.SpikeOffsetsS, q.InvalidValues)
				}
			}},
		{"rule 4: a run of 5 seconds without power (a sensor dropout) is interpolated",
			[]pt{{0, 100}, {1, nan}, {2, nan}, {3, nan}, {4, nan}, {5, nan}, {6, 220}},
			// 100 → 220 over 6 steps of 20 W
			[]float64{100, 120, 140, 160, 180, 200, 220},
			func(t *testing.T, q Quality) {
				if q.DropoutSeconds != 5 || len(q.Dropouts) != 1 || q.Dropouts[0] != (Span{1, 5}) || q.GapSeconds != 0 {
					t.Errorf("dropouts %v gaps %v", q.Dropouts, q.Gaps)
				}
				if math.Abs(q.PowerCoverage-2.0/7) > 1e-12 {
					t.Errorf("coverage %v, want 2/7", q.PowerCoverage)
				}
			}},
		{"rule 4: on a 1-Hz recording a 3-s hole is a dropout",
			append(append(stuck(0, 10, 200), pt{13, 260}), stuck(14, 10, 200)...),
			append(append(repeat(200, 10), 215, 230, 245, 260), repeat(200, 10)...),
			func(t *testing.T, q Quality) {
				if q.DropoutSeconds != 3 || q.FilledSeconds != 0 {
					t.Errorf("dropouts %d s, filled %d s", q.DropoutSeconds, q.FilledSeconds)
				}
			}},
		{"rule 4: steps of a sparse recording (every 1–4 s) are filled, not repairs",
			[]pt{{0, 100}, {3, 130}, {4, 100}, {8, 140}, {10, 100}, {13, 100}},
			[]float64{100, 110, 120, 130, 100, 110, 120, 130, 140, 120, 100, 100, 100, 100},
			func(t *testing.T, q Quality) {
				if q.DropoutSeconds != 0 || q.FilledSeconds != 8 || q.RecordingIntervalS != 3 {
					t.Errorf("dropouts %d s, filled %d s, interval %v", q.DropoutSeconds, q.FilledSeconds, q.RecordingIntervalS)
				}
			}},
		{"rule 3: a 1-s value far above both neighbours is a spike (below the ceiling)",
			[]pt{{0, 250}, {1, 260}, {2, 2470}, {3, 240}, {4, 250}},
			[]float64{250, 260, 250, 240, 250},
			func(t *testing.T, q Quality) {
				if q.SpikesRemoved != 1 || !reflect.DeepEqual(q.SpikeOffsetsS, []int{2}) {
					t.Errorf("spikes %d at %v", q.SpikesRemoved, q.SpikeOffsetsS)
				}
			}},
		{"rule 3: a 2470-W sample inside a 900-W sprint is a spike (below the 2500-W ceiling)",
			[]pt{{0, 250}, {1, 880}, {2, 900}, {3, 2470}, {4, 890}, {5, 870}, {6, 260}},
			[]float64{250, 880, 900, 895, 890, 870, 260},
			func(t *testing.T, q Quality) {
				if q.SpikesRemoved != 1 || !reflect.DeepEqual(q.SpikeOffsetsS, []int{3}) {
					t.Errorf("spikes %d at %v", q.SpikesRemoved, q.SpikeOffsetsS)
				}
			}},
		{"rule 3: a spike right after a dropout is judged against the second before the dropout",
			[]pt{{0, 240}, {1, nan}, {2, nan}, {3, 2384}, {4, 190}},
			[]float64{240, 227.5, 215, 202.5, 190},
			func(t *testing.T, q Quality) {
				if q.SpikesRemoved != 1 || q.DropoutSeconds != 3 {
					t.Errorf("spikes %d, dropouts %d s", q.SpikesRemoved, q.DropoutSeconds)
				}
			}},
		{"rule 3: a 2-s spike too; a sprint of several seconds is not one",
			[]pt{{0, 200}, {1, 1500}, {2, 1400}, {3, 200}, {4, 150}, {5, 900}, {6, 950}, {7, 880}, {8, 300}},
			[]float64{200, 200, 200, 200, 150, 900, 950, 880, 300},
			func(t *testing.T, q Quality) {
				if q.SpikesRemoved != 2 || !reflect.DeepEqual(q.SpikeOffsetsS, []int{1, 2}) {
					t.Errorf("spikes %d at %v", q.SpikesRemoved, q.SpikeOffsetsS)
				}
			}},
		{"rule 4: a run of 6 missing seconds is 0 W and a gap",
			[]pt{{0, 100}, {7, 220}},
			[]float64{100, 0, 0, 0, 0, 0, 0, 220},
			func(t *testing.T, q Quality) {
				if q.GapSeconds != 6 || len(q.Gaps) != 1 || q.Gaps[0] != (Span{1, 6}) || q.DropoutSeconds != 0 {
					t.Errorf("dropouts %v gaps %v", q.Dropouts, q.Gaps)
				}
			}},
		{"rule 4: missing at the ends is never interpolated",
			[]pt{{0, nan}, {1, 100}, {2, 110}, {3, nan}},
			[]float64{0, 100, 110, 0},
			func(t *testing.T, q Quality) {
				if len(q.Gaps) != 2 || q.GapSeconds != 2 {
					t.Errorf("gaps %v", q.Gaps)
				}
			}},
		{"rule 5: 60 s of identical power is a stuck run, left as it is",
			append([]pt{{0, 150}}, stuck(1, 60, 240)...),
			append([]float64{150}, repeat(240, 60)...),
			func(t *testing.T, q Quality) {
				if len(q.StuckRuns) != 1 || q.StuckRuns[0] != (StuckRun{Span{1, 60}, 240}) {
					t.Errorf("stuck %v", q.StuckRuns)
				}
			}},
		{"rule 5: 59 s is not stuck, nor is 0 W",
			append(stuck(0, 59, 240), stuck(59, 100, 0)...),
			append(repeat(240, 59), repeat(0, 100)...),
			func(t *testing.T, q Quality) {
				if len(q.StuckRuns) != 0 {
					t.Errorf("stuck %v", q.StuckRuns)
				}
			}},
		{"one sample dated 10 days after a ride is dropped, the ride kept and flagged",
			append(stuck(0, 40, 200), pt{864000, 300}),
			repeat(200, 40),
			func(t *testing.T, q Quality) {
				if q.TimeOutliers != 1 || q.Samples != 40 || len(q.Notes) != 1 {
					t.Errorf("outliers %d, samples %d, notes %v", q.TimeOutliers, q.Samples, q.Notes)
				}
			}},
		{"time going backwards lands in its own bin and is counted",
			[]pt{{0, 100}, {2, 300}, {1, 200}},
			[]float64{100, 200, 300},
			func(t *testing.T, q Quality) {
				if q.TimeReversals != 1 {
					t.Errorf("reversals %d", q.TimeReversals)
				}
			}},
		{"recording interval is the median step",
			[]pt{{0, 100}, {2, 100}, {4, 100}, {6, 100}, {7, 100}},
			repeat(100, 8),
			func(t *testing.T, q Quality) {
				if q.RecordingIntervalS != 2 {
					t.Errorf("interval %v", q.RecordingIntervalS)
				}
			}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			const t0 = 1.7e9
			var samples []Sample
			for _, p := range c.points {
				samples = append(samples, Sample{UnixS: t0 + p[0], Power: p[1], HeartRate: nan, Cadence: nan})
			}
			r, err := Clean(samples, 0, nil)
			if err != nil {
				t.Fatal(err)
			}
			if len(r.PowerW) != len(c.want) {
				t.Fatalf("got %v, want %v", r.PowerW, c.want)
			}
			for i := range c.want {
				if math.Abs(r.PowerW[i]-c.want[i]) > 1e-9 {
					t.Fatalf("got %v, want %v", r.PowerW, c.want)
				}
			}
			if c.check != nil {
				c.check(t, r.Quality)
			}
		})
	}
}

func TestCleanSpikeCeilingOption(t *testing.T) {
	s := []Sample{{UnixS: 1.7e9, Power: 1200}, {UnixS: 1.7e9 + 1, Power: 900}}
	r, err := Clean(s, 1000, nil)
	if err != nil {
		t.Fatal(err)
	}
	if r.Quality.SpikesRemoved != 1 || r.PowerW[0] != 0 {
		t.Errorf("ceiling 1000 W: %v %+v", r.PowerW, r.Quality)
	}
}

func stuck(from, n int, w float64) [][2]float64 {
	var out [][2]float64
	for i := range n {
		out = append(out, [2]float64{float64(from + i), w})
	}
	return out
}

func repeat(w float64, n int) []float64 {
	out := make([]float64, n)
	for i := range out {
		out[i] = w
	}
	return out
}

// Suspect power: stuck runs as they are; removed spikes with their margin,
// merged where they touch.
func TestSuspectSpans(t *testing.T) {
	q := Quality{StuckRuns: []StuckRun{{Span{100, 70}, 600}}, SpikeOffsetsS: []int{1, 40, 42, 168}}
	if got, want := q.SpikeMargins(), []Span{{0, 4}, {38, 7}, {166, 5}}; !reflect.DeepEqual(got, want) {
		t.Errorf("spike margins %v, want %v", got, want)
	}
	if got, want := q.StuckSpans(), []Span{{100, 70}}; !reflect.DeepEqual(got, want) {
		t.Errorf("stuck spans %v, want %v", got, want)
	}
}
