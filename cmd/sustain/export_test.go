package main

import (
	"database/sql"
	"encoding/csv"
	"encoding/json"
	"github.com/sustain-cycling/sustain/internal/synth"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func TestExportFormats(t *testing.T) {
	dir := seasonFolder(t, athlete, 4, true)
	out := t.TempDir()
	db := filepath.Join(out, "rides.db")
	if code, o, e := runCmd(t, "export", dir, "--format", "sqlite", "--out", db); code != exitOK {
		t.Fatalf("sqlite: exit %d\n%s%s", code, o, e)
	}
	conn, err := sql.Open("sqlite", "file:"+db)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close()
	var rides, points, headlines int
	conn.QueryRow(`SELECT count(*) FROM rides`).Scan(&rides)
	conn.QueryRow(`SELECT count(*) FROM curve_points`).Scan(&points)
	conn.QueryRow(`SELECT count(*) FROM estimates WHERE headline = 1`).Scan(&headlines)
	// 8 rides of 90 min (the effort rides run a little longer): every
	// second of the first hour plus the long grid
	if rides != 8 || points < 8*3600 || headlines == 0 {
		t.Errorf("rides %d, points %d, headline estimates %d", rides, points, headlines)
	}
	// the curve points are the curves: best 5 min over all rides
	var best float64
	conn.QueryRow(`SELECT max(watts) FROM curve_points WHERE duration_s = 300`).Scan(&best)
	if best < athlete.MaxPower(300)-1 || best > athlete.MaxPower(300)+1 {
		t.Errorf("best 5 min %.1f W, invented %.1f W", best, athlete.MaxPower(300))
	}
	if code, _, _ := runCmd(t, "export", dir, "--format", "sqlite", "--out", db); code == exitOK {
		t.Error("an existing database was overwritten")
	}
	for _, format := range []string{"csv", "jsonl"} {
		folder := filepath.Join(out, format)
		if code, _, _ := runCmd(t, "export", dir, "--format", format, "--out", folder); code != exitOK {
			t.Fatalf("%s: exit %d", format, code)
		}
		for _, table := range []string{"rides", "curve_points", "estimates"} {
			if st, err := os.Stat(filepath.Join(folder, table+"."+format)); err != nil || st.Size() == 0 {
				t.Errorf("%s/%s: %v", format, table, err)
			}
		}
	}
	f, _ := os.Open(filepath.Join(out, "csv", "rides.csv"))
	rows, err := csv.NewReader(f).ReadAll()
	f.Close()
	if err != nil || len(rows) != 9 || rows[0][1] != "file" {
		t.Errorf("rides.csv: %v, %d rows", err, len(rows))
	}
	if code, _, _ := runCmd(t, "export", dir, "--format", "xml", "--out", filepath.Join(out, "x")); code != exitUsage {
		t.Errorf("bad format: exit %d", code)
	}
}

// Nothing the user owns is overwritten, written through a link, or written
// into a folder being read, unless told to (--force; never a link).
func TestOutputsNeverOverwrite(t *testing.T) {
	dir := seasonFolder(t, athlete, 2, true)
	out := t.TempDir()
	mine := filepath.Join(out, "rides.csv")
	os.WriteFile(mine, []byte("my own notes"), 0o644)
	if code, _, errs := runCmd(t, "export", dir, "--format", "csv", "--out", out); code != exitUsage || !strings.Contains(errs, "exists") {
		t.Errorf("export over rides.csv: exit %d, %s", code, errs)
	}
	if b, _ := os.ReadFile(mine); string(b) != "my own notes" {
		t.Error("rides.csv was overwritten")
	}
	if code, _, _ := runCmd(t, "export", dir, "--format", "csv", "--out", out, "--force"); code != exitOK {
		t.Errorf("--force: exit %d", code)
	}
	link := filepath.Join(t.TempDir(), "season.db")
	os.Symlink(filepath.Join(t.TempDir(), "nowhere", "x.db"), link)
	if code, _, _ := runCmd(t, "export", dir, "--format", "sqlite", "--out", link, "--force"); code != exitUsage {
		t.Errorf("export through a dangling link: exit %d", code)
	}
	inDir := filepath.Join(dir, "r", "export.db")
	if code, _, errs := runCmd(t, "export", dir, "--format", "sqlite", "--out", inDir); code != exitUsage || !strings.Contains(errs, "being read") {
		t.Errorf("export into the folder read: exit %d, %s", code, errs)
	}
	plot := filepath.Join(out, "fit.png")
	os.WriteFile(plot, []byte("a picture of mine"), 0o644)
	if code, _, errs := runCmd(t, "estimate", dir, "--plot", plot); code != exitUsage || !strings.Contains(errs, "exists") {
		t.Errorf("plot over a file: exit %d, %s", code, errs)
	}
	if b, _ := os.ReadFile(plot); string(b) != "a picture of mine" {
		t.Error("the plot overwrote a file")
	}
	if code, _, _ := runCmd(t, "demo", "--out", dir); code != exitUsage {
		t.Errorf("demo into a folder of rides: exit %d", code)
	}
}

// A text cell a spreadsheet would run as a formula is neutralised.
func TestCSVCellsAreNotFormulas(t *testing.T) {
	squad := t.TempDir()
	for _, name := range []string{"=HYPERLINK(1)", "ben"} {
		src := seasonFolder(t, athlete, 1, true)
		os.Rename(filepath.Join(src, "r"), filepath.Join(squad, name))
	}
	out := filepath.Join(t.TempDir(), "x")
	if code, _, errs := runCmd(t, "export", squad, "--squad", "--format", "csv", "--out", out); code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	b, _ := os.ReadFile(filepath.Join(out, "rides.csv"))
	if strings.Contains(string(b), "\n=HYPERLINK") || !strings.Contains(string(b), "\n'=HYPERLINK(1),") {
		t.Errorf("rides.csv:\n%.300s", b)
	}
}

// Every command answers --json: export says what it wrote, the demo gives
// the invented season and each command's own JSON result.
func TestExportAndDemoJSON(t *testing.T) {
	dir := seasonFolder(t, synth.Athlete{CPW: 270, WPrimeJ: 20000, PmaxW: 1000}, 4, true)
	db := filepath.Join(t.TempDir(), "x.db")
	code, out, errs := runCmd(t, "export", dir, "--out", db, "--json", "--no-store")
	var ex struct {
		Format      string `json:"format"`
		Rides       int    `json:"rides"`
		CurvePoints int    `json:"curve_points"`
		Skipped     []any  `json:"skipped"`
	}
	if err := json.Unmarshal([]byte(out), &ex); code != exitOK || err != nil || ex.Format != "sqlite" || ex.Rides != 8 || ex.CurvePoints < 8*3600 || ex.Skipped == nil {
		t.Errorf("export: exit %d, %v, %+v\n%s", code, err, ex, errs)
	}
	code, out, errs = runCmd(t, "demo", "--out", filepath.Join(t.TempDir(), "demo"), "--json")
	var demo struct {
		Athlete struct {
			CPW float64 `json:"cp_w"`
		} `json:"athlete"`
		Steps []struct {
			Command []string       `json:"command"`
			Result  map[string]any `json:"result"`
		} `json:"steps"`
	}
	if err := json.Unmarshal([]byte(out), &demo); code != exitOK || err != nil || demo.Athlete.CPW != demoAthlete.CPW || len(demo.Steps) != 5 {
		t.Fatalf("demo: exit %d, %v\n%s", code, err, errs)
	}
	if th, _ := demo.Steps[2].Result["threshold"].(map[string]any); th == nil || th["watts"] == nil {
		t.Errorf("the demo's estimate step has no threshold: %v", demo.Steps[2].Result)
	}
}
