package store

import (
	"encoding/binary"
	"math"
)

// The innermost loops of a warm scan: a curve's two-byte sum changes
// summed, and its one-byte offset changes summed, eight points at a
// time. On amd64 with AVX2 they run eight points an instruction
// (decode_amd64.s); these are the same in Go, for other machines and as
// the reference the tests hold the assembly to.

// prefixSums8Go sums the two-byte changes in fixed on from run into sums
// (len(sums) a multiple of 8, len(fixed) ≥ 2·len(sums)), and returns the
// last sum and the largest change.
func prefixSums8Go(sums []uint32, fixed []byte, run uint32) (last uint32, most uint32) {
	fixed = fixed[:2*len(sums)]
	for i := range sums {
		delta := uint32(fixed[2*i]) | uint32(fixed[2*i+1])<<8
		most = max(most, delta)
		run += delta
		sums[i] = run
	}
	return run, most
}

// offsets16Go reads eight one-byte offset changes (zigzag-coded) at a time
// from b into out (len(b) ≥ len(out)), summed on from off, while all
// eight are one byte and len(out)/8 rounds last; the points' durations
// are first, first+1, …. It returns the rounds read, the last offset, the
// lowest offset and the highest end (offset + duration).
func offsets16Go(out []uint16, b []byte, first int32, off int32) (chunks int, last int32, lowest int32, highest int32) {
	lowest, highest = math.MaxInt32, math.MinInt32
	for ; 8*chunks+8 <= len(out); chunks++ {
		w := binary.LittleEndian.Uint64(b[8*chunks:])
		if w&0x8080808080808080 != 0 {
			break
		}
		for j := range 8 {
			c := int32(w >> (8 * j) & 0x7f)
			off += c>>1 ^ -(c & 1)
			d := first + int32(8*chunks+j)
			lowest, highest = min(lowest, off), max(highest, off+d)
			out[8*chunks+j] = uint16(off)
		}
	}
	return chunks, off, lowest, highest
}
