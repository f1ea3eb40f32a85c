package powerduration

import (
	"math"
	"math/bits"
	"slices"
)

// Best is the highest mean power for a duration and the offset of the
// earliest window found with it.
type Best struct {
	DurationS int
	Watts     float64
	OffsetS   int
}

// MeanMax returns, for each duration in ds (ascending, each at most
// len(power)), the highest mean of any window of that many consecutive
// values, and the earliest window that has it. Power must be non-negative.
//
// It is exact (equal to a scan of every window) but skips most windows.
// The starts are taken in blocks, and each block carries an upper bound on
// its windows' sums from one duration to the next: a window of d seconds
// is a window of d0 seconds plus the k = d − d0 seconds after it, so the
// block's bound at d0 plus the best k-second sum of the whole ride (known
// already, since k < d) bounds it at d. A block is looked at again only
// when that bound reaches the best window so far; then the highest value
// in the k seconds after its windows, and two bounds of its own (the sum
// over the union of its windows, and d times the highest value in that
// union, from a range-maximum table), decide whether to scan it. A block
// scanned is scanned whole, so its bound is exact again. Each duration's
// best is seeded from the previous duration's window.
//
// The carried bound is what keeps near-constant rides (a trainer held at
// one power, long steady riding) fast: there every block's own bounds
// are close to the best, but a block that was below the best at d0 stays
// below it for many durations after. Field rides, noise and periodic
// efforts are pruned by the blocks' own bounds as well.
//
// Power that is whole tenths of a watt (every power meter's, and every
// ride this tool cleans) is summed as whole numbers, so equal windows tie
// exactly and the earliest is reported; other values are summed in
// floating point with a margin for rounding in every bound. Whole tenths
// whose ride total fits in 32 bits (any ride under 48 h below 2,400 W on
// average) are scanned eight starts an instruction where the processor
// allows (windows.go).
func MeanMax(power []float64, ds []int) []Best {
	if len(power) == 0 {
		return []Best{}
	}
	if !slices.IsSorted(ds) {
		sorted := slices.Clone(ds)
		slices.Sort(sorted)
		byD := map[int]Best{}
		for _, b := range MeanMax(power, sorted) {
			byD[b.DurationS] = b
		}
		out := make([]Best, 0, len(ds))
		for _, d := range ds {
			if b, ok := byD[d]; ok {
				out = append(out, b)
			}
		}
		return out
	}
	w := getScratch()
	defer releaseScratch(w)
	if tenths, ok := asTenths(power, w.tenths); ok {
		w.tenths = tenths
		return bests(meanMax(tenths, ds, 0, w), 10)
	}
	return bests(meanMax(power, ds, floatMargin(power), new(scratch[float64])), 1)
}

// floatMargin is the margin for rounding in the bounds of power summed in
// floating point.
func floatMargin(power []float64) float64 {
	total := 0.0
	for _, p := range power {
		total += p
	}
	return 1e-12 * (total + 1)
}

// window is the best window of one duration: its sum and start.
type window[T number] struct {
	d, start int
	sum      T
}

// bests are the windows as mean powers; a sum s of d samples is
// s / (scale·d) watts.
func bests[T number](ws []window[T], scale float64) []Best {
	out := make([]Best, len(ws))
	for i, w := range ws {
		out[i] = Best{DurationS: w.d, Watts: float64(w.sum) / (scale * float64(w.d)), OffsetS: w.start}
	}
	return out
}

// rideCurve is a ride's curve over the first durations of the shared grid
// (the ride's length and longer are left out): as whole tenths sums where
// the power allows (see RideCurve).
func rideCurve(src *Source, power []float64) RideCurve {
	ds := Durations(len(power))
	w := getScratch()
	defer releaseScratch(w)
	w.offsets = sized(w.offsets, len(ds))
	offsets := w.offsets
	if tenths, ok := asTenths(power, w.tenths); ok {
		w.tenths = tenths
		ws := meanMax(tenths, ds, 0, w)
		sums := make([]uint32, len(ws))
		fits := true
		for i, w := range ws {
			sums[i], offsets[i] = uint32(w.sum), int32(w.start)
			fits = fits && w.sum <= math.MaxUint32
		}
		if fits {
			return RideCurve{Source: src, sums: sums}.withOffsets(offsets, nil).own()
		}
	}
	bs := MeanMax(power, ds)
	watts := make([]float64, len(bs))
	for i, b := range bs {
		watts[i], offsets[i] = b.Watts, int32(b.OffsetS)
	}
	return RideCurve{Source: src, watts: watts}.withOffsets(offsets, nil).own()
}

// own is rc with offsets of its own where they were kept in four bytes
// (withOffsets keeps the slice it is given: here the scratch's).
func (rc RideCurve) own() RideCurve {
	rc.off32 = slices.Clone(rc.off32)
	return rc
}

// asTenths is power in whole tenths of a watt, if every value is one
// (into buf where it is long enough).
func asTenths(power []float64, buf []int64) ([]int64, bool) {
	out := sized(buf, len(power))
	for i, p := range power {
		t := math.Round(p * 10)
		if !(math.Abs(t-p*10) <= 1e-9 && t >= 0 && t <= 1<<40) { // NaN fails too
			return nil, false
		}
		out[i] = int64(t)
	}
	return out, true
}

// number is a summed sample: whole tenths of a watt, or watts.
type number interface{ ~int64 | ~float64 }

// blockStarts is how many starts a block holds: each block carries its
// bound, and a block that may hold a better window is scanned whole, so
// that its bound is exact again (measured against blocks split into
// smaller ones with bounds of their own: faster on every ride shape).
// With the scan eight starts an instruction (windows.go), 512 starts
// beat 256 and 1,024 on most ride shapes: fewer bounds to check for
// each duration, at little more cost for each block scanned.
const blockStarts = 512

// meanMax is MeanMax over samples of type T: the best window of each
// duration. margin is added to every bound before it is compared with the
// best so far (0 where sums are exact).
//
// The windows returned are w's memory: copy them before w is used again.
func meanMax[T number](power []T, ds []int, margin T, w *scratch[T]) []window[T] {
	n := len(power)
	out := sized(w.out, len(ds))[:0]
	sum := sized(w.sum, n+1)
	sum[0] = 0
	var top T
	for i, p := range power {
		sum[i+1] = sum[i] + p
		top = max(top, p)
	}
	rmq := newRangeMax(power, w.levels)
	sc := scanner[T]{sum: sum, rmq: rmq, margin: margin}
	if s, ok := any(sum).([]int64); ok {
		sc.sum32, _ = sums32(s, w.sum32)
	}
	blocks := (n + blockStarts - 1) / blockStarts
	upper := sized(w.upper, blocks) // a bound on the block's window sums at duration since
	since := sized(w.since, blocks)
	clear(since)
	// reach[k] bounds the sum of any k seconds of the ride: the best sum
	// of the shortest duration computed that is at least k long.
	reach := append(w.reach[:0], 0)
	defer func() {
		w.out, w.sum, w.levels, w.upper, w.since, w.reach = out, sum, rmq.levels, upper, since, reach
		if sc.sum32 != nil {
			w.sum32 = sc.sum32
		}
	}()
	prevStart := 0
	for _, d := range ds {
		if d < 1 || d > n {
			continue
		}
		// reach up to d−1: past the durations computed, the highest
		// value for every further second
		for k := len(reach); k < d; k++ {
			reach = append(reach, reach[k-1]+top)
		}
		// seed: the previous best window grown to d, at its end or (when
		// that is better) at its start
		s0 := min(prevStart, n-d)
		sc.d, sc.lastStart, sc.bestSum, sc.bestStart = d, n-d, sum[s0+d]-sum[s0], s0
		if s1 := s0 - 1; s1 >= 0 && sum[s1+d]-sum[s1] >= sc.bestSum {
			sc.bestSum, sc.bestStart = sum[s1+d]-sum[s1], s1
		}
		blocks := sc.lastStart/blockStarts + 1
		for b, u := range upper[:blocks] {
			a := b * blockStarts
			if since[b] > 0 {
				// a window of d s is one of since[b] s and the k s after it,
				// whose sum is at most reach[k]
				k := d - int(since[b])
				if bound := u + reach[k] + margin; bound < sc.bestSum || bound == sc.bestSum && a > sc.bestStart {
					continue
				}
				// the k s after each window, bounded within the block
				last := min(a+blockStarts-1, sc.lastStart)
				from, hi := a+int(since[b]), last+d
				if bound := u + min(T(k)*sc.rmq.max(from, hi), sum[hi]-sum[from]); sc.skips(a, bound) {
					upper[b], since[b] = bound, int32(d)
					continue
				}
			}
			upper[b], since[b] = sc.block(a), int32(d)
		}
		reach = append(reach[:d], sc.bestSum)
		out = append(out, window[T]{d: d, start: sc.bestStart, sum: sc.bestSum})
		prevStart = sc.bestStart
	}
	return out
}

// scanner finds the best window of one duration d.
type scanner[T number] struct {
	sum          []T      // prefix sums
	sum32        []uint32 // the same in 32 bits, for the kernels (windows.go), where they fit
	rmq          rangeMax[T]
	margin       T
	d, lastStart int
	bestSum      T
	bestStart    int
}

// skips reports whether no window starting at a or later whose sum is at
// most bound can replace the best so far (on a tie the earlier one wins).
func (sc *scanner[T]) skips(a int, bound T) bool {
	bound += sc.margin
	return bound < sc.bestSum || (bound == sc.bestSum && a > sc.bestStart)
}

// block considers the starts [a, a+blockStarts) (clipped to the last
// start) and returns a bound on their windows' sums: exact where they
// were scanned.
func (sc *scanner[T]) block(a int) T {
	last := min(a+blockStarts-1, sc.lastStart)
	hi := last + sc.d // the block's windows all lie in [a, hi)
	bound := min(sc.sum[hi]-sc.sum[a], T(sc.d)*sc.rmq.max(a, hi))
	if sc.skips(a, bound) {
		return bound
	}
	// the starts before the best so far and from it on, apart: a window
	// before it wins a tie, one after it must beat it
	cut := min(max(sc.bestStart-a, 0), last+1-a)
	if sc.sum32 != nil {
		return sc.block32(a, last, cut)
	}
	ends := sc.sum[a+sc.d : hi+1]
	starts := sc.sum[a : a+len(ends)]
	var before, after T
	if cut > 0 {
		before = windowsMax(ends[:cut], starts[:cut])
	}
	if cut < len(ends) {
		after = windowsMax(ends[cut:], starts[cut:])
	}
	switch {
	case cut > 0 && before >= sc.bestSum && (cut == len(ends) || before >= after):
		sc.bestSum, sc.bestStart = before, a+firstWith(ends[:cut], starts, before)
	case cut < len(ends) && after > sc.bestSum:
		sc.bestSum, sc.bestStart = after, a+cut+firstWith(ends[cut:], starts[cut:], after)
	}
	if cut == 0 {
		return after
	}
	if cut == len(ends) {
		return before
	}
	return max(before, after)
}

// block32 is block's scan over the 32-bit sums: the starts [a, last],
// those before a+cut apart from the rest.
func (sc *scanner[T]) block32(a, last, cut int) T {
	ends := sc.sum32[a+sc.d : last+sc.d+1]
	starts := sc.sum32[a : last+1]
	var before, after uint32
	if cut > 0 {
		before = windowsMax32(ends[:cut], starts)
	}
	if cut < len(ends) {
		after = windowsMax32(ends[cut:], starts[cut:])
	}
	switch {
	case cut > 0 && T(before) >= sc.bestSum && (cut == len(ends) || before >= after):
		sc.bestSum, sc.bestStart = T(before), a+firstWith32(ends[:cut], starts, before)
	case cut < len(ends) && T(after) > sc.bestSum:
		sc.bestSum, sc.bestStart = T(after), a+cut+firstWith32(ends[cut:], starts[cut:], after)
	}
	return T(max(before, after))
}

// firstWith is the first s with hi[s] − lo[s] = v (there is one).
func firstWith[T number](hi, lo []T, v T) int {
	for s, h := range hi {
		if h-lo[s] == v {
			return s
		}
	}
	return len(hi) - 1
}

// windowsMax is the highest of hi[s] − lo[s] (hi and lo of one length,
// at least 1), four at a time.
func windowsMax[T number](hi, lo []T) T {
	m0 := hi[0] - lo[0]
	m1, m2, m3 := m0, m0, m0
	s := 0
	for ; s+4 <= len(hi) && s+4 <= len(lo); s += 4 {
		h, l := hi[s:s+4:s+4], lo[s:s+4:s+4]
		m0 = max(m0, h[0]-l[0])
		m1 = max(m1, h[1]-l[1])
		m2 = max(m2, h[2]-l[2])
		m3 = max(m3, h[3]-l[3])
	}
	for ; s < len(hi) && s < len(lo); s++ {
		m0 = max(m0, hi[s]-lo[s])
	}
	return max(m0, m1, m2, m3)
}

// rangeMax answers "a value at least the highest in [a, b)" in constant
// time: the highest in the grains of rangeGrain values that [a, b)
// touches, from a sparse table over the grains' highest values (1/32 of
// the memory and time of a table over every value; the looser bound
// costs little, as blocks are whole grains).
type rangeMax[T number] struct {
	levels [][]T
}

const rangeGrain = 32

// newRangeMax builds the table for v, in the memory of old where it is
// long enough.
func newRangeMax[T number](v []T, old [][]T) rangeMax[T] {
	grains := sized(at(old, 0), (len(v)+rangeGrain-1)/rangeGrain)
	clear(grains)
	for i, x := range v {
		g := i / rangeGrain
		grains[g] = max(grains[g], x)
	}
	levels := append(old[:0], grains)
	for k := 1; 1<<k <= len(grains); k++ {
		prev := levels[k-1]
		half := 1 << (k - 1)
		cur := sized(at(old[:cap(old)], k), len(grains)-(1<<k)+1)
		for i := range cur {
			cur[i] = max(prev[i], prev[i+half])
		}
		levels = append(levels, cur)
	}
	return rangeMax[T]{levels}
}

// at is s[i], or nil past its end.
func at[E any](s [][]E, i int) []E {
	if i < len(s) {
		return s[i]
	}
	return nil
}

func (r rangeMax[T]) max(a, b int) T {
	a, b = a/rangeGrain, (b+rangeGrain-1)/rangeGrain
	k := bits.Len(uint(b-a)) - 1
	return max(r.levels[k][a], r.levels[k][b-(1<<k)])
}
