package ingest_test

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/internal/synth"
)

// PeekStart answers a FIT file's start from its first records, as decoding
// it would (plain and gzipped), and declines what it cannot answer surely:
// chained files, other formats, files that are not FIT.
func TestPeekStart(t *testing.T) {
	dir := t.TempDir()
	tr := synth.FieldRide(rider, start, 60, []int{300}, 4)
	var buf bytes.Buffer
	if err := synth.WriteFIT(&buf, tr); err != nil {
		t.Fatal(err)
	}
	plain, zipped := filepath.Join(dir, "a.fit"), filepath.Join(dir, "b.fit.gz")
	os.WriteFile(plain, buf.Bytes(), 0o644)
	os.WriteFile(zipped, gz(buf.Bytes()), 0o644)
	rides, err := ingest.ReadFile(plain, ingest.Options{})
	if err != nil {
		t.Fatal(err)
	}
	for _, p := range []string{plain, zipped} {
		got, ok := ingest.PeekStart(p)
		if !ok || !got.Equal(rides[0].Start) {
			t.Errorf("%s: %v %v, want %v", filepath.Base(p), got, ok, rides[0].Start)
		}
	}
	chained := filepath.Join(dir, "c.fit")
	os.WriteFile(chained, append(append([]byte{}, buf.Bytes()...), buf.Bytes()...), 0o644)
	other := filepath.Join(dir, "d.csv")
	os.WriteFile(other, []byte("time,power\n"), 0o644)
	junk := filepath.Join(dir, "e.fit")
	os.WriteFile(junk, []byte("not a fit file at all"), 0o644)
	for _, p := range []string{chained, other, junk, filepath.Join(dir, "missing.fit")} {
		if got, ok := ingest.PeekStart(p); ok {
			t.Errorf("%s: answered %v", filepath.Base(p), got)
		}
	}
}

// On the real device files (../shared/realfit), every start PeekStart
// answers lies within a day of the start decoding gives (the margin a
// date window allows for the time zone), for every ride the file holds.
func TestPeekStartRealFiles(t *testing.T) {
	dir := realFit(t)
	names, _ := filepath.Glob(filepath.Join(dir, "*"))
	answered := 0
	for _, p := range names {
		got, ok := ingest.PeekStart(p)
		if !ok {
			continue
		}
		rides, err := ingest.ReadFile(p, ingest.Options{AnySport: true, Salvage: true})
		if err != nil {
			continue
		}
		answered++
		for _, r := range rides {
			if d := r.Start.Sub(got); d < -24*time.Hour || d > 24*time.Hour {
				t.Errorf("%s: peeked %v, a ride starts %v", filepath.Base(p), got, r.Start)
			}
		}
	}
	if answered == 0 {
		t.Error("no real file answered")
	}
	t.Logf("%d real files answered by peeking", answered)
}
