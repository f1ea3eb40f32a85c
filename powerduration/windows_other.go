//go:build !amd64

package powerduration

// haveAVX2 is amd64's (the tests turn it off there to check the Go loops).
var haveAVX2 = false

// windowsMax32 is the highest of hi[s] − lo[s] over s < len(hi)
// (len(lo) ≥ len(hi) ≥ 1).
func windowsMax32(hi, lo []uint32) uint32 { return windowsMax32Go(hi, lo) }

// firstWith32 is the first s < len(hi) with hi[s] − lo[s] = v, or len(hi).
func firstWith32(hi, lo []uint32, v uint32) int { return firstWith32Go(hi, lo, v) }
