package ingest

import (
	"bufio"
	"sync"
	"unsafe"
)

// Buffers that a file's decode needs only while it runs, reused from one
// file to the next, so that a scan of thousands of files allocates for
// what it keeps (the rides) and not again for what it only reads. A
// buffer that a large file grew past maxKeptBytes is let go instead of
// kept, so the pool never holds more than a few MB a worker.
const maxKeptBytes = 4 << 20

const readBufferBytes = 64 << 10

// readers are the buffered readers every file is read through.
var readers = sync.Pool{New: func() any { return bufio.NewReaderSize(nil, readBufferBytes) }}

// fitScratch holds a FIT file's bytes and its records while it is decoded.
type fitScratch struct {
	data    []byte
	records []Sample
}

var fitScratches = sync.Pool{New: func() any { return new(fitScratch) }}

// release returns s to the pool, without buffers grown past maxKeptBytes.
func (s *fitScratch) release() {
	if cap(s.data) > maxKeptBytes {
		s.data = nil
	}
	if cap(s.records)*sampleBytes > maxKeptBytes {
		s.records = nil
	}
	fitScratches.Put(s)
}

// sampleBytes is the size of one Sample.
const sampleBytes = int(unsafe.Sizeof(Sample{}))
