package powerduration

import (
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
)

// bruteForce is the oracle: every window of every duration. A running sum
// finds the candidates; each window within a hair of the best is then
// summed directly, so rounding in the running sum cannot pick the winner.
//
// Power in whole tenths of a watt is summed exactly as whole numbers
// instead, the earliest of equal windows winning.
func bruteForce(power []float64, ds []int) []Best {
	if out, ok := bruteForceTenths(power, ds); ok {
		return out
	}
	var out []Best
	for _, d := range ds {
		run := 0.0
		for _, p := range power[:d] {
			run += p
		}
		sums := []float64{run}
		for s := 1; s+d <= len(power); s++ {
			run += power[s+d-1] - power[s-1]
			sums = append(sums, run)
		}
		top := sums[0]
		for _, v := range sums {
			top = math.Max(top, v)
		}
		best, at := -1.0, 0
		for s, v := range sums {
			if v >= top-1e-6*math.Max(1, top) {
				if m := windowMean(power, s, d); m > best {
					best, at = m, s
				}
			}
		}
		out = append(out, Best{d, best, at})
	}
	return out
}

func bruteForceTenths(power []float64, ds []int) ([]Best, bool) {
	tenths := make([]int64, len(power))
	for i, p := range power {
		if math.Round(p*10) != p*10 {
			return nil, false
		}
		tenths[i] = int64(math.Round(p * 10))
	}
	var out []Best
	for _, d := range ds {
		var run int64
		for _, p := range tenths[:d] {
			run += p
		}
		best, at := run, 0
		for s := 1; s+d <= len(tenths); s++ {
			run += tenths[s+d-1] - tenths[s-1]
			if run > best {
				best, at = run, s
			}
		}
		out = append(out, Best{d, float64(best) / float64(10*d), at})
	}
	return out, true
}

func windowMean(power []float64, start, d int) float64 {
	sum := 0.0
	for _, p := range power[start : start+d] {
		sum += p
	}
	return sum / float64(d)
}

func checkAgainstOracle(t *testing.T, name string, power []float64) {
	t.Helper()
	ds := Durations(len(power))
	got := MeanMax(power, ds)
	want := bruteForce(power, ds)
	_, exact := bruteForceTenths(power, ds[:0])
	if len(got) != len(want) {
		t.Fatalf("%s: %d points, want %d", name, len(got), len(want))
	}
	for i := range want {
		g, w := got[i], want[i]
		if g.DurationS != w.DurationS || math.Abs(g.Watts-w.Watts) > 1e-9 || (exact && g.OffsetS != w.OffsetS) {
			t.Fatalf("%s: %d s: %.12f W at %d, brute force %.12f W at %d", name, w.DurationS, g.Watts, g.OffsetS, w.Watts, w.OffsetS)
		}
		// provenance: the reported window really has that mean
		if m := windowMean(power, g.OffsetS, g.DurationS); math.Abs(m-g.Watts) > 1e-9 {
			t.Fatalf("%s: %d s at offset %d has mean %.12f, reported %.12f", name, g.DurationS, g.OffsetS, m, g.Watts)
		}
	}
}

func TestMeanMaxMatchesBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	random := func(n int, f func(i int) float64) []float64 {
		p := make([]float64, n)
		for i := range p {
			p[i] = f(i)
		}
		return p
	}
	cases := map[string][]float64{
		"length 1":      {250},
		"all zero":      make([]float64, 500),
		"constant":      random(1500, func(int) float64 { return 200 }),
		"trainer steps": random(4000, func(i int) float64 { return float64(150 + 25*(i/300)) }),
		"noise":         random(3000, func(int) float64 { return math.Max(0, 220+rng.NormFloat64()*60) }),
		"gaps":          random(3700, func(i int) float64 { return float64((i/200)%2) * (180 + rng.Float64()*200) }),
		"sprint and fractional": random(2500, func(i int) float64 {
			if i > 1200 && i < 1215 {
				return 1100.25
			}
			return 100 + rng.Float64()*150
		}),
		"decreasing": random(1000, func(i int) float64 { return float64(1000 - i) }),
	}
	for name, p := range cases {
		checkAgainstOracle(t, name, p)
	}
	for k := range 20 {
		n := 1 + rng.IntN(900)
		checkAgainstOracle(t, "random", random(n, func(int) float64 { return float64(rng.IntN(600)) }))
		_ = k
	}
}

// Every ride shape of the benchmarks, past an hour (so the long grid
// too), in whole watts, tenths, and values off the tenths (summed in
// floating point), against the oracle; and durations out of order.
func TestMeanMaxShapesMatchBruteForce(t *testing.T) {
	for _, shape := range rideShapes {
		p := shape.power()[:4100]
		checkAgainstOracle(t, shape.name, p)
		// and with the block scans in Go where the machine has the
		// assembly kernels (windows.go)
		if haveAVX2 {
			haveAVX2 = false
			checkAgainstOracle(t, shape.name+" scanned in Go", p)
			haveAVX2 = true
		}
		if shape.name != "field2h" && shape.name != "trainer24h" {
			continue // the float oracle sums near-ties one by one: slow on steady shapes
		}
		off := slices.Clone(p)
		for i := range off {
			off[i] += 0.013 * float64(i%7)
		}
		checkAgainstOracle(t, shape.name+" off the tenths", off)
	}
	p := rideShapes[0].power()[:900]
	want := MeanMax(p, []int{5, 60, 300})
	got := MeanMax(p, []int{300, 5, 900, 60})
	if len(got) != 4 || got[0] != want[2] || got[1] != want[0] || got[3] != want[1] {
		t.Errorf("durations out of order: %+v, want %+v in their order", got, want)
	}
}

// Tiny curves worked by hand.
func TestMeanMaxByHand(t *testing.T) {
	// power 100, 300, 200, 0, 400
	// 1 s: 400 at 4; 2 s: (300+200)/2 = 250 at 1; 3 s: (100+300+200)/3 = 200 at 0
	// 4 s: (300+200+0+400)/4 = 225 at 1; 5 s: 1000/5 = 200 at 0
	got := MeanMax([]float64{100, 300, 200, 0, 400}, []int{1, 2, 3, 4, 5})
	want := []Best{{1, 400, 4}, {2, 250, 1}, {3, 200, 0}, {4, 225, 1}, {5, 200, 0}}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("got %+v, want %+v", got[i], want[i])
		}
	}
}

func TestDurationsGrid(t *testing.T) {
	ds := Durations(6 * 3600)
	if ds[0] != 1 || ds[3599] != 3600 {
		t.Fatalf("first hour not every second")
	}
	for _, want := range []int{5400, 7200, 10800, 14400, 18000, 21600} {
		found := false
		for _, d := range ds {
			found = found || d == want
		}
		if !found {
			t.Errorf("grid lacks %d s", want)
		}
	}
	if ds[len(ds)-1] != 21600 {
		t.Errorf("grid ends at %d", ds[len(ds)-1])
	}
	for i := 1; i < len(ds); i++ {
		if ds[i] <= ds[i-1] {
			t.Fatalf("grid not ascending at %d", i)
		}
	}
	if got := Durations(90); len(got) != 90 {
		t.Errorf("90-s ride: %d durations", len(got))
	}
}

// Real device files from the FIT module's testdata, against the oracle.
func TestDeviceFilesAgainstOracle(t *testing.T) {
	out, err := exec.Command("go", "list", "-m", "-f", "{{.Dir}}", "github.com/tormoder/fit").Output()
	if err != nil {
		t.Skip("FIT module not found")
	}
	dir := filepath.Join(strings.TrimSpace(string(out)), "testdata")
	for _, name := range []string{"dcrainmaker/Edge810-Vector-2013-08-16-15-35-10.fit", "misc/0134902991.fit", "python-fitparse/sample-activity-indoor-trainer.fit"} {
		rides, err := ingest.ReadFile(filepath.Join(dir, name), ingest.Options{})
		if err != nil {
			t.Fatal(err)
		}
		r := rides[0]
		checkAgainstOracle(t, name, r.PowerW)
		c := OfRide(&r)
		p, _ := c.At(60)
		if p.File != r.File || p.Date != r.Date() || p.DurationS != 60 {
			t.Errorf("%s: provenance %+v", name, p)
		}
	}
}

func point(d int, w float64, file string, day int) Point {
	start := time.Date(2026, 1, day, 9, 0, 0, 0, time.UTC)
	return Point{DurationS: d, Watts: w, Source: &Source{File: file, Date: start.Format("2006-01-02"), RideStart: start}}
}

func randomCurve(rng *rand.Rand, file string) Curve {
	var c Curve
	day := 1 + rng.IntN(28)
	n := 1 + rng.IntN(30)
	for d := 1; d <= n; d++ {
		c.Points = append(c.Points, point(d, float64(rng.IntN(5)*50), file, day))
	}
	return c
}

func equalCurves(a, b Curve) bool {
	if len(a.Points) != len(b.Points) {
		return false
	}
	for i := range a.Points {
		p, q := a.Points[i], b.Points[i]
		if p.DurationS != q.DurationS || p.Watts != q.Watts || p.OffsetS != q.OffsetS || *p.Source != *q.Source {
			return false
		}
	}
	return true
}

// Merge is a pointwise maximum: commutative, associative, idempotent.
func TestMergeLaws(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 4))
	for range 500 {
		a, b, c := randomCurve(rng, "a.fit"), randomCurve(rng, "b.fit"), randomCurve(rng, "c.fit")
		if !equalCurves(Merge(a, b), Merge(b, a)) {
			t.Fatal("merge is not commutative")
		}
		if !equalCurves(Merge(Merge(a, b), c), Merge(a, Merge(b, c))) {
			t.Fatal("merge is not associative")
		}
		if !equalCurves(Merge(a, a), Merge(a, Curve{})) {
			t.Fatal("merge is not idempotent")
		}
		m := Merge(a, b)
		for _, p := range m.Points {
			pa, okA := a.At(p.DurationS)
			pb, okB := b.At(p.DurationS)
			if (okA && pa.Watts > p.Watts) || (okB && pb.Watts > p.Watts) {
				t.Fatal("merged point is below a source")
			}
			if !(okA && pa == p) && !(okB && pb == p) {
				t.Fatal("merged point has no source")
			}
		}
	}
}

func TestWindows(t *testing.T) {
	mk := func(day int) RideCurve {
		start := time.Date(2026, 3, day, 10, 0, 0, 0, time.UTC)
		src := &Source{File: "x", Date: start.Format("2006-01-02"), RideStart: start}
		return NewRideCurve(src, []float64{float64(day)}, []int32{0})
	}
	curves := []RideCurve{mk(1), mk(10), mk(20), mk(31)}
	if got := Newest(curves); got != "2026-03-31" {
		t.Fatalf("newest %s", got)
	}
	w := LastDays("2026-03-31", 12) // 2026-03-20 … 2026-03-31
	if w.From != "2026-03-20" {
		t.Errorf("from %s", w.From)
	}
	if got := InWindow(curves, w); len(got) != 2 {
		t.Errorf("%d curves in %v", len(got), w)
	}
	if got := InWindow(curves, Window{From: "2026-03-10", To: "2026-03-10"}); len(got) != 1 {
		t.Errorf("one-day window: %d", len(got))
	}
	for in, want := range map[string]int{"90d": 90, "6w": 42, "42": 42} {
		if got, err := ParseDays(in); err != nil || got != want {
			t.Errorf("ParseDays(%q) = %d, %v", in, got, err)
		}
	}
	for _, bad := range []string{"", "0d", "-3d", "x", "3.5d"} {
		if _, err := ParseDays(bad); err == nil {
			t.Errorf("ParseDays(%q) accepted", bad)
		}
	}
}

// BestOf over rides' curves is the fold of Merge over their spelled-out
// curves, and the compact JSON line round-trips.
func TestBestOfIsMergeFold(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	var rcs []RideCurve
	var fold Curve
	for k := range 6 {
		n := 100 + rng.IntN(4000)
		if k%2 == 1 {
			n += 5000 // past an hour: the long grid too
		}
		p := make([]float64, n)
		for i := range p {
			p[i] = float64(rng.IntN(400))
			if k == 2 {
				p[i] += 0.037 // not whole tenths: a curve kept as watts among curves kept as sums
			}
		}
		r := ingest.Ride{File: "r" + string(rune('a'+k)) + ".fit", Start: time.Date(2026, 4, 1+k, 8, 0, 0, 0, time.UTC), PowerW: p}
		rc := OfRide(&r)
		back, err := rc.Compacted().Expand()
		if err != nil || !equalCurves(back.Curve(), rc.Curve()) {
			t.Fatalf("compact round trip: %v", err)
		}
		rcs = append(rcs, rc)
		fold = Merge(fold, rc.Curve())
	}
	// equal watts from other rides: ties settled as Merge settles them
	for k, day := range []int{1, 9} {
		tie := rcs[k]
		start := time.Date(2026, 4, day, 7, 0, 0, 0, time.UTC)
		tie.Source = &Source{File: "tie" + string(rune('a'+k)) + ".fit", Date: start.Format("2006-01-02"), RideStart: start}
		rcs = append(rcs, tie)
		fold = Merge(fold, tie.Curve())
	}
	if !equalCurves(BestOf(rcs), fold) {
		t.Error("BestOf differs from folding Merge")
	}
}

func TestConsecutiveWindows(t *testing.T) {
	mk := func(date string) RideCurve { return RideCurve{Source: &Source{Date: date}} }
	ws := Consecutive([]RideCurve{mk("2026-03-02"), mk("2026-04-20"), mk("2026-03-30")}, 28)
	want := []Window{{"2026-02-24", "2026-03-23"}, {"2026-03-24", "2026-04-20"}}
	if len(ws) != len(want) || ws[0] != want[0] || ws[1] != want[1] {
		t.Errorf("windows %v, want %v", ws, want)
	}
	if ws := Consecutive(nil, 28); len(ws) != 0 {
		t.Errorf("no rides: %v", ws)
	}
}

// The curve avoiding spans equals a scan of every window that shares no
// second with them; a duration longer than every clean stretch has 0 W.
// Bridged spans are a straight line between their neighbours, and the
// ride's power is left as it was.
func TestOfRideAvoidingMatchesScan(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 7))
	for trial := range 20 {
		n := 50 + rng.IntN(400)
		power := make([]float64, n)
		for i := range power {
			power[i] = math.Round(300 * rng.Float64())
		}
		var spans []ingest.Span
		for at := rng.IntN(60); at < n; at += 20 + rng.IntN(120) {
			s := ingest.Span{StartS: at, Seconds: 1 + rng.IntN(15)}
			spans = append(spans, s)
			at = s.End()
		}
		r := ingest.Ride{File: "x.fit", PowerW: power}
		bridge := []ingest.Span{{StartS: n / 2, Seconds: 3}}
		orig := slices.Clone(power)
		rc := OfRideAvoiding(&r, power, spans, bridge)
		if !slices.Equal(power, orig) {
			t.Fatal("the ride's power was changed")
		}
		power = slices.Clone(power)
		a, b := power[n/2-1], power[n/2+3]
		for k := range 3 {
			power[n/2+k] = math.Round((a+(b-a)*float64(k+1)/4)*10) / 10
		}
		for i, d := range rc.DurationsS() {
			best, at := 0.0, 0
			for s := 0; s+d <= n; s++ {
				clean := true
				for _, sp := range spans {
					clean = clean && !sp.Overlaps(s, d)
				}
				if m := windowMean(power, s, d); clean && m > best+1e-9 {
					best, at = m, s
				}
			}
			if math.Abs(rc.WattsAt(i)-best) > 1e-9 || (best > 0 && rc.OffsetAt(i) != at) {
				t.Fatalf("trial %d, %d s: %.6f W at %d, scan %.6f W at %d (spans %v)", trial, d, rc.WattsAt(i), rc.OffsetAt(i), best, at, spans)
			}
		}
	}
}

// Scan gives the rides and curves that reading and curving each ride
// gives, with every ride's power let go and read again from its file on
// demand.
func TestScanLetsPowerGo(t *testing.T) {
	dir := t.TempDir()
	for k := range 3 {
		p := fieldPower(1)
		var b strings.Builder
		b.WriteString("time,power\n")
		start := time.Date(2026, 3, 1+k, 8, 0, 0, 0, time.UTC)
		for i, w := range p {
			fmt.Fprintf(&b, "%s,%.1f\n", start.Add(time.Duration(i)*time.Second).Format(time.RFC3339), w)
		}
		if err := os.WriteFile(filepath.Join(dir, fmt.Sprintf("ride%d.csv", k)), []byte(b.String()), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	plain := ingest.Scan([]string{dir}, ingest.Options{})
	res, curves := Scan([]string{dir}, ingest.Options{})
	if len(res.Rides) != 3 || len(plain.Rides) != 3 {
		t.Fatalf("%d rides, want 3", len(res.Rides))
	}
	for i := range res.Rides {
		r := &res.Rides[i]
		if r.PowerW != nil {
			t.Errorf("%s: power kept in memory", r.File)
		}
		want := OfRide(&plain.Rides[i])
		if !equalCurves(curves[i].Curve(), want.Curve()) {
			t.Errorf("%s: curve differs from the ride's own", r.File)
		}
		p, err := r.Power()
		if err != nil || !slices.Equal(p, plain.Rides[i].PowerW) {
			t.Errorf("%s: power read again: %v", r.File, err)
		}
	}
}

// A curve's columns are its own: the working memory reused by the next
// ride's curve (scratch.go) never shows through, for offsets kept in two
// bytes or, past 65,535 s, in four.
func TestCurvesOwnTheirColumns(t *testing.T) {
	// 18.5 h easy, then the 2-h field ride: its best windows start past
	// 65,535 s
	long := append(series(66600, func(int) float64 { return 90 }), rideShapes[0].power()...)
	for _, p := range [][]float64{rideShapes[0].power(), long} {
		rc := rideCurve(&Source{File: "a.fit"}, p)
		want := MeanMax(p, rc.DurationsS())
		rideCurve(&Source{File: "b.fit"}, series(len(p), func(i int) float64 { return float64(400 - i%300) }))
		for i, w := range want {
			if rc.WattsAt(i) != w.Watts || rc.OffsetAt(i) != w.OffsetS {
				t.Fatalf("%d s ride, %d s: %.1f W at %d after another curve, want %.1f W at %d",
					len(p), w.DurationS, rc.WattsAt(i), rc.OffsetAt(i), w.Watts, w.OffsetS)
			}
		}
	}
}
