package store

import (
	"math"
	"math/rand/v2"
	"reflect"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
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
	row := rowOfQuality(&q)
	back, err := row.quality(5000)
	if err != nil || !reflect.DeepEqual(back, q) {
		t.Fatalf("quality: %+v (%v), want %+v", back, err, q)
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
