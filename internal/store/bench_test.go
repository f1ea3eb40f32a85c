package store

import (
	"bufio"
	"bytes"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/internal/synth"
	"github.com/sustain-cycling/sustain/powerduration"
	"github.com/tormoder/fit"
)

// benchFolder writes n invented 90-min FIT rides (once per size, shared by
// the benchmarks of one run).
var (
	benchMu   sync.Mutex
	benchDirs = map[int]string{}
)

func benchFolder(b *testing.B, n int) string {
	benchMu.Lock()
	defer benchMu.Unlock()
	if d, ok := benchDirs[n]; ok {
		return d
	}
	dir, err := os.MkdirTemp("", fmt.Sprintf("sustain-bench-%d-", n))
	if err != nil {
		b.Fatal(err)
	}
	a := synth.Athlete{CPW: 270, WPrimeJ: 20000, PmaxW: 1000}
	day := time.Date(2026, 1, 1, 8, 0, 0, 0, time.UTC)
	onEveryCPU(n, func(i int) error {
		tr := synth.FieldRide(a, day.Add(time.Duration(i)*20*time.Hour), 90, []int{60 * (1 + i%12)}, uint64(i))
		var buf bytes.Buffer
		if err := synth.WriteFIT(&buf, tr); err != nil {
			return err
		}
		return os.WriteFile(filepath.Join(dir, fmt.Sprintf("ride-%04d.fit", i)), buf.Bytes(), 0o644)
	}, b)
	benchDirs[n] = dir
	return dir
}

func TestMain(m *testing.M) {
	code := m.Run()
	for _, d := range benchDirs {
		os.RemoveAll(d)
	}
	os.Exit(code)
}

// BenchmarkBareFITDecode streams and decodes every file with the FIT module
// alone (buffered as a scan reads), on the same number of workers as a
// scan: the floor for a scan.
func BenchmarkBareFITDecode(b *testing.B) {
	dir := benchFolder(b, 100)
	files, _ := ingest.ListFiles([]string{dir})
	for b.Loop() {
		onEveryCPU(len(files), func(i int) error {
			f, err := os.Open(files[i])
			if err != nil {
				return err
			}
			defer f.Close()
			_, err = fit.Decode(bufio.NewReaderSize(f, 64<<10))
			return err
		}, b)
	}
}

// onEveryCPU runs f(0) … f(n−1) on a goroutine per CPU; an error fails b.
func onEveryCPU(n int, f func(i int) error, b *testing.B) {
	var wg sync.WaitGroup
	var next atomic.Int64
	for range runtime.NumCPU() {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := int(next.Add(1)) - 1; i < n; i = int(next.Add(1)) - 1 {
				if err := f(i); err != nil {
					b.Error(err)
					return
				}
			}
		}()
	}
	wg.Wait()
}

// BenchmarkScanNoStore is ingest's scan (read, decode, clean) of the same
// folder: what every command does before anything else with --no-store.
// Target (issue 6): at most 1.25× BenchmarkBareFITDecode.
func BenchmarkScanNoStore(b *testing.B) {
	dir := benchFolder(b, 100)
	for b.Loop() {
		if res := ingest.Scan([]string{dir}, ingest.Options{}); len(res.Rides) != 100 {
			b.Fatalf("%d rides", len(res.Rides))
		}
	}
}

// BenchmarkScanNoStoreWithCurves adds the rides' curves (all commands but
// inspect need them), each computed as its ride is decoded, as a cold
// season scan without the store does. Target (issue 12): at least 5×
// faster than BenchmarkBareFITDecode.
func BenchmarkScanNoStoreWithCurves(b *testing.B) {
	dir := benchFolder(b, 100)
	for b.Loop() {
		if res, _ := powerduration.Scan([]string{dir}, ingest.Options{}); len(res.Rides) != 100 {
			b.Fatalf("%d rides", len(res.Rides))
		}
	}
}

// BenchmarkStoreCold scans into an empty store; BenchmarkStoreWarm re-scans
// the unchanged folder. Target (issue 15): the store at most half the size
// of the FIT files (store/FIT); the ratio cold/warm at 100 files is
// reported beside the issue's, at 5,000 (BenchmarkStoreCold5000).
func BenchmarkStoreCold(b *testing.B) { benchCold(b, 100) }

// BenchmarkStoreCold5000 scans 5,000 files into an empty store: the cold
// side of the ratio, whose warm side is BenchmarkStoreWarm5000.
// Target (issue 15): warm at least 40× faster than cold.
func BenchmarkStoreCold5000(b *testing.B) { benchCold(b, 5000) }

// benchCold scans n files into an empty store.
func benchCold(b *testing.B, n int) {
	dir := benchFolder(b, n)
	for b.Loop() {
		b.StopTimer()
		db := filepath.Join(b.TempDir(), "rides.db")
		s, err := Open(db)
		if err != nil {
			b.Fatal(err)
		}
		b.StartTimer()
		if _, _, _, err := s.Scan([]string{dir}, ingest.Options{}); err != nil {
			b.Fatal(err)
		}
		s.Close()
		b.StopTimer()
		b.ReportMetric(float64(sizeOf(b, db))/float64(sizeOf(b, dir)), "store/FIT")
		b.StartTimer()
	}
}

// sizeOf is the bytes of the files at path (a folder, or a store with its
// write-ahead log).
func sizeOf(b *testing.B, path string) int64 {
	var n int64
	filepath.WalkDir(filepath.Dir(path), func(p string, d os.DirEntry, err error) error {
		if err == nil && !d.IsDir() && (p == path || strings.HasPrefix(p, path+"-") || strings.HasPrefix(p, path+string(filepath.Separator))) {
			if fi, err := d.Info(); err == nil {
				n += fi.Size()
			}
		}
		return nil
	})
	return n
}

func BenchmarkStoreWarm(b *testing.B) { benchWarm(b, 100) }

// benchWarm re-scans n unchanged files through a store they filled.
func benchWarm(b *testing.B, n int) {
	dir := benchFolder(b, n)
	s, err := Open(filepath.Join(b.TempDir(), "rides.db"))
	if err != nil {
		b.Fatal(err)
	}
	defer s.Close()
	if _, _, _, err := s.Scan([]string{dir}, ingest.Options{}); err != nil {
		b.Fatal(err)
	}
	for b.Loop() {
		if _, _, st, err := s.Scan([]string{dir}, ingest.Options{}); err != nil || st.Decoded != 0 {
			b.Fatal(err, st)
		}
	}
}

// BenchmarkPeakMemory1000 scans 1000 rides through the store and reports
// the peak heap in use (MB) while the rides and their curves are held.
// Target: at most 150 MB.
func BenchmarkPeakMemory1000(b *testing.B) {
	dir := benchFolder(b, 1000)
	for b.Loop() {
		b.StopTimer()
		s, err := Open(filepath.Join(b.TempDir(), "rides.db"))
		if err != nil {
			b.Fatal(err)
		}
		peak := peakHeap(b, func() {
			res, curves, _, err := s.Scan([]string{dir}, ingest.Options{})
			if err != nil || len(res.Rides) != 1000 {
				b.Fatal(err, len(res.Rides))
			}
			runtime.KeepAlive(curves)
		})
		s.Close()
		b.ReportMetric(peak, "peak-MB")
	}
}

// BenchmarkPeakMemoryNoStore5000 is a cold scan of 5,000 rides without
// the store: each ride's power is let go once its curve is computed
// (powerduration.Scan). Target (issue 15): at most 300 MB.
func BenchmarkPeakMemoryNoStore5000(b *testing.B) {
	dir := benchFolder(b, 5000)
	for b.Loop() {
		b.StopTimer()
		peak := peakHeap(b, func() {
			res, curves := powerduration.Scan([]string{dir}, ingest.Options{})
			if len(res.Rides) != 5000 {
				b.Fatal(len(res.Rides))
			}
			runtime.KeepAlive(curves)
		})
		b.ReportMetric(peak, "peak-MB")
	}
}

// BenchmarkStoreWarm5000 re-scans 5,000 unchanged files through the
// store. Target (issue 15): at most 1 s.
func BenchmarkStoreWarm5000(b *testing.B) { benchWarm(b, 5000) }

// peakHeap runs f (timed) and returns the highest heap in use meanwhile, MB.
func peakHeap(b *testing.B, f func()) float64 {
	runtime.GC()
	var peak atomic.Uint64
	stop := make(chan struct{})
	var wg sync.WaitGroup
	wg.Add(1)
	go func() {
		defer wg.Done()
		var ms runtime.MemStats
		for {
			runtime.ReadMemStats(&ms)
			if ms.HeapInuse > peak.Load() {
				peak.Store(ms.HeapInuse)
			}
			select {
			case <-stop:
				return
			case <-time.After(5 * time.Millisecond):
			}
		}
	}()
	b.StartTimer()
	f()
	b.StopTimer()
	close(stop)
	wg.Wait()
	b.StartTimer()
	return float64(peak.Load()) / (1 << 20)
}
