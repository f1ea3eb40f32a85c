package athletes

import (
	"path/filepath"
	"strings"
	"testing"
)

// The mass in force on a date is the latest weighing on or before it (the
// earliest before the first); folders are the file's folder's; bad rows
// are refused with their line.
func TestAthletesFile(t *testing.T) {
	f, err := parse(strings.NewReader("Athlete, Folder, Date, Mass (kg)\nana,ana,2026-01-01,61.5\nana,,2026-04-01,60.2\nben,/data/ben,,74\n"), "/squad")
	if err != nil {
		t.Fatal(err)
	}
	ana, _ := f.Named("ana")
	if ana.Folder != filepath.Clean("/squad/ana") {
		t.Errorf("folder %s", ana.Folder)
	}
	for date, want := range map[string]float64{"2025-12-01": 61.5, "2026-01-01": 61.5, "2026-03-31": 61.5, "2026-04-01": 60.2, "2027-01-01": 60.2} {
		if kg, ok := ana.MassOn(date); !ok || kg != want {
			t.Errorf("ana on %s: %v %v, want %v", date, kg, ok, want)
		}
	}
	ben, _ := f.Named("ben")
	if kg, ok := ben.MassOn("2026-05-05"); !ok || kg != 74 {
		t.Errorf("ben: %v", kg)
	}
	if a, ok := f.Holding("/squad/ana/2026/ride.fit"); !ok || a.Name != "ana" {
		t.Errorf("holding: %+v %v", a, ok)
	}
	if _, ok := f.Holding("/elsewhere/ride.fit"); ok {
		t.Error("a ride outside every folder has an athlete")
	}
	for _, bad := range []string{"", "athlete\n", "name,folder\nana,a\n", "athlete,folder,mass_kg\nana,a,600\n",
		"athlete,folder,date,mass_kg\nana,a,01/02/2026,60\n", "athlete,folder\nana,\n", "athlete,folder\nana,a\nana,b\n"} {
		if _, err := parse(strings.NewReader(bad), "/"); err == nil {
			t.Errorf("%q accepted", bad)
		}
	}
}
