package ingest

import (
	"bytes"
	"compress/gzip"
	"encoding/binary"
	"io/fs"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"runtime"
	"strings"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/internal/synth"
	"github.com/tormoder/fit"
)

// The walk that counts records agrees with the FIT library's decode on
// every single-segment activity file the library reads without error:
// the FIT module's device files, ../shared/realfit and invented rides.
func TestFITRecordCountMatchesLibrary(t *testing.T) {
	var files []string
	if out, err := exec.Command("go", "list", "-m", "-f", "{{.Dir}}", "github.com/tormoder/fit").Output(); err == nil {
		filepath.WalkDir(filepath.Join(strings.TrimSpace(string(out)), "testdata"), func(p string, d fs.DirEntry, err error) error {
			if err == nil && !d.IsDir() && strings.EqualFold(filepath.Ext(p), ".fit") {
				files = append(files, p)
			}
			return nil
		})
	}
	real, _ := filepath.Glob(filepath.Join("..", "..", "shared", "realfit", "*.fit"))
	files = append(files, real...)
	var blobs [][]byte
	for _, p := range files {
		b, err := os.ReadFile(p)
		if err == nil {
			blobs = append(blobs, b)
		}
	}
	for i, d := range []int{60, 3600, 3 * 3600} {
		var buf bytes.Buffer
		synth.WriteFIT(&buf, synth.FieldRide(synth.Athlete{CPW: 250, WPrimeJ: 20000, PmaxW: 900}, time.Date(2026, 1, 2, 8, 0, 0, 0, time.UTC), d/60+1, nil, uint64(i)))
		blobs = append(blobs, buf.Bytes())
	}
	checked := 0
	for i, b := range blobs {
		if len(b) < 12 || int(binary.LittleEndian.Uint32(b[4:8]))+int(b[0])+2 != len(b) {
			continue // chained or cut: the library reads a different share
		}
		f, err := fit.Decode(bytes.NewReader(b))
		if err != nil || f.Type() != fit.FileTypeActivity {
			continue
		}
		act, err := f.Activity()
		if err != nil {
			continue
		}
		if got := fitRecords(b, math.MaxInt); got != len(act.Records) {
			t.Errorf("file %d: %d records walked, the library decoded %d", i, got, len(act.Records))
		}
		checked++
	}
	t.Logf("%d files checked", checked)
	if checked < 5 {
		t.Errorf("only %d files checked", checked)
	}
}

// A gzipped FIT of 300,000 records (a 1.6-MB file that would cost the
// library about 100 MB) is refused after a walk, within a bounded amount
// of memory.
func TestFITTooManyRecordsIsRefused(t *testing.T) {
	tr := synth.Build(time.Date(2026, 1, 2, 8, 0, 0, 0, time.UTC), []synth.Segment{{Seconds: 300_000, Watts: 200}}, 0, 1)
	var buf bytes.Buffer
	if err := synth.WriteFIT(&buf, tr); err != nil {
		t.Fatal(err)
	}
	var z bytes.Buffer
	zw := gzip.NewWriter(&z)
	zw.Write(buf.Bytes())
	zw.Close()
	var a, b runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&a)
	_, err := Read(bytes.NewReader(z.Bytes()), "big.fit.gz", time.Time{}, Options{})
	runtime.ReadMemStats(&b)
	if err == nil || !strings.Contains(err.Error(), "more than 250000 records") {
		t.Errorf("error %v", err)
	}
	if used := b.TotalAlloc - a.TotalAlloc; used > 4*MaxFITBytes {
		t.Errorf("%d MB allocated to refuse it", used>>20)
	}
}
