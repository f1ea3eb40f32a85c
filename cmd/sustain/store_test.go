package main

import (
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/internal/store"
	"github.com/sustain-cycling/sustain/internal/synth"
)

// sustainProcess starts the test binary as the sustain command.
func sustainProcess(args ...string) *exec.Cmd {
	cmd := exec.Command(os.Args[0], args...)
	cmd.Env = append(os.Environ(), "SUSTAIN_RUN_MAIN=1")
	return cmd
}

func storeSeason(t *testing.T, weeks int) string {
	t.Helper()
	dir := t.TempDir()
	writeAthlete(t, dir, "r", func(int) synth.Athlete { return synth.Athlete{CPW: 260, WPrimeJ: 20000, PmaxW: 950} }, weeks, 4)
	return filepath.Join(dir, "r")
}

func checkStore(t *testing.T, path string) {
	t.Helper()
	st, err := store.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	if len(st.Notes) > 0 {
		t.Errorf("store needed repair: %v", st.Notes)
	}
	if err := st.Check(); err != nil {
		t.Error(err)
	}
}

// Two runs at once on one store: both succeed and the store stays whole.
func TestStoreTwoProcesses(t *testing.T) {
	dir := storeSeason(t, 3)
	db := filepath.Join(t.TempDir(), "rides.db")
	var wg sync.WaitGroup
	outs := make([][]byte, 2)
	errs := make([]error, 2)
	for i := range 2 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			outs[i], errs[i] = sustainProcess("inspect", "--json", "--store", db, dir).Output()
		}()
	}
	wg.Wait()
	for i := range 2 {
		if errs[i] != nil {
			t.Fatalf("run %d: %v", i, errs[i])
		}
	}
	checkStore(t, db)
	out, err := sustainProcess("inspect", "--json", "--store", db, dir).Output()
	if err != nil {
		t.Fatal(err)
	}
	var js struct {
		Rides int `json:"rides"`
		Store struct {
			Decoded int `json:"decoded"`
			Cached  int `json:"from_store"`
		} `json:"store"`
	}
	if err := json.Unmarshal(out, &js); err != nil {
		t.Fatal(err)
	}
	if js.Store.Decoded != 0 || js.Store.Cached == 0 || js.Rides == 0 {
		t.Errorf("third run: %+v", js)
	}
}

// A run killed in the middle leaves a store that opens cleanly and works.
func TestStoreSurvivesKill(t *testing.T) {
	dir := storeSeason(t, 8)
	db := filepath.Join(t.TempDir(), "rides.db")
	for _, after := range []time.Duration{150 * time.Millisecond, 400 * time.Millisecond, 900 * time.Millisecond} {
		os.Remove(db)
		cmd := sustainProcess("inspect", "--store", db, dir)
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		time.Sleep(after)
		cmd.Process.Kill()
		cmd.Wait()
		checkStore(t, db)
		if out, err := sustainProcess("inspect", "--store", db, dir).CombinedOutput(); err != nil {
			t.Fatalf("after a kill at %v: %v\n%s", after, err, out)
		}
	}
}

// --store pointed at a ride file or a ride folder refuses the store in one
// line, reads the rides without it, and leaves the file and folder as they
// were.
func TestStoreNeverTakesUserFiles(t *testing.T) {
	dir := storeSeason(t, 1)
	var ride string
	filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		if err == nil && !d.IsDir() && ride == "" {
			ride = p
		}
		return nil
	})
	before, _ := os.ReadFile(ride)
	for _, target := range []string{ride, filepath.Dir(ride)} {
		list, _ := os.ReadDir(filepath.Dir(target))
		code, out, errs := runCmd(t, "inspect", dir, "--store", target, "--json")
		if code != exitOK || !strings.Contains(errs, "not a store of sustain") || strings.Count(strings.TrimSpace(errs), "\n") > 0 {
			t.Errorf("--store %s: exit %d, stderr %q", target, code, errs)
		}
		if !json.Valid([]byte(out)) {
			t.Errorf("stdout is not the result: %q", out)
		}
		after, _ := os.ReadDir(filepath.Dir(target))
		if len(after) != len(list) {
			t.Errorf("--store %s changed its folder: %d → %d entries", target, len(list), len(after))
		}
	}
	if now, _ := os.ReadFile(ride); string(now) != string(before) {
		t.Error("the ride file was changed")
	}
}
