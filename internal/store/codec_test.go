package store

import (
	"math"
	"math/rand/v2"
	"reflect"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/internal/synth"
	"github.com/sustain-cycling/sustain/powerduration"
)

// Power, curves and quality reports come back from their compact forms
// bit for bit: tenths of a watt in two bytes, anything else in eight.
func TestCodecsRoundTrip(t *testing.T) {
	rng := rand.New(rand.NewPCG(3, 1))
	tenths := make([]float64, 5000)
	for i := range tenths {
		tenths[i] = math.Round(rng.Float64()*4000) / 10
	}
	odd := append([]float64{}, tenths...)
	odd[17] = 123.456
	high := append([]float64{}, tenths...)
	high[99] = 7000 // above what two bytes hold
	for name, p := range map[string][]float64{"tenths": tenths, "off the tenths": odd, "above 6553.5 W": high} {
		b := encodePower(p)
		if name == "tenths" && len(b) != 1+2*len(p) {
			t.Errorf("%s: %d bytes for %d s", name, len(b), len(p))
		}
		back, err := decodePower(b, len(p))
		if err != nil || !reflect.DeepEqual(back, p) {
			t.Fatalf("%s: power does not round-trip (%v)", name, err)
		}
		r := ingest.Ride{File: "x.fit", Start: time.Date(2026, 5, 1, 8, 0, 0, 0, time.UTC), PowerW: p}
		r.Quality.Seconds = len(p)
		c := powerduration.OfRide(&r)
		cb := encodeCurve(c)
		got, err := decodeCurve(cb, &r, 10000, nil)
		if err != nil || !reflect.DeepEqual(got.Watts(), c.Watts()) || !reflect.DeepEqual(got.OffsetsS(), c.OffsetsS()) {
			t.Fatalf("%s: curve does not round-trip (%v)", name, err)
		}
		if name == "tenths" && len(cb) > 4*c.Len() {
			t.Errorf("curve of %d points in %d bytes", c.Len(), len(cb))
		}
		if _, err := decodeCurve(cb[:len(cb)-1], &r, ingest.DefaultSpikeCeilingW, nil); err == nil {
			t.Errorf("%s: a cut curve decoded", name)
		}
	}
	q := ingest.Quality{Samples: 4990, Seconds: 5000, PowerCoverage: 0.98, RecordingIntervalS: 1, GapSeconds: 30,
		Gaps: []ingest.Span{{StartS: 100, Seconds: 30}}, DropoutSeconds: 3, Dropouts: []ingest.Span{{StartS: 7, Seconds: 2}, {StartS: 900, Seconds: 1}}, SpikesRemoved: 2,
		SpikeOffsetsS: []int{40, 41}, StuckRuns: []ingest.StuckRun{{Span: ingest.Span{StartS: 2000, Seconds: 70}, Watts: 212.5}}, Truncated: true,
		DatedByFallback: true, FallbackOffsetS: 1.5, Notes: []string{"one", "two"}}
	packed := rowOfQuality(&q)
	row, err := unpackQuality(packed.packed())
	if err != nil {
		t.Fatalf("quality: its packed form does not unpack (%v)", err)
	}
	back, err := row.quality(5000)
	if err != nil || !reflect.DeepEqual(back, q) {
		t.Fatalf("quality: %+v (%v), want %+v", back, err, q)
	}
	for n := range len(packed.packed()) - len("one\ntwo") {
		if _, err := unpackQuality(packed.packed()[:n]); err == nil {
			t.Errorf("quality cut to %d bytes unpacked", n)
		}
	}
	if _, err := row.quality(2050); err == nil {
		t.Error("a stuck run past the ride's end was accepted")
	}
	empty := ingest.Quality{Seconds: 10}
	row = rowOfQuality(&empty)
	if back, err := row.quality(10); err != nil || !reflect.DeepEqual(back, empty) {
		t.Errorf("empty quality: %+v (%v)", back, err)
	}
}

// Every point of a stored curve is checked, on both ways of decoding
// (the assembly kernels where the machine has them, and Go): a smooth
// field ride's curve (long rounds of one-byte changes) comes back exactly;
// and on rides whose best windows all end at the ride's end (rising
// power) or all start at its start (falling power), a window moved out of
// the ride by one second, at any duration, is refused.
func TestDecodeCurveChecksEveryPoint(t *testing.T) {
	a := synth.Athlete{CPW: 260, WPrimeJ: 18000, PmaxW: 900}
	tr := synth.FieldRide(a, time.Date(2026, 4, 2, 9, 0, 0, 0, time.UTC), 100, []int{45, 420}, 3)
	field := make([]float64, len(tr.PowerW))
	for i, w := range tr.PowerW {
		field[i] = math.Round(w*10) / 10
	}
	rising, falling := make([]float64, 5000), make([]float64, 5000)
	for i := range rising {
		rising[i] = 100 + float64(i)/10
		falling[i] = 600 - float64(i)/10
	}
	kernels := haveAVX2
	defer func() { haveAVX2 = kernels }()
	for _, on := range []bool{kernels, false} {
		haveAVX2 = on
		for name, p := range map[string][]float64{"field": field, "rising": rising, "falling": falling} {
			r := ingest.Ride{File: "x.fit", Start: tr.Start, PowerW: p}
			r.Quality.Seconds = len(p)
			c := powerduration.OfRide(&r)
			got, err := decodeCurve(encodeCurve(c), &r, 2000, nil)
			if err != nil || !reflect.DeepEqual(got.TenthsSums(), c.TenthsSums()) || !reflect.DeepEqual(got.OffsetsS(), c.OffsetsS()) {
				t.Fatalf("kernels %v: the %s ride's curve does not round-trip (%v)", on, name, err)
			}
			if name == "field" {
				continue
			}
			for _, at := range []int{0, 5, 17, 700, 2999, 3599, c.Len() - 1} {
				moved := c.OffsetsS()
				moved[at] -= 1 // before the start
				if name == "rising" {
					moved[at] += 2 // past the end
				}
				bad := powerduration.RideCurveOfSums(c.Source, c.TenthsSums(), nil, moved)
				if _, err := decodeCurve(encodeCurve(bad), &r, 2000, nil); err == nil {
					t.Errorf("kernels %v: %s ride: the window of %d s moved to offset %d, out of the ride, was accepted",
						on, name, c.DurationsS()[at], moved[at])
				}
			}
		}
	}
}
