package ingest

import (
	"bufio"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"
)

// Column names recognised in a CSV header, case-insensitive, in order of
// preference.
var (
	csvTimeNames    = []string{"seconds", "secs", "time", "elapsed", "elapsed_s", "timestamp"}
	csvPowerNames   = []string{"power", "watts", "pwr", "power_w"}
	csvHRNames      = []string{"heart_rate", "heartrate", "hr", "heart_rate_bpm", "bpm"}
	csvCadenceNames = []string{"cadence", "cad", "rpm", "cadence_rpm"}
)

// decodeCSV reads a CSV ride: a header row, comma, semicolon or tab
// separated. Without a time column each row is one second. A time column of
// elapsed seconds dates the ride at fallbackStart.
func decodeCSV(r io.Reader, fallbackStart time.Time, opts Options) ([]Ride, error) {
	br := bufio.NewReader(r)
	headerLine, err := br.ReadString('\n')
	if err != nil && err != io.EOF {
		return nil, err
	}
	headerLine = strings.TrimPrefix(headerLine, "\ufeff")
	if strings.TrimSpace(headerLine) == "" {
		return nil, errors.New("CSV file has no header row")
	}
	delim := ','
	best := strings.Count(headerLine, ",")
	for _, c := range []rune{';', '\t'} {
		if n := strings.Count(headerLine, string(c)); n > best {
			delim, best = c, n
		}
	}
	cr := csv.NewReader(io.MultiReader(strings.NewReader(headerLine), br))
	cr.Comma = delim
	cr.FieldsPerRecord = -1
	cr.LazyQuotes = true
	cr.TrimLeadingSpace = true
	cr.ReuseRecord = true
	header, err := cr.Read()
	if err != nil {
		return nil, fmt.Errorf("CSV header: %v", err)
	}
	cols := map[string]int{}
	for i, h := range header {
		key := strings.ToLower(strings.TrimSpace(h))
		if _, dup := cols[key]; !dup {
			cols[key] = i
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
	tCol, pCol, hCol, cCol := find(csvTimeNames), find(csvPowerNames), find(csvHRNames), find(csvCadenceNames)
	if pCol < 0 {
		return nil, fmt.Errorf("CSV has no power column (looked for %s)", strings.Join(csvPowerNames, ", "))
	}
	field := func(rec []string, i int) string {
		if i < 0 || i >= len(rec) {
			return ""
		}
		return rec[i]
	}

	var (
		samples  []Sample
		absolute = false
		relative = false
		badTimes int
		loc      *time.Location
		row      int
		base     = float64(fallbackStart.Unix())
	)
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return nil, fmt.Errorf("CSV line %d: %v", row+2, err)
		}
		row++
		s := Sample{Power: parseNumber(field(rec, pCol)), HeartRate: math.NaN(), Cadence: math.NaN()}
		if hCol >= 0 {
			s.HeartRate = parseNumber(field(rec, hCol))
		}
		if cCol >= 0 {
			s.Cadence = parseNumber(field(rec, cCol))
		}
		if tCol < 0 {
			s.UnixS = base + float64(row-1)
		} else {
			v := strings.TrimSpace(field(rec, tCol))
			if x, err := strconv.ParseFloat(v, 64); err == nil && !math.IsNaN(x) && !math.IsInf(x, 0) {
				relative = true
				s.UnixS = base + x
			} else if tm, err := time.Parse(time.RFC3339Nano, v); err == nil {
				absolute = true
				s.UnixS = float64(tm.UnixNano()) / 1e9
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
	if absolute && relative {
		return nil, errors.New("CSV time column mixes elapsed seconds and dates")
	}
	if len(samples) == 0 {
		return nil, errors.New("CSV has no data rows with a valid time")
	}
	if loc == nil {
		loc = time.UTC
		if !fallbackStart.IsZero() {
			loc = fallbackStart.Location()
		}
	}
	ride, err := Clean(samples, opts.SpikeCeilingW, loc)
	if err != nil {
		return nil, err
	}
	ride.Sport = "unknown"
	if badTimes > 0 {
		ride.Quality.Notes = append(ride.Quality.Notes, fmt.Sprintf("%d rows without a valid time were ignored", badTimes))
	}
	if !absolute {
		if fallbackStart.IsZero() {
			ride.Quality.Notes = append(ride.Quality.Notes, "no date in the file or its name")
		} else {
			ride.Quality.Notes = append(ride.Quality.Notes, "date taken from the file name or its modification time")
		}
	}
	return []Ride{ride}, nil
}
