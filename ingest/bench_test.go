package ingest_test

import (
	"bytes"
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
