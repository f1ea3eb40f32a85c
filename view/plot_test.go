package view

import (
	"math"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/powerduration"
)

// Tick labels read exactly the value they stand at (W′ ticks at 17.5 say
// 17.5, not 18), 5 to 10 labelled ticks an axis, whatever the range.
func TestTickLabelsAreExact(t *testing.T) {
	for _, r := range [][2]float64{{14, 18.3}, {3.2, 5.1}, {0, 1}, {18, 25}, {250, 320}, {0, 1250}, {-6.7, 4.3}, {0.001, 0.0042}, {265, 266}, {0, 21000}, {150, 330}, {0.2, 0.45}} {
		ts := NiceTicks{}.Ticks(r[0], r[1])
		labelled := 0
		for _, tk := range ts {
			if tk.Label == "" {
				continue
			}
			labelled++
			v, err := strconv.ParseFloat(tk.Label, 64)
			if err != nil || v != tk.Value {
				t.Errorf("%v: tick at %v labelled %q", r, tk.Value, tk.Label)
			}
			if tk.Value < r[0]-1e-9 || tk.Value > r[1]+1e-9 {
				t.Errorf("%v: tick %v outside the axis", r, tk.Value)
			}
		}
		if labelled < 5 || labelled > 10 {
			t.Errorf("%v: %d labelled ticks", r, labelled)
		}
		// no decimals the labels do not need (150.0, 175.0, …)
		needless := true
		for _, tk := range ts {
			if tk.Label != "" && (!strings.Contains(tk.Label, ".") || !strings.HasSuffix(tk.Label, "0")) {
				needless = false
			}
		}
		if needless {
			t.Errorf("%v: labels with needless decimals: %v", r, ts)
		}
	}
}

// Date ticks stand at midnight of the day they name, with the year on an
// axis that spans more than one.
func TestDateTicks(t *testing.T) {
	day := func(s string) float64 { d, _ := time.Parse("2006-01-02", s); return float64(d.Unix()) }
	for _, c := range []struct {
		from, to string
		layout   string
	}{{"2026-03-02", "2026-06-21", "Jan 2"}, {"2025-10-01", "2027-02-01", "Jan 2 2006"}, {"2026-05-01", "2026-05-09", "Jan 2"}} {
		ts := DateTicks{}.Ticks(day(c.from), day(c.to))
		if len(ts) < 3 || len(ts) > 10 {
			t.Errorf("%v: %d ticks", c, len(ts))
		}
		for _, tk := range ts {
			at := time.Unix(int64(tk.Value), 0).UTC()
			if math.Mod(tk.Value, 86400) != 0 || at.Format(c.layout) != tk.Label {
				t.Errorf("%v: tick at %v labelled %q", c, at, tk.Label)
			}
		}
	}
}

// Small text: a share short of the whole never reads 100 %, counts agree
// with their nouns, an open window reads in words.
func TestSmallText(t *testing.T) {
	for share, want := range map[float64]string{1: "100%", 0.9989: "99.8%", 0.995: "99.5%", 0.994: "99%", 0: "0%", 0.001: "0.1%", 0.5: "50%"} {
		if got := Percent(share); got != want {
			t.Errorf("percent(%v) = %q, want %q", share, got, want)
		}
	}
	if Count(1, "ride") != "1 ride" || Count(0, "ride") != "0 rides" || Count(3, "window") != "3 windows" {
		t.Error("count")
	}
	for w, want := range map[[2]string]string{{"", ""}: "on every date", {"2026-01-01", ""}: "from 2026-01-01 on", {"", "2026-02-01"}: "up to 2026-02-01"} {
		if got := Span(powerduration.Window{From: w[0], To: w[1]}); got != want {
			t.Errorf("span %v = %q", w, got)
		}
	}
}
