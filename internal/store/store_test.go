package store

import (
	"database/sql"
	"errors"
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/internal/synth"
	"github.com/sustain-cycling/sustain/powerduration"
)

func season(t *testing.T, weeks int) string {
	t.Helper()
	dir := t.TempDir()
	a := synth.Athlete{CPW: 270, WPrimeJ: 20000, PmaxW: 1000}
	files := synth.Season("r", time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC), weeks, func(int) synth.Athlete { return a }, 5)
	if err := synth.WriteSeason(dir, files); err != nil {
		t.Fatal(err)
	}
	os.WriteFile(filepath.Join(dir, "r", "broken.fit"), []byte("not a ride"), 0o644)
	return filepath.Join(dir, "r")
}

func openTemp(t *testing.T) *Store {
	t.Helper()
	s, err := Open(filepath.Join(t.TempDir(), "sub", "rides.db"))
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { s.Close() })
	return s
}

// A warm re-scan decodes nothing and returns exactly what decoding gave.
func TestWarmScanEqualsDecoding(t *testing.T) {
	dir := season(t, 3)
	s := openTemp(t)
	opts := ingest.Options{}
	cold, coldCurves, st, err := s.Scan([]string{dir}, opts)
	if err != nil {
		t.Fatal(err)
	}
	if st.Decoded != st.Files || st.Cached != 0 {
		t.Fatalf("cold scan %+v", st)
	}
	warm, warmCurves, st, err := s.Scan([]string{dir}, opts)
	if err != nil {
		t.Fatal(err)
	}
	if st.Decoded != 0 || st.Cached != st.Files {
		t.Fatalf("warm scan %+v", st)
	}
	plain := ingest.Scan([]string{dir}, opts)
	for name, res := range map[string]ingest.Result{"cold": cold, "warm": warm} {
		if len(res.Rides) != len(plain.Rides) || !reflect.DeepEqual(res.Skipped, plain.Skipped) {
			t.Fatalf("%s: %d rides, skipped %v; plain %d, %v", name, len(res.Rides), res.Skipped, len(plain.Rides), plain.Skipped)
		}
		for i := range res.Rides {
			a, b := res.Rides[i], plain.Rides[i]
			if a.PowerW != nil {
				t.Fatalf("%s: ride %d holds its power in memory", name, i)
			}
			power, err := a.Power()
			if err != nil {
				t.Fatal(err)
			}
			if a.File != b.File || !a.Start.Equal(b.Start) || a.Seconds() != b.Seconds() || !reflect.DeepEqual(power, b.PowerW) || !reflect.DeepEqual(a.Quality, b.Quality) {
				t.Fatalf("%s: ride %d differs from decoding", name, i)
			}
		}
	}
	plainCurves := powerduration.OfRides(plain.Rides, 0)
	for i := range warmCurves {
		if !sameCurve(warmCurves[i], plainCurves[i]) || !sameCurve(coldCurves[i], plainCurves[i]) {
			t.Fatalf("curve %d differs from computing it", i)
		}
	}
}

func sameCurve(x, y powerduration.RideCurve) bool {
	a, b := x.Curve(), y.Curve()
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

// Changed content is decoded again; a touched but unchanged file is not;
// other options are a different result.
func TestRescanDecodesOnlyWhatChanged(t *testing.T) {
	dir := season(t, 2)
	s := openTemp(t)
	if _, _, _, err := s.Scan([]string{dir}, ingest.Options{}); err != nil {
		t.Fatal(err)
	}
	files, _ := ingest.ListFiles([]string{dir})
	later := time.Now().Add(time.Hour)
	os.Chtimes(files[0], later, later) // touched, same bytes
	b, _ := os.ReadFile(files[1])
	os.WriteFile(files[1], append(b, '\n'), 0o644) // changed bytes
	_, _, st, err := s.Scan([]string{dir}, ingest.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if st.Decoded != 1 {
		t.Errorf("after one change: %+v", st)
	}
	_, _, st, _ = s.Scan([]string{dir}, ingest.Options{SpikeCeilingW: 1500})
	if st.Decoded != st.Files {
		t.Errorf("new spike ceiling: %+v", st)
	}
}

// A damaged store is moved aside and rebuilt; a store of another schema is
// emptied.
func TestDamagedAndOldStores(t *testing.T) {
	path := filepath.Join(t.TempDir(), "rides.db")
	s, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	dir := season(t, 1)
	if _, _, _, err := s.Scan([]string{dir}, ingest.Options{}); err != nil {
		t.Fatal(err)
	}
	s.Close()
	// damage the store's pages after its header: it is ours (the header's
	// application id says so), so it is moved aside and rebuilt
	b, _ := os.ReadFile(path)
	for i := 100; i < len(b); i++ {
		b[i] = 0xA5
	}
	os.WriteFile(path, b, 0o644)
	os.Remove(path + "-wal")
	os.Remove(path + "-shm")
	s, err = Open(path)
	if err != nil {
		t.Fatal(err)
	}
	if len(s.Notes) != 1 || !strings.Contains(s.Notes[0], "damaged") {
		t.Errorf("notes %v", s.Notes)
	}
	if _, _, _, err := s.Scan([]string{dir}, ingest.Options{}); err != nil {
		t.Fatal(err)
	}
	s.db.Exec(`UPDATE meta SET value = '0' WHERE key = 'schema_version'`)
	s.Close()
	s, err = Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer s.Close()
	if len(s.Notes) != 1 || !strings.Contains(s.Notes[0], "schema 0") {
		t.Errorf("notes %v", s.Notes)
	}
	if _, _, st, _ := s.Scan([]string{dir}, ingest.Options{}); st.Decoded != st.Files {
		t.Errorf("an emptied store answered: %+v", st)
	}
	aside, _ := filepath.Glob(path + ".damaged-*")
	if len(aside) != 1 {
		t.Errorf("damaged store not kept aside: %v", aside)
	}
}

// What is not a store of this tool is refused and left exactly as it was:
// a ride file, a folder, a text file, another program's database.
func TestNotAStoreIsNeverTouched(t *testing.T) {
	dir := t.TempDir()
	ride := season(t, 1)
	entries, _ := os.ReadDir(ride)
	rideFile := filepath.Join(ride, entries[0].Name())
	text := filepath.Join(dir, "notes.txt")
	os.WriteFile(text, []byte(strings.Repeat("this is not a database ", 500)), 0o644)
	other := filepath.Join(dir, "other.db")
	db, err := sql.Open("sqlite", "file:"+other)
	if err != nil {
		t.Fatal(err)
	}
	db.Exec(`CREATE TABLE meta (key TEXT, value TEXT)`)
	db.Exec(`INSERT INTO meta VALUES ('schema_version', '1')`)
	db.Close()
	for _, p := range []string{rideFile, ride, text, other} {
		before, _ := os.ReadDir(filepath.Dir(p))
		var content []byte
		if fi, _ := os.Stat(p); fi.Mode().IsRegular() {
			content, _ = os.ReadFile(p)
		}
		s, err := Open(p)
		if err == nil {
			s.Close()
			t.Errorf("%s opened as a store", p)
			continue
		}
		if !errors.Is(err, ErrNotAStore) || strings.Count(err.Error(), "\n") > 0 {
			t.Errorf("%s: %v", p, err)
		}
		after, _ := os.ReadDir(filepath.Dir(p))
		if len(after) != len(before) {
			t.Errorf("%s: the folder changed (%d → %d entries)", p, len(before), len(after))
		}
		if content != nil {
			if now, _ := os.ReadFile(p); string(now) != string(content) {
				t.Errorf("%s was changed", p)
			}
		}
	}
}

// A store another run holds locked is reported, never waited on forever
// nor rebuilt.
func TestLockedStoreIsReported(t *testing.T) {
	path := filepath.Join(t.TempDir(), "rides.db")
	holder, err := Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer holder.Close()
	conn, err := holder.db.Conn(t.Context())
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close()
	if _, err := conn.ExecContext(t.Context(), `BEGIN EXCLUSIVE`); err != nil {
		t.Fatal(err)
	}
	defer conn.ExecContext(t.Context(), `ROLLBACK`)
	dir := season(t, 1)
	s, err := OpenWait(path, 200*time.Millisecond)
	if err == nil {
		_, _, _, err = s.Scan([]string{dir}, ingest.Options{})
		s.Close()
	}
	if err == nil || !strings.Contains(err.Error(), "locked") {
		t.Errorf("a locked store gave %v", err)
	}
	if aside, _ := filepath.Glob(path + ".damaged-*"); len(aside) != 0 {
		t.Errorf("a locked store was taken for damaged: %v", aside)
	}
}

// sameAsDecoding fails unless a scan's rides and curves equal decoding the
// files afresh.
func sameAsDecoding(t *testing.T, what string, res ingest.Result, curves []powerduration.RideCurve, plain ingest.Result, plainCurves []powerduration.RideCurve) {
	t.Helper()
	if len(res.Rides) != len(plain.Rides) || len(curves) != len(plainCurves) {
		t.Fatalf("%s: %d rides, want %d", what, len(res.Rides), len(plain.Rides))
	}
	for i := range res.Rides {
		a, b := res.Rides[i], plain.Rides[i]
		power, err := a.Power()
		if err != nil {
			t.Fatalf("%s: ride %d: %v", what, i, err)
		}
		if a.File != b.File || !a.Start.Equal(b.Start) || !reflect.DeepEqual(power, b.PowerW) || !reflect.DeepEqual(a.Quality, b.Quality) {
			t.Fatalf("%s: ride %d differs from decoding", what, i)
		}
		if !sameCurve(curves[i], plainCurves[i]) {
			t.Fatalf("%s: curve %d differs from decoding", what, i)
		}
	}
}

// Random damage to the store (eight 8-byte writes of random bytes, fixed
// seeds) never returns a number the files do not hold: every scan equals
// decoding the files, rows that fail their check are decoded again and
// counted, and a store found damaged is rebuilt.
func TestCorruptedStoreNeverLies(t *testing.T) {
	dir := season(t, 2)
	plain := ingest.Scan([]string{dir}, ingest.Options{})
	plainCurves := powerduration.OfRides(plain.Rides, 0)
	clean := filepath.Join(t.TempDir(), "clean.db")
	s, err := Open(clean)
	if err != nil {
		t.Fatal(err)
	}
	if _, _, _, err := s.Scan([]string{dir}, ingest.Options{}); err != nil {
		t.Fatal(err)
	}
	s.Close()
	good, _ := os.ReadFile(clean)
	repaired, rebuilt := 0, 0
	for seed := range uint64(12) {
		rng := rand.New(rand.NewPCG(seed, 99))
		b := append([]byte(nil), good...)
		for range 8 {
			at := 100 + rng.IntN(len(b)-108)
			for k := range 8 {
				b[at+k] = byte(rng.Uint32())
			}
		}
		path := filepath.Join(t.TempDir(), "rides.db")
		os.WriteFile(path, b, 0o644)
		s, err := Open(path)
		if err != nil {
			t.Fatalf("seed %d: %v", seed, err)
		}
		res, curves, st, err := s.Scan([]string{dir}, ingest.Options{})
		if err != nil {
			t.Fatalf("seed %d: %v", seed, err)
		}
		sameAsDecoding(t, fmt.Sprintf("seed %d", seed), res, curves, plain, plainCurves)
		if st.Repaired > 0 {
			repaired++
		}
		if st.Rebuilt != "" || len(s.Notes) > 0 {
			rebuilt++
		}
		// and the next run is answered by a sound store
		res, curves, _, err = s.Scan([]string{dir}, ingest.Options{})
		if err != nil {
			t.Fatalf("seed %d, second scan: %v", seed, err)
		}
		sameAsDecoding(t, fmt.Sprintf("seed %d, second scan", seed), res, curves, plain, plainCurves)
		s.Close()
	}
	t.Logf("of 12 damaged stores: %d had rows decoded again, %d were rebuilt", repaired, rebuilt)
}

// A stored row of any bytes never panics its check, and a row that passes
// holds a curve within the physical bounds.
func FuzzStoredRow(f *testing.F) {
	good := encodeCurve(powerduration.NewRideCurve(nil, []float64{300, 250, 200, 150}, []int32{0, 0, 0, 0}))
	f.Add("2026-03-02T08:00:00Z", "cycling", 4, []byte{0, 0, 0, 0}, "", good, int64(0))
	f.Add("x", "", -1, []byte{9, 200}, "note", []byte{1, 2, 3}, int64(7))
	f.Fuzz(func(t *testing.T, start, sport string, seconds int, lists []byte, notes string, curve []byte, sum int64) {
		for _, withSum := range []bool{false, true} {
			q := qualityRow{samples: int64(seconds), coverage: 1, lists: lists, notes: notes}
			x := stored{start: start, sport: sport, seconds: seconds, qual: q.packed(), curve: curve, sum: sum}
			if len(lists) > 0 && lists[0]%2 == 1 {
				x.qual = lists // the packed report itself of any bytes
			}
			if withSum {
				x.sum = rowSum(start, sport, seconds, x.qual, curve)
			}
			_, c, err := x.check("f.fit", ingest.Options{}, nil)
			if err != nil {
				continue
			}
			for i, d := range c.DurationsS() {
				if w := c.WattsAt(i); !(w >= 0 && w <= ingest.DefaultSpikeCeilingW) || c.OffsetAt(i)+d > seconds {
					t.Fatalf("a checked row holds %v W at offset %d", w, c.OffsetAt(i))
				}
			}
		}
	})
}

// A CSV of elapsed seconds is dated by its name, else its modification
// time: the same bytes under another name, or touched, get their own date
// from the store, as decoding them would give.
func TestDatesAreThePathsNotTheContents(t *testing.T) {
	dir := t.TempDir()
	var body strings.Builder
	body.WriteString("seconds,power\n")
	for i := range 600 {
		fmt.Fprintf(&body, "%d,%d\n", i, 200+i%5)
	}
	a, b, c := filepath.Join(dir, "2024-03-15-ride.csv"), filepath.Join(dir, "2024-05-01-copy.csv"), filepath.Join(dir, "undated.csv")
	for _, p := range []string{a, b, c} {
		os.WriteFile(p, []byte(body.String()), 0o644)
	}
	old := time.Date(2023, 7, 9, 10, 0, 0, 0, time.UTC)
	os.Chtimes(c, old, old)
	s := openTemp(t)
	if _, _, _, err := s.Scan([]string{dir}, ingest.Options{}); err != nil {
		t.Fatal(err)
	}
	now := time.Date(2025, 2, 3, 4, 5, 6, 0, time.UTC)
	os.Chtimes(c, now, now) // touched
	res, _, _, err := s.Scan([]string{dir}, ingest.Options{})
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]string{a: "2024-03-15", b: "2024-05-01", c: now.Local().Format("2006-01-02")}
	for _, r := range res.Rides {
		if d := r.Date(); d != want[r.File] {
			t.Errorf("%s dated %s, want %s", filepath.Base(r.File), d, want[r.File])
		}
	}
	plain := ingest.Scan([]string{dir}, ingest.Options{})
	for i := range plain.Rides {
		if !plain.Rides[i].Start.Equal(res.Rides[i].Start) {
			t.Errorf("%s: store %v, decoding %v", filepath.Base(plain.Rides[i].File), res.Rides[i].Start, plain.Rides[i].Start)
		}
	}
}

// A store that cannot be written (a full disk, a read-only database) costs
// the caching, not the scan: the results are complete and the run says why
// once.
func TestWriteFailureStopsWritingNotScanning(t *testing.T) {
	dir := season(t, 1)
	s := openTemp(t)
	s.db.Exec(`PRAGMA query_only = 1`)
	res, curves, st, err := s.Scan([]string{dir}, ingest.Options{})
	if err != nil || st.WriteFailed == "" {
		t.Fatalf("err %v, stats %+v", err, st)
	}
	plain := ingest.Scan([]string{dir}, ingest.Options{})
	sameAsDecoding(t, "read-only store", res, curves, plain, powerduration.OfRides(plain.Rides, 0))
}

// Damage found after the store was opened (here a table that lost a
// column) rebuilds the store, once, and the scan is whole.
func TestDamageFoundWhileScanningRebuilds(t *testing.T) {
	dir := season(t, 1)
	s := openTemp(t)
	if _, _, _, err := s.Scan([]string{dir}, ingest.Options{}); err != nil {
		t.Fatal(err)
	}
	if _, err := s.db.Exec(`ALTER TABLE rides DROP COLUMN sum`); err != nil {
		t.Fatal(err)
	}
	res, curves, st, err := s.Scan([]string{dir}, ingest.Options{})
	if err != nil || st.Rebuilt == "" {
		t.Fatalf("err %v, stats %+v", err, st)
	}
	plain := ingest.Scan([]string{dir}, ingest.Options{})
	sameAsDecoding(t, "rebuilt", res, curves, plain, powerduration.OfRides(plain.Rides, 0))
	if _, _, st, err := s.Scan([]string{dir}, ingest.Options{}); err != nil || st.Rebuilt != "" || st.Cached != st.Files {
		t.Errorf("the next scan: err %v, stats %+v", err, st)
	}
}
