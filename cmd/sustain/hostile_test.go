package main

import (
	"archive/zip"
	"bytes"
	"compress/gzip"
	"encoding/json"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/internal/synth"
)

// A hostile folder: good rides mixed with files built to crash, hang or
// fill memory. One run reads every good ride exactly as without them, says
// one line per bad file, exits 0, and allocates within a bounded amount.
func TestHostileFolder(t *testing.T) {
	good := seasonFolder(t, athlete, 3, true)
	code, clean, _ := runCmd(t, "curve", good, "--json", "--no-store")
	if code != exitOK {
		t.Fatalf("good folder: exit %d", code)
	}
	dir := filepath.Join(good, "r")
	put := func(name string, b []byte) {
		if err := os.WriteFile(filepath.Join(dir, name), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	var commas bytes.Buffer
	commas.WriteString("seconds,power\n0,100\n")
	commas.Write(bytes.Repeat([]byte{','}, 20<<20))
	put("commas.csv", commas.Bytes())
	put("commas.csv.gz", gzipped(commas.Bytes()))
	var xml bytes.Buffer
	xml.WriteString(`<?xml version="1.0"?><TrainingCenterDatabase><Activities><Activity Sport="Biking"><Lap><Track><Trackpoint><Time>`)
	xml.Write(bytes.Repeat([]byte{'x'}, 8<<20))
	put("huge-token.tcx", xml.Bytes())
	var big bytes.Buffer
	synth.WriteFIT(&big, synth.Build(time.Date(2026, 1, 2, 8, 0, 0, 0, time.UTC), []synth.Segment{{Seconds: 260_000, Watts: 200}}, 0, 1))
	put("many-records.fit.gz", gzipped(big.Bytes()))
	put("year-9999.csv", []byte("timestamp,power\n9999-01-01T00:00:00Z,200\n9999-01-01T00:00:01Z,210\n"))
	put("random.fit", bytes.Repeat([]byte{0x0e, 0x10, 0xff, 0x00}, 4096))
	put("empty.tcx", nil)
	put("bomb.csv.gz", gzipped(bytes.Repeat([]byte("0,"), 200<<20)))
	os.Symlink(filepath.Join(dir, "nowhere.fit"), filepath.Join(dir, "dangling.fit"))
	if err := syscall.Mkfifo(filepath.Join(dir, "pipe.fit"), 0o644); err != nil {
		t.Log("no pipes here:", err)
	}
	bad := 10
	if _, err := os.Stat(filepath.Join(dir, "pipe.fit")); err != nil {
		bad--
	}
	for _, store := range []string{"--no-store", "--store=" + filepath.Join(t.TempDir(), "s.db")} {
		var a, b runtime.MemStats
		runtime.GC()
		runtime.ReadMemStats(&a)
		done := make(chan struct{})
		var code int
		var out, errs string
		go func() {
			code, out, errs = runCmd(t, "curve", good, "--json", store)
			close(done)
		}()
		select {
		case <-done:
		case <-time.After(3 * time.Minute):
			t.Fatal("the hostile folder hangs the run")
		}
		runtime.ReadMemStats(&b)
		if code != exitOK {
			t.Fatalf("%s: exit %d: %s", store, code, errs)
		}
		var got, want struct {
			Rides   int `json:"rides"`
			Skipped []struct {
				File   string `json:"file"`
				Reason string `json:"reason"`
			} `json:"skipped"`
			Points any `json:"points"`
		}
		json.Unmarshal([]byte(out), &got)
		json.Unmarshal([]byte(clean), &want)
		gp, _ := json.Marshal(got.Points)
		wp, _ := json.Marshal(want.Points)
		if got.Rides != want.Rides || !bytes.Equal(gp, wp) {
			t.Errorf("%s: %d rides; without the hostile files %d, or the curves differ", store, got.Rides, want.Rides)
		}
		if len(got.Skipped) != bad {
			t.Errorf("%s: %d skipped, want %d: %+v", store, len(got.Skipped), bad, got.Skipped)
		}
		for _, s := range got.Skipped {
			t.Logf("%s: %s", filepath.Base(s.File), s.Reason)
			if s.Reason == "" || strings.Contains(s.Reason, "\n") {
				t.Errorf("%s: %s: reason %q", store, s.File, s.Reason)
			}
		}
		// the files total about 250 MB decompressed; the run allocates a
		// small part of that
		if used := b.TotalAlloc - a.TotalAlloc; used > 1<<30 {
			t.Errorf("%s: %d MB allocated", store, used>>20)
		}
	}
}

func gzipped(b []byte) []byte {
	var z bytes.Buffer
	w := gzip.NewWriter(&z)
	w.Write(b)
	w.Close()
	return z.Bytes()
}

// A rider points sustain at the archive their service exported, beside a
// copy of one ride: every ride with power is read once; inspect says per
// archive how many members were rides, skipped or duplicates.
func TestExportArchiveOnce(t *testing.T) {
	dir := t.TempDir()
	day := time.Date(2026, 3, 2, 8, 0, 0, 0, time.UTC)
	var fitB, gpxB, tcxB bytes.Buffer
	one := synth.FieldRide(athlete, day, 40, []int{300}, 1)
	synth.WriteFIT(&fitB, one)
	synth.WriteGPX(&gpxB, one)
	synth.WriteTCX(&tcxB, synth.FieldRide(athlete, day.AddDate(0, 0, 2), 40, []int{180}, 2))
	f, _ := os.Create(filepath.Join(dir, "export.zip"))
	zw := zip.NewWriter(f)
	for name, b := range map[string][]byte{
		"activities/1.fit": fitB.Bytes(), "activities/1.gpx": gpxB.Bytes(), "activities/2.tcx.gz": gzipped(tcxB.Bytes()),
		"activities/3.fit": []byte("damaged"), "profile.json": []byte("{}"),
	} {
		w, _ := zw.Create(name)
		w.Write(b)
	}
	zw.Close()
	f.Close()
	os.WriteFile(filepath.Join(dir, "2026-03-02-ride.fit"), fitB.Bytes(), 0o644) // the same ride, from the head unit
	code, out, errs := runCmd(t, "inspect", dir, "--json", "--no-store")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var js struct {
		Rides      int `json:"rides"`
		Duplicates []struct {
			File, Kept, Why string
		} `json:"duplicates"`
		Archives []struct {
			Archive                    string
			Rides, Skipped, Duplicates int
		} `json:"archives"`
		Skipped []struct{ File, Reason string } `json:"skipped"`
	}
	if err := json.Unmarshal([]byte(out), &js); err != nil {
		t.Fatal(err)
	}
	if js.Rides != 2 || len(js.Duplicates) != 2 || len(js.Skipped) != 1 || !strings.HasSuffix(js.Skipped[0].File, "export.zip:activities/3.fit") {
		t.Errorf("rides %d, duplicates %+v, skipped %+v", js.Rides, js.Duplicates, js.Skipped)
	}
	if len(js.Archives) != 1 || js.Archives[0].Skipped != 1 || js.Archives[0].Rides+js.Archives[0].Duplicates != 3 {
		t.Errorf("archives %+v", js.Archives)
	}
	if code, out, _ := runCmd(t, "inspect", dir, "--json", "--no-store", "--keep-duplicates"); code != exitOK || !strings.Contains(out, `"rides": 4`) {
		t.Errorf("--keep-duplicates: %d\n%.300s", code, out)
	}
}
