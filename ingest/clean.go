package ingest

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"time"
)

// Cleaning policy constants; see the package comment and ../shared/design.md.
const (
	// DefaultSpikeCeilingW is the power above which a sample is treated as a
	// spike rather than a real effort (common practice: no cyclist holds
	// more than about 2500 W even for one second).
	DefaultSpikeCeilingW = 2500.0
	// MaxFilledRunS is the longest run of missing seconds, with valid
	// seconds on both sides, that is filled by linear interpolation.
	MaxFilledRunS = 5
	// MinStuckRunS is how long identical non-zero power must last to be
	// reported as a stuck run.
	MinStuckRunS = 60
	// MaxTimelineS is the longest timeline accepted (48 h); a longer one is
	// a clock error, and refusing it avoids a huge allocation.
	MaxTimelineS = 48 * 3600
	// Relative spikes (common practice for power-meter glitches): a run of
	// at most MaxSpikeRunS seconds whose power is more than SpikeRatio
	// times both neighbouring seconds and more than SpikeExcessW above
	// them. No rider goes from 300 W to 900 W, or from 900 W to 1500 W,
	// and back within two seconds; a real sprint builds and fades over
	// several.
	MaxSpikeRunS = 2
	SpikeRatio   = 1.5
	SpikeExcessW = 400.0
	// SuspectMarginS: seconds on each side of a removed spike that are
	// not used inside a maximal effort (the meter misbehaved there).
	SuspectMarginS = 2
	// MaxSamples bounds the samples of one file: a 48-h timeline at a few
	// samples a second. Past it a file is no ride recording, and refusing
	// it keeps memory per file bounded (about 32 bytes a sample).
	MaxSamples = 1 << 20
	// EarliestUnixS and LatestUnixS bound the times of a ride (1990 to
	// 2100); a time outside is a clock or file error, not a ride.
	EarliestUnixS = 631152000
	LatestUnixS   = 4102444800
	// PolicyVersion changes whenever the cleaning policy changes, so that
	// stored results computed under an older policy can be recognised.
	PolicyVersion = 3
)

// Sample is one recorded point before cleaning. Time is Unix seconds (with
// fraction); a NaN Power, HeartRate or Cadence means "not recorded".
type Sample struct {
	UnixS     float64
	Power     float64
	HeartRate float64
	Cadence   float64
}

// ErrNoPower is returned when a ride carries no usable power value at all.
var ErrNoPower = errors.New("no power data")

// Clean puts samples onto a 1-Hz timeline following the package's cleaning
// policy. spikeCeilingW <= 0 selects DefaultSpikeCeilingW. The returned ride
// has no File, Sport or Session set.
func Clean(samples []Sample, spikeCeilingW float64, loc *time.Location) (Ride, error) {
	if spikeCeilingW <= 0 {
		spikeCeilingW = DefaultSpikeCeilingW
	}
	if loc == nil {
		loc = time.UTC
	}
	var q Quality
	q.Samples = len(samples)
	first, last := math.Inf(1), math.Inf(-1)
	for i, s := range samples {
		if math.IsNaN(s.UnixS) || math.IsInf(s.UnixS, 0) {
			return Ride{}, fmt.Errorf("sample %d has no valid time", i)
		}
		first = min(first, s.UnixS)
		last = max(last, s.UnixS)
		if i > 0 && s.UnixS < samples[i-1].UnixS {
			q.TimeReversals++
		}
	}
	if len(samples) == 0 {
		return Ride{}, errors.New("no samples")
	}
	if last-math.Floor(first) >= MaxTimelineS {
		// a few records dated far from the rest (a clock error) cost
		// themselves, not the ride
		kept, dropped := mainStretch(samples)
		if 20*dropped > len(samples) {
			return Ride{}, fmt.Errorf("timeline of %.0f h is longer than 48 h (clock jump?)", (last-math.Floor(first))/3600)
		}
		samples = kept
		q.Samples, q.TimeOutliers = len(kept), dropped
		q.Notes = append(q.Notes, fmt.Sprintf("%d sample(s) dated far from the rest of the ride (a clock error) were dropped", dropped))
		first, last = math.Inf(1), math.Inf(-1)
		for _, s := range samples {
			first, last = min(first, s.UnixS), max(last, s.UnixS)
		}
	}
	origin := math.Floor(first)
	n := int(math.Floor(last-origin)) + 1

	// Power is averaged per second (rule 2); heart rate and cadence, which
	// the cleaning policy does not cover, keep the second's last value.
	power := make([]float64, n)
	count := make([]int32, n)
	seen := make([]bool, n) // a sample was recorded in the second, with or without power
	hrcad := make([]uint8, 2*n)
	hr, cad := hrcad[:n:n], hrcad[n:]
	for _, s := range samples {
		b := int(s.UnixS - origin)
		seen[b] = true
		p := s.Power
		switch {
		case math.IsNaN(p):
			// not recorded
		case math.IsInf(p, 0) || p < 0:
			q.InvalidValues++
		case p > spikeCeilingW:
			q.SpikesRemoved++
			q.SpikeOffsetsS = append(q.SpikeOffsetsS, b)
		default:
			power[b] += p
			count[b]++
		}
		if h := s.HeartRate; h > 0 && h < 256 {
			hr[b] = uint8(math.Round(h))
		}
		if c := s.Cadence; c >= 0 && c < 256 {
			cad[b] = uint8(math.Round(c))
		}
	}
	valid := 0
	for i := range power {
		if count[i] > 0 {
			power[i] /= float64(count[i])
			valid++
		}
	}
	if valid == 0 {
		return Ride{}, ErrNoPower
	}
	valid -= removeRelativeSpikes(power, count, &q)
	if valid == 0 {
		return Ride{}, ErrNoPower
	}
	if slices.Max(power) == 0 {
		return Ride{}, fmt.Errorf("%w (power is 0 W throughout: no power meter paired?)", ErrNoPower)
	}
	if first < EarliestUnixS || last > LatestUnixS {
		return Ride{}, fmt.Errorf("times outside 1990–2100 (%s to %s): a clock or file error, not a ride", unixDate(first), unixDate(last))
	}
	q.Seconds = n
	q.PowerCoverage = float64(valid) / float64(n)
	slices.Sort(q.SpikeOffsetsS)
	q.SpikeOffsetsS = slices.Compact(q.SpikeOffsetsS)
	q.RecordingIntervalS = recordingInterval(samples)
	// the longest step between samples that is the ride's normal
	// recording (a head unit's "smart" recording writes every 1–6 s):
	// seconds filled between such samples are not repairs
	normalStep := 1.0
	if q.RecordingIntervalS > 1 {
		normalStep = math.Min(MaxFilledRunS+1, math.Ceil(2*q.RecordingIntervalS))
	}

	// Missing runs: short ones between valid seconds are interpolated,
	// everything else is 0 W.
	for i := 0; i < n; {
		if count[i] > 0 {
			i++
			continue
		}
		j := i
		for j < n && count[j] == 0 {
			j++
		}
		run := Span{StartS: i, Seconds: j - i}
		if i > 0 && j < n && j-i <= MaxFilledRunS {
			a, b := power[i-1], power[j]
			for k := i; k < j; k++ {
				f := float64(k-i+1) / float64(j-i+1)
				power[k] = a + (b-a)*f
			}
			if float64(run.Seconds+1) <= normalStep && !slices.Contains(seen[i:j], true) {
				q.FilledSeconds += run.Seconds
			} else {
				q.Dropouts = append(q.Dropouts, run)
				q.DropoutSeconds += run.Seconds
			}
		} else {
			// power[k] is already 0
			q.Gaps = append(q.Gaps, run)
			q.GapSeconds += run.Seconds
		}
		i = j
	}

	// Power is kept to 0.1 W (a meter's own resolution is 1 W): curves sum
	// it exactly, and the store keeps it exactly in two bytes a second.
	for i, p := range power {
		power[i] = math.Round(p*10) / 10
	}

	// Stuck runs: identical non-zero power for MinStuckRunS or more.
	for i := 0; i < n; {
		j := i + 1
		for j < n && power[j] == power[i] {
			j++
		}
		if power[i] > 0 && j-i >= MinStuckRunS {
			q.StuckRuns = append(q.StuckRuns, StuckRun{Span{i, j - i}, power[i]})
		}
		i = j
	}

	sec, frac := math.Modf(origin)
	return Ride{
		Start:        time.Unix(int64(sec), int64(frac*1e9)).In(loc),
		PowerW:       power,
		HeartRateBPM: hr,
		CadenceRPM:   cad,
		Quality:      q,
	}, nil
}

// removeRelativeSpikes treats as missing every run of at most
// MaxSpikeRunS consecutive valid seconds far above the valid seconds on
// both sides (see SpikeRatio; a neighbour may be across a short missing
// run, as when a sensor drops out and comes back with a spike), counting
// them as spikes; it returns how many seconds it removed.
func removeRelativeSpikes(power []float64, count []int32, q *Quality) int {
	n := len(power)
	near := func(a, b int) bool { return b-a <= MaxFilledRunS+1 }
	far := func(v, ref float64) bool { return v > SpikeRatio*ref && v-ref > SpikeExcessW }
	removed := 0
	left := -1 // the last valid second kept
	for i := 0; i < n; i++ {
		if count[i] == 0 {
			continue
		}
		if left < 0 || !near(left, i) || !far(power[i], power[left]) {
			left = i // the usual case: not far above the second before
			continue
		}
		spike := false
		low := math.Inf(1)
		for k := 1; k <= MaxSpikeRunS && i+k-1 < n && count[i+k-1] > 0; k++ {
			j := i + k - 1
			low = min(low, power[j])
			right := j + 1
			for right < n && count[right] == 0 && near(j, right) {
				right++
			}
			if right >= n || count[right] == 0 || !near(j, right) {
				break
			}
			if far(low, max(power[left], power[right])) {
				for x := i; x <= j; x++ {
					power[x], count[x] = 0, 0
					q.SpikesRemoved++
					q.SpikeOffsetsS = append(q.SpikeOffsetsS, x)
					removed++
				}
				i, spike = j, true
				break
			}
		}
		if !spike {
			left = i
		}
	}
	return removed
}

// recordingInterval returns the median positive step between consecutive
// samples, to the millisecond.
func recordingInterval(samples []Sample) float64 {
	ones := 0 // the usual 1-s step, counted without the map
	counts := map[int64]int{}
	total := 0
	for i := 1; i < len(samples); i++ {
		d := samples[i].UnixS - samples[i-1].UnixS
		switch {
		case d == 1:
			ones++
		case d > 0:
			counts[int64(math.Round(d*1000))]++
		default:
			continue
		}
		total++
	}
	if ones > 0 {
		counts[1000] += ones
	}
	steps := make([]int64, 0, len(counts))
	for d := range counts {
		steps = append(steps, d)
	}
	slices.Sort(steps)
	seen := 0
	for _, d := range steps {
		if seen += counts[d]; 2*seen >= total {
			return float64(d) / 1000
		}
	}
	return 0
}

// unixDate writes a time for a reason, even far outside the calendar.
func unixDate(s float64) string {
	if s < -62135596800 || s > 253402300799 { // outside years 1 to 9999
		return fmt.Sprintf("%.3g s", s)
	}
	return time.Unix(int64(s), 0).UTC().Format("2006-01-02")
}

// mainStretch keeps the samples of the 48-h stretch that holds the most of
// them (in their order) and says how many it dropped.
func mainStretch(samples []Sample) ([]Sample, int) {
	ts := make([]float64, len(samples))
	for i, s := range samples {
		ts[i] = s.UnixS
	}
	slices.Sort(ts)
	bestLo, bestN := ts[0], 0
	for i, j := 0, 0; i < len(ts); i++ {
		for ts[i]-ts[j] >= MaxTimelineS-1 {
			j++
		}
		if n := i - j + 1; n > bestN {
			bestLo, bestN = ts[j], n
		}
	}
	kept := make([]Sample, 0, bestN)
	for _, s := range samples {
		if s.UnixS >= bestLo && s.UnixS-math.Floor(bestLo) < MaxTimelineS-1 {
			kept = append(kept, s)
		}
	}
	return kept, len(samples) - len(kept)
}

// unixSeconds is t in Unix seconds with its fraction, for any year
// (UnixNano overflows outside 1678–2262 and would date year 9999 in 1815).
func unixSeconds(t time.Time) float64 { return float64(t.Unix()) + float64(t.Nanosecond())/1e9 }
