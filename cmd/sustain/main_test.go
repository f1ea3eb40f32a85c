package main

import (
	"bytes"
	"compress/gzip"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/internal/synth"
)

var athlete = synth.Athlete{Name: "test", CPW: 270, WPrimeJ: 18000, PmaxW: 950}

// mixedFolder writes an invented folder of good and bad ride files.
func mixedFolder(t *testing.T) string {
	t.Helper()
	dir := t.TempDir()
	put := func(name string, data []byte) {
		p := filepath.Join(dir, name)
		os.MkdirAll(filepath.Dir(p), 0o755)
		if err := os.WriteFile(p, data, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	day := time.Date(2026, 4, 1, 9, 0, 0, 0, time.UTC)
	var fitBuf, tcxBuf, csvBuf bytes.Buffer
	synth.WriteFIT(&fitBuf, synth.FieldRide(athlete, day, 30, []int{300}, 1))
	synth.WriteTCX(&tcxBuf, synth.FieldRide(athlete, day.AddDate(0, 0, 2), 30, []int{180}, 2))
	synth.WriteCSV(&csvBuf, synth.FieldRide(athlete, day.AddDate(0, 0, 4), 30, nil, 3))
	put("2026/good.fit", fitBuf.Bytes())
	var gz bytes.Buffer
	zw := gzip.NewWriter(&gz)
	zw.Write(tcxBuf.Bytes())
	zw.Close()
	put("2026/good.tcx.gz", gz.Bytes())
	put("good.csv", csvBuf.Bytes())
	put("cut.fit", fitBuf.Bytes()[:fitBuf.Len()/2])
	put("empty.fit", nil)
	put("random.fit", []byte{9, 8, 7, 6, 5, 4, 3, 2, 1, 0, 0, 0, 0, 0})
	put("broken.tcx", tcxBuf.Bytes()[:tcxBuf.Len()/3])
	put("hr-only.csv", []byte("time,hr\n0,100\n"))
	put("readme.txt", []byte("not a ride"))
	return dir
}

func runCmd(t *testing.T, args ...string) (int, string, string) {
	t.Helper()
	var out, errb bytes.Buffer
	code := run(append([]string{"sustain"}, args...), &out, &errb)
	return code, out.String(), errb.String()
}

func TestInspectMixedFolder(t *testing.T) {
	dir := mixedFolder(t)
	code, out, errs := runCmd(t, "inspect", dir)
	if code != exitOK {
		t.Fatalf("exit %d\n%s", code, out)
	}
	for _, want := range []string{"good.fit", "good.tcx.gz", "good.csv", "cut.fit", "cut short", "4 rides read, 4 files skipped"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	// the skipped files are messages: on stderr, each with its reason
	for _, want := range []string{
		"skipped " + filepath.Join(dir, "empty.fit") + ": empty file",
		"skipped " + filepath.Join(dir, "random.fit") + ": not a FIT file",
		"skipped " + filepath.Join(dir, "broken.tcx") + ": malformed XML",
		"skipped " + filepath.Join(dir, "hr-only.csv") + ": CSV has no power column"} {
		if !strings.Contains(errs, want) || strings.Contains(out, want) {
			t.Errorf("stderr lacks %q (or stdout has it):\n%s", want, errs)
		}
	}
	if strings.Contains(out, "readme.txt") {
		t.Error("a file that is not a ride by name was reported")
	}

	code, out, _ = runCmd(t, "inspect", "--json", dir)
	if code != exitOK {
		t.Fatalf("exit %d", code)
	}
	var js struct {
		Rides   int `json:"rides"`
		Skipped []struct {
			File, Reason string
		} `json:"skipped"`
		Quality []struct {
			File      string  `json:"file"`
			Date      string  `json:"date"`
			Seconds   int     `json:"seconds"`
			Coverage  float64 `json:"power_coverage"`
			Truncated bool    `json:"truncated"`
		} `json:"quality"`
	}
	if err := json.Unmarshal([]byte(out), &js); err != nil {
		t.Fatal(err)
	}
	if js.Rides != 4 || len(js.Skipped) != 4 || len(js.Quality) != 4 {
		t.Fatalf("json: %+v", js)
	}
	// ordered by start: the cut FIT and the good FIT start together, then by path
	if js.Quality[0].Date != "2026-04-01" || js.Quality[3].Date != "2026-04-05" || js.Quality[3].Seconds != 1800 {
		t.Errorf("json rides: %+v", js.Quality)
	}
	if !js.Quality[1].Truncated && !js.Quality[0].Truncated {
		t.Error("the cut FIT is not flagged truncated")
	}
}

func TestExitStatus(t *testing.T) {
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "bad.fit"), []byte("nope"), 0o644)
	cases := []struct {
		args []string
		want int
	}{
		{[]string{"inspect", dir}, exitNothing},
		{[]string{"inspect", filepath.Join(dir, "missing")}, exitNothing},
		{[]string{"inspect"}, exitUsage},
		{[]string{"inspect", "--no-such-flag", dir}, exitUsage},
		{[]string{"inspect", "--sport", "rowing", dir}, exitUsage},
		{[]string{"no-such-command"}, exitUsage},
		{[]string{}, exitUsage},
		{[]string{"inspect", "--workers", "-2", dir}, exitUsage},
		{[]string{"estimate", "--mass", "heavy", dir}, exitUsage},
		{[]string{"protocol", "trials", "--no-such-flag"}, exitUsage},
	}
	for _, c := range cases {
		code, out, errs := runCmd(t, c.args...)
		if code != c.want {
			t.Errorf("%v: exit %d, want %d", c.args, code, c.want)
		}
		// a usage error has no result: nothing on stdout, the reason on stderr
		if errs == "" || (c.want == exitUsage && out != "") {
			t.Errorf("%v: stdout %q, stderr %q", c.args, out, errs)
		}
	}
}

// --version names the version and the Go it was built with, on stdout.
func TestVersion(t *testing.T) {
	code, out, _ := runCmd(t, "--version")
	if code != exitOK || !strings.HasPrefix(out, "sustain version ") || !strings.Contains(out, "go1.") {
		t.Errorf("exit %d: %q", code, out)
	}
}

// Messages go to stderr, results to stdout: a path that does not exist
// beside a good folder is a skipped line on stderr, and past ten skipped
// files they are counted by reason instead of listed (inspect lists each).
func TestMessagesOnStderr(t *testing.T) {
	dir := mixedFolder(t)
	for i := range 11 {
		os.WriteFile(filepath.Join(dir, fmt.Sprintf("blank-%02d.fit", i)), nil, 0o644)
	}
	missing := filepath.Join(t.TempDir(), "no-such-folder")
	code, out, errs := runCmd(t, "curve", dir, missing, "--no-store")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if strings.Contains(out, "skipped") || strings.Contains(out, missing) {
		t.Errorf("stdout holds messages:\n%s", out)
	}
	if !strings.Contains(errs, "16 files skipped: 12 empty file, ") || !strings.Contains(errs, "1 no such file or folder") ||
		!strings.Contains(errs, "`sustain inspect` lists each") {
		t.Errorf("stderr does not count the skipped files by reason:\n%s", errs)
	}
	_, _, errs = runCmd(t, "inspect", dir, missing, "--no-store")
	if n := strings.Count(errs, "\nskipped ") + strings.Count(errs[:min(len(errs), 8)], "skipped "); n != 16 {
		t.Errorf("inspect listed %d skipped files, want 16:\n%s", n, errs)
	}
}

// A file name with a newline or an escape sequence cannot fake a line of
// output or colour the terminal: text output quotes it.
func TestOddNamesAreQuoted(t *testing.T) {
	dir := t.TempDir()
	var b bytes.Buffer
	synth.WriteFIT(&b, synth.FieldRide(athlete, time.Date(2026, 4, 1, 9, 0, 0, 0, time.UTC), 30, []int{300}, 1))
	odd := filepath.Join(dir, "ride\nskipped everything.fit")
	os.WriteFile(odd, b.Bytes(), 0o644)
	os.WriteFile(filepath.Join(dir, "\x1b[31mred.fit"), []byte("not a ride"), 0o644)
	code, out, errs := runCmd(t, "inspect", dir, "--no-store")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	all := out + errs
	if strings.Contains(all, "\x1b[31m") || strings.Contains(all, "\nskipped everything.fit") {
		t.Errorf("a name got into the output raw:\n%q", all)
	}
	if !strings.Contains(all, `ride\nskipped everything.fit"`) || !strings.Contains(all, `\x1b[31mred.fit"`) {
		t.Errorf("names not quoted:\n%q", all)
	}
}

// A file name that is not UTF-8 keeps every byte in JSON, each invalid
// byte written as \xNN.
func TestJSONKeepsNamesExact(t *testing.T) {
	dir := t.TempDir()
	os.WriteFile(filepath.Join(dir, "caf\xe9.fit"), []byte("not a ride"), 0o644)
	var b bytes.Buffer
	synth.WriteFIT(&b, synth.FieldRide(athlete, time.Date(2026, 4, 1, 9, 0, 0, 0, time.UTC), 30, []int{300}, 1))
	os.WriteFile(filepath.Join(dir, "ok.fit"), b.Bytes(), 0o644)
	code, out, _ := runCmd(t, "inspect", dir, "--json", "--no-store")
	if code != exitOK || !strings.Contains(out, `caf\\xe9.fit`) || strings.Contains(out, "\ufffd") {
		t.Errorf("exit %d:\n%s", code, out)
	}
}
