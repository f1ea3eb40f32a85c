package powerduration

import (
	"fmt"
	"math"
	"path/filepath"
	"strings"

	"github.com/sustain-cycling/sustain/ingest"
)

// Two rides are one when they start within SameStartS of each other, their
// lengths differ by at most SameLengthShare, and their best powers at
// sameDurations agree within SamePowerShare (the tool's rule: two
// recordings of one ride by different devices or services differ by
// resampling, never by a whole effort).
const (
	SameStartS      = 60
	SameLengthShare = 0.03
	SamePowerShare  = 0.02
)

var sameDurations = []int{5, 60, 300, 1200}

// formatRank prefers FIT over TCX over GPX over CSV (the richer, closer to
// the device, the better).
func formatRank(file string) int {
	name := strings.ToLower(strings.TrimSuffix(strings.ToLower(filepath.Base(file)), ".gz"))
	for i, ext := range []string{".fit", ".tcx", ".gpx", ".csv"} {
		if strings.HasSuffix(name, ext) {
			return i
		}
	}
	return 4
}

// Duplicates finds the rides (in the rides' order: by start) that are
// copies of another, and says which copy was kept and why: the one with the
// better power coverage, then the better format, then the first in order.
// drop[i] is true for a ride left out.
func Duplicates(rides []ingest.Ride, curves []RideCurve) (drop []bool, dups []ingest.Duplicate) {
	drop = make([]bool, len(rides))
	for i := range rides {
		if drop[i] {
			continue
		}
		for j := i + 1; j < len(rides) && rides[j].Start.Sub(rides[i].Start).Seconds() <= SameStartS; j++ {
			if drop[j] || !same(&rides[i], &rides[j], curves[i], curves[j]) {
				continue
			}
			keep, lose := i, j
			ci, cj := rides[i].Quality.PowerCoverage, rides[j].Quality.PowerCoverage
			why := ""
			switch {
			case cj > ci+0.005:
				keep, lose, why = j, i, fmt.Sprintf("the kept copy has more power recorded (%.1f %% against %.1f %%)", 100*cj, 100*ci)
			case ci > cj+0.005:
				why = fmt.Sprintf("the kept copy has more power recorded (%.1f %% against %.1f %%)", 100*ci, 100*cj)
			case formatRank(rides[j].File) < formatRank(rides[i].File):
				keep, lose, why = j, i, "the same ride; the kept copy's format is closer to the device"
			case formatRank(rides[i].File) < formatRank(rides[j].File):
				why = "the same ride; the kept copy's format is closer to the device"
			default:
				why = "the same ride (a copy or a link of the same file)"
			}
			drop[lose] = true
			dups = append(dups, ingest.Duplicate{File: rides[lose].File, Session: rides[lose].Session, Kept: rides[keep].File, Why: why})
			if lose == i {
				break
			}
		}
	}
	return drop, dups
}

func same(a, b *ingest.Ride, ca, cb RideCurve) bool {
	if math.Abs(a.Start.Sub(b.Start).Seconds()) > SameStartS {
		return false
	}
	la, lb := float64(a.Seconds()), float64(b.Seconds())
	if math.Abs(la-lb) > SameLengthShare*math.Max(la, lb) {
		return false
	}
	for _, d := range sameDurations {
		pa, ok1 := ca.At(d)
		pb, ok2 := cb.At(d)
		if ok1 != ok2 {
			return false
		}
		if ok1 && math.Abs(pa.Watts-pb.Watts) > SamePowerShare*math.Max(pa.Watts, pb.Watts) {
			return false
		}
	}
	return true
}
