package powerduration

import "time"

// RideCurve is one ride's curve in compact form: the i-th values belong to
// the i-th duration of the shared grid, and every point shares the ride as
// its source. A season of a thousand rides keeps its curves in tens of
// megabytes this way.
type RideCurve struct {
	*Source
	Watts    []float64
	OffsetsS []int32
}

// Len is the number of durations the ride's curve covers.
func (rc RideCurve) Len() int { return len(rc.Watts) }

// DurationsS are the durations of the curve's points (shared: read only).
func (rc RideCurve) DurationsS() []int { return grid[:len(rc.Watts):len(rc.Watts)] }

// Start is the ride's start.
func (rc RideCurve) Start() time.Time { return rc.RideStart }

// point is the i-th point of the curve.
func (rc RideCurve) point(i int) Point {
	return Point{DurationS: grid[i], Watts: rc.Watts[i], Source: rc.Source, OffsetS: int(rc.OffsetsS[i])}
}

// At returns the point for duration d, if the ride was that long.
func (rc RideCurve) At(d int) (Point, bool) {
	i := gridIndex(d)
	if i < 0 || i >= len(rc.Watts) {
		return Point{}, false
	}
	return rc.point(i), true
}

// Curve spells the ride's curve out point by point.
func (rc RideCurve) Curve() Curve {
	c := Curve{File: rc.File, Start: rc.RideStart, Points: make([]Point, len(rc.Watts))}
	for i := range rc.Watts {
		c.Points[i] = rc.point(i)
	}
	return c
}
