// Package export writes tables of results for analysts: as an SQLite
// database, as CSV files or as JSON-lines files, one per table.
package export

import (
	"database/sql"
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	_ "modernc.org/sqlite" // the "sqlite" driver, pure Go
)

// Column is a named, typed column: Type is INTEGER, REAL or TEXT.
type Column struct {
	Name, Type string
}

// Table is rows of values in column order: int, float64, string or bool
// (written as 0/1); a NaN float is NULL.
type Table struct {
	Name    string
	Columns []Column
	Rows    [][]any
}

// Formats lists what Write understands.
var Formats = []string{"sqlite", "csv", "jsonl"}

// Write writes tables in format to out: a new database file for sqlite, a
// folder (created) of NAME.csv or NAME.jsonl files otherwise. It never
// overwrites a file that exists unless force, and never writes through a
// link (see Create).
func Write(format, out string, tables []Table, force bool) error {
	switch format {
	case "sqlite":
		return writeSQLite(out, tables, force)
	case "csv", "jsonl":
		if err := os.MkdirAll(out, 0o755); err != nil {
			return err
		}
		for _, t := range tables {
			var err error
			if format == "csv" {
				err = writeCSV(filepath.Join(out, t.Name+".csv"), t, force)
			} else {
				err = writeJSONL(filepath.Join(out, t.Name+".jsonl"), t, force)
			}
			if err != nil {
				return err
			}
		}
		return nil
	}
	return fmt.Errorf("unknown format %q (formats: %s)", format, strings.Join(Formats, ", "))
}

func value(v any) any {
	switch x := v.(type) {
	case float64:
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return nil
		}
	case bool:
		if x {
			return 1
		}
		return 0
	}
	return v
}

// Create creates path for writing: a new file, or with force a file that
// replaces an existing regular file. A link (even a dangling one) or
// anything but a regular file is never written through or replaced.
func Create(path string, force bool) (*os.File, error) {
	if fi, err := os.Lstat(path); err == nil {
		switch {
		case fi.Mode()&os.ModeSymlink != 0:
			return nil, fmt.Errorf("%s is a link; name a new file", path)
		case !fi.Mode().IsRegular():
			return nil, fmt.Errorf("%s is not a file; name a new file", path)
		case !force:
			return nil, fmt.Errorf("%s exists; name a new file (or --force to replace it)", path)
		}
		if err := os.Remove(path); err != nil {
			return nil, err
		}
	}
	return os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
}

func writeSQLite(path string, tables []Table, force bool) error {
	f, err := Create(path, force) // claims the name; SQLite writes into it
	if err != nil {
		return err
	}
	f.Close()
	db, err := sql.Open("sqlite", "file:"+path)
	if err != nil {
		return err
	}
	defer db.Close()
	tx, err := db.Begin()
	if err != nil {
		return err
	}
	defer tx.Rollback()
	for _, t := range tables {
		var cols, marks []string
		for _, c := range t.Columns {
			cols = append(cols, c.Name+" "+c.Type)
			marks = append(marks, "?")
		}
		if _, err := tx.Exec(fmt.Sprintf("CREATE TABLE %s (%s)", t.Name, strings.Join(cols, ", "))); err != nil {
			return err
		}
		stmt, err := tx.Prepare(fmt.Sprintf("INSERT INTO %s VALUES (%s)", t.Name, strings.Join(marks, ", ")))
		if err != nil {
			return err
		}
		for _, r := range t.Rows {
			args := make([]any, len(r))
			for i, v := range r {
				args[i] = value(v)
			}
			if _, err := stmt.Exec(args...); err != nil {
				stmt.Close()
				return err
			}
		}
		stmt.Close()
	}
	return tx.Commit()
}

// cell neutralises a text cell a spreadsheet would run as a formula (it
// starts with =, +, - or @) by a leading apostrophe; numbers are written
// as numbers.
func cell(s string) string {
	if s != "" && strings.ContainsRune("=+-@", rune(s[0])) {
		if _, err := strconv.ParseFloat(s, 64); err != nil {
			return "'" + s
		}
	}
	return s
}

func writeCSV(path string, t Table, force bool) error {
	f, err := Create(path, force)
	if err != nil {
		return err
	}
	w := csv.NewWriter(f)
	var head []string
	for _, c := range t.Columns {
		head = append(head, c.Name)
	}
	w.Write(head)
	for _, r := range t.Rows {
		rec := make([]string, len(r))
		for i, v := range r {
			switch x := value(v).(type) {
			case nil:
				rec[i] = ""
			case float64:
				rec[i] = strconv.FormatFloat(x, 'f', -1, 64)
			case string:
				rec[i] = cell(x)
			default:
				rec[i] = fmt.Sprint(x)
			}
		}
		w.Write(rec)
	}
	w.Flush()
	return errors.Join(w.Error(), f.Close())
}

func writeJSONL(path string, t Table, force bool) error {
	f, err := Create(path, force)
	if err != nil {
		return err
	}
	enc := json.NewEncoder(f)
	for _, r := range t.Rows {
		obj := make(map[string]any, len(r))
		for i, v := range r {
			obj[t.Columns[i].Name] = value(v)
		}
		if err := enc.Encode(obj); err != nil {
			f.Close()
			return err
		}
	}
	return f.Close()
}

// Cols reads columns written as "name TYPE, name TYPE, …".
func Cols(spec string) []Column {
	var cs []Column
	for _, part := range strings.Split(spec, ",") {
		f := strings.Fields(part)
		if len(f) == 2 {
			cs = append(cs, Column{Name: f[0], Type: f[1]})
		}
	}
	return cs
}
