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
func OfRide(r *ingest.Ride) RideCurve { return rideCurve(SourceOf(r), r.PowerW) }

// OfRideAvoiding is the ride's curve over the windows that share no second
// with the spans to avoid, with the recorded values of the spans to bridge
// replaced by a straight line (to 0.1 W) between the seconds on either side (each
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
				power[k] = math.Round((left+(right-left)*f)*10) / 10 // to 0.1 W, as cleaning keeps power
			}
		}
	}
	spans := avoid
	ds := Durations(len(power))
	watts, offsets := make([]float64, len(ds)), make([]int32, len(ds))
	from := 0
	for k := 0; k <= len(spans); k++ {
		to := len(power)
		if k < len(spans) {
			to = max(min(spans[k].StartS, len(power)), from)
		}
		seg := power[from:to]
		for i, b := range MeanMax(seg, ds[:len(Durations(len(seg)))]) {
			if b.Watts > watts[i] {
				watts[i], offsets[i] = b.Watts, int32(from+b.OffsetS)
			}
		}
		if k < len(spans) {
			from = max(from, min(spans[k].End(), len(power)))
		}
	}
	return NewRideCurve(SourceOf(r), watts, offsets)
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
		DurationS: rc.DurationsS(), Watts: rc.Watts(), OffsetS: rc.OffsetsS()}
}

// Expand turns a compact curve back into a ride's curve.
func (k Compact) Expand() (RideCurve, error) {
	ds := Durations(MaxGridS)
	if len(k.Watts) != len(k.DurationS) || len(k.OffsetS) != len(k.DurationS) || len(k.DurationS) > len(ds) ||
		!slices.Equal(k.DurationS, ds[:len(k.DurationS)]) {
		return RideCurve{}, fmt.Errorf("%s: the curve's columns do not follow the shared grid of durations", k.File)
	}
	return NewRideCurve(&Source{File: k.File, Date: k.Date, Session: k.Session, RideStart: k.RideStart}, k.Watts, k.OffsetS), nil
}
