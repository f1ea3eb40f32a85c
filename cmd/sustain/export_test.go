package main

import (
	"database/sql"
	"encoding/csv"
	"os"
	"path/filepath"
	"testing"
)

func TestExportFormats(t *testing.T) {
	dir := seasonFolder(t, athlete, 4, true)
	out := t.TempDir()
	db := filepath.Join(out, "rides.db")
	if code, o, e := runCmd(t, "export", dir, "--format", "sqlite", "--out", db); code != exitOK {
		t.Fatalf("sqlite: exit %d\n%s%s", code, o, e)
	}
	conn, err := sql.Open("sqlite", "file:"+db)
	if err != nil {
		t.Fatal(err)
	}
	defer conn.Close()
	var rides, points, headlines int
	conn.QueryRow(`SELECT count(*) FROM rides`).Scan(&rides)
	conn.QueryRow(`SELECT count(*) FROM curve_points`).Scan(&points)
	conn.QueryRow(`SELECT count(*) FROM estimates WHERE headline = 1`).Scan(&headlines)
	// 8 rides of 90 min (the effort rides run a little longer): every
	// second of the first hour plus the long grid
	if rides != 8 || points < 8*3600 || headlines == 0 {
		t.Errorf("rides %d, points %d, headline estimates %d", rides, points, headlines)
	}
	// the curve points are the curves: best 5 min over all rides
	var best float64
	conn.QueryRow(`SELECT max(watts) FROM curve_points WHERE duration_s = 300`).Scan(&best)
	if best < athlete.MaxPower(300)-1 || best > athlete.MaxPower(300)+1 {
		t.Errorf("best 5 min %.1f W, invented %.1f W", best, athlete.MaxPower(300))
	}
	if code, _, _ := runCmd(t, "export", dir, "--format", "sqlite", "--out", db); code == exitOK {
		t.Error("an existing database was overwritten")
	}
	for _, format := range []string{"csv", "jsonl"} {
		folder := filepath.Join(out, format)
		if code, _, _ := runCmd(t, "export", dir, "--format", format, "--out", folder); code != exitOK {
			t.Fatalf("%s: exit %d", format, code)
		}
		for _, table := range []string{"rides", "curve_points", "estimates"} {
			if st, err := os.Stat(filepath.Join(folder, table+"."+format)); err != nil || st.Size() == 0 {
				t.Errorf("%s/%s: %v", format, table, err)
			}
		}
	}
	f, _ := os.Open(filepath.Join(out, "csv", "rides.csv"))
	rows, err := csv.NewReader(f).ReadAll()
	f.Close()
	if err != nil || len(rows) != 9 || rows[0][1] != "file" {
		t.Errorf("rides.csv: %v, %d rows", err, len(rows))
	}
	if code, _, _ := runCmd(t, "export", dir, "--format", "xml", "--out", filepath.Join(out, "x")); code != exitUsage {
		t.Errorf("bad format: exit %d", code)
	}
}
