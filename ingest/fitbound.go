package ingest

import (
	"bytes"
	"errors"
	"fmt"
	"io"
)

// Bounds of one FIT file, so that no file can cost more than a stated
// amount of memory: at most MaxFITBytes of FIT data (a 48-h ride with
// every sensor is a few MB), and at most MaxFITRecords record messages
// (69 h at one a second); the reader stops at the first record past it.
const (
	MaxFITBytes   = 32 << 20
	MaxFITRecords = 250_000
)

// boundedFIT reads a FIT stream into memory within MaxFITBytes, into buf
// (a buffer to reuse, or nil).
func boundedFIT(r io.Reader, buf []byte) ([]byte, error) {
	b := bytes.NewBuffer(buf[:0])
	_, err := b.ReadFrom(io.LimitReader(r, MaxFITBytes+1))
	if err != nil && !errors.Is(err, io.ErrUnexpectedEOF) {
		if errors.Is(err, errTooLarge) {
			return nil, errTooLarge
		}
		return nil, err
	}
	if b.Len() > MaxFITBytes {
		return nil, fmt.Errorf("FIT file is larger than %d MiB: not the recording of a ride", MaxFITBytes>>20)
	}
	return b.Bytes(), nil
}
