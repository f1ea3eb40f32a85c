package powerduration

import (
	"math/rand/v2"
	"testing"
)

// TestWindowsKernels checks the block kernels (assembly where the machine
// has it) against the plain loops they replace, on every length from 1 to
// 300 (every way of splitting into rounds of sixteen, eight and one),
// with the highest window anywhere, ties, and sums past 2^31.
func TestWindowsKernels(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for n := 1; n <= 300; n++ {
		for trial := range 6 {
			lo := make([]uint32, n+3)
			hi := make([]uint32, n)
			base := uint32(rng.Uint64())
			if trial%2 == 0 {
				base = 1<<31 + uint32(rng.IntN(1<<20)) // wraps in 32 bits
			}
			want, first := uint32(0), 0
			for s := range hi {
				lo[s] = base + uint32(rng.IntN(1000))
				w := uint32(rng.IntN(50)) // few values: ties
				if trial >= 4 {
					w = uint32(rng.IntN(1 << 30))
				}
				hi[s] = lo[s] + w
				if w > want || s == 0 {
					want, first = w, s
				}
			}
			if got := windowsMax32(hi, lo); got != want {
				t.Fatalf("n %d trial %d: windowsMax32 %d, want %d", n, trial, got, want)
			}
			if got := windowsMax32Go(hi, lo); got != want {
				t.Fatalf("n %d trial %d: windowsMax32Go %d, want %d", n, trial, got, want)
			}
			if got := firstWith32(hi, lo, want); got != first {
				t.Fatalf("n %d trial %d: firstWith32 %d, want %d", n, trial, got, first)
			}
			if got := firstWith32Go(hi, lo, want); got != first {
				t.Fatalf("n %d trial %d: firstWith32Go %d, want %d", n, trial, got, first)
			}
			if got := firstWith32(hi, lo, want+1<<31); got != n {
				t.Fatalf("n %d trial %d: firstWith32 of a missing value %d, want %d", n, trial, got, n)
			}
		}
	}
}
