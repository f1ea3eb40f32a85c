package powerduration

import (
	"bytes"
	"math"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/internal/synth"
)

func rideFrom(t *testing.T, name string, tr synth.Track, write func(*bytes.Buffer, synth.Track) error) ingest.Ride {
	t.Helper()
	var b bytes.Buffer
	if err := write(&b, tr); err != nil {
		t.Fatal(err)
	}
	rides, err := ingest.Read(&b, name, time.Time{}, ingest.Options{})
	if err != nil {
		t.Fatal(err)
	}
	return rides[0]
}

// The same ride from a head unit (FIT) and a service (GPX, a few points
// lost) counts once, the FIT kept; a copy of a file counts once; another
// ride starting 30 s later does not.
func TestDuplicates(t *testing.T) {
	a := synth.Athlete{CPW: 260, WPrimeJ: 20000, PmaxW: 950}
	day := time.Date(2026, 4, 2, 9, 0, 0, 0, time.UTC)
	tr := synth.FieldRide(a, day, 60, []int{300}, 1)
	lossy := tr
	lossy.PowerW = append([]float64(nil), tr.PowerW...)
	for i := 700; i < len(lossy.PowerW); i += 500 {
		lossy.PowerW[i] = math.NaN()
	}
	other := synth.FieldRide(a, day.Add(30*time.Second), 60, []int{600}, 2)
	write := func(b *bytes.Buffer, t synth.Track) error { return synth.WriteFIT(b, t) }
	writeGPX := func(b *bytes.Buffer, t synth.Track) error { return synth.WriteGPX(b, t) }
	rides := []ingest.Ride{
		rideFrom(t, "ride.gpx", lossy, writeGPX),
		rideFrom(t, "ride.fit", tr, write),
		rideFrom(t, "copy/ride.fit", tr, write),
		rideFrom(t, "other.fit", other, write),
	}
	ingest.SortRides(rides)
	drop, dups := Duplicates(rides, OfRides(rides, 1))
	kept := map[string]bool{}
	for i, r := range rides {
		if !drop[i] {
			kept[r.File] = true
		}
	}
	if len(kept) != 2 || !kept["other.fit"] || !(kept["ride.fit"] || kept["copy/ride.fit"]) || kept["ride.gpx"] || len(dups) != 2 {
		t.Errorf("kept %v, duplicates %+v", kept, dups)
	}
	for _, d := range dups {
		if d.Kept == "ride.gpx" || d.Why == "" {
			t.Errorf("%+v", d)
		}
	}
}
