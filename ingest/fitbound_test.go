package ingest

import (
	"bytes"
	"compress/gzip"
	"runtime"
	"strings"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/internal/synth"
)

// A gzipped FIT of 300,000 records (a 1.6-MB file) is refused once the
// reader passes 250,000, within a bounded amount of memory.
func TestFITTooManyRecordsIsRefused(t *testing.T) {
	tr := synth.Build(time.Date(2026, 1, 2, 8, 0, 0, 0, time.UTC), []synth.Segment{{Seconds: 300_000, Watts: 200}}, 0, 1)
	var buf bytes.Buffer
	if err := synth.WriteFIT(&buf, tr); err != nil {
		t.Fatal(err)
	}
	var z bytes.Buffer
	zw := gzip.NewWriter(&z)
	zw.Write(buf.Bytes())
	zw.Close()
	var a, b runtime.MemStats
	runtime.GC()
	runtime.ReadMemStats(&a)
	_, err := Read(bytes.NewReader(z.Bytes()), "big.fit.gz", time.Time{}, Options{})
	runtime.ReadMemStats(&b)
	if err == nil || !strings.Contains(err.Error(), "more than 250000 records") {
		t.Errorf("error %v", err)
	}
	if used := b.TotalAlloc - a.TotalAlloc; used > 4*MaxFITBytes {
		t.Errorf("%d MB allocated to refuse it", used>>20)
	}
}

// BenchmarkFITReader is the tolerant reader alone on a 3-h ride; beside
// BenchmarkFITDecode (the FIT library on the same file) it gives the
// reader's speed-up (target: at least 15×).
func BenchmarkFITReader(b *testing.B) {
	var buf bytes.Buffer
	synth.WriteFIT(&buf, synth.FieldRide(synth.Athlete{Name: "test", CPW: 280, WPrimeJ: 20000, PmaxW: 1000},
		time.Date(2026, 5, 3, 8, 30, 0, 0, time.UTC), 180, []int{300, 1200}, 9))
	data := buf.Bytes()
	b.SetBytes(int64(len(data)))
	for b.Loop() {
		if f := readFIT(data, MaxFITRecords, nil); len(f.records) == 0 {
			b.Fatal("no records")
		}
	}
}

// The CRC, eight bytes a step, equals the protocol's nibble-wise reference on random
// data, and on "123456789" gives 0xBB3D (CRC-16/ARC's check value).
func TestFITCRC(t *testing.T) {
	if got := fitCRC([]byte("123456789")); got != 0xBB3D {
		t.Errorf("check value %#04x", got)
	}
	b := make([]byte, 4096)
	for i := range b {
		b[i] = byte(i*131 + i/7)
	}
	for n := range len(b) {
		if fitCRC(b[:n]) != fitCRCNibbles(b[:n]) {
			t.Fatalf("length %d differs", n)
		}
	}
}
