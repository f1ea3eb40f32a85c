package ingest_test

import (
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/internal/synth"
)

// A pipe named on the command line or found in a folder, a broken link and
// a path too long to open are each one skipped line; nothing hangs and the
// good ride beside them is read.
func TestOddPathsAreSkippedNotHung(t *testing.T) {
	dir := t.TempDir()
	good := filepath.Join(dir, "good.fit")
	os.WriteFile(good, encode(t, "fit", synth.FieldRide(rider, start, 20, nil, 2)), 0o644)
	pipe := filepath.Join(dir, "pipe.fit")
	if err := syscall.Mkfifo(pipe, 0o644); err != nil {
		t.Skip("no pipes here:", err)
	}
	os.Symlink(filepath.Join(dir, "gone.fit"), filepath.Join(dir, "broken.fit"))
	deep := filepath.Join(dir, strings.Repeat("x", 300)+".fit")
	done := make(chan ingest.Result, 1)
	go func() { done <- ingest.Scan([]string{pipe, dir, deep}, ingest.Options{}) }()
	var res ingest.Result
	select {
	case res = <-done:
	case <-time.After(20 * time.Second):
		t.Fatal("the scan hangs on a pipe")
	}
	if len(res.Rides) != 1 || res.Rides[0].File != good {
		t.Errorf("rides %d", len(res.Rides))
	}
	reasons := map[string]string{}
	for _, s := range res.Skipped {
		reasons[filepath.Base(s.File)] = s.Reason
	}
	for name, want := range map[string]string{"pipe.fit": "not a regular file", "broken.fit": "a link to something that does not exist",
		filepath.Base(deep): "too long"} {
		if !strings.Contains(reasons[name], want) {
			t.Errorf("%.20s: %q, want %q", name, reasons[name], want)
		}
	}
	if _, err := ingest.ReadFile(pipe, ingest.Options{}); err == nil || !strings.Contains(err.Error(), "not a regular file") {
		t.Errorf("ReadFile on a pipe: %v", err)
	}
}

// A ride 500 folders deep, past the longest path the system opens, is
// listed as skipped with the reason, not dropped without a line.
func TestTooDeepIsListed(t *testing.T) {
	top := t.TempDir()
	t.Chdir(top)
	for range 500 {
		if err := os.Mkdir("folder0123", 0o755); err != nil {
			t.Skip("cannot nest folders here:", err)
		}
		if err := os.Chdir("folder0123"); err != nil {
			t.Skip(err)
		}
	}
	os.WriteFile("deep.fit", []byte("x"), 0o644)
	res := ingest.Scan([]string{top}, ingest.Options{})
	found := false
	for _, s := range res.Skipped {
		found = found || strings.Contains(s.Reason, "too long")
	}
	if !found {
		t.Errorf("nothing says the deep folder could not be reached: %+v", res.Skipped)
	}
}
