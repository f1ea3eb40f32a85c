package ingest_test

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/internal/synth"
)

// allocated is the bytes allocated while f runs (a bound on its peak).
func allocated(f func()) uint64 {
	var a, b runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&a)
	f()
	runtime.ReadMemStats(&b)
	return b.TotalAlloc - a.TotalAlloc
}

// endless is n bytes of one repeated byte, made as they are read.
type endless struct {
	c byte
	n int64
}

func (e *endless) Read(p []byte) (int, error) {
	if e.n <= 0 {
		return 0, io.EOF
	}
	k := int(min(int64(len(p)), e.n))
	for i := range k {
		p[i] = e.c
	}
	e.n -= int64(k)
	return k, nil
}

// Hostile CSVs: a line of 100 MB of commas (plain and gzipped) is refused
// with a reason while reading a few kilobytes of it, never held in memory.
func TestCSVHugeLineIsRefused(t *testing.T) {
	head := "seconds,power\n0,100\n"
	var err error
	used := allocated(func() {
		_, err = ingest.Read(io.MultiReader(strings.NewReader(head), &endless{',', 100 << 20}), "x.csv", time.Now(), ingest.Options{})
	})
	if err == nil || !strings.Contains(err.Error(), "longer than 64 KiB") {
		t.Errorf("error %v", err)
	}
	if used > 16<<20 {
		t.Errorf("%d MB allocated reading a 100 MB line", used>>20)
	}
	var line bytes.Buffer
	line.WriteString(head)
	line.Write(bytes.Repeat([]byte{','}, 50<<20))
	z := gz(line.Bytes())
	used = allocated(func() { _, err = ingest.Read(bytes.NewReader(z), "x.csv.gz", time.Now(), ingest.Options{}) })
	if err == nil || !strings.Contains(err.Error(), "longer than 64 KiB") || used > 16<<20 {
		t.Errorf("gzipped: error %v, %d MB allocated", err, used>>20)
	}
}

// CSVs people and tools write badly keep their good rows: a stray quote on
// row 1, CR-only line ends, junk rows (counted), a .gz cut short (rows
// before the cut kept, flagged).
func TestCSVLenientRows(t *testing.T) {
	var rows strings.Builder
	rows.WriteString("seconds,power\n")
	for i := range 3600 {
		fmt.Fprintf(&rows, "%d,%d\n", i, 200+i%7)
	}
	good := rows.String()
	quote := strings.Replace(good, "0,200\n", "0,\"200\n", 1)
	cr := strings.ReplaceAll(good, "\n", "\r")
	junk := strings.Replace(good, "5,205\n", "5,205\n#### export footer ####\n;;;\nabc,def\n", 1)
	for name, body := range map[string]string{"stray quote": quote, "CR line ends": cr, "junk rows": junk} {
		rides, err := ingest.Read(strings.NewReader(body), "x.csv", time.Date(2026, 1, 2, 0, 0, 0, 0, time.UTC), ingest.Options{})
		if err != nil || len(rides) != 1 || rides[0].Seconds() != 3600 || rides[0].Quality.PowerCoverage < 0.999 {
			t.Errorf("%s: %v", name, err)
			continue
		}
		if name == "junk rows" && !strings.Contains(strings.Join(rides[0].Quality.Notes, ";"), "3 rows without a valid time were dropped") {
			t.Errorf("junk rows not counted: %v", rides[0].Quality.Notes)
		}
	}
	z := gz([]byte(good))
	rides, err := ingest.Read(bytes.NewReader(z[:len(z)*2/3]), "x.csv.gz", time.Date(2026, 1, 2, 0, 0, 0, 0, time.UTC), ingest.Options{})
	if err != nil || len(rides) != 1 || !rides[0].Quality.Truncated || rides[0].Seconds() < 1000 {
		t.Errorf("truncated .csv.gz: %v", err)
	}
}

// Times outside 1990–2100 are rejected with a reason, whatever the format.
func TestTimesOutOfRange(t *testing.T) {
	for name, body := range map[string]string{
		"year 9999": "timestamp,power\n9999-01-01T00:00:00Z,200\n9999-01-01T00:00:01Z,210\n",
		"year 1":    "timestamp,power\n0001-01-01T00:00:00Z,200\n0001-01-01T00:00:01Z,210\n",
	} {
		_, err := ingest.Read(strings.NewReader(body), "x.csv", time.Time{}, ingest.Options{})
		if err == nil || !strings.Contains(err.Error(), "outside 1990–2100") || !strings.Contains(err.Error(), map[string]string{"year 9999": "9999-01-01", "year 1": "0001-01-01"}[name]) {
			t.Errorf("%s: %v", name, err)
		}
	}
	_, err := ingest.Read(strings.NewReader("seconds,power\n0,200\n1e18,210\n"), "x.csv", time.Now(), ingest.Options{})
	if err == nil || !strings.Contains(err.Error(), "longer than 48 h") {
		t.Errorf("1e18 s: %v", err)
	}
}

// A TCX whose one text run is 300 MB is refused while reading it.
func TestTCXHugeTokenIsRefused(t *testing.T) {
	head := `<?xml version="1.0"?><TrainingCenterDatabase><Activities><Activity Sport="Biking"><Lap><Track><Trackpoint><Time>`
	var err error
	used := allocated(func() {
		_, err = ingest.Read(io.MultiReader(strings.NewReader(head), &endless{'x', 300 << 20}), "x.tcx", time.Now(), ingest.Options{})
	})
	if err == nil || !strings.Contains(err.Error(), "more than 1024 KiB") || used > 32<<20 {
		t.Errorf("error %v, %d MB allocated", err, used>>20)
	}
}

// A FIT file that is a header only says so in a rider's words, and no
// reason carries the FIT library's internals.
func TestFITReasonsInPlainWords(t *testing.T) {
	header := []byte{14, 0x10, 0x2d, 0x08, 0, 0, 0, 0, '.', 'F', 'I', 'T', 0, 0, 0, 0}
	_, err := ingest.Read(bytes.NewReader(header), "h.fit", time.Time{}, ingest.Options{})
	if err == nil || !strings.Contains(err.Error(), "only a header") {
		t.Errorf("header only: %v", err)
	}
	for _, name := range []string{"ride-misaligned-fields.fit", "run-short-undefined-local.fit"} {
		_, err := ingest.ReadFile(filepath.Join(realFit(t), name), ingest.Options{AnySport: true})
		if err == nil {
			continue
		}
		for _, internal := range []string{"[local:", "global:", "btype", "arch:"} {
			if strings.Contains(err.Error(), internal) {
				t.Errorf("%s: %v", name, err)
			}
		}
	}
}

// realFit is ../shared/realfit (public device files; its README says what
// each holds). Missing in CI is a failure, elsewhere a skip.
func realFit(t *testing.T) string {
	t.Helper()
	dir, _ := filepath.Abs(filepath.Join("..", "..", "shared", "realfit"))
	if _, err := os.Stat(dir); err != nil {
		if os.Getenv("CI") != "" {
			t.Fatalf("the real device files are missing: %v", err)
		}
		t.Skip("no ../shared/realfit here")
	}
	return dir
}

// A TCX declared in Latin-1 is read; one in a character set sustain does
// not read says so plainly (not the XML library's words).
func TestTCXCharsets(t *testing.T) {
	tcx := string(encode(t, "tcx", synth.FieldRide(rider, start, 5, nil, 1)))
	latin := strings.Replace(tcx, `encoding="UTF-8"`, `encoding="ISO-8859-1"`, 1)
	if !strings.Contains(latin, "ISO-8859-1") {
		t.Fatalf("no encoding declaration to change:\n%.200s", tcx)
	}
	if _, err := ingest.Read(strings.NewReader(latin), "l.tcx", time.Time{}, ingest.Options{}); err != nil {
		t.Errorf("Latin-1: %v", err)
	}
	other := strings.Replace(latin, "ISO-8859-1", "KOI8-R", 1)
	_, err := ingest.Read(strings.NewReader(other), "k.tcx", time.Time{}, ingest.Options{})
	if err == nil || strings.Contains(err.Error(), "CharsetReader") || !strings.Contains(err.Error(), "KOI8-R") {
		t.Errorf("KOI8-R: %v", err)
	}
}

// The real device files read as ../shared/realfit/README.md says they
// should, by the tolerant reader.
func TestRealFITOutcomes(t *testing.T) {
	dir := realFit(t)
	for _, c := range []struct {
		file     string
		anySport bool
		maxW     float64 // a ride with this highest power; 0: skipped
		reason   string
	}{
		{"power-road.fit", false, 619, ""},
		{"power-long-pauses.fit", false, 648, ""},
		{"power-devdata-no-app-id.fit", false, 662, ""},
		{"power-null-compressed-speed.fit", false, 691, ""},
		{"power-indoor-trainer.fit", false, 331, ""},
		{"devfield-power-indoor.fit", false, 0, "sport is fitnessequipment"},
		{"devfield-power-indoor.fit", true, -1, ""},
		{"run-power-and-devfields.fit", false, 0, "sport is running"},
		{"run-power-and-devfields.fit", true, 314, ""},
		{"ride-misaligned-fields.fit", false, 0, "no power data"},
		{"cut-mid-record-zero-power.fit", false, 0, "no power data"},
		{"run-short-undefined-local.fit", true, 0, "no power data"},
		{"run-unexpected-eof.fit", true, 0, "no power data"},
		{"chained-activity-settings.fit", true, 0, "no power data"},
		{"chained-two-activities-crc.fit", true, 0, "no power data"},
		{"multisport-large.fit", false, 0, "session 1: no power data"},
		{"no-timestamps.fit", true, 0, "no timestamped records"},
		{"monitoring.fit", false, 0, "not an activity (file type monitoringb)"},
		{"settings-1.fit", false, 0, "not an activity (file type settings)"},
		{"run-bad-crc.fit", true, 0, "checksum does not match"},
	} {
		rides, err := ingest.ReadFile(filepath.Join(dir, c.file), ingest.Options{AnySport: c.anySport})
		switch {
		case c.maxW == 0:
			if err == nil || !strings.Contains(err.Error(), c.reason) {
				t.Errorf("%s (any sport %v): %v, want %q", c.file, c.anySport, err, c.reason)
			}
		case err != nil:
			t.Errorf("%s: %v", c.file, err)
		default:
			top := 0.0
			for _, w := range rides[0].PowerW {
				top = max(top, w)
			}
			// the README's highest value is the file's; cleaning may have
			// taken it out as a spike (then the quality report counts it)
			if c.maxW > 0 && (top > c.maxW+0.5 || (math.Abs(top-c.maxW) > 0.5 && rides[0].Quality.SpikesRemoved == 0)) {
				t.Errorf("%s: highest power %.0f W, want %.0f", c.file, top, c.maxW)
			}
			if c.maxW < 0 && (top <= 0 || !strings.Contains(strings.Join(rides[0].Quality.Notes, ";"), "developer field")) {
				t.Errorf("%s: power from the developer field: top %.0f W, notes %v", c.file, top, rides[0].Quality.Notes)
			}
		}
	}
}

// CSV layouts people write: semicolons with decimal commas, H:MM:SS and
// MM:SS elapsed times, headers with units and spaces, a date column.
func TestCSVLayouts(t *testing.T) {
	for name, c := range map[string]struct {
		body  string
		date  string
		watts float64
	}{
		"semicolons, decimal commas": {"Time (s);Power (W);HR (bpm)\n0;250,5;120\n1;251,5;121\n2;252,5;122\n", "2026-01-02", 251.5},
		"H:MM:SS":                    {"elapsed,watts\n0:00:00,200\n0:00:01,210\n0:00:02,220\n", "2026-01-02", 210},
		"MM:SS and Watts [W]":        {"time,Watts [W]\n00:00,200\n00:01,210\n00:02,220\n", "2026-01-02", 210},
		"a date column":              {"date,secs,power\n2025-07-14,0,300\n2025-07-14,1,300\n2025-07-14,2,300\n", "2025-07-14", 300},
	} {
		rides, err := ingest.Read(strings.NewReader(c.body), "x.csv", time.Date(2026, 1, 2, 0, 0, 0, 0, time.UTC), ingest.Options{})
		if err != nil {
			t.Errorf("%s: %v", name, err)
			continue
		}
		r := rides[0]
		mean := 0.0
		for _, w := range r.PowerW {
			mean += w / float64(len(r.PowerW))
		}
		if r.Seconds() != 3 || math.Abs(mean-c.watts) > 1e-9 || r.Date() != c.date {
			t.Errorf("%s: %d s, mean %.2f W, dated %s", name, r.Seconds(), mean, r.Date())
		}
	}
}
