package powerduration

import (
	"math"
	"time"
)

// RideCurve is one ride's curve in compact form: the i-th values belong to
// the i-th duration of the shared grid, and every point shares the ride as
// its source.
//
// A curve summed from power in whole tenths of a watt (every cleaned
// ride's) keeps each duration's best sum in tenths of a watt-second, four
// bytes (the watts, sum / (10·d), are exactly what MeanMax reports);
// another keeps watts, eight bytes. Offsets take two bytes in a ride
// shorter than 65,536 s, four in a longer one. So a 2-h ride's curve
// takes about 22 KB, and 5,000 rides' curves about 110 MB.
type RideCurve struct {
	*Source
	sums  []uint32  // best sums, tenths of a watt-second; or nil, and
	watts []float64 // watts
	off16 []uint16  // offsets of the best windows; or nil, and
	off32 []int32
}

// NewRideCurve makes a ride's curve from its columns on the shared grid
// (watts and window offsets, of one length), keeping the watts as whole
// tenths sums where that is exact.
func NewRideCurve(src *Source, watts []float64, offsetsS []int32) RideCurve {
	rc := RideCurve{Source: src, sums: make([]uint32, len(watts))}
	for i, w := range watts {
		s := math.Round(w * 10 * float64(grid[i]))
		if !(s >= 0 && s <= math.MaxUint32) || float64(uint32(s))/(10*float64(grid[i])) != w {
			rc.sums, rc.watts = nil, watts
			break
		}
		rc.sums[i] = uint32(s)
	}
	return rc.withOffsets(offsetsS, nil)
}

// RideCurveOfSums makes a ride's curve from each duration's best sum in
// tenths of a watt-second and the offsets of the best windows (in off16
// when every offset fits two bytes, else in off32). The slices are kept.
func RideCurveOfSums(src *Source, sums []uint32, off16 []uint16, off32 []int32) RideCurve {
	return RideCurve{Source: src, sums: sums, off16: off16, off32: off32}
}

// withOffsets keeps the offsets in two bytes each where they fit (into
// buf16 when it is long enough, else a new slice).
func (rc RideCurve) withOffsets(offsetsS []int32, buf16 []uint16) RideCurve {
	for _, o := range offsetsS {
		if o < 0 || o > math.MaxUint16 {
			rc.off32 = offsetsS
			return rc
		}
	}
	if len(buf16) < len(offsetsS) {
		buf16 = make([]uint16, len(offsetsS))
	}
	rc.off16 = buf16[:len(offsetsS):len(offsetsS)]
	for i, o := range offsetsS {
		rc.off16[i] = uint16(o)
	}
	return rc
}

// Len is the number of durations the ride's curve covers.
func (rc RideCurve) Len() int { return max(len(rc.sums), len(rc.watts)) }

// WattsAt is the best mean power of the i-th duration of the grid.
func (rc RideCurve) WattsAt(i int) float64 {
	if rc.sums != nil {
		return float64(rc.sums[i]) / (10 * float64(grid[i]))
	}
	return rc.watts[i]
}

// OffsetAt is the start, in the ride, of the i-th duration's best window.
func (rc RideCurve) OffsetAt(i int) int {
	if rc.off16 != nil {
		return int(rc.off16[i])
	}
	return int(rc.off32[i])
}

// TenthsSums are the curve's best sums in tenths of a watt-second, when it
// keeps them (nil otherwise): read only.
func (rc RideCurve) TenthsSums() []uint32 { return rc.sums }

// Watts are the curve's watts, one a duration (a new slice).
func (rc RideCurve) Watts() []float64 {
	out := make([]float64, rc.Len())
	for i := range out {
		out[i] = rc.WattsAt(i)
	}
	return out
}

// OffsetsS are the offsets of the curve's best windows (a new slice).
func (rc RideCurve) OffsetsS() []int32 {
	out := make([]int32, rc.Len())
	for i := range out {
		out[i] = int32(rc.OffsetAt(i))
	}
	return out
}

// DurationsS are the durations of the curve's points (shared: read only).
func (rc RideCurve) DurationsS() []int { n := rc.Len(); return grid[:n:n] }

// Start is the ride's start.
func (rc RideCurve) Start() time.Time { return rc.RideStart }

// point is the i-th point of the curve.
func (rc RideCurve) point(i int) Point {
	return Point{DurationS: grid[i], Watts: rc.WattsAt(i), Source: rc.Source, OffsetS: rc.OffsetAt(i)}
}

// At returns the point for duration d, if the ride was that long.
func (rc RideCurve) At(d int) (Point, bool) {
	i := gridIndex(d)
	if i < 0 || i >= rc.Len() {
		return Point{}, false
	}
	return rc.point(i), true
}

// Curve spells the ride's curve out point by point.
func (rc RideCurve) Curve() Curve {
	c := Curve{File: rc.File, Start: rc.RideStart, Points: make([]Point, rc.Len())}
	for i := range c.Points {
		c.Points[i] = rc.point(i)
	}
	return c
}
