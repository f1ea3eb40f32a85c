package powerduration

import "golang.org/x/sys/cpu"

// haveAVX2 chooses the assembly kernels (windows_amd64.s).
var haveAVX2 = cpu.X86.HasAVX2

//go:noescape
func windowsMax32AVX2(hi, lo []uint32) uint32

//go:noescape
func firstWith32AVX2(hi, lo []uint32, v uint32) int

// windowsMax32 is the highest of hi[s] − lo[s] over s < len(hi)
// (len(lo) ≥ len(hi) ≥ 1).
func windowsMax32(hi, lo []uint32) uint32 {
	if haveAVX2 && len(lo) >= len(hi) {
		return windowsMax32AVX2(hi, lo)
	}
	return windowsMax32Go(hi, lo)
}

// firstWith32 is the first s < len(hi) with hi[s] − lo[s] = v, or len(hi).
func firstWith32(hi, lo []uint32, v uint32) int {
	if haveAVX2 && len(lo) >= len(hi) {
		return firstWith32AVX2(hi, lo, v)
	}
	return firstWith32Go(hi, lo, v)
}
