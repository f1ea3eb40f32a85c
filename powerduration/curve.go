// Package powerduration builds mean-maximal power (MMP) curves: for each
// duration d, the highest mean power over any d consecutive seconds of a
// ride. A ride's curve is the raw material of every power-duration model;
// the best-of curve over a date window (pointwise maximum of the rides'
// curves) is what the models are fitted to.
//
// Every point keeps its provenance: the file, the ride's date and start,
// and the offset of the window's start within the ride, so any figure can
// be traced to the ride and second it came from.
//
// Curves share one grid of durations: every whole second from 1 s to 1 h,
// then a log-spaced grid (twenty steps a decade) that also holds 5400,
// 7200, 10800, 14400, 18000 and 21600 s, up to the ride's length. Because
// the grid is shared, merging by pointwise maximum is exact, associative
// and commutative: per-ride curves can be computed anywhere and reduced
// later.
package powerduration

import (
	"fmt"
	"math"
	"math/bits"
	"runtime"
	"slices"
	"sync"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
)

// Source is the ride a point was ridden in. The points of one ride share
// one Source, which keeps a curve of thousands of points small.
type Source struct {
	File      string    `json:"file"`
	Date      string    `json:"date"` // YYYY-MM-DD, the ride's local date
	Session   int       `json:"session,omitempty"`
	RideStart time.Time `json:"ride_start"`
}

// SourceOf describes a ride as the source of points.
func SourceOf(r *ingest.Ride) *Source {
	return &Source{File: r.File, Date: r.Date(), Session: r.Session, RideStart: r.Start}
}

// Point is the best mean power for one duration, and where it was ridden:
// the ride (Source) and the offset of the window's start within it.
type Point struct {
	DurationS int     `json:"duration_s"`
	Watts     float64 `json:"watts"`
	*Source
	OffsetS int `json:"offset_s"`
}

// Same reports whether two points come from the same window of the same ride.
func (p Point) Same(q Point) bool {
	return p.File == q.File && p.Session == q.Session && p.RideStart.Equal(q.RideStart)
}

// Curve is a mean-maximal power curve, points in ascending duration. The
// curve of one ride has File and Start set; a merged curve has neither.
type Curve struct {
	File   string    `json:"file,omitempty"`
	Start  time.Time `json:"start,omitzero"`
	Points []Point   `json:"points"`
}

// MaxGridS is the longest duration on the grid (48 h, the longest timeline).
const MaxGridS = ingest.MaxTimelineS

var longGrid = func() []int {
	set := map[int]bool{5400: true, 7200: true, 10800: true, 14400: true, 18000: true, 21600: true}
	for k := 1; ; k++ {
		d := int(math.Round(3600 * math.Pow(10, float64(k)/20)))
		if d > MaxGridS {
			break
		}
		set[d] = true
	}
	var g []int
	for d := range set {
		g = append(g, d)
	}
	slices.Sort(g)
	return g
}()

// grid is every duration of the shared grid, up to MaxGridS.
var grid = func() []int {
	ds := make([]int, 0, 3600+len(longGrid))
	for d := 1; d <= 3600; d++ {
		ds = append(ds, d)
	}
	return append(ds, longGrid...)
}()

// Durations returns the grid of durations for a ride of length seconds. The
// slice is shared: read it, never change it.
func Durations(length int) []int {
	n, _ := slices.BinarySearch(grid, length+1)
	return grid[:n:n]
}

// gridIndex is the position of duration d on the grid, or -1.
func gridIndex(d int) int {
	if d >= 1 && d <= 3600 {
		return d - 1
	}
	if i, ok := slices.BinarySearch(grid, d); ok {
		return i
	}
	return -1
}

// At returns the point for duration d, if the curve has it.
func (c Curve) At(d int) (Point, bool) {
	i, ok := slices.BinarySearchFunc(c.Points, d, func(p Point, d int) int { return p.DurationS - d })
	if !ok {
		return Point{}, false
	}
	return c.Points[i], true
}

// OfRide computes the ride's curve over the shared grid of durations.
func OfRide(r *ingest.Ride) RideCurve {
	best := MeanMax(r.PowerW, Durations(len(r.PowerW)))
	rc := RideCurve{Source: SourceOf(r), Watts: make([]float64, len(best)), OffsetsS: make([]int32, len(best))}
	for i, b := range best {
		rc.Watts[i], rc.OffsetsS[i] = b.Watts, int32(b.OffsetS)
	}
	return rc
}

// OfRideAvoiding is the ride's curve over the windows that share no second
// with the spans to avoid, with the recorded values of the spans to bridge
// replaced by a straight line between the seconds on either side (each
// list in time order, not overlapping): the best clean window of each
// duration, for efforts that must not rest on suspect power. A duration
// with no clean window has 0 W. power is the ride's power (it may have
// been left in a store, see ingest.Ride.Power); it is not changed.
func OfRideAvoiding(r *ingest.Ride, power []float64, avoid, bridge []ingest.Span) RideCurve {
	if len(bridge) > 0 {
		power = slices.Clone(power)
		n := len(power)
		for _, s := range bridge {
			a, b := max(s.StartS, 0), min(s.End(), n)
			if a >= b {
				continue
			}
			left, right := 0.0, 0.0
			switch {
			case a > 0 && b < n:
				left, right = power[a-1], power[b]
			case a > 0:
				left, right = power[a-1], power[a-1]
			case b < n:
				left, right = power[b], power[b]
			}
			for k := a; k < b; k++ {
				f := float64(k-a+1) / float64(b-a+1)
				power[k] = left + (right-left)*f
			}
		}
	}
	spans := avoid
	ds := Durations(len(power))
	rc := RideCurve{Source: SourceOf(r), Watts: make([]float64, len(ds)), OffsetsS: make([]int32, len(ds))}
	from := 0
	for k := 0; k <= len(spans); k++ {
		to := len(power)
		if k < len(spans) {
			to = max(min(spans[k].StartS, len(power)), from)
		}
		seg := power[from:to]
		for i, b := range MeanMax(seg, ds[:len(Durations(len(seg)))]) {
			if b.Watts > rc.Watts[i] {
				rc.Watts[i], rc.OffsetsS[i] = b.Watts, int32(from+b.OffsetS)
			}
		}
		if k < len(spans) {
			from = max(from, min(spans[k].End(), len(power)))
		}
	}
	return rc
}

// Best is the highest mean power for a duration and the offset of the
// earliest window found with it.
type Best struct {
	DurationS int
	Watts     float64
	OffsetS   int
}

// MeanMax returns, for each duration in ds (ascending, each at most
// len(power)), the highest mean of any window of that many consecutive
// values. Power must be non-negative.
//
// It is exact (equal to a scan of every window) but skips most windows: the
// starts are taken in blocks, and a block is skipped when no window starting
// in it can beat the best so far; a block that cannot be skipped is split
// into smaller blocks, down to a few starts scanned one by one. Power is never negative, so the sum of a
// window is at most the sum over the union of the block's windows, and at
// most d times the highest value in that union (a range-maximum table
// answers that in constant time). Each duration's best is seeded from the
// previous duration's window, which is usually close.
func MeanMax(power []float64, ds []int) []Best {
	n := len(power)
	out := make([]Best, 0, len(ds))
	if n == 0 {
		return out
	}
	sum := make([]float64, n+1)
	for i, p := range power {
		sum[i+1] = sum[i] + p
	}
	rmq := newRangeMax(power)
	prevStart := 0
	for _, d := range ds {
		if d < 1 || d > n {
			continue
		}
		// seed: the previous best window, grown to d (kept inside the ride)
		s0 := min(prevStart, n-d)
		sc := scanner{sum: sum, rmq: rmq, d: d, lastStart: n - d, bestSum: sum[s0+d] - sum[s0], bestStart: s0}
		for a := 0; a <= n-d; a += topBlock {
			sc.block(a, topBlock)
		}
		out = append(out, Best{DurationS: d, Watts: sc.bestSum / float64(d), OffsetS: sc.bestStart})
		prevStart = sc.bestStart
	}
	return out
}

// Block sizes: starts are taken in blocks of topBlock; a block that cannot
// be skipped is split into blocks a split-th the size, down to leafBlock,
// whose starts are scanned one by one.
const (
	topBlock  = 512
	split     = 4
	leafBlock = 8
)

type scanner struct {
	sum          []float64 // prefix sums
	rmq          rangeMax
	d, lastStart int
	bestSum      float64
	bestStart    int
}

// block considers the starts [a, a+size) (clipped to the last start).
func (sc *scanner) block(a, size int) {
	last := min(a+size-1, sc.lastStart)
	hi := last + sc.d // the block's windows all lie in [a, hi)
	bound := sc.sum[hi] - sc.sum[a]
	if m := float64(sc.d) * sc.rmq.max(a, hi); m < bound {
		bound = m
	}
	if bound < sc.bestSum || (bound == sc.bestSum && a > sc.bestStart) {
		return
	}
	if size > leafBlock {
		sub := size / split
		for b := a; b <= last; b += sub {
			sc.block(b, sub)
		}
		return
	}
	for s := a; s <= last; s++ {
		v := sc.sum[s+sc.d] - sc.sum[s]
		if v > sc.bestSum || (v == sc.bestSum && s < sc.bestStart) {
			sc.bestSum, sc.bestStart = v, s
		}
	}
}

// rangeMax answers "highest value in [a, b)" in constant time (a sparse table).
type rangeMax struct {
	levels [][]float64
}

func newRangeMax(v []float64) rangeMax {
	levels := [][]float64{v}
	for k := 1; 1<<k <= len(v); k++ {
		prev := levels[k-1]
		half := 1 << (k - 1)
		cur := make([]float64, len(v)-(1<<k)+1)
		for i := range cur {
			cur[i] = max(prev[i], prev[i+half])
		}
		levels = append(levels, cur)
	}
	return rangeMax{levels}
}

func (r rangeMax) max(a, b int) float64 {
	k := bits.Len(uint(b-a)) - 1
	return max(r.levels[k][a], r.levels[k][b-(1<<k)])
}

// OfRides computes the curve of every ride, on up to workers goroutines
// (workers <= 0: one per CPU). The result is in the rides' order.
func OfRides(rides []ingest.Ride, workers int) []RideCurve {
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	out := make([]RideCurve, len(rides))
	var wg sync.WaitGroup
	next := make(chan int)
	for range min(workers, max(len(rides), 1)) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				out[i] = OfRide(&rides[i])
			}
		}()
	}
	for i := range rides {
		next <- i
	}
	close(next)
	wg.Wait()
	return out
}

// KeyDurations are the durations a rider or coach reads first: 1, 5, 15 and
// 30 s; 1, 2, 3, 5, 8, 10, 12, 20, 30 and 60 min; then 90 min and 2 to 6 h.
var KeyDurations = []int{1, 5, 15, 30, 60, 120, 180, 300, 480, 600, 720, 1200, 1800, 3600, 5400, 7200, 10800, 14400, 18000, 21600}

// Compact is a ride's curve in columns, as one line of JSON: the map step
// of a batch computation (see Expand).
type Compact struct {
	File      string    `json:"file"`
	Session   int       `json:"session"`
	Date      string    `json:"date"`
	RideStart time.Time `json:"ride_start"`
	DurationS []int     `json:"duration_s"`
	Watts     []float64 `json:"watts"`
	OffsetS   []int32   `json:"offset_s"`
}

// Compacted returns a ride's curve in columns.
func (rc RideCurve) Compacted() Compact {
	return Compact{File: rc.File, Session: rc.Session, Date: rc.Date, RideStart: rc.RideStart,
		DurationS: rc.DurationsS(), Watts: rc.Watts, OffsetS: rc.OffsetsS}
}

// Expand turns a compact curve back into a ride's curve.
func (k Compact) Expand() (RideCurve, error) {
	ds := Durations(MaxGridS)
	if len(k.Watts) != len(k.DurationS) || len(k.OffsetS) != len(k.DurationS) || len(k.DurationS) > len(ds) ||
		!slices.Equal(k.DurationS, ds[:len(k.DurationS)]) {
		return RideCurve{}, fmt.Errorf("%s: the curve's columns do not follow the shared grid of durations", k.File)
	}
	return RideCurve{Source: &Source{File: k.File, Date: k.Date, Session: k.Session, RideStart: k.RideStart},
		Watts: k.Watts, OffsetsS: k.OffsetS}, nil
}
