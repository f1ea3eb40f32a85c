package estimate

import (
	"fmt"
	"math"
	"slices"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/powerduration"
)

// Effort status: how a point of the best-of curve was judged.
const (
	EffortUsed   = "used"   // a maximal effort of its own
	EffortNested = "nested" // part of a longer effort in the same ride: says little about its own duration
	EffortPadded = "padded" // a shorter effort plus easier riding around it: not maximal for its duration
	// EffortUnconfirmed: a best longer than the 2-parameter band whose
	// power is not consistent with the CP of the band's efforts (or there
	// is no such CP): an endurance ride's best hour, not a maximal hour.
	EffortUnconfirmed = "unconfirmed"
)

// LongShare is the least power, as a share of the CP fitted to the 2–20 min
// efforts, that a longer best must reach to count as maximal: 95 % of CP up
// to 30 min, then 10 % less per doubling of duration (the tool's rule: the
// omni-domain model's long-duration decline, A of 15–35 W per unit of
// ln(t/1800), is 3–8 % of CP per doubling, so a maximal effort passes even
// a few per cent short of the athlete's best, and endurance riding at
// 55–80 % of CP mostly does not).
func LongShare(t float64) float64 {
	if t <= 1800 {
		return 0.95
	}
	return 0.95 - 0.10*math.Log2(t/1800)
}

// A long maximal effort is ridden evenly and stands out from its ride
// (the tool's rules, common practice of pacing a time trial): each half
// of it holds at least evenShare of its mean power, and, where the ride
// has standOutMinS or more outside it, its power is at least standOut
// times the rest's. A window that is half a time trial and half the ride
// home, or an endurance ride's steady hours, is neither.
const (
	evenShare    = 0.9
	standOut     = 1.15
	standOutMinS = 600
)

// confirmLong marks as unconfirmed the used efforts longer than maxS that
// fall short of LongShare of cp (cp 0: no CP to judge them by), or that
// are not ridden evenly or do not stand out from their ride (see
// evenShare; rides gives each effort's ride, when known); then it numbers
// the distinct efforts again (an unconfirmed hour no longer joins the
// efforts inside it into one).
func confirmLong(es []Effort, maxS int, cp float64, rides map[rideKey]*ingest.Ride) {
	for i := range es {
		e := &es[i]
		if e.Status != EffortUsed || e.DurationS <= maxS {
			continue
		}
		if cp <= 0 || e.Watts < LongShare(float64(e.DurationS))*cp || !paced(e.Point, rides[keyOfPoint(e.Point)]) {
			e.Status = EffortUnconfirmed
			e.Group = 0
		}
	}
	groupEfforts(es)
}

// paced reports whether window e of ride r is ridden evenly and stands out
// from the rest of the ride (true when the ride's power is not at hand).
func paced(e powerduration.Point, r *ingest.Ride) bool {
	if r == nil {
		return true
	}
	p, err := r.Power()
	if err != nil || e.OffsetS+e.DurationS > len(p) {
		return true
	}
	mean := func(a, b int) float64 {
		s := 0.0
		for _, w := range p[a:b] {
			s += w
		}
		return s / float64(b-a)
	}
	a, b := e.OffsetS, e.OffsetS+e.DurationS
	mid := (a + b) / 2
	if mean(a, mid) < evenShare*e.Watts || mean(mid, b) < evenShare*e.Watts {
		return false
	}
	if rest := len(p) - e.DurationS; rest >= standOutMinS {
		restW := (mean(0, len(p))*float64(len(p)) - e.Watts*float64(e.DurationS)) / float64(rest)
		return e.Watts >= standOut*restW
	}
	return true
}

// candidateDurations are the durations at which efforts are looked for.
var candidateDurations = []int{5, 10, 15, 20, 30, 45, 60, 90, 120, 150, 180, 240, 300, 360, 420, 480, 600, 720,
	900, 1200, 1500, 1800, 2400, 3600, 5400, 7200}

// Effort is a point of the best-of curve considered as a maximal effort.
type Effort struct {
	powerduration.Point
	Status string `json:"status"`
	// FlaggedS counts the seconds of the effort's window that cleaning had to
	// fill, zero or strip of a spike, or that were stuck.
	FlaggedS int `json:"flagged_s"`
	// Group numbers the distinct efforts: used efforts whose windows overlap
	// in the same ride share a group.
	Group int `json:"group"`
	// InsideS, for a nested effort, is the duration of the longest effort
	// of its ride that it is part of.
	InsideS int `json:"inside_s,omitempty"`
}

// rideKey identifies a ride for provenance look-ups.
type rideKey struct {
	file    string
	session int
}

func keyOfPoint(p powerduration.Point) rideKey { return rideKey{p.File, p.Session} }

// When a longer window contains a shorter one, the rest of the longer
// window has mean power P_rest (common practice: recovery and endurance
// riding are far below a maximal effort):
//   - P_rest ≥ nestedShare × the shorter window's power: the shorter best is
//     a piece of one sustained effort (nested);
//   - P_rest < paddedShare × the longer window's power: the longer best is
//     the shorter effort padded with easier riding (padded). A long steady
//     effort with a sprint inside it is neither: its rest is ridden at its
//     own mean power.
const (
	nestedShare = 0.8
	paddedShare = 0.8
)

// SelectEfforts takes the curve's points at the candidate durations within
// [minS, maxS] and judges each against the other windows of its own ride:
//   - nested: the ride's best window of a longer candidate duration contains
//     it and the rest of that window is ridden nearly as hard;
//   - padded: it contains the ride's best window of a shorter candidate
//     duration and the rest of it is ridden far below its own mean;
//   - used: neither, a maximal effort of its own.
//
// rides and own (either may be nil) give each ride's quality report and
// its own curve; without its own curve a point is judged against the
// other points of c from the same ride.
func SelectEfforts(c powerduration.Curve, minS, maxS int, rides map[rideKey]*ingest.Ride, own map[rideKey]powerduration.RideCurve) []Effort {
	var es []Effort
	for _, d := range candidateDurations {
		if d < minS || d > maxS {
			continue
		}
		p, ok := c.At(d)
		if !ok || p.Watts <= 0 {
			continue
		}
		e := Effort{Point: p, Status: EffortUsed}
		if r := rides[keyOfPoint(p)]; r != nil {
			e.FlaggedS = r.Quality.FlaggedSeconds(p.OffsetS, p.DurationS)
		}
		es = append(es, e)
	}
	for i := range es {
		e := es[i].Point
		var rc pointsAt = c
		if r, ok := own[keyOfPoint(e)]; ok {
			rc = r
		}
		if padded(rc, e) {
			es[i].Status = EffortPadded
			continue
		}
		// nested in a longer effort of the ride (never in a padded window)
		for _, d := range candidateDurations {
			q, ok := rc.At(d)
			if !ok || d <= e.DurationS || !q.Same(e) {
				continue
			}
			if contains(q, e) && restPower(q, e) >= nestedShare*e.Watts && !padded(rc, q) {
				es[i].Status = EffortNested
				es[i].InsideS = d
			}
		}
	}
	groupEfforts(es)
	return es
}

// pointsAt is a curve: a ride's own, or a best-of.
type pointsAt interface {
	At(int) (powerduration.Point, bool)
}

// padded reports whether window e of a ride holds a shorter best of the
// same ride and is otherwise ridden far below its own mean.
func padded(rc pointsAt, e powerduration.Point) bool {
	for _, d := range candidateDurations {
		if d >= e.DurationS {
			return false
		}
		q, ok := rc.At(d)
		if ok && q.Same(e) && contains(e, q) && restPower(e, q) < paddedShare*e.Watts {
			return true
		}
	}
	return false
}

// contains reports whether window a (same ride) contains window b.
func contains(a, b powerduration.Point) bool {
	return b.OffsetS >= a.OffsetS && b.OffsetS+b.DurationS <= a.OffsetS+a.DurationS
}

// restPower is the mean power of the part of window a outside window b.
func restPower(a, b powerduration.Point) float64 {
	return (a.Watts*float64(a.DurationS) - b.Watts*float64(b.DurationS)) / float64(a.DurationS-b.DurationS)
}

// groupEfforts numbers the distinct efforts among the used ones (1, 2, …).
func groupEfforts(es []Effort) {
	var used []int
	for i := range es {
		if es[i].Status == EffortUsed {
			used = append(used, i)
		}
	}
	// union of overlapping windows in the same ride
	parent := make([]int, len(es))
	for i := range parent {
		parent[i] = i
	}
	var find func(int) int
	find = func(i int) int {
		for parent[i] != i {
			parent[i] = parent[parent[i]]
			i = parent[i]
		}
		return i
	}
	for x, i := range used {
		for _, j := range used[x+1:] {
			a, b := es[i], es[j]
			if keyOfPoint(a.Point) == keyOfPoint(b.Point) &&
				a.OffsetS < b.OffsetS+b.DurationS && b.OffsetS < a.OffsetS+a.DurationS {
				parent[find(i)] = find(j)
			}
		}
	}
	ids := map[int]int{}
	for _, i := range used {
		r := find(i)
		if ids[r] == 0 {
			ids[r] = len(ids) + 1
		}
		es[i].Group = ids[r]
	}
}

// used returns the used efforts with durations in [minS, maxS].
func used(es []Effort, minS, maxS int) []Effort {
	var out []Effort
	for _, e := range es {
		if e.Status == EffortUsed && e.DurationS >= minS && e.DurationS <= maxS {
			out = append(out, e)
		}
	}
	return out
}

// distinct counts the distinct efforts (groups) among es.
func distinct(es []Effort) int {
	var gs []int
	for _, e := range es {
		if e.Status == EffortUsed && !slices.Contains(gs, e.Group) {
			gs = append(gs, e.Group)
		}
	}
	return len(gs)
}

// band writes a duration range as a rider says it: "3–5 min".
func band(lo, hi int) string {
	if lo%60 == 0 && hi%60 == 0 {
		return fmt.Sprintf("%d–%d min", lo/60, hi/60)
	}
	return fmt.Sprintf("%s to %s", minutes(lo), minutes(hi))
}

func minutes(s int) string {
	if s < 60 {
		return fmt.Sprintf("%d s", s)
	}
	if s%60 == 0 {
		return fmt.Sprintf("%d min", s/60)
	}
	return fmt.Sprintf("%.1f min", float64(s)/60)
}
