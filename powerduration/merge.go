package powerduration

import (
	"fmt"
	"strings"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
)

// better reports whether p beats q for the same duration: higher watts; on
// a tie the earlier ride, then the smaller file name, session and offset.
// It is a strict total order on points, so Merge is commutative and
// associative.
func better(p, q Point) bool {
	if p.Watts != q.Watts {
		return p.Watts > q.Watts
	}
	if !p.RideStart.Equal(q.RideStart) {
		return p.RideStart.Before(q.RideStart)
	}
	if p.File != q.File {
		return p.File < q.File
	}
	if p.Session != q.Session {
		return p.Session < q.Session
	}
	return p.OffsetS < q.OffsetS
}

// Merge returns the pointwise best of two curves, each point keeping its
// source. The result is a merged curve (no File or Start).
func Merge(a, b Curve) Curve {
	out := Curve{Points: make([]Point, 0, max(len(a.Points), len(b.Points)))}
	i, j := 0, 0
	for i < len(a.Points) || j < len(b.Points) {
		switch {
		case j == len(b.Points) || (i < len(a.Points) && a.Points[i].DurationS < b.Points[j].DurationS):
			out.Points = append(out.Points, a.Points[i])
			i++
		case i == len(a.Points) || b.Points[j].DurationS < a.Points[i].DurationS:
			out.Points = append(out.Points, b.Points[j])
			j++
		default:
			p := a.Points[i]
			if better(b.Points[j], p) {
				p = b.Points[j]
			}
			out.Points = append(out.Points, p)
			i++
			j++
		}
	}
	return out
}

// BestOf is the pointwise best of the rides' curves: the same as merging
// their Curves one by one, in one pass. It goes ride by ride comparing
// watts alone (whole tenths sums, where curves keep them: the same
// comparison at one duration), and spells out only the winning points; a
// tie in watts is settled as Merge settles it.
func BestOf(curves []RideCurve) Curve {
	n := 0
	for _, rc := range curves {
		n = max(n, rc.Len())
	}
	winner := make([]int32, n) // the curve holding each duration's best
	for i := range winner {
		winner[i] = -1
	}
	tie := func(c, i int) bool { return better(curves[c].point(i), curves[winner[i]].point(i)) }
	// curves kept as sums first, compared as whole numbers
	best := make([]uint32, n)
	for c, rc := range curves {
		for i, s := range rc.sums {
			switch {
			case s > best[i] || winner[i] < 0:
				best[i], winner[i] = s, int32(c)
			case s == best[i] && tie(c, i):
				winner[i] = int32(c)
			}
		}
	}
	// then curves kept as watts, against the best so far
	for c, rc := range curves {
		for i, w := range rc.watts {
			if winner[i] < 0 {
				winner[i] = int32(c)
				continue
			}
			switch b := curves[winner[i]].WattsAt(i); {
			case w > b:
				winner[i] = int32(c)
			case w == b && tie(c, i):
				winner[i] = int32(c)
			}
		}
	}
	out := Curve{Points: make([]Point, n)}
	for i, c := range winner {
		out.Points[i] = curves[c].point(i)
	}
	return out
}

// Window is a range of ride dates, both ends included, as YYYY-MM-DD.
// An empty end is open.
type Window struct {
	From string `json:"from"`
	To   string `json:"to"`
}

// Contains reports whether a ride date (YYYY-MM-DD) lies in the window.
func (w Window) Contains(date string) bool {
	return (w.From == "" || date >= w.From) && (w.To == "" || date <= w.To)
}

// ParseDate checks a YYYY-MM-DD date.
func ParseDate(s string) (time.Time, error) {
	t, err := time.Parse("2006-01-02", s)
	if err != nil {
		return t, fmt.Errorf("date %q is not YYYY-MM-DD", s)
	}
	return t, nil
}

// ParseDays reads a span such as "90d", "6w" or "42" (days).
func ParseDays(s string) (int, error) {
	s = strings.TrimSpace(strings.ToLower(s))
	mult := 1
	switch {
	case strings.HasSuffix(s, "d"):
		s = strings.TrimSuffix(s, "d")
	case strings.HasSuffix(s, "w"):
		s, mult = strings.TrimSuffix(s, "w"), 7
	}
	var n int
	if _, err := fmt.Sscanf(s, "%d", &n); err != nil || n <= 0 || fmt.Sprint(n) != s {
		return 0, fmt.Errorf("span %q is not a number of days (90d) or weeks (6w)", s)
	}
	return n * mult, nil
}

// LastDays is the window of the given number of days ending on date end
// (YYYY-MM-DD), end included.
func LastDays(end string, days int) Window {
	t, err := ParseDate(end)
	if err != nil {
		return Window{To: end}
	}
	return Window{From: t.AddDate(0, 0, -(days - 1)).Format("2006-01-02"), To: end}
}

// Consecutive are windows of the given number of days that do not overlap,
// the last ending at the newest ride, back to the first ride, oldest first.
func Consecutive(curves []RideCurve, days int) []Window {
	first, newest := "", Newest(curves)
	for _, c := range curves {
		if first == "" || c.Date < first {
			first = c.Date
		}
	}
	var ws []Window
	for end := newest; end != "" && end >= first; {
		w := LastDays(end, days)
		ws = append([]Window{w}, ws...)
		t, err := ParseDate(w.From)
		if err != nil {
			break
		}
		end = t.AddDate(0, 0, -1).Format("2006-01-02")
	}
	return ws
}

// InWindow keeps the curves of rides whose date lies in w.
func InWindow(curves []RideCurve, w Window) []RideCurve {
	var out []RideCurve
	for _, c := range curves {
		if w.Contains(c.Date) {
			out = append(out, c)
		}
	}
	return out
}

// Newest returns the date of the latest ride among the curves, or "".
func Newest(curves []RideCurve) string {
	newest := ""
	for _, c := range curves {
		if c.Date > newest {
			newest = c.Date
		}
	}
	return newest
}

// At returns the point for the window of d seconds starting at offset
// start of the ride: its mean power, with provenance.
func At(r *ingest.Ride, start, d int) (Point, error) {
	power, err := r.Power()
	if err != nil {
		return Point{}, err
	}
	if d <= 0 || start < 0 || start+d > len(power) {
		return Point{}, fmt.Errorf("%s: a %d-s window from %d s does not fit in the ride's %d s", r.File, d, start, len(power))
	}
	sum := 0.0
	for _, p := range power[start : start+d] {
		sum += p
	}
	return Point{DurationS: d, Watts: sum / float64(d), Source: SourceOf(r), OffsetS: start}, nil
}
