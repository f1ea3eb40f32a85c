package ingest_test

import (
	"bufio"
	"compress/gzip"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
)

// fitTestdata is the folder of real device files that the FIT module ships.
func fitTestdata(t *testing.T) string {
	t.Helper()
	out, err := exec.Command("go", "list", "-m", "-f", "{{.Dir}}", "github.com/tormoder/fit").Output()
	if err != nil {
		t.Skipf("cannot locate the FIT module: %v", err)
	}
	return filepath.Join(strings.TrimSpace(string(out)), "testdata")
}

// golden reads the FIT module's golden dump of a file (a Go-syntax print of
// the decoded file) and returns its record count and the first and last
// record timestamps.
func golden(t *testing.T, path string) (n int, first, last time.Time) {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	zr, err := gzip.NewReader(f)
	if err != nil {
		t.Fatal(err)
	}
	ext := regexp.MustCompile(`^\s*ext: int64\((-?\d+)\)`)
	sc := bufio.NewScanner(zr)
	sc.Buffer(make([]byte, 1<<20), 1<<20)
	// the dump prints the activity twice (the file holds two pointers to
	// it); the first Records block is the one to read
	inRecords, wantTS, inTS := false, false, false
	for sc.Scan() && !(n > 0 && !inRecords) {
		line := sc.Text()
		switch {
		case line == "  Records: []*fit.RecordMsg{":
			inRecords = true
		case inRecords && line == "  },":
			inRecords = false
		case inRecords && line == "   &fit.RecordMsg{":
			n++
			wantTS = true
		case wantTS && strings.HasPrefix(line, "    Timestamp: time.Time{"):
			inTS = true
		case inTS:
			if m := ext.FindStringSubmatch(line); m != nil {
				// wall = 0: ext counts seconds from 0001-01-01 UTC
				s, _ := strconv.ParseInt(m[1], 10, 64)
				ts := time.Unix(s-62135596800, 0).UTC()
				if first.IsZero() {
					first = ts
				}
				last = ts
				inTS, wantTS = false, false
			}
		}
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	return n, first, last
}

// Real device files from the FIT module's testdata: the ride's samples and
// its first and last seconds match the module's own golden dumps.
func TestDeviceFilesMatchGolden(t *testing.T) {
	dir := fitTestdata(t)
	files := []string{
		"dcrainmaker/Edge810-Vector-2013-08-16-15-35-10.fit",
		"python-fitparse/sample-activity-indoor-trainer.fit",
		"bpg/garmin.fit",
		"misc/0134902991.fit",
	}
	for _, name := range files {
		t.Run(name, func(t *testing.T) {
			path := filepath.Join(dir, name)
			n, first, last := golden(t, path+".golden.gz")
			if n == 0 {
				t.Fatal("golden file has no records")
			}
			rides, err := ingest.ReadFile(path, ingest.Options{})
			if err != nil {
				t.Fatal(err)
			}
			if len(rides) != 1 {
				t.Fatalf("%d rides", len(rides))
			}
			r := rides[0]
			if r.Quality.Samples != n {
				t.Errorf("samples %d, golden records %d", r.Quality.Samples, n)
			}
			if !r.Start.Equal(first) {
				t.Errorf("start %v, golden %v", r.Start, first)
			}
			if end := r.Start.Add(time.Duration(r.Seconds()-1) * time.Second); !end.Equal(last) {
				t.Errorf("last second %v, golden %v", end, last)
			}
			if r.Sport != "cycling" {
				t.Errorf("sport %q", r.Sport)
			}
		})
	}
}

func TestDeviceFilesSkippedWithReason(t *testing.T) {
	dir := fitTestdata(t)
	cases := map[string]string{
		"fitsdk/Settings.fit":              "not an activity (file type settings)",
		"fitsdk/WorkoutRepeatSteps.fit":    "not an activity (file type workout)",
		"corrupt/activity-filecrc.fit":     "checksum does not match",
		"me/activity-small-fenix2-run.fit": "sport is running",
	}
	for name, want := range cases {
		_, err := ingest.ReadFile(filepath.Join(dir, name), ingest.Options{})
		if err == nil || !strings.Contains(err.Error(), want) || !strings.Contains(err.Error(), name) {
			t.Errorf("%s: error %v, want one naming the file and %q", name, err, want)
		}
	}
}
