package ingest

import (
	"compress/gzip"
	"encoding/binary"
	"io"
	"os"
	"strings"
	"time"
)

// peekBytes is how much of a FIT file PeekStart reads: its header and
// first messages, where the first record's time is.
const peekBytes = 64 << 10

// PeekStart reads when the ride in a FIT file (plain or gzipped) starts,
// from its first records alone, without decoding the file: so a command
// limited to a date window need not decode files that cannot fall in it.
// ok is false for anything it cannot answer cheaply and surely (another
// format, an archive member, a damaged header, a file that chains further
// FIT files after the first, whose later rides may be of other days): such
// a file is decoded as usual.
func PeekStart(path string) (start time.Time, ok bool) {
	lower := strings.ToLower(path)
	gz := strings.HasSuffix(lower, ".fit.gz")
	if !gz && !strings.HasSuffix(lower, ".fit") {
		return time.Time{}, false
	}
	f, err := os.Open(path)
	if err != nil {
		return time.Time{}, false
	}
	defer f.Close()
	fi, err := f.Stat()
	if err != nil || !fi.Mode().IsRegular() {
		return time.Time{}, false
	}
	size := fi.Size() // of the FIT data: for gzip, its trailer's count (mod 2^32)
	var r io.Reader = f
	if gz {
		var tail [4]byte
		if fi.Size() < 18 {
			return time.Time{}, false
		}
		if _, err := f.ReadAt(tail[:], fi.Size()-4); err != nil {
			return time.Time{}, false
		}
		size = int64(binary.LittleEndian.Uint32(tail[:]))
		zr, err := gzip.NewReader(f)
		if err != nil {
			return time.Time{}, false
		}
		zr.Multistream(false)
		r = zr
	}
	head := make([]byte, peekBytes)
	n, _ := io.ReadFull(r, head)
	head = head[:n]
	if len(head) < 12 || string(head[8:12]) != ".FIT" {
		return time.Time{}, false
	}
	hs, dataSize := int64(head[0]), int64(binary.LittleEndian.Uint32(head[4:8]))
	if hs < 12 || hs > int64(len(head)) || size > hs+dataSize+2 {
		return time.Time{}, false // chained (or followed by something else): decode it
	}
	var ff fitFile
	ff.fileType = -1
	ff.segment(head[hs:min(int64(len(head)), hs+dataSize)], 8)
	if len(ff.records) == 0 {
		return time.Time{}, false
	}
	t := ff.records[0].UnixS
	if t < EarliestUnixS || t > LatestUnixS {
		return time.Time{}, false
	}
	return time.Unix(int64(t), 0).UTC(), true
}
