package ingest

import (
	"encoding/binary"
	"errors"
	"fmt"
	"io"
)

// Bounds of one FIT file, so that no file can cost more than a stated
// amount of memory: at most MaxFITBytes of FIT data (a 48-h ride with
// every sensor is a few MB), and at most MaxFITRecords record messages
// (69 h at one a second), counted by a walk of the protocol before the
// FIT library decodes anything (the library holds about 350 bytes a
// record, so a file of millions of tiny records would otherwise fill
// memory).
const (
	MaxFITBytes   = 32 << 20
	MaxFITRecords = 250_000
)

// boundedFIT reads a FIT stream into memory within MaxFITBytes and checks
// its record count; the bytes are then handed to the decoder.
func boundedFIT(r io.Reader) ([]byte, error) {
	b, err := io.ReadAll(io.LimitReader(r, MaxFITBytes+1))
	if err != nil && !errors.Is(err, io.ErrUnexpectedEOF) {
		if errors.Is(err, errTooLarge) {
			return nil, errTooLarge
		}
		return nil, err
	}
	if len(b) > MaxFITBytes {
		return nil, fmt.Errorf("FIT file is larger than %d MiB: not the recording of a ride", MaxFITBytes>>20)
	}
	if n := fitRecords(b, MaxFITRecords); n > MaxFITRecords {
		return nil, fmt.Errorf("FIT file holds more than %d records: not the recording of a ride", MaxFITRecords)
	}
	return b, nil
}

// fitRecords counts the record messages (global message 20) of a FIT
// stream, chained files included, by walking its message headers and
// definitions without decoding any value; it stops past max, or where the
// stream is damaged (the decoder judges the damage).
func fitRecords(b []byte, max int) int {
	const globalRecord = 20
	records := 0
	for len(b) >= 12 && string(b[8:12]) == ".FIT" {
		hs := int(b[0])
		if hs < 12 || hs > len(b) {
			break
		}
		size := int(binary.LittleEndian.Uint32(b[4:8]))
		end := min(hs+size, len(b))
		data := b[hs:end]
		var defs [16]struct {
			ok     bool
			global uint16
			size   int
		}
		for i := 0; i < len(data); {
			h := data[i]
			i++
			var local byte
			switch {
			case h&0x80 != 0: // compressed timestamp: a data message
				local = (h >> 5) & 0x3
			case h&0x40 != 0: // definition
				if i+5 > len(data) {
					return records
				}
				arch, n := data[i+1], int(data[i+4])
				g := binary.LittleEndian.Uint16(data[i+2:])
				if arch == 1 {
					g = binary.BigEndian.Uint16(data[i+2:])
				}
				i += 5
				if i+3*n > len(data) {
					return records
				}
				sz := 0
				for k := range n {
					sz += int(data[i+3*k+1])
				}
				i += 3 * n
				if h&0x20 != 0 { // developer fields
					if i >= len(data) {
						return records
					}
					nd := int(data[i])
					i++
					if i+3*nd > len(data) {
						return records
					}
					for k := range nd {
						sz += int(data[i+3*k+1])
					}
					i += 3 * nd
				}
				defs[h&0x0f] = struct {
					ok     bool
					global uint16
					size   int
				}{true, g, sz}
				continue
			default:
				local = h & 0x0f
			}
			d := defs[local]
			if !d.ok {
				return records
			}
			i += d.size
			if d.global == globalRecord {
				if records++; records > max {
					return records
				}
			}
		}
		b = b[min(end+2, len(b)):]
	}
	return records
}
