package main

import (
	"bufio"
	"encoding/json"
	"fmt"
	"image/png"
	"math"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/internal/synth"
)

// twoBlockFolder: four rides in March and four in May; May's 5-min effort is
// higher (invented athlete after a block).
func twoBlockFolder(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	before := synth.Athlete{CPW: 250, WPrimeJ: 20000, PmaxW: 900}
	after := synth.Athlete{CPW: 275, WPrimeJ: 19000, PmaxW: 900}
	var files []synth.SeasonFile
	for i := range 4 {
		files = append(files,
			synth.SeasonFile{Name: "a/march-" + string(rune('a'+i)) + ".fit", Track: synth.FieldRide(before, time.Date(2026, 3, 2+i*3, 8, 0, 0, 0, time.UTC), 60, []int{300}, uint64(i))},
			synth.SeasonFile{Name: "a/may-" + string(rune('a'+i)) + ".fit", Track: synth.FieldRide(after, time.Date(2026, 5, 2+i*3, 8, 0, 0, 0, time.UTC), 60, []int{300}, uint64(10+i))})
	}
	if err := synth.WriteSeason(dir, files); err != nil {
		t.Fatal(err)
	}
	return dir
}

func TestCurveJSONContract(t *testing.T) {
	dir := twoBlockFolder(t)
	code, out, _ := runCmd(t, "curve", dir, "--json", "--from", "2026-05-01", "--to", "2026-05-31")
	if code != exitOK {
		t.Fatalf("exit %d", code)
	}
	var js struct {
		Window  struct{ From, To string } `json:"window"`
		Rides   int                       `json:"rides"`
		Skipped []any                     `json:"skipped"`
		Points  []struct {
			DurationS int     `json:"duration_s"`
			Watts     float64 `json:"watts"`
			File      string  `json:"file"`
			Date      string  `json:"date"`
			OffsetS   *int    `json:"offset_s"`
		} `json:"points"`
	}
	if err := json.Unmarshal([]byte(out), &js); err != nil {
		t.Fatal(err)
	}
	if js.Rides != 4 || js.Skipped == nil || js.Window.From != "2026-05-01" {
		t.Fatalf("rides %d skipped %v window %+v", js.Rides, js.Skipped, js.Window)
	}
	after := synth.Athlete{CPW: 275, WPrimeJ: 19000, PmaxW: 900}
	for _, p := range js.Points {
		if p.OffsetS == nil || !strings.HasPrefix(p.Date, "2026-05") || !strings.Contains(p.File, "may-") {
			t.Fatalf("point outside the window: %+v", p)
		}
		if p.DurationS == 300 {
			// the invented maximal 5-min effort, to within rounding to whole watts
			if math.Abs(p.Watts-after.MaxPower(300)) > 1 {
				t.Errorf("5 min: %.1f W, the invented effort was %.1f W", p.Watts, after.MaxPower(300))
			}
		}
	}
}

func TestCurveTableCSVPlot(t *testing.T) {
	dir := twoBlockFolder(t)
	plot := filepath.Join(t.TempDir(), "curve.png")
	code, out, errs := runCmd(t, "curve", dir, "--last", "30d", "--compare-from", "2026-03-01", "--compare-to", "2026-03-31", "--mass", "70", "--plot", plot)
	if code != exitOK {
		t.Fatalf("exit %d\n%s", code, out)
	}
	for _, want := range []string{"Best mean power, 4 rides from 2026-04-12 to 2026-05-11", "5 min", "W/kg", "compared"} {
		if !strings.Contains(out, want) {
			t.Errorf("table lacks %q:\n%s", want, out)
		}
	}
	if !strings.Contains(errs, "plot written") || strings.Contains(out, "plot written") {
		t.Errorf("the plot's message is not on stderr alone:\n%s", errs)
	}
	f, err := os.Open(plot)
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(f)
	f.Close()
	if err != nil || img.Bounds().Dx() < 400 {
		t.Fatalf("plot: %v", err)
	}

	code, out, _ = runCmd(t, "curve", dir, "--csv")
	if code != exitOK || !strings.HasPrefix(out, "duration_s,watts,file,date,offset_s\n1,") {
		t.Fatalf("csv: exit %d\n%.200s", code, out)
	}
	if rows := strings.Count(out, "\n"); rows != 1+3600 {
		t.Errorf("csv rows %d, want a header and 3600 points (1-h rides)", rows)
	}
}

func TestCurvePerRideLines(t *testing.T) {
	dir := twoBlockFolder(t)
	code, out, _ := runCmd(t, "curve", dir, "--per-ride")
	if code != exitOK {
		t.Fatalf("exit %d", code)
	}
	sc := bufio.NewScanner(strings.NewReader(out))
	sc.Buffer(nil, 1<<22)
	n := 0
	for sc.Scan() {
		var line struct {
			File      string    `json:"file"`
			Date      string    `json:"date"`
			DurationS []int     `json:"duration_s"`
			Watts     []float64 `json:"watts"`
			OffsetS   []int     `json:"offset_s"`
		}
		if err := json.Unmarshal(sc.Bytes(), &line); err != nil {
			t.Fatal(err)
		}
		if len(line.DurationS) != 3600 || len(line.Watts) != 3600 || len(line.OffsetS) != 3600 || line.File == "" {
			t.Fatalf("line %d: %d points", n, len(line.DurationS))
		}
		n++
	}
	if n != 8 {
		t.Errorf("%d lines, want 8", n)
	}
}

func TestCurveUsageAndEmptyWindow(t *testing.T) {
	dir := twoBlockFolder(t)
	for _, args := range [][]string{
		{"curve", dir, "--json", "--csv"},
		{"curve", dir, "--from", "March"},
		{"curve", dir, "--last", "ninety"},
		{"curve", dir, "--last", "30d", "--from", "2026-01-01"},
		{"curve", dir, "--plot", "curve.jpg"},
		{"curve", dir, "--mass", "-3"},
	} {
		if code, _, _ := runCmd(t, args...); code != exitUsage {
			t.Errorf("%v: exit %d, want %d", args, code, exitUsage)
		}
	}
	if code, _, _ := runCmd(t, "curve", dir, "--from", "2025-01-01", "--to", "2025-02-01"); code != exitNothing {
		t.Errorf("empty window: exit %d, want %d", code, exitNothing)
	}
}

// The map (--per-ride lines, in parts) and the reduce (--reduce) give the
// same best-of curve as reading the rides at once.
func TestCurveMapReduce(t *testing.T) {
	dir := twoBlockFolder(t)
	files, _ := filepath.Glob(filepath.Join(dir, "a", "*.fit"))
	out := t.TempDir()
	var parts []string
	for i, half := range [][]string{files[:3], files[3:]} {
		code, lines, _ := runCmd(t, append([]string{"curve", "--per-ride", "--no-store"}, half...)...)
		if code != exitOK {
			t.Fatalf("map %d: exit %d", i, code)
		}
		p := filepath.Join(out, fmt.Sprintf("part%d.jsonl", i))
		os.WriteFile(p, []byte(lines), 0o644)
		parts = append(parts, p)
	}
	_, reduced, _ := runCmd(t, append([]string{"curve", "--reduce", "--json"}, parts...)...)
	_, direct, _ := runCmd(t, "curve", dir, "--json")
	if reduced != direct || !strings.Contains(direct, `"duration_s": 3600`) {
		t.Errorf("reduce differs from a direct scan:\n%.300s\n%.300s", reduced, direct)
	}
	os.WriteFile(filepath.Join(out, "junk.jsonl"), []byte("{not json"), 0o644)
	if code, _, _ := runCmd(t, "curve", "--reduce", filepath.Join(out, "junk.jsonl")); code != exitNothing {
		t.Errorf("junk lines: exit %d", code)
	}
}
