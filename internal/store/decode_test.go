package store

import (
	"math/rand/v2"
	"slices"
	"testing"
)

// The decoding kernels (assembly where the machine has it) against the
// Go loops they stand for: every length to 40 rounds, changes of every
// one-byte value, a round with a long change in it at every place,
// offsets that go below 0 (reported, not hidden), sums past 2^31.
func TestDecodeKernels(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	for n := 0; n <= 320; n += 8 {
		for trial := range 8 {
			fixed := make([]byte, 2*n+5)
			for i := range fixed {
				fixed[i] = byte(rng.IntN(256))
			}
			run := uint32(rng.Uint64())
			if trial%2 == 0 {
				run = 1<<31 - uint32(rng.IntN(1000))
			}
			got, want := make([]uint32, n), make([]uint32, n)
			gl, gm := prefixSums8(got, fixed, run)
			wl, wm := prefixSums8Go(want, fixed, run)
			if gl != wl || gm != wm || !slices.Equal(got, want) {
				t.Fatalf("sums, %d points, trial %d: last %d most %d, want %d %d", n, trial, gl, gm, wl, wm)
			}

			b := make([]byte, n+9)
			for i := range b {
				b[i] = byte(rng.IntN(128))
			}
			if trial >= 4 && n > 0 {
				b[rng.IntN(n)] |= 0x80 // a long change: the rounds stop before it
			}
			first, off := int32(1+rng.IntN(3000)), int32(rng.IntN(600))
			if trial == 7 {
				off = 3 // goes below 0
			}
			go16, want16 := make([]uint16, n), make([]uint16, n)
			gc, gLast, gLow, gHigh := offsets16(go16, b, first, off)
			wc, wLast, wLow, wHigh := offsets16Go(want16, b, first, off)
			if gc != wc || gLast != wLast || (gc > 0 && (gLow != wLow || gHigh != wHigh)) {
				t.Fatalf("offsets, %d points, trial %d: rounds %d last %d lowest %d highest %d, want %d %d %d %d",
					n, trial, gc, gLast, gLow, gHigh, wc, wLast, wLow, wHigh)
			}
			if wLow >= 0 && !slices.Equal(go16[:8*gc], want16[:8*wc]) {
				t.Fatalf("offsets, %d points, trial %d: %v, want %v", n, trial, go16[:8*gc], want16[:8*wc])
			}
		}
	}
}
