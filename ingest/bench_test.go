package ingest_test

import (
	"bytes"
	"runtime"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/internal/synth"
	"github.com/tormoder/fit"
)

func threeHourFIT(b *testing.B) []byte {
	tr := synth.FieldRide(rider, start, 180, []int{300, 1200}, 9)
	return encode(b, "fit", tr)
}

// BenchmarkFITDecode is the bare decoder, the floor for ingesting a FIT file.
func BenchmarkFITDecode(b *testing.B) {
	data := threeHourFIT(b)
	b.SetBytes(int64(len(data)))
	b.ResetTimer()
	for b.Loop() {
		if _, err := fit.Decode(bytes.NewReader(data)); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkIngestFIT is decoding plus cleaning onto the 1-Hz timeline.
// Target (issue 2): at most 15 % over BenchmarkFITDecode.
func BenchmarkIngestFIT(b *testing.B) {
	data := threeHourFIT(b)
	b.SetBytes(int64(len(data)))
	b.ResetTimer()
	for b.Loop() {
		if _, err := ingest.Read(bytes.NewReader(data), "r.fit", time.Time{}, ingest.Options{}); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkReadBudget reports, per format, the bytes allocated to read a
// 3-h ride per second of its timeline (B/s-of-ride): the memory budget a
// file costs, which the caps keep bounded whatever the file holds.
func BenchmarkReadBudget(b *testing.B) {
	tr := synth.FieldRide(rider, start, 180, []int{300, 1200}, 9)
	for _, format := range []string{"fit", "tcx", "csv"} {
		data := encode(b, format, tr)
		b.Run(format, func(b *testing.B) {
			var a, z runtime.MemStats
			runtime.ReadMemStats(&a)
			seconds := 0
			for b.Loop() {
				rides, err := ingest.Read(bytes.NewReader(data), "r."+format, start, ingest.Options{})
				if err != nil {
					b.Fatal(err)
				}
				seconds = rides[0].Seconds()
			}
			runtime.ReadMemStats(&z)
			b.ReportMetric(float64(z.TotalAlloc-a.TotalAlloc)/float64(b.N)/float64(seconds), "B/s-of-ride")
		})
	}
}
