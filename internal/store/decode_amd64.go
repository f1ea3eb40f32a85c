package store

import "golang.org/x/sys/cpu"

// haveAVX2 chooses the assembly kernels (decode_amd64.s); the tests turn
// it off to hold them to the Go ones (decode.go).
var haveAVX2 = cpu.X86.HasAVX2

//go:noescape
func prefixSums8AVX2(sums []uint32, fixed []byte, run uint32) (last uint32, most uint32)

//go:noescape
func offsets16AVX2(out []uint16, b []byte, first int32, off int32) (chunks int, last int32, lowest int32, highest int32)

func prefixSums8(sums []uint32, fixed []byte, run uint32) (last uint32, most uint32) {
	if haveAVX2 && len(fixed) >= 2*len(sums) {
		return prefixSums8AVX2(sums, fixed, run)
	}
	return prefixSums8Go(sums, fixed, run)
}

func offsets16(out []uint16, b []byte, first int32, off int32) (chunks int, last int32, lowest int32, highest int32) {
	if haveAVX2 && len(b) >= len(out) {
		return offsets16AVX2(out, b, first, off)
	}
	return offsets16Go(out, b, first, off)
}
