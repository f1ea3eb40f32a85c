package ingest

import (
	"encoding/binary"
	"fmt"
	"math"
	"strings"
)

// A small tolerant reader of the FIT protocol, for what a ride needs: the
// file's type, its sessions (sport, start, end), the activity's local time
// offset, and each record's timestamp, power, heart rate and cadence, with
// power also from a developer field that says it is power. It walks the
// file's header, definition and data messages (compressed timestamps,
// developer fields, either byte order), checks each segment's CRC, reads
// chained files segment by segment, skips a field of unexpected size as
// bytes, and keeps the records before a cut or damage (flagged). The FIT
// library (github.com/tormoder/fit) is its oracle in the tests and the
// writer of invented files.

// FIT global message numbers and field numbers used here (FIT profile).
const (
	fitMsgFileID           = 0
	fitMsgSession          = 18
	fitMsgRecord           = 20
	fitMsgActivity         = 34
	fitMsgFieldDescription = 206
	fitFieldTimestamp      = 253
	fitEpochOffset         = 631065600 // 1989-12-31T00:00:00Z in Unix seconds
)

type fitFieldDef struct{ num, size, base byte }

type fitDef struct {
	ok     bool
	global uint16
	big    bool
	fields []fitFieldDef
	dev    []fitFieldDef // num, size, developer data index (in base)
	size   int
	// offsets of the fields a record needs, -1 where absent or of an
	// unexpected size: timestamp (4 bytes), power (2), heart rate and
	// cadence (1); devOff is where the developer fields start
	tsOff, powerOff, hrOff, cadOff, devOff int
}

// offsets fills the record fields' offsets of a definition.
func (d *fitDef) offsets() {
	d.tsOff, d.powerOff, d.hrOff, d.cadOff = -1, -1, -1, -1
	off := 0
	for _, fd := range d.fields {
		switch {
		case fd.num == fitFieldTimestamp && fd.size == 4:
			d.tsOff = off
		case d.global == fitMsgRecord && fd.num == 7 && fd.size == 2:
			d.powerOff = off
		case d.global == fitMsgRecord && fd.num == 3 && fd.size == 1:
			d.hrOff = off
		case d.global == fitMsgRecord && fd.num == 4 && fd.size == 1:
			d.cadOff = off
		}
		off += int(fd.size)
	}
	d.devOff = off
}

// fitSession is a session message's sport and span.
type fitSession struct {
	sport      byte
	start, end uint32 // FIT timestamps (0 when absent)
}

// fitFile is what the reader takes from a FIT file.
type fitFile struct {
	fileType   int // -1 when no file_id message
	sessions   []fitSession
	localOffS  int64 // activity local_timestamp − timestamp (seconds), when both exist
	hasLocal   bool
	records    []Sample
	truncated  bool   // the data ends before its header says (or a message is cut)
	damagedAt  string // where the data stops following the protocol, if it does
	crcBad     bool
	chainNote  string // a chained file left out, and why
	tooMany    bool
	devPowerOK bool // power came from a developer field
}

var fitCRCTable = [16]uint16{0x0000, 0xCC01, 0xD801, 0x1400, 0xF001, 0x3C00, 0x2800, 0xE401,
	0xA001, 0x6C00, 0x7800, 0xB401, 0x5000, 0x9C01, 0x8801, 0x4400}

// fitCRC is the FIT protocol's CRC-16 (the reflected polynomial 0xA001,
// as the protocol's nibble tables compute it), eight bytes a step: the
// table for a byte k places from the end of the step is the one-byte
// table applied k more times (slicing by eight), the rest a byte a time.
func fitCRC(b []byte) uint16 {
	var crc uint16
	t := &fitCRC8
	for ; len(b) >= 8; b = b[8:] {
		x := crc ^ uint16(b[0]) ^ uint16(b[1])<<8
		crc = t[7][byte(x)] ^ t[6][x>>8] ^ t[5][b[2]] ^ t[4][b[3]] ^
			t[3][b[4]] ^ t[2][b[5]] ^ t[1][b[6]] ^ t[0][b[7]]
	}
	for _, x := range b {
		crc = crc>>8 ^ t[0][byte(crc)^x]
	}
	return crc
}

var fitCRC8 = func() (t [8][256]uint16) {
	for i := range 256 {
		crc := uint16(i)
		for range 8 {
			if crc&1 != 0 {
				crc = crc>>1 ^ 0xA001
			} else {
				crc >>= 1
			}
		}
		t[0][i] = crc
	}
	for k := 1; k < 8; k++ {
		for i := range 256 {
			prev := t[k-1][i]
			t[k][i] = prev>>8 ^ t[0][byte(prev)]
		}
	}
	return
}()

// fitCRCNibbles is the protocol's own nibble-wise CRC (its reference
// description), kept to check fitCRC against.
func fitCRCNibbles(b []byte) uint16 {
	var crc uint16
	for _, x := range b {
		tmp := fitCRCTable[crc&0xF]
		crc = (crc >> 4) & 0x0FFF
		crc ^= tmp ^ fitCRCTable[x&0xF]
		tmp = fitCRCTable[crc&0xF]
		crc = (crc >> 4) & 0x0FFF
		crc ^= tmp ^ fitCRCTable[(x>>4)&0xF]
	}
	return crc
}

// readFIT reads every segment of a FIT file (chained files in order),
// appending the records to records[:0] (a buffer to reuse, or nil).
func readFIT(b []byte, maxRecords int, records []Sample) fitFile {
	if records == nil {
		// a record takes at least 3 bytes; most take 8 or more
		records = make([]Sample, 0, min(len(b)/8, maxRecords)+1)
	}
	f := fitFile{fileType: -1, records: records[:0]}
	first := true
	for len(b) >= 12 && string(b[8:12]) == ".FIT" {
		hs := int(b[0])
		if hs < 12 || hs > len(b) {
			if first {
				f.damagedAt = "header"
			}
			break
		}
		size := int(binary.LittleEndian.Uint32(b[4:8]))
		end := hs + size
		crcBad := false
		if end > len(b) {
			f.truncated = true
			end = len(b)
		} else if end+2 <= len(b) {
			crcBad = fitCRC(b[:end]) != binary.LittleEndian.Uint16(b[end:])
		} else {
			f.truncated = true
		}
		if crcBad && !first {
			// a chained file whose own checksum fails: the files before it stand
			f.chainNote = "a chained file inside it fails its checksum and was left out"
			break
		}
		was := f.truncated
		f.segment(b[hs:end], maxRecords)
		// a file cut inside a message fails its checksum because it is cut
		f.crcBad = f.crcBad || (crcBad && f.truncated == was)
		first = false
		if f.tooMany || f.damagedAt != "" {
			break
		}
		b = b[min(end+2, len(b)):]
	}
	return f
}

// fieldDefs reads a count and that many 3-byte field definitions at i,
// adding their sizes to size; ok false when the data ends first.
func fieldDefs(data []byte, i int, size *int) (defs []fitFieldDef, next int, ok bool) {
	if i >= len(data) {
		return nil, i, false
	}
	n := int(data[i])
	i++
	if i+3*n > len(data) {
		return nil, i, false
	}
	defs = make([]fitFieldDef, n)
	for k := range n {
		defs[k] = fitFieldDef{data[i+3*k], data[i+3*k+1], data[i+3*k+2]}
		*size += int(defs[k].size)
	}
	return defs, i + 3*n, true
}

// devKey names a developer field: its data index and field number.
type devKey struct{ index, num byte }

// segment reads one segment's data messages.
func (f *fitFile) segment(data []byte, maxRecords int) {
	var defs [16]fitDef
	var lastTS uint32
	devPower := map[devKey]byte{} // developer fields that are power → their base type
	for i := 0; i < len(data); {
		at := i
		h := data[i]
		i++
		var local byte
		compressed := h&0x80 != 0
		switch {
		case compressed:
			local = (h >> 5) & 0x3
		case h&0x40 != 0: // a definition message
			if i+5 > len(data) {
				f.truncated = true
				return
			}
			d := fitDef{ok: true, big: data[i+1] == 1}
			if d.big {
				d.global = binary.BigEndian.Uint16(data[i+2:])
			} else {
				d.global = binary.LittleEndian.Uint16(data[i+2:])
			}
			i += 4 // then the count of fields and their definitions
			var ok bool
			if d.fields, i, ok = fieldDefs(data, i, &d.size); !ok {
				f.truncated = true
				return
			}
			if h&0x20 != 0 { // and developer fields
				if d.dev, i, ok = fieldDefs(data, i, &d.size); !ok {
					f.truncated = true
					return
				}
			}
			d.offsets()
			defs[h&0x0F] = d
			continue
		default:
			local = h & 0x0F
		}
		d := &defs[local]
		if !d.ok {
			f.damagedAt = fmt.Sprintf("byte %d (a message of a type the file never defined)", at)
			return
		}
		if i+d.size > len(data) {
			f.truncated = true
			return
		}
		msg := data[i : i+d.size]
		i += d.size
		if compressed {
			off := uint32(h & 0x1F)
			ts := lastTS&^0x1F | off
			if off < lastTS&0x1F {
				ts += 0x20
			}
			lastTS = ts
		}
		f.message(d, msg, compressed, &lastTS, devPower)
		if f.tooMany || len(f.records) > maxRecords {
			f.tooMany = true
			return
		}
	}
}

// field values of one data message, by field number; ok false when the
// field is absent, of an unexpected size, or holds the invalid value.
type fitValues struct {
	d   *fitDef
	msg []byte
}

func (v fitValues) uint(num byte, size int) (uint64, bool) {
	off := 0
	for _, fd := range v.d.fields {
		if fd.num == num {
			if int(fd.size) != size {
				return 0, false // declared smaller (or larger) than its type: skipped as bytes
			}
			return fitUint(v.msg[off:off+size], v.d.big)
		}
		off += int(fd.size)
	}
	return 0, false
}

func (v fitValues) bytes(num byte) []byte {
	off := 0
	for _, fd := range v.d.fields {
		if fd.num == num {
			return v.msg[off : off+int(fd.size)]
		}
		off += int(fd.size)
	}
	return nil
}

// fitUint reads an unsigned value; the all-ones value is FIT's "invalid".
func fitUint(b []byte, big bool) (uint64, bool) {
	var x, invalid uint64
	switch len(b) {
	case 1:
		x, invalid = uint64(b[0]), 0xFF
	case 2:
		if big {
			x = uint64(binary.BigEndian.Uint16(b))
		} else {
			x = uint64(binary.LittleEndian.Uint16(b))
		}
		invalid = 0xFFFF
	case 4:
		if big {
			x = uint64(binary.BigEndian.Uint32(b))
		} else {
			x = uint64(binary.LittleEndian.Uint32(b))
		}
		invalid = 0xFFFFFFFF
	default:
		return 0, false
	}
	return x, x != invalid
}

func (f *fitFile) message(d *fitDef, msg []byte, compressed bool, lastTS *uint32, devPower map[devKey]byte) {
	if d.global == fitMsgRecord {
		f.record(d, msg, compressed, lastTS, devPower)
		return
	}
	v := fitValues{d, msg}
	if ts, ok := v.uint(fitFieldTimestamp, 4); ok && !compressed {
		*lastTS = uint32(ts)
	}
	switch d.global {
	case fitMsgFileID:
		if f.fileType >= 0 {
			return // a chained file's own file_id: the first one says what the file is
		}
		if t, ok := v.uint(0, 1); ok {
			f.fileType = int(t)
		} else {
			f.fileType = 0xFF
		}
	case fitMsgSession:
		var s fitSession
		if x, ok := v.uint(5, 1); ok {
			s.sport = byte(x)
		} else {
			s.sport = 0xFF
		}
		if x, ok := v.uint(2, 4); ok {
			s.start = uint32(x)
		}
		if x, ok := v.uint(fitFieldTimestamp, 4); ok {
			s.end = uint32(x)
		}
		f.sessions = append(f.sessions, s)
	case fitMsgActivity:
		ts, ok1 := v.uint(fitFieldTimestamp, 4)
		lt, ok2 := v.uint(5, 4)
		if ok1 && ok2 && ts > 0 && lt > 0 {
			f.localOffS, f.hasLocal = int64(lt)-int64(ts), true
		}
	case fitMsgFieldDescription:
		idx, ok1 := v.uint(0, 1)
		num, ok2 := v.uint(1, 1)
		if !ok1 || !ok2 {
			return
		}
		name := strings.ToLower(strings.TrimSpace(strings.TrimRight(string(v.bytes(3)), "\x00")))
		native, hasNative := v.uint(15, 1)
		nativeMsg, hasMsg := v.uint(14, 2)
		isPower := name == "power" || (hasNative && native == 7 && (!hasMsg || nativeMsg == fitMsgRecord) && !strings.Contains(name, "form"))
		base, _ := v.uint(2, 1)
		if isPower {
			devPower[devKey{byte(idx), byte(num)}] = byte(base)
		} else {
			delete(devPower, devKey{byte(idx), byte(num)})
		}
	}
}

// record reads one record message through its definition's offsets.
func (f *fitFile) record(d *fitDef, msg []byte, compressed bool, lastTS *uint32, devPower map[devKey]byte) {
	var ts uint32
	switch {
	case compressed:
		ts = *lastTS
	case d.tsOff >= 0:
		x, ok := fitUint(msg[d.tsOff:d.tsOff+4], d.big)
		if !ok {
			return
		}
		ts = uint32(x)
		*lastTS = ts
	default:
		return // no time: the record cannot be placed
	}
	if ts == 0 {
		return
	}
	s := Sample{UnixS: float64(int64(ts) + fitEpochOffset), Power: math.NaN(), HeartRate: math.NaN(), Cadence: math.NaN()}
	if d.powerOff >= 0 {
		if x, ok := fitUint(msg[d.powerOff:d.powerOff+2], d.big); ok {
			s.Power = float64(x)
		}
	}
	if d.hrOff >= 0 && msg[d.hrOff] != 0xFF {
		s.HeartRate = float64(msg[d.hrOff])
	}
	if d.cadOff >= 0 && msg[d.cadOff] != 0xFF {
		s.Cadence = float64(msg[d.cadOff])
	}
	if math.IsNaN(s.Power) && len(d.dev) > 0 && len(devPower) > 0 {
		off := d.devOff
		for _, fd := range d.dev {
			if base, ok := devPower[devKey{fd.base, fd.num}]; ok {
				if x, ok := fitNumber(msg[off:off+int(fd.size)], base, d.big); ok && x >= 0 {
					s.Power = x
					f.devPowerOK = true
				}
			}
			off += int(fd.size)
		}
	}
	f.records = append(f.records, s)
}

// fitNumber reads a value of a FIT base type (the low five bits name it:
// 1 sint8, 2 uint8, 3 sint16, 4 uint16, 5 sint32, 6 uint32, 8 float32,
// 9 float64, 10 uint8z, 11 uint16z, 12 uint32z) of the field's size; ok
// false for the type's invalid value or an unexpected size.
func fitNumber(b []byte, base byte, big bool) (float64, bool) {
	order := binary.ByteOrder(binary.LittleEndian)
	if big {
		order = binary.BigEndian
	}
	switch t := base & 0x1F; {
	case t == 8 && len(b) == 4:
		x := math.Float32frombits(order.Uint32(b))
		return float64(x), order.Uint32(b) != 0xFFFFFFFF && !math.IsNaN(float64(x))
	case t == 9 && len(b) == 8:
		x := math.Float64frombits(order.Uint64(b))
		return x, order.Uint64(b) != 0xFFFFFFFFFFFFFFFF && !math.IsNaN(x)
	case t == 1 && len(b) == 1:
		return float64(int8(b[0])), b[0] != 0x7F
	case t == 3 && len(b) == 2:
		x := order.Uint16(b)
		return float64(int16(x)), x != 0x7FFF
	case t == 5 && len(b) == 4:
		x := order.Uint32(b)
		return float64(int32(x)), x != 0x7FFFFFFF
	case (t == 10 || t == 11 || t == 12) && len(b) <= 4:
		x, _ := fitUint(b, big)
		return float64(x), x != 0
	case t == 2 || t == 4 || t == 6:
		x, ok := fitUint(b, big)
		return float64(x), ok
	}
	return 0, false
}
