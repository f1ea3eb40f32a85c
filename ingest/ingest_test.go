package ingest_test

import (
	"bytes"
	"compress/gzip"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/internal/synth"
)

var start = time.Date(2026, 5, 3, 8, 30, 0, 0, time.UTC)

// invented rider for round trips
var rider = synth.Athlete{Name: "test", CPW: 280, WPrimeJ: 20000, PmaxW: 1000}

func encode(t testing.TB, format string, tr synth.Track) []byte {
	t.Helper()
	var buf bytes.Buffer
	var err error
	switch format {
	case "fit":
		err = synth.WriteFIT(&buf, tr)
	case "tcx":
		err = synth.WriteTCX(&buf, tr)
	case "gpx":
		err = synth.WriteGPX(&buf, tr)
	case "csv":
		err = synth.WriteCSV(&buf, tr)
	}
	if err != nil {
		t.Fatalf("write %s: %v", format, err)
	}
	return buf.Bytes()
}

func gz(b []byte) []byte {
	var buf bytes.Buffer
	w := gzip.NewWriter(&buf)
	w.Write(b)
	w.Close()
	return buf.Bytes()
}

func readOne(t *testing.T, name string, data []byte, opts ingest.Options) ingest.Ride {
	t.Helper()
	rides, err := ingest.Read(bytes.NewReader(data), name, time.Time{}, opts)
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	if len(rides) != 1 {
		t.Fatalf("%s: %d rides, want 1", name, len(rides))
	}
	return rides[0]
}

// The same invented ride written as FIT, TCX and CSV, plain and gzipped,
// reads back to the same 1-Hz timeline, equal to what was written.
func TestFormatsAgree(t *testing.T) {
	tr := synth.FieldRide(rider, start, 60, []int{180, 600}, 1)
	// a few ordinary faults: a 3-s dropout (no power value) and a 2-min pause
	for i := 1000; i < 1003; i++ {
		tr.PowerW[i] = math.NaN()
	}
	tr.Skip = make([]bool, len(tr.PowerW))
	for i := 2000; i < 2120; i++ {
		tr.Skip[i] = true
	}
	var ref *ingest.Ride
	for _, format := range []string{"fit", "tcx", "gpx", "csv"} {
		data := encode(t, format, tr)
		for _, compressed := range []bool{false, true} {
			name := "ride." + format
			if compressed {
				data, name = gz(data), name+".gz"
			}
			r := readOne(t, name, data, ingest.Options{})
			if !r.Start.Equal(start) {
				t.Errorf("%s: start %v, want %v", name, r.Start, start)
			}
			if len(r.PowerW) != len(tr.PowerW) {
				t.Fatalf("%s: %d s, want %d", name, len(r.PowerW), len(tr.PowerW))
			}
			if ref == nil {
				ref = &r
				// against what was written: recorded seconds exactly,
				// the dropout interpolated (to 0.1 W), the pause zeroed
				for i, p := range tr.PowerW {
					want := p
					switch {
					case i >= 1000 && i < 1003:
						a, b := tr.PowerW[999], tr.PowerW[1003]
						want = math.Round((a+(b-a)*float64(i-999)/4)*10) / 10 // kept to 0.1 W
					case i >= 2000 && i < 2120:
						want = 0
					}
					if math.Abs(r.PowerW[i]-want) > 1e-9 {
						t.Fatalf("%s: second %d = %v, want %v", name, i, r.PowerW[i], want)
					}
				}
				q := r.Quality
				if q.DropoutSeconds != 3 || len(q.Dropouts) != 1 || q.GapSeconds != 120 || len(q.Gaps) != 1 {
					t.Errorf("%s: quality %+v", name, q)
				}
				continue
			}
			for i := range r.PowerW {
				if r.PowerW[i] != ref.PowerW[i] || r.HeartRateBPM[i] != ref.HeartRateBPM[i] || r.CadenceRPM[i] != ref.CadenceRPM[i] {
					t.Fatalf("%s: second %d differs from FIT: %v/%v/%v vs %v/%v/%v", name, i,
						r.PowerW[i], r.HeartRateBPM[i], r.CadenceRPM[i], ref.PowerW[i], ref.HeartRateBPM[i], ref.CadenceRPM[i])
				}
			}
			if r.Quality.GapSeconds != ref.Quality.GapSeconds || r.Quality.DropoutSeconds != ref.Quality.DropoutSeconds ||
				r.Quality.PowerCoverage != ref.Quality.PowerCoverage || r.Quality.RecordingIntervalS != 1 {
				t.Errorf("%s: quality %+v differs from FIT %+v", name, r.Quality, ref.Quality)
			}
		}
	}
}

func TestCSVVariants(t *testing.T) {
	cases := []struct {
		name, data string
		want       []float64
		start      time.Time
	}{
		{"no time column, one row a second", "Watts\n100\n200\n300\n", []float64{100, 200, 300}, time.Date(2026, 1, 2, 0, 0, 0, 0, time.UTC)},
		{"semicolon, elapsed seconds", "secs;PWR;hr\n0;100;120\n1;110;121\n2;120;122\n", []float64{100, 110, 120}, time.Date(2026, 1, 2, 0, 0, 0, 0, time.UTC)},
		{"tab, RFC 3339", "timestamp\tpower_w\n2026-02-01T10:00:00Z\t250\n2026-02-01T10:00:01Z\t260\n", []float64{250, 260}, time.Date(2026, 2, 1, 10, 0, 0, 0, time.UTC)},
		{"half-second samples averaged", "time,power\n0,100\n0.5,200\n1,300\n1.5,300\n", []float64{150, 300}, time.Date(2026, 1, 2, 0, 0, 0, 0, time.UTC)},
		{"BOM and spaces", "\ufeff Elapsed_S , Power \n0, 10\n1, 20\n", []float64{10, 20}, time.Date(2026, 1, 2, 0, 0, 0, 0, time.UTC)},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			rides, err := ingest.Read(strings.NewReader(c.data), "x.csv", time.Date(2026, 1, 2, 0, 0, 0, 0, time.UTC), ingest.Options{})
			if err != nil {
				t.Fatal(err)
			}
			r := rides[0]
			if !r.Start.Equal(c.start) {
				t.Errorf("start %v, want %v", r.Start, c.start)
			}
			if len(r.PowerW) != len(c.want) {
				t.Fatalf("power %v, want %v", r.PowerW, c.want)
			}
			for i := range c.want {
				if r.PowerW[i] != c.want[i] {
					t.Fatalf("power %v, want %v", r.PowerW, c.want)
				}
			}
		})
	}
}

// Bad input: every case gives an error with a reason, none panics.
func TestBadInput(t *testing.T) {
	good := encode(t, "fit", synth.FieldRide(rider, start, 20, nil, 2))
	damaged := bytes.Clone(good)
	damaged[len(damaged)/2] ^= 0xff
	run := synth.Build(start, []synth.Segment{{Seconds: 60, Watts: 200}}, 5, 3)
	run.Sport = "running"
	cases := []struct {
		name, file string
		data       []byte
		opts       ingest.Options
		reason     string
	}{
		{"empty", "a.fit", nil, ingest.Options{}, "empty file"},
		{"random bytes named .fit", "r.fit", []byte{0x01, 0x02, 0xff, 0x00, 0x80, 0x7f, 0x00, 0x00, 0x00, 0x01, 0xfe, 0x33, 0x00}, ingest.Options{}, "not a FIT file"},
		{"checksum mismatch", "d.fit", damaged, ingest.Options{}, ""},
		{"malformed XML", "m.tcx", []byte("<TrainingCenterDatabase><Activities><Activity Sport=\"Biking\"><Lap><Track><Trackpoint><Time>2026-01-01T00:00:00Z</Time></Track>"), ingest.Options{}, "malformed XML"},
		{"XML but not TCX", "n.tcx", []byte("<kml><Document/></kml>"), ingest.Options{}, "not a TCX"},
		{"GPX without points", "n.gpx", []byte("<gpx><trk/></gpx>"), ingest.Options{}, "no samples with a time"},
		{"CSV without power", "p.csv", []byte("time,hr\n0,120\n1,121\n"), ingest.Options{}, "no power column"},
		{"CSV all NaN, Inf, negative", "n.csv", []byte("time,power\n0,NaN\n1,+Inf\n2,-50\n"), ingest.Options{}, "no power data"},
		{"timeline over 48 h", "j.csv", []byte("timestamp,power\n2026-01-01T00:00:00Z,100\n2026-01-09T00:00:00Z,100\n"), ingest.Options{}, "longer than 48 h"},
		{"running", "run.fit", encode(t, "fit", run), ingest.Options{}, "sport is running"},
		{"gzip bomb", "b.csv.gz", gz(append([]byte("power\n"), bytes.Repeat([]byte("100\n"), 1<<20)...)), ingest.Options{MaxDecompressedBytes: 1 << 20}, "gzip bomb"},
		{"broken gzip", "c.fit.gz", []byte{0x1f, 0x8b, 0x08, 0x00, 0x01}, ingest.Options{}, "gzip"},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			_, err := ingest.Read(bytes.NewReader(c.data), c.file, time.Time{}, c.opts)
			if err == nil {
				t.Fatal("no error")
			}
			if !strings.Contains(err.Error(), c.reason) || strings.Contains(err.Error(), "\n") {
				t.Errorf("reason %q, want a line containing %q", err, c.reason)
			}
		})
	}
	// the damaged file is read with --salvage and flagged
	r := readOne(t, "d.fit", damaged, ingest.Options{Salvage: true})
	if !r.Quality.Salvaged || r.Seconds() != 1200 {
		t.Errorf("salvaged %v, %d s of 1200", r.Quality.Salvaged, r.Seconds())
	}
	// the running session is kept with --sport any
	r = readOne(t, "run.fit", encode(t, "fit", run), ingest.Options{AnySport: true})
	if r.Sport != "running" {
		t.Errorf("sport %q", r.Sport)
	}
}

// A FIT file cut short keeps the records before the cut.
func TestTruncatedFIT(t *testing.T) {
	tr := synth.FieldRide(rider, start, 30, nil, 4)
	data := encode(t, "fit", tr)
	cut := data[:len(data)*2/3]
	r := readOne(t, "cut.fit", cut, ingest.Options{})
	if !r.Quality.Truncated {
		t.Error("truncated flag not set")
	}
	if len(r.PowerW) < len(tr.PowerW)/2 || len(r.PowerW) >= len(tr.PowerW) {
		t.Errorf("kept %d of %d seconds", len(r.PowerW), len(tr.PowerW))
	}
	for i := range r.PowerW {
		if r.PowerW[i] != tr.PowerW[i] {
			t.Fatalf("second %d = %v, want %v", i, r.PowerW[i], tr.PowerW[i])
		}
	}
}

func TestScanFolder(t *testing.T) {
	dir := t.TempDir()
	write := func(name string, data []byte) {
		p := filepath.Join(dir, name)
		os.MkdirAll(filepath.Dir(p), 0o755)
		if err := os.WriteFile(p, data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	write("b/late.fit", encode(t, "fit", synth.FieldRide(rider, start.Add(48*time.Hour), 20, nil, 5)))
	write("a/early.tcx.gz", gz(encode(t, "tcx", synth.FieldRide(rider, start, 20, nil, 6))))
	write("a/mid.CSV", encode(t, "csv", synth.FieldRide(rider, start.Add(24*time.Hour), 20, nil, 7)))
	write("bad.fit", []byte("not a fit file at all"))
	write("notes.txt", []byte("ignored"))
	write(".hidden.fit", []byte("ignored"))
	// a link back up the tree must not loop
	if err := os.Symlink(dir, filepath.Join(dir, "a", "loop")); err != nil {
		t.Fatal(err)
	}
	before := listTree(t, dir)
	res := ingest.Scan([]string{dir, filepath.Join(dir, "missing.fit")}, ingest.Options{Workers: 3})
	if len(res.Rides) != 3 {
		t.Fatalf("%d rides, want 3", len(res.Rides))
	}
	for i, want := range []string{"early.tcx.gz", "mid.CSV", "late.fit"} {
		if filepath.Base(res.Rides[i].File) != want {
			t.Errorf("ride %d is %s, want %s", i, res.Rides[i].File, want)
		}
	}
	if len(res.Skipped) != 2 || !strings.HasSuffix(res.Skipped[0].File, "bad.fit") || !strings.HasSuffix(res.Skipped[1].File, "missing.fit") {
		t.Errorf("skipped %+v", res.Skipped)
	}
	if after := listTree(t, dir); after != before {
		t.Errorf("scan changed the folder:\n%s\n%s", before, after)
	}
}

func listTree(t *testing.T, dir string) string {
	var b strings.Builder
	filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		info, _ := d.Info()
		b.WriteString(p + " " + info.ModTime().String() + "\n")
		return nil
	})
	return b.String()
}

// A multisport FIT file: a ride, a run, a ride. Each cycling session is a
// ride of its own; the run is kept only with AnySport.
func TestFITSessions(t *testing.T) {
	ride1 := synth.Build(start, []synth.Segment{{Seconds: 600, Watts: 200}}, 10, 1)
	run := synth.Build(start.Add(15*time.Minute), []synth.Segment{{Seconds: 300, Watts: 250}}, 10, 2)
	run.Sport = "running"
	ride2 := synth.Build(start.Add(30*time.Minute), []synth.Segment{{Seconds: 900, Watts: 180}}, 10, 3)
	var buf bytes.Buffer
	if err := synth.WriteFITSessions(&buf, ride1, run, ride2); err != nil {
		t.Fatal(err)
	}
	rides, err := ingest.Read(bytes.NewReader(buf.Bytes()), "multi.fit", time.Time{}, ingest.Options{})
	if err != nil {
		t.Fatal(err)
	}
	if len(rides) != 2 || rides[0].Seconds() != 600 || rides[1].Seconds() != 900 || rides[1].Session != 2 ||
		!rides[1].Start.Equal(ride2.Start) || rides[0].PowerW[10] != ride1.PowerW[10] {
		t.Fatalf("%d rides: %+v", len(rides), rides)
	}
	rides, _ = ingest.Read(bytes.NewReader(buf.Bytes()), "multi.fit", time.Time{}, ingest.Options{AnySport: true})
	if len(rides) != 3 || rides[1].Sport != "running" {
		t.Fatalf("any sport: %d rides", len(rides))
	}
}
