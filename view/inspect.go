package view

import (
	"encoding/json"
	"fmt"
	"io"
	"math"
	"reflect"
	"strconv"
	"strings"
	"text/tabwriter"
	"unicode/utf8"

	"github.com/sustain-cycling/sustain/ingest"
)

type RideQuality struct {
	File    string `json:"file"`
	Session int    `json:"session"`
	Date    string `json:"date"`
	Start   string `json:"start"`
	Sport   string `json:"sport"`
	ingest.Quality
}

type StoreCounts struct {
	Path    string `json:"path"`
	Decoded int    `json:"decoded"`
	Cached  int    `json:"from_store"`
}

// ArchiveCounts counts, per archive, its ride members read, skipped and left
// out as duplicates.
type ArchiveCounts struct {
	Archive    string `json:"archive"`
	Rides      int    `json:"rides"`
	Skipped    int    `json:"skipped"`
	Duplicates int    `json:"duplicates"`
}

type Inspection struct {
	Store      *StoreCounts       `json:"store,omitempty"`
	Rides      int                `json:"rides"`
	Skipped    []ingest.Skipped   `json:"skipped"`
	Duplicates []ingest.Duplicate `json:"duplicates"`
	Archives   []ArchiveCounts    `json:"archives"`
	Quality    []RideQuality      `json:"quality"`
}

// archiveOf is the archive part of ARCHIVE:MEMBER, or "".
func archiveOf(file string) string {
	if i := strings.Index(strings.ToLower(file), ".zip:"); i >= 0 {
		return file[:i+len(".zip")]
	}
	return ""
}

func archiveCounts(res ingest.Result) []ArchiveCounts {
	var out []ArchiveCounts
	at := map[string]int{}
	count := func(file string, f func(*ArchiveCounts)) {
		a := archiveOf(file)
		if a == "" {
			return
		}
		i, ok := at[a]
		if !ok {
			i = len(out)
			at[a] = i
			out = append(out, ArchiveCounts{Archive: a})
		}
		f(&out[i])
	}
	for _, r := range res.Rides {
		count(r.File, func(a *ArchiveCounts) { a.Rides++ })
	}
	for _, s := range res.Skipped {
		count(s.File, func(a *ArchiveCounts) { a.Skipped++ })
	}
	for _, d := range res.Duplicates {
		count(d.File, func(a *ArchiveCounts) { a.Duplicates++ })
	}
	return out
}

func NewInspection(res ingest.Result) Inspection {
	out := Inspection{Rides: max(len(res.Rides), res.Read), Skipped: res.Skipped, Duplicates: res.Duplicates,
		Archives: archiveCounts(res), Quality: []RideQuality{}}
	if out.Skipped == nil {
		out.Skipped = []ingest.Skipped{}
	}
	if out.Duplicates == nil {
		out.Duplicates = []ingest.Duplicate{}
	}
	if out.Archives == nil {
		out.Archives = []ArchiveCounts{}
	}
	for _, r := range res.Rides {
		out.Quality = append(out.Quality, RideQuality{
			File: r.File, Session: r.Session, Date: r.Date(), Start: r.Start.Format("2006-01-02T15:04:05Z07:00"),
			Sport: r.Sport, Quality: listsNotNull(r.Quality),
		})
	}
	return out
}

// writeJSON writes v as indented JSON. A string that is not valid UTF-8
// (a file name in another encoding) keeps every byte: each byte that is
// not UTF-8 is written as \xNN (a backslash, x and two hex digits), where
// JSON itself would have replaced it.
func WriteJSON(w io.Writer, v any) error {
	if v != nil {
		cp := reflect.New(reflect.TypeOf(v)).Elem()
		cp.Set(reflect.ValueOf(v))
		escapeInvalid(cp)
		v = cp.Interface()
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}

// escapeInvalid rewrites, in place, the strings under v that are not
// valid UTF-8 (see writeJSON).
func escapeInvalid(v reflect.Value) {
	switch v.Kind() {
	case reflect.String:
		if s := v.String(); !utf8.ValidString(s) && v.CanSet() {
			var b strings.Builder
			for len(s) > 0 {
				r, n := utf8.DecodeRuneInString(s)
				if r == utf8.RuneError && n == 1 {
					fmt.Fprintf(&b, "\\x%02x", s[0])
				} else {
					b.WriteString(s[:n])
				}
				s = s[n:]
			}
			v.SetString(b.String())
		}
	case reflect.Pointer, reflect.Interface:
		if !v.IsNil() {
			if v.Kind() == reflect.Interface {
				e := reflect.New(v.Elem().Type()).Elem()
				e.Set(v.Elem())
				escapeInvalid(e)
				if v.CanSet() {
					v.Set(e)
				}
				return
			}
			escapeInvalid(v.Elem())
		}
	case reflect.Struct:
		for i := range v.NumField() {
			if v.Type().Field(i).IsExported() {
				escapeInvalid(v.Field(i))
			}
		}
	case reflect.Slice, reflect.Array:
		if v.Kind() == reflect.Slice && v.Type().Elem().Kind() == reflect.Uint8 {
			return // bytes are base64 in JSON
		}
		for i := range v.Len() {
			escapeInvalid(v.Index(i))
		}
	case reflect.Map:
		for _, k := range v.MapKeys() {
			e := reflect.New(v.Type().Elem()).Elem()
			e.Set(v.MapIndex(k))
			escapeInvalid(e)
			v.SetMapIndex(k, e)
		}
	}
}

func RenderInspection(w io.Writer, res ingest.Result) {
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	if len(res.Rides) > 0 {
		fmt.Fprintln(tw, "date\tstart\tlength\tpower\tinterval\tgaps\tdropouts\tspikes\tstuck\tsport\tfile\tnotes")
	}
	for _, r := range res.Rides {
		q := r.Quality
		var notes []string
		if q.Truncated {
			notes = append(notes, "cut short (records before the cut kept)")
		}
		if q.Salvaged {
			notes = append(notes, "damaged (salvaged)")
		}
		if q.TimeReversals > 0 {
			notes = append(notes, fmt.Sprintf("time went backwards %d×", q.TimeReversals))
		}
		if q.InvalidValues > 0 {
			notes = append(notes, fmt.Sprintf("%d invalid values", q.InvalidValues))
		}
		notes = append(notes, q.Notes...)
		session := ""
		if r.Session > 0 {
			session = fmt.Sprintf(" #%d", r.Session+1)
		}
		spikes := "-"
		if q.SpikesRemoved > 0 {
			spikes = strconv.Itoa(q.SpikesRemoved)
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%gs\t%s\t%s\t%s\t%s\t%s\t%s%s\t%s\n",
			r.Date(), r.Start.Format("15:04"), Clock(q.Seconds), Percent(q.PowerCoverage), q.RecordingIntervalS,
			countSeconds(len(q.Gaps), q.GapSeconds), countSeconds(len(q.Dropouts), q.DropoutSeconds),
			spikes, stuckText(q.StuckRuns), r.Sport, Shown(r.File), session, strings.Join(notes, "; "))
	}
	tw.Flush()
	if len(res.Rides) > 0 {
		fmt.Fprintln(w, "gaps: missing runs set to 0 W; dropouts: runs of 5 s or less filled by interpolation; stuck: identical power for 60 s or more (left as is)")
	}
	if res.Read > len(res.Rides) {
		fmt.Fprintf(w, "%s read (%d with problems listed), %s skipped\n", Count(res.Read, "ride"), len(res.Rides), Count(len(res.Skipped), "file"))
	} else {
		fmt.Fprintf(w, "%s read, %s skipped\n", Count(len(res.Rides), "ride"), Count(len(res.Skipped), "file"))
	}
	for _, d := range res.Duplicates {
		fmt.Fprintf(w, "duplicate %s: left out, the same ride as %s (%s)\n", Shown(d.File), Shown(d.Kept), d.Why)
	}
	for _, a := range archiveCounts(res) {
		fmt.Fprintf(w, "archive %s: %s, %d skipped, %d duplicates\n", Shown(a.Archive), Count(a.Rides, "ride"), a.Skipped, a.Duplicates)
	}
}

// percent writes a share as a whole percentage, but never rounds a share
// short of the whole up to 100 % nor one above nothing down to 0 %
// (99.89 % reads 99.8 %).
func Percent(share float64) string {
	p := 100 * share
	switch {
	case p >= 99.5 && p < 100:
		return strconv.FormatFloat(math.Floor(p*10)/10, 'f', 1, 64) + "%"
	case p > 0 && p <= 0.5:
		return strconv.FormatFloat(math.Ceil(p*10)/10, 'f', 1, 64) + "%"
	}
	return fmt.Sprintf("%.0f%%", p)
}

// listsNotNull is a quality report whose empty lists are empty, not
// absent (JSON [] rather than null).
func listsNotNull(q ingest.Quality) ingest.Quality {
	if q.Gaps == nil {
		q.Gaps = []ingest.Span{}
	}
	if q.Dropouts == nil {
		q.Dropouts = []ingest.Span{}
	}
	if q.SpikeOffsetsS == nil {
		q.SpikeOffsetsS = []int{}
	}
	if q.StuckRuns == nil {
		q.StuckRuns = []ingest.StuckRun{}
	}
	return q
}

func countSeconds(n, s int) string {
	if n == 0 {
		return "-"
	}
	return fmt.Sprintf("%d (%ds)", n, s)
}

func stuckText(runs []ingest.StuckRun) string {
	if len(runs) == 0 {
		return "-"
	}
	total := 0
	for _, r := range runs {
		total += r.Seconds
	}
	return fmt.Sprintf("%d (%ds)", len(runs), total)
}
