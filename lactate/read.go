package lactate

import (
	"bufio"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"unicode"
)

// Step is one step of a step test: its power and the blood lactate at its
// end; heart rate (NaN when not recorded) and the step's length in seconds
// (0 when not given).
type Step struct {
	PowerW       float64 `json:"power_w"`
	LactateMmol  float64 `json:"lactate_mmol"`
	HeartRateBPM float64 `json:"heart_rate_bpm"`
	DurationS    int     `json:"step_s"`
}

// StepTest is one step test, steps in order of power.
type StepTest struct {
	File    string `json:"file"`
	Test    string `json:"test"` // the test's name or date within the file
	Athlete string `json:"athlete"`
	Date    string `json:"date"` // YYYY-MM-DD, "" when not given
	Steps   []Step `json:"steps"`
}

// Limits of a usable test.
const (
	MinSteps      = 4
	MaxLactate    = 30.0 // mmol/L; above this a value is a typing or analyser error
	maxRows       = 10000
	maxFieldBytes = 256
)

// Column names, matched after normalising a header (lower case, other
// punctuation as "_", a unit in brackets as a suffix or dropped): "Power
// (W)" is "power_w" or "power".
var (
	powerNames   = []string{"power_w", "watts_w", "power", "watts", "pwr"}
	lactateNames = []string{"lactate_mmol", "lactate", "la", "bla", "blood_lactate", "lactate_mmol_l"}
	hrNames      = []string{"heart_rate_bpm", "hr_bpm", "heart_rate", "heartrate", "hr", "bpm"}
	stepSNames   = []string{"step_s", "step_sec", "duration_s", "seconds", "step_seconds"}
	stepMinNames = []string{"step_min", "duration_min", "minutes", "step_minutes"}
	athleteNames = []string{"athlete", "rider", "name"}
	testNames    = []string{"test", "test_id", "session"}
	dateNames    = []string{"date", "day", "test_date"}
	la10Names    = []string{"lactate_10_mmol", "lactate_10", "la10", "lactate_10min", "la_10"}
	la30Names    = []string{"lactate_30_mmol", "lactate_30", "la30", "lactate_30min", "la_30"}
)

var (
	units       = regexp.MustCompile(`[\(\[][^\)\]]*[\)\]]`)
	underscores = regexp.MustCompile(`_+`)
)

// headerKeys normalises a column name two ways: with its unit as a
// suffix ("Step (min)" → "step_min", "Lactate [mmol/L]" → "lactate_mmol_l")
// and without it ("step", "lactate").
func headerKeys(h string) (withUnit, bare string) {
	h = strings.ToLower(strings.TrimSpace(strings.TrimPrefix(h, "\ufeff")))
	key := func(s string) string {
		var b strings.Builder
		for _, r := range s {
			if unicode.IsLetter(r) || unicode.IsDigit(r) {
				b.WriteRune(r)
			} else {
				b.WriteRune('_')
			}
		}
		return strings.Trim(underscores.ReplaceAllString(b.String(), "_"), "_")
	}
	return key(h), key(units.ReplaceAllString(h, ""))
}

// table is a CSV read into named columns.
type table struct {
	cols map[string]int
	rows [][]string
	line []int // the file's line number of each row
}

func (t table) col(names []string) int {
	for _, n := range names {
		if i, ok := t.cols[n]; ok {
			return i
		}
	}
	return -1
}

func (t table) cell(r, c int) string {
	if c < 0 || c >= len(t.rows[r]) {
		return ""
	}
	return strings.TrimSpace(t.rows[r][c])
}

// readTable reads a CSV (comma, semicolon or tab separated, a header row)
// with bounded rows and fields.
func readTable(r io.Reader) (table, error) {
	br := bufio.NewReader(io.LimitReader(r, 4<<20))
	head, err := br.ReadString('\n')
	if err != nil && err != io.EOF {
		return table{}, err
	}
	if strings.TrimSpace(head) == "" {
		return table{}, errors.New("the file has no header row")
	}
	delim := ','
	best := strings.Count(head, ",")
	for _, c := range []rune{';', '\t'} {
		if n := strings.Count(head, string(c)); n > best {
			delim, best = c, n
		}
	}
	cr := csv.NewReader(io.MultiReader(strings.NewReader(head), br))
	cr.Comma, cr.FieldsPerRecord, cr.LazyQuotes, cr.TrimLeadingSpace = delim, -1, true, true
	t := table{cols: map[string]int{}}
	header, err := cr.Read()
	if err != nil {
		return table{}, errors.New("the header row cannot be read")
	}
	for _, pass := range []int{0, 1} { // names with their units first
		for i, h := range header {
			k, bare := headerKeys(h)
			if pass == 1 {
				k = bare
			}
			if _, dup := t.cols[k]; k != "" && !dup {
				t.cols[k] = i
			}
		}
	}
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			return table{}, fmt.Errorf("a row cannot be read (%v)", err)
		}
		if len(t.rows) >= maxRows {
			return table{}, fmt.Errorf("more than %d rows: not a lactate test", maxRows)
		}
		empty := true
		for i := range rec {
			if len(rec[i]) > maxFieldBytes {
				return table{}, fmt.Errorf("a field is longer than %d characters", maxFieldBytes)
			}
			empty = empty && strings.TrimSpace(rec[i]) == ""
		}
		if !empty {
			line, _ := cr.FieldPos(0)
			t.rows = append(t.rows, slices.Clone(rec))
			t.line = append(t.line, line)
		}
	}
	return t, nil
}

// number reads a decimal, with a decimal comma where the separator is not
// a comma; "" is NaN.
func number(s string) (float64, error) {
	if s == "" {
		return math.NaN(), nil
	}
	v, err := strconv.ParseFloat(strings.Replace(s, ",", ".", 1), 64)
	if err != nil || math.IsInf(v, 0) || math.IsNaN(v) {
		return 0, fmt.Errorf("%q is not a number", s)
	}
	return v, nil
}

// ReadSteps reads step tests from a CSV: one test per file, or several
// told apart by a test or date column. Every test is checked (see
// checkTest); a test that fails is returned in bad with its reason, the
// others are returned in order of date, then name.
func ReadSteps(r io.Reader, file string) (tests []StepTest, bad []error, err error) {
	t, err := readTable(r)
	if err != nil {
		return nil, nil, err
	}
	pc, lc := t.col(powerNames), t.col(lactateNames)
	if pc < 0 || lc < 0 {
		return nil, nil, errors.New("a step test needs a power column (power_w) and a lactate column (lactate_mmol)")
	}
	hc, sc, mc := t.col(hrNames), t.col(stepSNames), t.col(stepMinNames)
	ac, tc, dc := t.col(athleteNames), t.col(testNames), t.col(dateNames)
	byKey := map[string]*StepTest{}
	var order []string
	var rowErr []error
	for i := range t.rows {
		key := t.cell(i, tc) + "\x00" + t.cell(i, dc) + "\x00" + t.cell(i, ac)
		st := byKey[key]
		if st == nil {
			st = &StepTest{File: file, Test: t.cell(i, tc), Athlete: t.cell(i, ac), Date: t.cell(i, dc)}
			if st.Test == "" {
				st.Test = st.Date
			}
			byKey[key] = st
			order = append(order, key)
		}
		p, e1 := number(t.cell(i, pc))
		la, e2 := number(t.cell(i, lc))
		hr, e3 := number(t.cell(i, hc))
		sec, e4 := number(t.cell(i, sc))
		mins, e5 := number(t.cell(i, mc))
		if e := errors.Join(e1, e2, e3, e4, e5); e != nil {
			rowErr = append(rowErr, fmt.Errorf("%s line %d: %v", testLabel(st), t.line[i], e))
			byKey[key].Steps = append(byKey[key].Steps, Step{PowerW: math.NaN(), LactateMmol: math.NaN()})
			continue
		}
		s := Step{PowerW: p, LactateMmol: la, HeartRateBPM: hr}
		switch {
		case !math.IsNaN(sec):
			s.DurationS = int(sec)
		case !math.IsNaN(mins):
			s.DurationS = int(math.Round(60 * mins))
		}
		st.Steps = append(st.Steps, s)
	}
	for _, k := range order {
		st := byKey[k]
		if why := checkTest(st); why != "" {
			bad = append(bad, fmt.Errorf("%s: %s", testLabel(st), why))
			continue
		}
		tests = append(tests, *st)
	}
	bad = append(rowErr, bad...)
	slices.SortStableFunc(tests, func(a, b StepTest) int { return strings.Compare(a.Date+a.Test, b.Date+b.Test) })
	return tests, bad, nil
}

func testLabel(st *StepTest) string {
	if st.Test == "" && st.Athlete == "" {
		return "step test"
	}
	return strings.TrimSpace("step test " + st.Athlete + " " + st.Test)
}

// checkTest says why a test cannot be analysed, or "".
func checkTest(st *StepTest) string {
	for i, s := range st.Steps {
		switch {
		case math.IsNaN(s.PowerW):
			return fmt.Sprintf("step %d has no power", i+1)
		case math.IsNaN(s.LactateMmol):
			return fmt.Sprintf("step %d (%.0f W) has no lactate value", i+1, s.PowerW)
		case s.PowerW <= 0 || s.PowerW > 2500:
			return fmt.Sprintf("step %d: power %.0f W is not a step of a test", i+1, s.PowerW)
		case s.LactateMmol <= 0 || s.LactateMmol > MaxLactate:
			return fmt.Sprintf("step %d: lactate %.1f mmol/L is outside 0–%.0f mmol/L", i+1, s.LactateMmol, MaxLactate)
		case i > 0 && s.PowerW <= st.Steps[i-1].PowerW:
			return fmt.Sprintf("powers do not increase (step %d: %.0f W after %.0f W)", i+1, s.PowerW, st.Steps[i-1].PowerW)
		}
	}
	if len(st.Steps) < MinSteps {
		return fmt.Sprintf("only %d steps: a step test needs at least %d", len(st.Steps), MinSteps)
	}
	if st.Date != "" && !dateRe.MatchString(st.Date) {
		return fmt.Sprintf("date %q is not YYYY-MM-DD", st.Date)
	}
	return ""
}

var dateRe = regexp.MustCompile(`^\d{4}-\d{2}-\d{2}$`)

// ReadTrials reads MLSS trials from a CSV: power_w, lactate_10_mmol and
// lactate_30_mmol, optionally date and athlete. A row that cannot be used
// is returned in bad with its reason.
func ReadTrials(r io.Reader, file string) (trials []Trial, bad []error, err error) {
	t, err := readTable(r)
	if err != nil {
		return nil, nil, err
	}
	pc, c10, c30 := t.col(powerNames), t.col(la10Names), t.col(la30Names)
	if pc < 0 || c10 < 0 || c30 < 0 {
		return nil, nil, errors.New("MLSS trials need columns power_w, lactate_10_mmol and lactate_30_mmol")
	}
	ac, dc := t.col(athleteNames), t.col(dateNames)
	for i := range t.rows {
		p, e1 := number(t.cell(i, pc))
		a, e2 := number(t.cell(i, c10))
		b, e3 := number(t.cell(i, c30))
		tr := Trial{PowerW: p, Lactate10Mmol: a, Lactate30Mmol: b, Athlete: t.cell(i, ac), Date: t.cell(i, dc), Source: fmt.Sprintf("%s line %d", file, t.line[i])}
		if e := errors.Join(e1, e2, e3); e != nil {
			bad = append(bad, fmt.Errorf("%s: %v", tr.Source, e))
			continue
		}
		if why := tr.check(); why != "" {
			bad = append(bad, fmt.Errorf("%s: %s", tr.Source, why))
			continue
		}
		trials = append(trials, tr)
	}
	return trials, bad, nil
}
