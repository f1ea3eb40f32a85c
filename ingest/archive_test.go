package ingest_test

import (
	"archive/zip"
	"bytes"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/internal/synth"
)

// exportArchive writes an invented bulk export: FIT, gzipped FIT, TCX, GPX
// and CSV rides, a damaged member and a member that is no ride; it returns
// the archive and a folder holding the same ride files unpacked.
func exportArchive(t *testing.T) (archive, unpacked string) {
	t.Helper()
	dir := t.TempDir()
	unpacked = filepath.Join(dir, "unpacked")
	os.MkdirAll(filepath.Join(unpacked, "activities"), 0o755)
	archive = filepath.Join(dir, "export.zip")
	f, _ := os.Create(archive)
	zw := zip.NewWriter(f)
	put := func(name string, b []byte, alsoUnpacked bool) {
		w, _ := zw.Create(name)
		w.Write(b)
		if alsoUnpacked {
			os.WriteFile(filepath.Join(unpacked, name), b, 0o644)
		}
	}
	day := time.Date(2026, 3, 2, 8, 0, 0, 0, time.UTC)
	for i, format := range []string{"fit", "fit.gz", "tcx", "gpx", "csv"} {
		tr := synth.FieldRide(rider, day.AddDate(0, 0, 2*i), 40, []int{180}, uint64(i))
		base := strings.TrimSuffix(format, ".gz")
		b := encode(t, base, tr)
		if strings.HasSuffix(format, ".gz") {
			b = gz(b)
		}
		put("activities/ride-"+string(rune('a'+i))+"."+format, b, true)
	}
	put("activities/broken.fit", []byte("this is not a ride"), false)
	put("README.txt", []byte("an export"), false)
	zw.Close()
	f.Close()
	return archive, unpacked
}

// A bulk export read in place gives the same rides, with the members named
// ARCHIVE:MEMBER, as the same files unpacked; a damaged member is one
// skipped line, a non-ride member is not listed.
func TestArchiveReadInPlace(t *testing.T) {
	archive, unpacked := exportArchive(t)
	for _, p := range []string{archive} {
		res := ingest.Scan([]string{p}, ingest.Options{})
		plain := ingest.Scan([]string{unpacked}, ingest.Options{})
		if len(res.Rides) != 5 || len(plain.Rides) != 5 {
			t.Fatalf("%s: %d rides from the archive, %d unpacked; skipped %v", p, len(res.Rides), len(plain.Rides), res.Skipped)
		}
		for i := range res.Rides {
			a, b := res.Rides[i], plain.Rides[i]
			member := strings.TrimPrefix(b.File, unpacked+string(filepath.Separator))
			if a.File != archive+":"+member || !a.Start.Equal(b.Start) || !reflect.DeepEqual(a.PowerW, b.PowerW) {
				t.Errorf("ride %d: %s, want %s:%s", i, a.File, archive, member)
			}
		}
		// the unpacked folder's own rides are in the scan of the parent too
		bad := 0
		for _, s := range res.Skipped {
			if strings.HasSuffix(s.File, ".zip:activities/broken.fit") {
				bad++
			}
			if strings.Contains(s.File, "README") {
				t.Errorf("a non-ride member listed: %v", s)
			}
		}
		if bad != 1 {
			t.Errorf("%s: skipped %v", p, res.Skipped)
		}
	}
}

// A zip of 100,000 members and a zip whose members expand past the cap are
// refused with a reason, within a bounded amount of memory.
func TestArchiveCaps(t *testing.T) {
	dir := t.TempDir()
	many := filepath.Join(dir, "many.zip")
	var buf bytes.Buffer
	zw := zip.NewWriter(&buf)
	for i := range 100_000 {
		w, _ := zw.CreateHeader(&zip.FileHeader{Name: "r" + strings.Repeat("x", i%3) + string(rune('a'+i%26)) + ".fit", Method: zip.Store})
		w.Write([]byte{0})
	}
	zw.Close()
	os.WriteFile(many, buf.Bytes(), 0o644)
	bomb := filepath.Join(dir, "bomb.zip")
	buf.Reset()
	zw = zip.NewWriter(&buf)
	w, _ := zw.Create("big.csv")
	w.Write([]byte("seconds,power\n"))
	chunk := bytes.Repeat([]byte("0,"), 1<<20)
	for range 600 { // 1.2 GB of one line, about 1 MB compressed
		w.Write(chunk)
	}
	zw.Close()
	os.WriteFile(bomb, buf.Bytes(), 0o644)
	var res ingest.Result
	used := allocated(func() { res = ingest.Scan([]string{many, bomb}, ingest.Options{}) })
	reasons := map[string]string{}
	for _, s := range res.Skipped {
		reasons[filepath.Base(strings.SplitN(s.File, ":", 2)[0])] = s.Reason
	}
	if !strings.Contains(reasons["many.zip"], "more than 20000") || !strings.Contains(reasons["bomb.zip"], "longer than 64 KiB") {
		t.Errorf("reasons %v", reasons)
	}
	if used > 256<<20 {
		t.Errorf("%d MB allocated", used>>20)
	}
}
