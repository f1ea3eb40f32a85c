// Package ingest reads ride files (FIT, TCX and CSV, each also gzip
// compressed) and turns each recorded ride into a Ride: power on a clean
// 1-Hz timeline plus a quality report saying what cleaning had to do.
//
// Every format goes through one cleaning policy (see Clean), so a power
// curve computed downstream is the same whatever file the ride came from:
//
//   - samples are put into 1-second bins counted from the first sample;
//   - several samples in a bin are averaged;
//   - missing, negative, non-finite and implausibly high values ("spikes":
//     above a ceiling of 2500 W by default, or one or two seconds far above
//     the seconds on both sides, see SpikeRatio) are treated as missing;
//   - a run of at most 5 missing seconds between two valid seconds is
//     filled by linear interpolation: a sensor dropout, unless it is only
//     a step of the ride's normal sparse recording (FilledSeconds, not a
//     repair); every other missing second is 0 W (stopped, paused, or a
//     long dropout);
//   - power is kept to 0.1 W;
//   - constant non-zero power for 60 s or more is reported as a stuck run
//     but left as it is.
//
// Stuck runs and the seconds next to removed spikes are suspect (see
// Quality.StuckSpans and Quality.SpikeMargins): downstream, no maximal
// effort rests on them.
//
// Nothing in this package prints or writes files: Scan returns rides and a
// reason for every file it could not read.
package ingest

import (
	"sync"
	"time"
)

// Watts is a power in watts.
type Watts = float64

// Span is a run of seconds on a ride's 1-Hz timeline.
type Span struct {
	StartS  int `json:"start_s"`
	Seconds int `json:"seconds"`
}

// End returns the first second after the span.
func (s Span) End() int { return s.StartS + s.Seconds }

// Overlaps reports whether s shares at least one second with [start, start+n).
func (s Span) Overlaps(start, n int) bool {
	return s.StartS < start+n && start < s.End()
}

// StuckRun is a stretch of identical non-zero power, which a working power
// meter almost never records for a minute or more.
type StuckRun struct {
	Span
	Watts Watts `json:"watts"`
}

// Quality says how much of a ride was recorded cleanly and what cleaning did.
// Offsets are seconds from the ride's start.
type Quality struct {
	Samples            int     `json:"samples"`
	Seconds            int     `json:"seconds"`
	PowerCoverage      float64 `json:"power_coverage"`       // fraction of seconds with a recorded, valid power value
	RecordingIntervalS float64 `json:"recording_interval_s"` // median step between samples
	Gaps               []Span  `json:"gaps"`                 // missing runs set to 0 W
	GapSeconds         int     `json:"gap_s"`
	Dropouts           []Span  `json:"dropouts"` // short missing runs filled by interpolation
	DropoutSeconds     int     `json:"dropout_s"`
	// FilledSeconds are seconds filled between samples of a sparsely
	// recorded ride (steps of its normal recording interval): not repairs.
	FilledSeconds int        `json:"filled_s"`
	SpikesRemoved int        `json:"spikes_removed"`
	SpikeOffsetsS []int      `json:"spike_offsets_s"`
	InvalidValues int        `json:"invalid_values"` // NaN, infinite or negative power samples
	TimeReversals int        `json:"time_reversals"` // samples whose time went backwards
	TimeOutliers  int        `json:"time_outliers"`  // samples dated far from the rest, dropped
	StuckRuns     []StuckRun `json:"stuck_runs"`
	Truncated     bool       `json:"truncated"`
	// DatedByFallback: the file holds elapsed times only, so the ride is
	// dated by a date in the file's name, else its modification time
	// (FallbackStart), plus FallbackOffsetS.
	DatedByFallback bool     `json:"dated_by_fallback,omitempty"`
	FallbackOffsetS float64  `json:"fallback_offset_s,omitempty"`
	Salvaged        bool     `json:"salvaged"`
	Notes           []string `json:"notes,omitempty"`
}

// Ride is one recorded ride (one session of a file) on a clean 1-Hz timeline.
// PowerW[i] is the mean power of second i after Start.
type Ride struct {
	File         string    // path the ride was read from
	Session      int       // index of the session within the file (0 for most files)
	Start        time.Time // time of the first sample
	Sport        string    // "cycling", "running", … or "unknown"
	PowerW       []Watts
	HeartRateBPM []uint8 // the second's last recorded value; 0 where none
	CadenceRPM   []uint8 // the second's last recorded value; 0 where none
	Quality      Quality
	// loadPower, when set, fetches PowerW on demand (a ride answered from
	// a store keeps its power there until something needs it).
	loadPower func() ([]Watts, error)
}

// Power returns the ride's 1-Hz power, fetching it if it was left in a store.
func (r *Ride) Power() ([]Watts, error) {
	if r.PowerW != nil || r.loadPower == nil {
		return r.PowerW, nil
	}
	return r.loadPower()
}

// LeavePower drops the ride's power from memory; Power fetches it with load
// when it is needed again.
func (r *Ride) LeavePower(load func() ([]Watts, error)) {
	r.PowerW, r.loadPower = nil, load
}

// ReadPowerOnce makes a ride whose power was left in a store fetch it at
// most once: the first Power keeps it (and its error) for every later
// call on this copy of the ride. A caller that reads the power many times
// in one run (a season's overlapping windows) calls it on its own copies,
// and the power goes when they do.
func (r *Ride) ReadPowerOnce() {
	if r.PowerW != nil || r.loadPower == nil {
		return
	}
	load := r.loadPower
	var once sync.Once
	var power []Watts
	var err error
	r.loadPower = func() ([]Watts, error) {
		once.Do(func() { power, err = load() })
		return power, err
	}
}

// Date returns the ride's start date as YYYY-MM-DD in the recorded time zone.
func (r *Ride) Date() string { return r.Start.Format("2006-01-02") }

// Seconds returns the length of the ride's timeline.
func (r *Ride) Seconds() int {
	if r.PowerW == nil {
		return r.Quality.Seconds
	}
	return len(r.PowerW)
}

// Suspect power is not to be used inside a maximal effort: a window over a
// stuck run is no effort at all, and the recorded values next to a removed
// spike (the meter misbehaved there) are bridged over like the spike.

// StuckSpans are the stuck runs' spans, in time order.
func (q *Quality) StuckSpans() []Span {
	out := make([]Span, len(q.StuckRuns))
	for i, s := range q.StuckRuns {
		out[i] = s.Span
	}
	return out
}

// SpikeMargins are the removed spikes with SuspectMarginS seconds on each
// side, in time order and merged where they touch.
func (q *Quality) SpikeMargins() []Span {
	var merged []Span
	for _, o := range q.SpikeOffsetsS { // sorted
		s := Span{max(o-SuspectMarginS, 0), 0}
		s.Seconds = o + SuspectMarginS + 1 - s.StartS
		if k := len(merged) - 1; k >= 0 && s.StartS <= merged[k].End() {
			merged[k].Seconds = max(merged[k].End(), s.End()) - merged[k].StartS
			continue
		}
		merged = append(merged, s)
	}
	return merged
}

// FlaggedSeconds counts the seconds of [start, start+n) that cleaning had to
// touch or that look suspect: interpolated dropouts, zeroed gaps, removed
// spikes and stuck runs.
func (q *Quality) FlaggedSeconds(start, n int) int {
	flagged := 0
	overlap := func(s Span) {
		a, b := max(s.StartS, start), min(s.End(), start+n)
		if b > a {
			flagged += b - a
		}
	}
	for _, s := range q.Dropouts {
		overlap(s)
	}
	for _, s := range q.Gaps {
		overlap(s)
	}
	for _, s := range q.StuckRuns {
		overlap(s.Span)
	}
	for _, o := range q.SpikeOffsetsS {
		if o >= start && o < start+n {
			flagged++
		}
	}
	return flagged
}
