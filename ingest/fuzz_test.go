package ingest_test

import (
	"bytes"
	"math"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/internal/synth"
)

// addSeeds adds every file of ../testdata/seeds/ whose name ends in ext.
func addSeeds(f *testing.F, ext string) {
	paths, _ := filepath.Glob(filepath.Join("..", "testdata", "seeds", "*"+ext))
	for _, p := range paths {
		if b, err := os.ReadFile(p); err == nil {
			f.Add(b)
		}
	}
}

// readNoPanic reads data as the named file; any error is fine, a panic or a
// ride that breaks the timeline's invariants is not.
func readNoPanic(t *testing.T, name string, data []byte) {
	rides, err := ingest.Read(bytes.NewReader(data), name, time.Unix(1.7e9, 0), ingest.Options{MaxDecompressedBytes: 1 << 20})
	if err != nil {
		return
	}
	for _, r := range rides {
		if len(r.PowerW) == 0 || len(r.PowerW) > ingest.MaxTimelineS {
			t.Fatalf("timeline of %d s", len(r.PowerW))
		}
		for i, p := range r.PowerW {
			if math.IsNaN(p) || p < 0 || p > ingest.DefaultSpikeCeilingW {
				t.Fatalf("second %d = %v", i, p)
			}
		}
	}
}

func FuzzTCX(f *testing.F) {
	var buf bytes.Buffer
	synth.WriteTCX(&buf, synth.Build(start, []synth.Segment{{Seconds: 5, Watts: 200}}, 0, 1))
	f.Add(buf.Bytes())
	addSeeds(f, ".tcx")
	f.Fuzz(func(t *testing.T, data []byte) { readNoPanic(t, "f.tcx", data) })
}

func FuzzGPX(f *testing.F) {
	var buf bytes.Buffer
	synth.WriteGPX(&buf, synth.Build(start, []synth.Segment{{Seconds: 5, Watts: 200}}, 0, 1))
	f.Add(buf.Bytes())
	f.Add([]byte(`<gpx><trk><trkseg><trkpt><time>2026-01-01T00:00:00Z</time><extensions><power>1</power></extensions></trkpt></trkseg></trk></gpx>`))
	addSeeds(f, ".gpx")
	f.Fuzz(func(t *testing.T, data []byte) { readNoPanic(t, "f.gpx", data) })
}

func FuzzCSV(f *testing.F) {
	f.Add([]byte("time,power\n0,100\n1,200\n"))
	f.Add([]byte("timestamp;watts\n2026-01-01T00:00:00Z;100\n"))
	addSeeds(f, ".csv")
	f.Fuzz(func(t *testing.T, data []byte) { readNoPanic(t, "f.csv", data) })
}

func FuzzFIT(f *testing.F) {
	var buf bytes.Buffer
	synth.WriteFIT(&buf, synth.Build(start, []synth.Segment{{Seconds: 5, Watts: 200}}, 0, 1))
	f.Add(buf.Bytes())
	addSeeds(f, ".fit")
	f.Fuzz(func(t *testing.T, data []byte) { readNoPanic(t, "f.fit", data) })
}

// FuzzClean feeds arbitrary samples (time, power pairs) to the cleaner.
func FuzzClean(f *testing.F) {
	f.Add([]byte{0, 100, 1, 200, 2, 0xff, 9, 50})
	f.Add([]byte{5, 1, 3, 2, 200, 3, 0, 4})
	f.Fuzz(func(t *testing.T, data []byte) {
		var s []ingest.Sample
		for i := 0; i+1 < len(data); i += 2 {
			p := float64(data[i+1]) * 12 // up to 3060 W: spikes included
			if data[i+1] == 0xff {
				p = math.NaN()
			}
			s = append(s, ingest.Sample{UnixS: 1.7e9 + float64(data[i])*0.7, Power: p, HeartRate: math.NaN(), Cadence: math.NaN()})
		}
		r, err := ingest.Clean(s, 0, nil)
		if err != nil {
			return
		}
		q := r.Quality
		if q.PowerCoverage <= 0 || q.PowerCoverage > 1 || q.Seconds != len(r.PowerW) {
			t.Fatalf("quality %+v for %d s", q, len(r.PowerW))
		}
		for _, p := range r.PowerW {
			if math.IsNaN(p) || p < 0 || p > ingest.DefaultSpikeCeilingW {
				t.Fatalf("power %v", r.PowerW)
			}
		}
	})
}
