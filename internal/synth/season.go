package synth

import (
	"bytes"
	"compress/gzip"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"time"
)

// SeasonFile is one file of an invented season.
type SeasonFile struct {
	Name  string // path relative to the season folder
	Track Track
	Fault string // "" or the fault it carries: dropouts, spikes, stuck, truncated, running
}

// Progression gives the athlete on a given day of a season.
type Progression func(day int) Athlete

// Block is an invented training block: six weeks of steady base, then a
// block from week 7 to week 12 that raises CP by cpGainW and trims W′ by
// wPrimeLossJ (linearly), then a plateau.
func Block(base Athlete, cpGainW, wPrimeLossJ float64) Progression {
	return func(day int) Athlete {
		f := math.Min(1, math.Max(0, float64(day-42)/42))
		a := base
		a.CPW += cpGainW * f
		a.WPrimeJ -= wPrimeLossJ * f
		return a
	}
}

// Season invents weeks of riding from start: four rides a week (two
// endurance rides, one with short maximal efforts, one with long ones, the
// durations rotating so that each few weeks cover 1 to 20 min), plus the
// ordinary faults of field data. It is deterministic for a given seed.
func Season(name string, start time.Time, weeks int, prog Progression, seed uint64) []SeasonFile {
	var files []SeasonFile
	short := [][]int{{180, 60, 10}, {240, 30, 10}, {120, 300, 10}}
	long := [][]int{{720}, {480, 1200}, {600}, {1200}}
	for w := range weeks {
		for k, dow := range []int{1, 3, 5, 6} {
			day := w*7 + dow
			a := prog(day)
			at := start.AddDate(0, 0, day).Add(time.Duration(7+k%2) * time.Hour)
			s := seed*1000 + uint64(day)
			var tr Track
			switch k {
			case 0, 2:
				tr = FieldRide(a, at, 90+15*(w%3), nil, s)
			case 1:
				tr = FieldRide(a, at, 75, short[w%len(short)], s)
			case 3:
				tr = FieldRide(a, at, 150, long[w%len(long)], s)
			}
			f := SeasonFile{Name: fmt.Sprintf("%s/%s-%s.fit", name, at.Format("2006-01-02"), kind(k)), Track: tr}
			switch {
			case day%17 == 5:
				f.Fault = "dropouts"
				for i := 500; i+4 < len(tr.PowerW); i += 400 {
					for j := i; j < i+3; j++ {
						tr.PowerW[j] = math.NaN()
					}
				}
			case day%19 == 3:
				f.Fault = "spikes"
				for i := 700; i < len(tr.PowerW); i += 900 {
					tr.PowerW[i] = 2900
				}
			case day%23 == 6:
				f.Fault = "stuck"
				for i := 1200; i < 1290 && i < len(tr.PowerW); i++ {
					tr.PowerW[i] = 200
				}
			case day%29 == 1:
				f.Fault = "truncated"
			}
			// vary the formats as a rider's archive does
			switch day % 5 {
			case 1:
				f.Name = f.Name[:len(f.Name)-4] + ".tcx"
			case 3:
				f.Name = f.Name[:len(f.Name)-4] + ".csv.gz"
			}
			f.Track = tr
			files = append(files, f)
		}
		if w%4 == 2 { // a run now and then: not cycling, skipped by default
			at := start.AddDate(0, 0, w*7+2).Add(18 * time.Hour)
			run := Build(at, []Segment{{Seconds: 2400, Watts: 230}}, 15, seed+uint64(w))
			run.Sport = "running"
			files = append(files, SeasonFile{Name: fmt.Sprintf("%s/%s-run.fit", name, at.Format("2006-01-02")), Track: run, Fault: "running"})
		}
	}
	return files
}

func kind(k int) string {
	return [...]string{"endurance", "short-efforts", "endurance", "long-efforts"}[k]
}

// WriteSeason writes the files under dir, in the format their names say
// (.fit, .tcx, .csv, optionally .gz); a "truncated" file is cut at two thirds.
func WriteSeason(dir string, files []SeasonFile) error {
	for _, f := range files {
		var buf bytes.Buffer
		name := f.Name
		gz := filepath.Ext(name) == ".gz"
		if gz {
			name = name[:len(name)-3]
		}
		var err error
		switch filepath.Ext(name) {
		case ".fit":
			err = WriteFIT(&buf, f.Track)
		case ".tcx":
			err = WriteTCX(&buf, f.Track)
		case ".gpx":
			err = WriteGPX(&buf, f.Track)
		default:
			err = WriteCSV(&buf, f.Track)
		}
		if err != nil {
			return fmt.Errorf("%s: %w", f.Name, err)
		}
		data := buf.Bytes()
		if f.Fault == "truncated" {
			data = data[:len(data)*2/3]
		}
		if gz {
			var z bytes.Buffer
			zw := gzip.NewWriter(&z)
			zw.Write(data)
			zw.Close()
			data = z.Bytes()
		}
		p := filepath.Join(dir, f.Name)
		if err := os.MkdirAll(filepath.Dir(p), 0o755); err != nil {
			return err
		}
		if err := os.WriteFile(p, data, 0o644); err != nil {
			return err
		}
	}
	return nil
}
