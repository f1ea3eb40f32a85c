package powerduration

import "sync"

// scratch is the working memory of one curve: prefix sums, the blocks'
// bounds, the range-maximum table and the windows found. Curves are
// computed one after another on each worker of a scan, so the memory is
// taken from a pool and given back (a scan of thousands of rides then
// allocates for the curves it keeps, not again for their working).
type scratch[T number] struct {
	tenths  []int64 // the ride's power in tenths (asTenths)
	sum     []T
	sum32   []uint32
	reach   []T
	upper   []T
	since   []int32
	levels  [][]T
	out     []window[T]
	offsets []int32
}

// sized is s with length n, reusing its memory where it is long enough
// (the contents are not cleared).
func sized[E any](s []E, n int) []E {
	if cap(s) < n {
		return make([]E, n)
	}
	return s[:n]
}

// maxKeptPoints bounds what a pooled scratch keeps: a buffer longer than
// a 24-h ride's is let go after use, not kept.
const maxKeptPoints = 86401

var tenthsScratches = sync.Pool{New: func() any { return new(scratch[int64]) }}

func getScratch() *scratch[int64] { return tenthsScratches.Get().(*scratch[int64]) }

// releaseScratch gives w back to the pool, unless a long ride grew it.
func releaseScratch(w *scratch[int64]) {
	if cap(w.sum) > maxKeptPoints {
		return
	}
	tenthsScratches.Put(w)
}
