package view

import (
	"fmt"
	"math"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/powerduration"
)

// shown is a file name as text output prints it: quoted (Go syntax, with
// escapes) when it holds a control character, an escape sequence or bytes
// that are not UTF-8, so that a name can neither fake a line of output nor
// colour the terminal.
func Shown(name string) string {
	if !utf8.ValidString(name) || strings.IndexFunc(name, func(r rune) bool { return unicode.IsControl(r) || r == 0x7f }) >= 0 {
		return strconv.Quote(name)
	}
	return name
}

// clock formats seconds as h:mm:ss.
func Clock(s int) string {
	return fmt.Sprintf("%d:%02d:%02d", s/3600, s/60%60, s%60)
}

// count is n things in words: "1 ride", "3 rides".
func Count(n int, thing string) string {
	if n == 1 {
		return "1 " + thing
	}
	return fmt.Sprintf("%d %ss", n, thing)
}

// span is a window in words: "from A to B", "from A on", "up to B", or
// "on every date".
func Span(w powerduration.Window) string {
	switch {
	case w.From != "" && w.To != "":
		return "from " + w.From + " to " + w.To
	case w.From != "":
		return "from " + w.From + " on"
	case w.To != "":
		return "up to " + w.To
	}
	return "on every date"
}

func OrOpen(d string) string {
	if d == "" {
		return "(open)"
	}
	return d
}

// effortRow is a tab-separated row naming an effort and where it was ridden.
func EffortRow(p powerduration.Point) string {
	return fmt.Sprintf("  %s\t%.0f W\t%s\tat %s in %s", DurationLabel(p.DurationS), p.Watts, p.Date, Clock(p.OffsetS), Shown(p.File))
}

// durationLabel writes a duration as a rider says it: 5 s, 8 min, 1 h 30 min.
func DurationLabel(s int) string {
	switch {
	case s < 60:
		return fmt.Sprintf("%d s", s)
	case s < 3600 && s%60 == 0:
		return fmt.Sprintf("%d min", s/60)
	case s < 3600:
		return fmt.Sprintf("%d min %d s", s/60, s%60)
	case s%3600 == 0:
		return fmt.Sprintf("%d h", s/3600)
	default:
		return fmt.Sprintf("%d h %d min", s/3600, s%3600/60)
	}
}

func NonNil(s []ingest.Skipped) []ingest.Skipped {
	if s == nil {
		return []ingest.Skipped{}
	}
	return s
}

func Ptr(v float64) *float64 { return &v }

// finite returns nil for a number JSON cannot hold.
func Finite(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}
