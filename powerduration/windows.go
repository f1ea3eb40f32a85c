package powerduration

// The innermost loop of the curve: the highest window sum among a block's
// starts, and the first start that has it. Sums are prefix sums of whole
// tenths of a watt held in 32 bits; a window's sum is the difference of
// two of them, exact in 32-bit arithmetic as long as every window sum is
// below 2^32 (sums32 checks the ride's total). On amd64 with AVX2 both
// run eight starts an instruction (windows_amd64.s); elsewhere, and as
// the tests' reference, in Go (windowsMax32Go, firstWith32Go).

// sums32 is the prefix sums of tenths as 32-bit numbers (into buf where
// it is long enough), if the whole ride's sum is below 2^32 (then so is
// every window's).
func sums32(sum []int64, buf []uint32) ([]uint32, bool) {
	if len(sum) == 0 || sum[len(sum)-1] >= 1<<32 {
		return nil, false
	}
	out := sized(buf, len(sum))
	for i, s := range sum {
		out[i] = uint32(s)
	}
	return out, true
}

// windowsMax32Go is the highest of hi[s] − lo[s] over s < len(hi)
// (len(lo) ≥ len(hi) ≥ 1), four at a time.
func windowsMax32Go(hi, lo []uint32) uint32 {
	lo = lo[:len(hi)]
	var m0, m1, m2, m3 uint32
	s := 0
	for ; s+4 <= len(hi); s += 4 {
		h, l := hi[s:s+4:s+4], lo[s:s+4:s+4]
		m0 = max(m0, h[0]-l[0])
		m1 = max(m1, h[1]-l[1])
		m2 = max(m2, h[2]-l[2])
		m3 = max(m3, h[3]-l[3])
	}
	for ; s < len(hi); s++ {
		m0 = max(m0, hi[s]-lo[s])
	}
	return max(m0, m1, m2, m3)
}

// firstWith32Go is the first s < len(hi) with hi[s] − lo[s] = v, or
// len(hi) if there is none.
func firstWith32Go(hi, lo []uint32, v uint32) int {
	lo = lo[:len(hi)]
	for s, h := range hi {
		if h-lo[s] == v {
			return s
		}
	}
	return len(hi)
}
