package main

import (
	"context"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"regexp"
	"strings"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/internal/synth"
)

// chromium is the headless browser the report is checked in: missing in
// CI is a failure (.ci/run installs it), elsewhere a skip.
func chromium(t *testing.T) string {
	t.Helper()
	for _, name := range []string{"chromium", "chromium-browser", "google-chrome"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	if os.Getenv("CI") != "" {
		t.Fatal("no headless browser (chromium) here: .ci/run installs it")
	}
	t.Skip("no chromium here")
	return ""
}

// headless runs the browser on the page with args, bounded in time.
func headless(t *testing.T, browser, page string, args ...string) (stdout, stderr string) {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 90*time.Second)
	defer cancel()
	args = append([]string{"--headless", "--no-sandbox", "--disable-gpu", "--hide-scrollbars", "--enable-logging=stderr", "--v=0",
		"--user-data-dir=" + t.TempDir()}, args...)
	cmd := exec.CommandContext(ctx, browser, append(args, "file://"+page)...)
	var out, errb strings.Builder
	cmd.Stdout, cmd.Stderr = &out, &errb
	if err := cmd.Run(); err != nil {
		t.Fatalf("%s: %v\n%s", browser, err, errb.String())
	}
	return out.String(), errb.String()
}

// The athlete's page, loaded in a real browser: it renders without a
// console error, it holds the same figures as estimate --json (embedded
// as they are, and the headline shown from them), and a screenshot of it
// can be taken (and was looked at when the page was made).
func TestReportInBrowser(t *testing.T) {
	browser := chromium(t)
	dir := seasonFolder(t, synth.Athlete{CPW: 270, WPrimeJ: 20000, PmaxW: 1000}, 12, true)
	page := filepath.Join(t.TempDir(), "athlete.html")
	code, out, errs := runCmd(t, "report", dir, "--out", page, "--name", "Ana <test>", "--mass", "62", "--no-store")
	if code != exitOK || !strings.Contains(out, page) {
		t.Fatalf("report: exit %d\n%s%s", code, out, errs)
	}
	_, want, _ := runCmd(t, "estimate", dir, "--json", "--mass", "62", "--no-store")

	dom, logs := headless(t, browser, page, "--dump-dom")
	for _, l := range strings.Split(logs, "\n") {
		if strings.Contains(l, "CONSOLE") || strings.Contains(l, "Uncaught") {
			t.Errorf("console: %s", l)
		}
	}
	m := regexp.MustCompile(`(?s)<script type="application/json" id="estimate-json">(.*?)</script>`).FindStringSubmatch(dom)
	if m == nil {
		t.Fatalf("the page holds no estimate:\n%.2000s", dom)
	}
	var onPage, fromJSON map[string]any
	if err := json.Unmarshal([]byte(m[1]), &onPage); err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal([]byte(want), &fromJSON); err != nil {
		t.Fatal(err)
	}
	if !reflect.DeepEqual(onPage, fromJSON) {
		t.Errorf("the page's figures differ from estimate --json:\npage %v\njson %v", onPage, fromJSON)
	}
	th := fromJSON["threshold"].(map[string]any)
	shown := regexp.MustCompile(`id="threshold-w"[^>]*>([^<]*)<`).FindStringSubmatch(dom)
	if shown == nil || shown[1] != fmt.Sprintf("%.0f", th["watts"].(float64)) {
		t.Errorf("headline shown %v, estimate says %v W", shown, th["watts"])
	}
	perKG := regexp.MustCompile(`id="threshold-w-per-kg"[^>]*>([^<]*)<`).FindStringSubmatch(dom)
	if perKG == nil || perKG[1] != fmt.Sprintf("%.2f", th["w_per_kg"].(float64)) {
		t.Errorf("W/kg shown %v, estimate says %v", perKG, th["w_per_kg"])
	}
	for _, want := range []string{"Ana &lt;test&gt;", "What moved this season", "The efforts behind the number", "medical clearance", "<svg"} {
		if !strings.Contains(dom, want) {
			t.Errorf("the page lacks %q", want)
		}
	}
	shot := filepath.Join(t.TempDir(), "page.png")
	headless(t, browser, page, "--window-size=900,1400", "--screenshot="+shot)
	if st, err := os.Stat(shot); err != nil || st.Size() < 20000 {
		t.Errorf("screenshot: %v", err)
	}
	// the page is the user's new file: never one that exists
	if code, _, _ := runCmd(t, "report", dir, "--out", page, "--no-store"); code != exitUsage {
		t.Errorf("an existing page was overwritten: exit %d", code)
	}
}
