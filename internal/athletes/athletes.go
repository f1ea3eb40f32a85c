// Package athletes reads a coach's athletes file: who the athletes are,
// where each one's rides are, and their body mass by date, so that every
// command can give power per kilogram with the mass in force on the day
// (W/kg is how riders of different size are compared, and mass moves over
// a season as power does).
//
// The file is CSV with a header: athlete, folder, date, mass_kg (names
// matched without case or spaces). An athlete's first row names the folder
// of their rides (relative to the file's folder, or absolute); further
// rows may leave it empty and give the mass from another date on:
//
//	athlete,folder,date,mass_kg
//	ana,ana,2026-01-01,61.5
//	ana,,2026-04-01,60.2
//	ben,rides/ben,,74
package athletes

import (
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"time"
)

// Mass is a body mass in force from a date on ("" for always).
type Mass struct {
	From string // YYYY-MM-DD, or ""
	KG   float64
}

// Athlete is one athlete of the file.
type Athlete struct {
	Name   string
	Folder string // absolute, or as written when the file's folder is unknown
	Masses []Mass // by date, earliest first
}

// MassOn is the mass in force on date (YYYY-MM-DD): the latest given on
// or before it, else the earliest given (the best guess before the first
// weighing). ok is false when no mass is given.
func (a Athlete) MassOn(date string) (kg float64, ok bool) {
	if len(a.Masses) == 0 {
		return 0, false
	}
	kg = a.Masses[0].KG
	for _, m := range a.Masses {
		if m.From == "" || m.From <= date {
			kg = m.KG
		}
	}
	return kg, true
}

// File is the athletes of one file, in its order.
type File struct {
	Athletes []Athlete
}

// Named is the athlete of that name.
func (f File) Named(name string) (Athlete, bool) {
	for _, a := range f.Athletes {
		if a.Name == name {
			return a, true
		}
	}
	return Athlete{}, false
}

// Holding is the athlete whose folder holds path (the deepest such folder).
func (f File) Holding(path string) (Athlete, bool) {
	abs, err := filepath.Abs(path)
	if err != nil {
		return Athlete{}, false
	}
	best, found := Athlete{}, false
	for _, a := range f.Athletes {
		rel, err := filepath.Rel(a.Folder, abs)
		if err != nil || rel == ".." || strings.HasPrefix(rel, ".."+string(filepath.Separator)) {
			continue
		}
		if !found || len(a.Folder) > len(best.Folder) {
			best, found = a, true
		}
	}
	return best, found
}

// Read reads an athletes file.
func Read(path string) (File, error) {
	f, err := os.Open(path)
	if err != nil {
		return File{}, fmt.Errorf("athletes file %s: %w", path, err)
	}
	defer f.Close()
	file, err := parse(io.LimitReader(f, 1<<20), filepath.Dir(path))
	if err != nil {
		return File{}, fmt.Errorf("athletes file %s: %w", path, err)
	}
	return file, nil
}

func parse(r io.Reader, dir string) (File, error) {
	cr := csv.NewReader(r)
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	rows, err := cr.ReadAll()
	if err != nil {
		return File{}, fmt.Errorf("not CSV: %v", err)
	}
	if len(rows) < 2 {
		return File{}, errors.New("no athletes (a header, then a row per athlete or mass)")
	}
	col := map[string]int{}
	for i, h := range rows[0] {
		col[strings.NewReplacer(" ", "", "_", "", "(", "", ")", "").Replace(strings.ToLower(strings.TrimSpace(h)))] = i
	}
	ai, ok := col["athlete"]
	if !ok {
		return File{}, errors.New("no athlete column")
	}
	get := func(row []string, name string) string {
		if i, ok := col[name]; ok && i < len(row) {
			return strings.TrimSpace(row[i])
		}
		return ""
	}
	var file File
	index := map[string]int{}
	for n, row := range rows[1:] {
		line := n + 2
		if ai >= len(row) || strings.TrimSpace(row[ai]) == "" {
			return File{}, fmt.Errorf("line %d: no athlete", line)
		}
		name := strings.TrimSpace(row[ai])
		k, seen := index[name]
		if !seen {
			k = len(file.Athletes)
			index[name] = k
			file.Athletes = append(file.Athletes, Athlete{Name: name})
		}
		a := &file.Athletes[k]
		if folder := get(row, "folder"); folder != "" {
			if a.Folder != "" {
				return File{}, fmt.Errorf("line %d: a second folder for %s", line, name)
			}
			if !filepath.IsAbs(folder) {
				folder = filepath.Join(dir, folder)
			}
			if abs, err := filepath.Abs(folder); err == nil {
				folder = abs
			}
			a.Folder = folder
		}
		date, mass := get(row, "date"), firstOf(get(row, "masskg"), get(row, "mass"), get(row, "weightkg"))
		if date != "" {
			if _, err := time.Parse("2006-01-02", date); err != nil {
				return File{}, fmt.Errorf("line %d: date %q is not YYYY-MM-DD", line, date)
			}
		}
		if mass != "" {
			kg, err := strconv.ParseFloat(mass, 64)
			if err != nil || !(kg >= 20 && kg <= 250) {
				return File{}, fmt.Errorf("line %d: mass %q is not a body mass in kg (20–250)", line, mass)
			}
			a.Masses = append(a.Masses, Mass{From: date, KG: kg})
		}
	}
	for i := range file.Athletes {
		a := &file.Athletes[i]
		if a.Folder == "" {
			return File{}, fmt.Errorf("%s has no folder of rides", a.Name)
		}
		sort.SliceStable(a.Masses, func(x, y int) bool { return a.Masses[x].From < a.Masses[y].From })
	}
	return file, nil
}

func firstOf(vs ...string) string {
	for _, v := range vs {
		if v != "" {
			return v
		}
	}
	return ""
}
