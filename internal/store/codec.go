package store

import (
	"encoding/binary"
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/powerduration"
)

// How a ride is kept, compactly and exactly:
//
//   - power: cleaning keeps it to 0.1 W, so it is stored as whole tenths
//     of a watt in two bytes a second (a value that is not, or is above
//     6553.5 W, makes the ride's power eight bytes a second instead);
//   - curve: a ride's best sum for each duration is a whole number of
//     tenths of a watt-second (the curve is summed from that power), so
//     each point is the change in that sum from the previous duration
//     (two bytes) and the change in the window's offset (a variable-length
//     integer, mostly one byte): about three bytes a point instead of
//     twelve (see encodeCurve);
//   - quality report: its counts, measures, lists (gaps, dropouts, spikes,
//     stuck runs, as variable-length integers) and notes packed in one
//     column (see qualityRow.packed).
//
// The power and curve blobs start with a byte naming their layout.
const (
	layoutFloat64 = 0 // eight bytes a value, little-endian
	layoutTenths  = 1 // power: uint16 tenths of a watt; curve: changes of tenths sums and of offsets
)

var errLayout = errors.New("damaged blob")

// encodePower packs a ride's power.
func encodePower(v []float64) []byte {
	tenths := true
	for _, x := range v {
		t := math.Round(x * 10)
		if !(t >= 0 && t <= math.MaxUint16) || math.Float64bits(t/10) != math.Float64bits(x) { // NaN fails
			tenths = false
			break
		}
	}
	if !tenths {
		raw := make([]byte, 1, 1+8*len(v))
		raw[0] = layoutFloat64
		for _, x := range v {
			raw = binary.LittleEndian.AppendUint64(raw, math.Float64bits(x))
		}
		return raw
	}
	raw := make([]byte, 1, 1+2*len(v))
	raw[0] = layoutTenths
	for _, x := range v {
		raw = binary.LittleEndian.AppendUint16(raw, uint16(math.Round(x*10)))
	}
	return raw
}

// decodePower unpacks n seconds of power.
func decodePower(b []byte, n int) ([]float64, error) {
	if len(b) == 0 {
		return nil, errLayout
	}
	v := make([]float64, n)
	switch body := b[1:]; {
	case b[0] == layoutTenths && len(body) == 2*n:
		for i := range v {
			v[i] = float64(binary.LittleEndian.Uint16(body[2*i:])) / 10
		}
	case b[0] == layoutFloat64 && len(body) == 8*n:
		for i := range v {
			v[i] = math.Float64frombits(binary.LittleEndian.Uint64(body[8*i:]))
		}
	default:
		return nil, fmt.Errorf("%w: power of %d bytes for %d s", errLayout, len(b), n)
	}
	return v, nil
}

// encodeCurve packs a ride's curve (its durations are the shared grid for
// the ride's length). A curve kept as whole tenths sums: the changes of
// the sum from one duration to the next, as two bytes each while they fit
// (every second up to an hour, unless power passed 6553 W), then as
// varints; then the changes of the offsets, as varints. Two streams read
// without waiting on each other, about three bytes a point.
func encodeCurve(c powerduration.RideCurve) []byte {
	n := c.Len()
	raw := make([]byte, 0, 8+4*n)
	if sums := c.TenthsSums(); sums != nil {
		raw = append(raw, layoutTenths)
		prev := func(i int) int64 {
			if i == 0 {
				return 0
			}
			return int64(sums[i-1])
		}
		short := 0 // the points whose change fits two bytes
		for short < n {
			if delta := int64(sums[short]) - prev(short); delta < 0 || delta > math.MaxUint16 {
				break
			}
			short++
		}
		raw = binary.AppendUvarint(raw, uint64(short))
		for i := range short {
			raw = binary.LittleEndian.AppendUint16(raw, uint16(int64(sums[i])-prev(i)))
		}
		for i := short; i < n; i++ {
			raw = binary.AppendVarint(raw, int64(sums[i])-prev(i))
		}
	} else {
		raw = append(raw, layoutFloat64)
		for i := range n {
			raw = binary.LittleEndian.AppendUint64(raw, math.Float64bits(c.WattsAt(i)))
		}
	}
	prev := int64(0)
	for i := range n {
		off := int64(c.OffsetAt(i))
		raw = binary.AppendVarint(raw, off-prev)
		prev = off
	}
	return raw
}

// curveSlab hands out the columns of many curves from a few large
// allocations (one goroutine's: not safe for concurrent use); nil
// allocates each curve on its own.
type curveSlab struct {
	sums  []uint32
	off16 []uint16
}

const slabPoints = 1 << 16

// take returns n entries of *free, refilling it with a new slab when short.
func take[T any](free *[]T, n int) []T {
	if n > slabPoints {
		return make([]T, n)
	}
	if len(*free) < n {
		*free = make([]T, slabPoints)
	}
	out := (*free)[:n:n]
	*free = (*free)[n:]
	return out
}

func (sl *curveSlab) takeSums(n int) []uint32 {
	if sl == nil {
		return make([]uint32, n)
	}
	return take(&sl.sums, n)
}

func (sl *curveSlab) takeOffsets(n int) []uint16 {
	if sl == nil {
		return make([]uint16, n)
	}
	return take(&sl.off16, n)
}

// decodeCurve unpacks the curve of ride r (its length and source set),
// checking every point against the physical bounds: watts from 0 to
// ceilW, windows inside the ride.
func decodeCurve(raw []byte, r *ingest.Ride, ceilW float64, sl *curveSlab) (powerduration.RideCurve, error) {
	seconds := r.Quality.Seconds
	ds := powerduration.Durations(seconds)
	src := powerduration.SourceOf(r)
	if len(raw) == 0 {
		return powerduration.RideCurve{}, errLayout
	}
	b, p := raw[1:], 0
	ok := true
	var sums []uint32
	var watts []float64
	switch raw[0] {
	case layoutTenths:
		u, n := binary.Uvarint(b)
		if n <= 0 || u > uint64(len(ds)) || len(b)-n < 2*int(u) {
			return powerduration.RideCurve{}, errLayout
		}
		short, fixed := int(u), b[n:n+2*int(u)]
		sums = sl.takeSums(len(ds))
		// a duration's best sum is at most the ceiling for every second
		ceilT := int64(math.Min(ceilW*10, math.MaxUint32))
		sum, ok := prefixSums(sums[:short], fixed, ds[:short], ceilT)
		if !ok {
			return powerduration.RideCurve{}, errLayout
		}
		p = n + 2*short
		for i := short; i < len(ds); i++ {
			delta, q, ok := varint(b, p)
			if !ok || sum+delta < 0 || sum+delta > math.MaxUint32 || sum+delta > ceilT*int64(ds[i]) {
				return powerduration.RideCurve{}, errLayout
			}
			sum, p = sum+delta, q
			sums[i] = uint32(sum)
		}
	case layoutFloat64:
		if len(b) < 8*len(ds) {
			return powerduration.RideCurve{}, errLayout
		}
		watts = make([]float64, len(ds))
		for i := range ds {
			w := math.Float64frombits(binary.LittleEndian.Uint64(b[8*i:]))
			if !(w >= 0 && w <= ceilW) { // NaN fails too
				return powerduration.RideCurve{}, errLayout
			}
			watts[i] = w
		}
		p = 8 * len(ds)
	default:
		return powerduration.RideCurve{}, errLayout
	}
	// offsets in two bytes in a ride shorter than 65,536 s (a curve kept
	// as sums), else four
	var off16 []uint16
	var off32 []int32
	if sums != nil && seconds <= math.MaxUint16 {
		off16 = sl.takeOffsets(len(ds))
	} else {
		off32 = make([]int32, len(ds))
	}
	if off16 != nil {
		p, ok = offsets(off16, b, p, ds, seconds)
	} else {
		p, ok = offsets(off32, b, p, ds, seconds)
	}
	if !ok {
		return powerduration.RideCurve{}, errLayout
	}
	if p != len(b) {
		return powerduration.RideCurve{}, errLayout
	}
	if sums == nil {
		return powerduration.NewRideCurve(src, watts, off32), nil
	}
	return powerduration.RideCurveOfSums(src, sums, off16, off32), nil
}

// prefixSums fills sums with the running sum of the two-byte changes in
// fixed (one for each of sums and ds) and returns the last. No change
// may be more than the ceiling for every second it adds (ceilT, tenths
// of a watt): a window one second longer holds one more second of power.
// (Checked without branches: the loop runs for every point of every
// curve a warm scan reads.)
func prefixSums(sums []uint32, fixed []byte, ds []int, ceilT int64) (int64, bool) {
	fixed = fixed[:2*len(sums)]
	ds = ds[:len(sums)]
	var sum int64
	if len(ds) > 0 && ds[len(ds)-1] == len(ds) {
		// every second from 1 s: each change adds one second; eight at a
		// time (decode.go), the rest one by one
		k := len(sums) &^ 7
		last, most8 := prefixSums8(sums[:k], fixed, 0)
		sum, most := int64(last), int64(most8)
		for i := k; i < len(sums); i++ {
			delta := int64(fixed[2*i]) | int64(fixed[2*i+1])<<8
			most = max(most, delta)
			sum += delta
			sums[i] = uint32(sum)
		}
		return sum, most <= ceilT
	}
	worst, prevD := int64(math.MinInt64), 0 // the most a change is over its ceiling
	for i := range sums {
		delta := int64(fixed[2*i]) | int64(fixed[2*i+1])<<8
		worst = max(worst, delta-ceilT*int64(ds[i]-prevD))
		sum, prevD = sum+delta, ds[i]
		sums[i] = uint32(sum)
	}
	return sum, worst <= 0
}

// offsets reads the changes of offset from b[p:] into out, one for each
// of ds, each window inside the ride, and returns the position after
// them. Where offsets are two bytes and the durations run every second,
// rounds of eight one-byte changes (nearly all of them) are read eight
// at a time (offsets16, decode.go); the rest one by one.
func offsets[O uint16 | int32](out []O, b []byte, p int, ds []int, seconds int) (int, bool) {
	out = out[:len(ds)]
	var off int64
	lowest, worst := int64(0), int64(math.MinInt64) // the lowest offset; the most a window is past the end
	out16, _ := any(out).([]uint16)
	contiguous := contiguousPrefix(ds) // ds[i] = i+1 below this
	for i := 0; i < len(ds); {
		if k := min(contiguous-i, len(b)-p) / 8; out16 != nil && k > 0 {
			// rounds of eight one-byte changes, eight points an
			// instruction (decode.go)
			n, last, low, high := offsets16(out16[i:i+8*k], b[p:p+8*k], int32(ds[i]), int32(off))
			if n > 0 {
				off, i, p = int64(last), i+8*n, p+8*n
				lowest, worst = min(lowest, int64(low)), max(worst, int64(high))
				continue
			}
		}
		delta, q, ok := varint(b, p)
		if !ok {
			return p, false
		}
		off, p = off+delta, q
		lowest, worst = min(lowest, off), max(worst, off+int64(ds[i]))
		out[i] = O(off)
		i++
	}
	return p, lowest >= 0 && worst <= int64(seconds)
}

// contiguousPrefix is how many of ds run 1, 2, 3, … (every second from
// 1 s, as the grid does up to an hour): ds rises strictly, so ds[i] = i+1
// holds for a prefix.
func contiguousPrefix(ds []int) int {
	return sort.Search(len(ds), func(i int) bool { return ds[i] != i+1 })
}

// varint reads the signed variable-length integer at b[p:] and the
// position after it; one or two bytes (most of a curve) are read inline.
func varint(b []byte, p int) (int64, int, bool) {
	u, n := shortUvarint(b, p)
	if n == 0 {
		if p >= len(b) {
			return 0, p, false
		}
		if u, n = binary.Uvarint(b[p:]); n <= 0 {
			return 0, p, false
		}
	}
	return int64(u>>1) ^ -int64(u&1), p + n, true
}

// shortUvarint reads a variable-length integer of one or two bytes at
// b[p:], or returns n = 0.
func shortUvarint(b []byte, p int) (u uint64, n int) {
	if p+1 < len(b) && b[p] < 0x80 {
		return uint64(b[p]), 1
	}
	if p+2 < len(b) && b[p+1] < 0x80 {
		return uint64(b[p]&0x7f) | uint64(b[p+1])<<7, 2
	}
	return 0, 0
}

// qualityRow is a quality report as the store keeps it: its counts and
// measures, its lists (gaps, dropouts, spikes, stuck runs) in one blob,
// its notes one a line; packed into one column (packed).
type qualityRow struct {
	samples, gapS, dropoutS, filledS, spikes, invalid, reversals, outliers int64
	coverage, intervalS, fallbackOffsetS                                   float64
	flags                                                                  int64 // truncated, dated by fallback, salvaged
	lists                                                                  []byte
	notes                                                                  string
}

const (
	flagTruncated = 1 << iota
	flagDatedByFallback
	flagSalvaged
)

// packed is the row as the store keeps it, and as its checksum reads it:
// the counts as varints, the measures as eight bytes each, the lists'
// length and bytes, then the notes. (One column instead of fourteen: the
// pure-Go SQLite costs about a third of a microsecond a column a row.)
func (q *qualityRow) packed() []byte {
	b := make([]byte, 0, 128+len(q.lists)+len(q.notes))
	for _, v := range q.counts() {
		b = binary.AppendVarint(b, *v)
	}
	for _, v := range q.measures() {
		b = binary.LittleEndian.AppendUint64(b, math.Float64bits(*v))
	}
	b = binary.AppendUvarint(b, uint64(len(q.lists)))
	b = append(b, q.lists...)
	return append(b, q.notes...)
}

func (q *qualityRow) counts() []*int64 {
	return []*int64{&q.samples, &q.gapS, &q.dropoutS, &q.filledS, &q.spikes, &q.invalid, &q.reversals, &q.outliers, &q.flags}
}

func (q *qualityRow) measures() []*float64 {
	return []*float64{&q.coverage, &q.intervalS, &q.fallbackOffsetS}
}

// unpackQuality reads a packed row; the lists and notes are copied out.
func unpackQuality(b []byte) (qualityRow, error) {
	var q qualityRow
	for _, v := range q.counts() {
		x, n := binary.Varint(b)
		if n <= 0 {
			return q, errLayout
		}
		*v, b = x, b[n:]
	}
	for _, v := range q.measures() {
		if len(b) < 8 {
			return q, errLayout
		}
		*v, b = math.Float64frombits(binary.LittleEndian.Uint64(b)), b[8:]
	}
	n, k := binary.Uvarint(b)
	if k <= 0 || n > uint64(len(b)-k) {
		return q, errLayout
	}
	q.lists = append([]byte(nil), b[k:k+int(n)]...)
	q.notes = string(b[k+int(n):])
	return q, nil
}

func rowOfQuality(q *ingest.Quality) qualityRow {
	row := qualityRow{samples: int64(q.Samples), gapS: int64(q.GapSeconds), dropoutS: int64(q.DropoutSeconds),
		filledS: int64(q.FilledSeconds), spikes: int64(q.SpikesRemoved), invalid: int64(q.InvalidValues),
		reversals: int64(q.TimeReversals), outliers: int64(q.TimeOutliers), coverage: q.PowerCoverage,
		intervalS: q.RecordingIntervalS, fallbackOffsetS: q.FallbackOffsetS, notes: strings.Join(q.Notes, "\n")}
	for bit, on := range map[int64]bool{flagTruncated: q.Truncated, flagDatedByFallback: q.DatedByFallback, flagSalvaged: q.Salvaged} {
		if on {
			row.flags |= bit
		}
	}
	b := []byte{}
	spans := func(ss []ingest.Span) {
		b = binary.AppendUvarint(b, uint64(len(ss)))
		for _, s := range ss {
			b = binary.AppendUvarint(b, uint64(s.StartS))
			b = binary.AppendUvarint(b, uint64(s.Seconds))
		}
	}
	spans(q.Gaps)
	spans(q.Dropouts)
	b = binary.AppendUvarint(b, uint64(len(q.SpikeOffsetsS)))
	for _, o := range q.SpikeOffsetsS {
		b = binary.AppendUvarint(b, uint64(o))
	}
	b = binary.AppendUvarint(b, uint64(len(q.StuckRuns)))
	for _, s := range q.StuckRuns {
		b = binary.AppendUvarint(b, uint64(s.StartS))
		b = binary.AppendUvarint(b, uint64(s.Seconds))
		b = binary.LittleEndian.AppendUint64(b, math.Float64bits(s.Watts))
	}
	row.lists = b
	return row
}

// quality unpacks the row into a report for a ride of the given seconds;
// a list that does not fit the ride is damage.
func (row *qualityRow) quality(seconds int) (ingest.Quality, error) {
	q := ingest.Quality{Samples: int(row.samples), Seconds: seconds, PowerCoverage: row.coverage,
		RecordingIntervalS: row.intervalS, GapSeconds: int(row.gapS), DropoutSeconds: int(row.dropoutS),
		FilledSeconds: int(row.filledS), SpikesRemoved: int(row.spikes), InvalidValues: int(row.invalid),
		TimeReversals: int(row.reversals), TimeOutliers: int(row.outliers), FallbackOffsetS: row.fallbackOffsetS,
		Truncated: row.flags&flagTruncated != 0, DatedByFallback: row.flags&flagDatedByFallback != 0,
		Salvaged: row.flags&flagSalvaged != 0}
	if row.notes != "" {
		q.Notes = strings.Split(row.notes, "\n")
	}
	b := row.lists
	var bad bool
	next := func(limit uint64) int {
		v, n := binary.Uvarint(b)
		if n <= 0 || v > limit {
			bad = true
			return 0
		}
		b = b[n:]
		return int(v)
	}
	secs := uint64(seconds)
	spans := func() []ingest.Span {
		n := next(secs)
		if n == 0 {
			return nil // as cleaning leaves an empty list
		}
		out := make([]ingest.Span, n)
		for i := range out {
			out[i] = ingest.Span{StartS: next(secs), Seconds: next(secs)}
			bad = bad || out[i].End() > seconds
		}
		return out
	}
	q.Gaps, q.Dropouts = spans(), spans()
	if n := next(secs); n > 0 {
		q.SpikeOffsetsS = make([]int, n)
	}
	for i := range q.SpikeOffsetsS {
		q.SpikeOffsetsS[i] = next(secs)
	}
	if n := next(secs); n > 0 {
		q.StuckRuns = make([]ingest.StuckRun, n)
	}
	for i := range q.StuckRuns {
		s := &q.StuckRuns[i]
		s.Span = ingest.Span{StartS: next(secs), Seconds: next(secs)}
		if bad || len(b) < 8 || s.End() > seconds {
			return q, errLayout
		}
		s.Watts, b = math.Float64frombits(binary.LittleEndian.Uint64(b)), b[8:]
	}
	if bad || len(b) != 0 {
		return q, errLayout
	}
	return q, nil
}
