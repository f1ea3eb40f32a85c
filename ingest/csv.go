package ingest

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"regexp"
	"strconv"
	"strings"
	"time"
	"unicode"
)

// Column names recognised in a CSV header, case-insensitive, in order of
// preference.
var (
	csvTimeNames    = []string{"seconds", "secs", "time", "elapsed", "elapsed_s", "timestamp", "time_s", "elapsed_time", "elapsed_time_s", "secs_s"}
	csvPowerNames   = []string{"power", "watts", "pwr", "power_w", "watts_w"}
	csvHRNames      = []string{"heart_rate", "heartrate", "hr", "heart_rate_bpm", "bpm", "hr_bpm"}
	csvCadenceNames = []string{"cadence", "cad", "rpm", "cadence_rpm"}
	csvDateNames    = []string{"date", "start", "start_time", "date_time"}
)

// Bounds of a CSV ride: a line longer than MaxCSVLineBytes is no row of a
// ride (one line of commas would otherwise fill memory); see also
// MaxSamples.
const MaxCSVLineBytes = 64 << 10

// csvLines splits on \n, \r\n or a lone \r (old spreadsheet exports), with
// lines bounded by MaxCSVLineBytes (bufio.ErrTooLong past it).
func csvLines(data []byte, atEOF bool) (advance int, token []byte, err error) {
	for i, c := range data {
		switch c {
		case '\n':
			return i + 1, data[:i], nil
		case '\r':
			if i+1 < len(data) {
				if data[i+1] == '\n' {
					return i + 2, data[:i], nil
				}
				return i + 1, data[:i], nil
			}
			if atEOF {
				return i + 1, data[:i], nil
			}
			return 0, nil, nil // a \n may follow
		}
	}
	if atEOF && len(data) > 0 {
		return len(data), data, nil
	}
	return 0, nil, nil
}

// splitCSV splits one line into fields: quoted fields ("a, b" with ""
// for a quote) are honoured within the line; a quote that never closes is
// taken literally, so one stray quote costs at most its own row.
func splitCSV(line string, delim byte) []string {
	var out []string
	for {
		if strings.HasPrefix(line, "\"") {
			var b strings.Builder
			i, closed := 1, false
			for i < len(line) {
				if line[i] == '"' {
					if i+1 < len(line) && line[i+1] == '"' {
						b.WriteByte('"')
						i += 2
						continue
					}
					closed = true
					i++
					break
				}
				b.WriteByte(line[i])
				i++
			}
			if closed {
				rest := line[i:]
				if k := strings.IndexByte(rest, delim); k >= 0 {
					out = append(out, b.String()+rest[:k])
					line = rest[k+1:]
					continue
				}
				return append(out, b.String()+rest)
			}
		}
		k := strings.IndexByte(line, delim)
		if k < 0 {
			return append(out, line)
		}
		out = append(out, line[:k])
		line = line[k+1:]
	}
}

// decodeCSV reads a CSV ride: a header row, comma, semicolon or tab
// separated. Without a time column each row is one second. A time column of
// elapsed seconds dates the ride at fallbackStart. Rows are read one by one
// and leniently: a row without a valid time is dropped and counted; a file
// cut off (a truncated .gz) keeps the rows before the cut, flagged.
func decodeCSV(r io.Reader, fallbackStart time.Time, opts Options) ([]Ride, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 64<<10), MaxCSVLineBytes)
	sc.Split(csvLines)
	var headerLine string
	for sc.Scan() {
		if headerLine = strings.TrimPrefix(sc.Text(), "\ufeff"); strings.TrimSpace(headerLine) != "" {
			break
		}
	}
	if err := sc.Err(); err != nil {
		return nil, csvReadError(err, 1)
	}
	if strings.TrimSpace(headerLine) == "" {
		return nil, errors.New("CSV file has no header row")
	}
	delim := byte(',')
	best := strings.Count(headerLine, ",")
	for _, c := range []byte{';', '\t'} {
		if n := strings.Count(headerLine, string(c)); n > best {
			delim, best = c, n
		}
	}
	header := splitCSV(headerLine, delim)
	cols := map[string]int{}
	for _, bare := range []bool{false, true} { // names with their units first
		for i, h := range header {
			key := headerKey(h, bare)
			if _, dup := cols[key]; key != "" && !dup {
				cols[key] = i
			}
		}
	}
	find := func(names []string) int {
		for _, n := range names {
			if i, ok := cols[n]; ok {
				return i
			}
		}
		return -1
	}
	tCol, pCol, hCol, cCol, dCol := find(csvTimeNames), find(csvPowerNames), find(csvHRNames), find(csvCadenceNames), find(csvDateNames)
	// a decimal comma where the separator is not a comma (250,5 W)
	num := parseNumber
	if delim != ',' {
		num = func(v string) float64 { return parseNumber(strings.Replace(v, ",", ".", 1)) }
	}
	if pCol < 0 {
		return nil, fmt.Errorf("CSV has no power column (looked for %s)", strings.Join(csvPowerNames, ", "))
	}
	field := func(rec []string, i int) string {
		if i < 0 || i >= len(rec) {
			return ""
		}
		return strings.TrimSpace(rec[i])
	}

	var (
		samples   []Sample
		absolute  = false
		relative  = false
		badTimes  int
		loc       *time.Location
		row       int
		base      = float64(fallbackStart.Unix())
		truncated bool
		dated     bool // by a date column
		dateLoc   *time.Location
	)
	for sc.Scan() {
		line := sc.Text()
		if strings.TrimSpace(line) == "" {
			continue
		}
		row++
		if len(samples) >= MaxSamples {
			return nil, fmt.Errorf("more than %d rows: not the recording of a ride", MaxSamples)
		}
		rec := splitCSV(line, delim)
		if dCol >= 0 && !dated {
			// a date (and time) column dates elapsed times
			if d, ok := parseDate(field(rec, dCol)); ok {
				base, dated, dateLoc = unixSeconds(d), true, d.Location()
			}
		}
		s := Sample{Power: num(field(rec, pCol)), HeartRate: math.NaN(), Cadence: math.NaN()}
		if hCol >= 0 {
			s.HeartRate = num(field(rec, hCol))
		}
		if cCol >= 0 {
			s.Cadence = num(field(rec, cCol))
		}
		if tCol < 0 {
			s.UnixS = base + float64(row-1)
		} else {
			v := field(rec, tCol)
			if x := num(v); !math.IsNaN(x) && !math.IsInf(x, 0) {
				relative = true
				s.UnixS = base + x
			} else if x, ok := clockSeconds(v); ok {
				relative = true
				s.UnixS = base + x
			} else if tm, err := time.Parse(time.RFC3339Nano, v); err == nil {
				absolute = true
				s.UnixS = unixSeconds(tm)
				if loc == nil {
					loc = tm.Location()
				}
			} else {
				badTimes++
				continue
			}
		}
		samples = append(samples, s)
	}
	if err := sc.Err(); err != nil {
		if errors.Is(err, io.ErrUnexpectedEOF) && len(samples) > 0 {
			truncated = true
		} else {
			return nil, csvReadError(err, row+2)
		}
	}
	if absolute && relative {
		return nil, errors.New("CSV time column mixes elapsed seconds and dates")
	}
	if len(samples) == 0 {
		return nil, errors.New("CSV has no data rows with a valid time")
	}
	if loc == nil {
		loc = time.UTC
		if dated {
			loc = dateLoc
		} else if !fallbackStart.IsZero() {
			loc = fallbackStart.Location()
		}
	}
	ride, err := Clean(samples, opts.SpikeCeilingW, loc)
	if err != nil {
		return nil, err
	}
	ride.Sport = "unknown"
	ride.Quality.Truncated = truncated
	if truncated {
		ride.Quality.Notes = append(ride.Quality.Notes, "the file is cut short; the rows before the cut are kept")
	}
	if badTimes > 0 {
		ride.Quality.Notes = append(ride.Quality.Notes, fmt.Sprintf("%d rows without a valid time were dropped", badTimes))
	}
	if !absolute && dated {
		ride.Quality.Notes = append(ride.Quality.Notes, "dated by the file's date column")
	} else if !absolute {
		ride.Quality.DatedByFallback = true
		ride.Quality.FallbackOffsetS = ride.Start.Sub(fallbackStart).Seconds()
		if fallbackStart.IsZero() {
			ride.Quality.Notes = append(ride.Quality.Notes, "no date in the file or its name")
		} else {
			ride.Quality.Notes = append(ride.Quality.Notes, "date taken from the file name or its modification time")
		}
	}
	return []Ride{ride}, nil
}

// csvReadError says in a rider's words why reading stopped.
func csvReadError(err error, line int) error {
	switch {
	case errors.Is(err, bufio.ErrTooLong):
		return fmt.Errorf("CSV line %d is longer than %d KiB: not a row of a ride", line, MaxCSVLineBytes>>10)
	case errors.Is(err, errTooLarge):
		return errTooLarge
	}
	return fmt.Errorf("CSV line %d cannot be read (%v)", line, err)
}

// headerKey normalises a CSV column name: lower case, punctuation as "_",
// a unit in brackets kept as a suffix ("Power (W)" → "power_w") or, with
// bare, dropped ("power").
func headerKey(h string, bare bool) string {
	h = strings.ToLower(strings.Trim(strings.TrimSpace(h), `"`))
	if bare {
		h = bracketed.ReplaceAllString(h, "")
	}
	var b strings.Builder
	for _, r := range h {
		if unicode.IsLetter(r) || unicode.IsDigit(r) {
			b.WriteRune(r)
		} else {
			b.WriteRune('_')
		}
	}
	return strings.Trim(runsOfUnderscores.ReplaceAllString(b.String(), "_"), "_")
}

var (
	bracketed         = regexp.MustCompile(`[\(\[][^\)\]]*[\)\]]`)
	runsOfUnderscores = regexp.MustCompile(`_+`)
)

// clockSeconds reads an elapsed time written H:MM:SS or MM:SS (with an
// optional fraction of a second).
func clockSeconds(v string) (float64, bool) {
	parts := strings.Split(v, ":")
	if len(parts) < 2 || len(parts) > 3 {
		return 0, false
	}
	total := 0.0
	for i, p := range parts {
		x, err := strconv.ParseFloat(strings.Replace(p, ",", ".", 1), 64)
		if err != nil || x < 0 || (i > 0 && x >= 60) || (i < len(parts)-1 && x != math.Trunc(x)) {
			return 0, false
		}
		total = total*60 + x
	}
	return total, true
}

// parseDate reads a date column: 2026-03-14, or a date and time (RFC 3339,
// or "2026-03-14 08:30:00" taken as UTC).
func parseDate(v string) (time.Time, bool) {
	for _, layout := range []string{time.RFC3339Nano, "2006-01-02 15:04:05", "2006-01-02T15:04:05", "2006-01-02"} {
		if t, err := time.Parse(layout, v); err == nil {
			return t, true
		}
	}
	return time.Time{}, false
}
