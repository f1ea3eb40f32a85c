package main

import (
	"database/sql"
	"encoding/json"
	"path/filepath"
	"testing"

	"github.com/sustain-cycling/sustain/estimate"
	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/internal/synth"
	"github.com/sustain-cycling/sustain/powerduration"
)

// estimate --last reads only the files that can hold a ride in its window
// (the others are peeked, not decoded: the store never sees them), and
// answers exactly what estimating the whole folder's rides over that
// window answers.
func TestWindowFirst(t *testing.T) {
	dir := seasonFolder(t, synth.Athlete{CPW: 270, WPrimeJ: 20000, PmaxW: 1000}, 30, true)
	db := filepath.Join(t.TempDir(), "rides.db")
	code, out, errs := runCmd(t, "estimate", dir, "--last", "42d", "--json", "--store", db)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	var got estimateJS
	if err := json.Unmarshal([]byte(out), &got); err != nil {
		t.Fatal(err)
	}
	all := ingest.Scan([]string{dir}, ingest.Options{})
	curves := powerduration.OfRides(all.Rides, 0)
	w := powerduration.LastDays(powerduration.Newest(curves), 42)
	want := estimate.Estimate(all.Rides, curves, w, estimate.Options{})
	if got.Window.From != w.From || got.Window.To != w.To || got.Rides != want.Rides {
		t.Fatalf("window %+v with %d rides, want %+v with %d", got.Window, got.Rides, w, want.Rides)
	}
	if got.Threshold == nil || want.Threshold == nil || got.Threshold.Watts != want.Threshold.Watts {
		t.Fatalf("threshold %+v, want %+v", got.Threshold, want.Threshold)
	}
	conn, err := sql.Open("sqlite", "file:"+db+"?mode=ro")
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close()
	var read int
	conn.QueryRow(`SELECT count(*) FROM files`).Scan(&read)
	if read < want.Rides || read > want.Rides+2 {
		t.Errorf("%d files read for a window of %d rides (of %d in the folder)", read, want.Rides, len(all.Rides))
	}
	// without the store, the same answer
	if code, out2, _ := runCmd(t, "estimate", dir, "--last", "42d", "--json", "--no-store"); code != exitOK || out2 != out {
		t.Errorf("--no-store: exit %d, output differs", code)
	}
}
