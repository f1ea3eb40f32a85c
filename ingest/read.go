package ingest

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"time"
)

// Options controls reading and cleaning. The zero value is usable.
type Options struct {
	// SpikeCeilingW: power above it is a spike (default 2500 W).
	SpikeCeilingW float64
	// Salvage reads the records of a FIT file whose checksum does not
	// match, or of a malformed TCX file up to the fault, instead of skipping it.
	Salvage bool
	// AnySport keeps sessions of every sport, not only cycling.
	AnySport bool
	// MaxDecompressedBytes caps what a .gz file may expand to (default 256 MiB).
	MaxDecompressedBytes int64
	// Workers is the number of files decoded at once (default: number of CPUs).
	Workers int
	// Progress, when set, is called after each file with the count done and
	// the total. It is called from one goroutine at a time.
	Progress func(done, total int)
	// Only, when set, is asked of every file a scan lists: a file it
	// refuses is not read (a command limited to a date window leaves out
	// the files that cannot hold a ride in it; see PeekStart).
	Only func(path string) bool
	// AfterRead, when set, is called with each file's rides on the
	// goroutine that decoded them, before the next file: the place to
	// reduce a ride (its curve) and let its power go while the scan goes on.
	AfterRead func(rides []Ride)
}

const defaultMaxDecompressed = 256 << 20

// maxFileBytes bounds a plain file: no ride file is anywhere near 1 GiB.
const maxFileBytes = 1 << 30

// FileError is a file that could not be read, with the reason.
type FileError struct {
	Path   string
	Reason error
}

func (e *FileError) Error() string { return e.Path + ": " + e.Reason.Error() }
func (e *FileError) Unwrap() error { return e.Reason }

// Format is a ride file format, recognised by content.
type Format string

// The formats Read understands.
const (
	FormatFIT Format = "fit"
	FormatTCX Format = "tcx"
	FormatCSV Format = "csv"
	FormatGPX Format = "gpx"
)

var errTooLarge = errors.New("decompressed size is over the limit (a gzip bomb?)")

// capReader fails once more than n bytes have been read.
type capReader struct {
	r io.Reader
	n int64
}

func (c *capReader) Read(p []byte) (int, error) {
	if c.n <= 0 {
		// one byte more tells a file of exactly the limit from a larger one
		var b [1]byte
		if k, _ := c.r.Read(b[:]); k > 0 {
			return 0, errTooLarge
		}
		return 0, io.EOF
	}
	if int64(len(p)) > c.n {
		p = p[:c.n]
	}
	k, err := c.r.Read(p)
	c.n -= int64(k)
	return k, err
}

// ReadPowerAgain reads one ride's power from its file again (a ride whose
// power was let go): the session of that length, or an error when the
// file can no longer be read or has changed.
func ReadPowerAgain(path string, session, seconds int, opts Options) ([]Watts, error) {
	opts.AfterRead, opts.Progress, opts.Only = nil, nil, nil
	rides, err := ReadFile(path, opts)
	if err != nil {
		return nil, err
	}
	for _, r := range rides {
		if r.Session == session && len(r.PowerW) == seconds {
			return r.PowerW, nil
		}
	}
	return nil, fmt.Errorf("%s: the file has changed since it was read", path)
}

// ReadFile reads every ride in the file at path. Errors are *FileError.
func ReadFile(path string, opts Options) ([]Ride, error) {
	f, mtime, err := open(path)
	if err != nil {
		return nil, &FileError{path, err}
	}
	defer f.Close()
	fallback := FallbackStart(path, mtime)
	rides, err := Read(f, path, fallback, opts)
	if err != nil {
		return nil, &FileError{path, err}
	}
	return rides, nil
}

func unwrapPathError(err error) error {
	var pe *os.PathError
	if errors.As(err, &pe) {
		return pe.Err
	}
	return err
}

// Read decodes rides from r, whose format is recognised by content (gzip,
// FIT header, XML, else CSV). name labels the rides; fallbackStart dates a
// CSV file whose time column holds elapsed seconds only.
func Read(r io.Reader, name string, fallbackStart time.Time, opts Options) (rides []Ride, err error) {
	defer func() {
		// A decoder bug must cost one file, never the batch.
		if p := recover(); p != nil {
			rides, err = nil, fmt.Errorf("decoder failed on this file: %v", p)
		}
	}()
	outer := readers.Get().(*bufio.Reader)
	outer.Reset(&capReader{r, maxFileBytes})
	defer func() { outer.Reset(nil); readers.Put(outer) }()
	br := outer
	head, _ := br.Peek(2)
	if len(head) == 0 {
		return nil, errors.New("empty file")
	}
	if head[0] == 0x1f && len(head) == 2 && head[1] == 0x8b {
		gz, err := gzip.NewReader(br)
		if err != nil {
			return nil, fmt.Errorf("gzip: %w", err)
		}
		limit := opts.MaxDecompressedBytes
		if limit <= 0 {
			limit = defaultMaxDecompressed
		}
		inner := readers.Get().(*bufio.Reader)
		inner.Reset(&capReader{gz, limit})
		defer func() { inner.Reset(nil); readers.Put(inner) }()
		br = inner
		if h, _ := br.Peek(1); len(h) == 0 {
			return nil, errors.New("empty file inside gzip")
		}
	}
	format, err := sniff(br, name)
	if err != nil {
		return nil, err
	}
	switch format {
	case FormatFIT:
		rides, err = decodeFIT(br, opts)
	case FormatTCX:
		rides, err = decodeTCX(br, opts)
	case FormatGPX:
		rides, err = decodeGPX(br, opts)
	default:
		rides, err = decodeCSV(br, fallbackStart, opts)
	}
	if err != nil {
		return nil, err
	}
	for i := range rides {
		rides[i].File = name
	}
	return rides, nil
}

// sniff tells the format from the first bytes.
func sniff(br *bufio.Reader, name string) (Format, error) {
	head, _ := br.Peek(512)
	if len(head) >= 12 && (head[0] == 12 || head[0] == 14) && string(head[8:12]) == ".FIT" {
		return FormatFIT, nil
	}
	if ext := strings.ToLower(filepath.Ext(strings.TrimSuffix(strings.ToLower(name), ".gz"))); ext == ".fit" {
		return "", errors.New("not a FIT file (no FIT header)")
	}
	trimmed := bytes.TrimLeft(bytes.TrimPrefix(head, []byte("\xef\xbb\xbf")), " \t\r\n")
	if len(trimmed) > 0 && trimmed[0] == '<' {
		if bytes.Contains(head, []byte("<gpx")) {
			return FormatGPX, nil
		}
		return FormatTCX, nil
	}
	if looksLikeText(head) {
		return FormatCSV, nil
	}
	if strings.Contains(strings.ToLower(name), ".fit") {
		return "", errors.New("not a FIT file (no FIT header)")
	}
	return "", errors.New("not a FIT, TCX or CSV file")
}

func looksLikeText(b []byte) bool {
	for _, c := range b {
		if c == 0 || (c < 32 && c != '\n' && c != '\r' && c != '\t') {
			return false
		}
	}
	return true
}

// FallbackStart dates a file that holds elapsed times only: a date in its
// name (2026-03-14, 20260314), else its modification time.
func FallbackStart(path string, mtime time.Time) time.Time {
	if t := startFromName(path); !t.IsZero() {
		return t
	}
	return mtime
}

var dateInName = regexp.MustCompile(`(20\d\d|19\d\d)-?(0[1-9]|1[0-2])-?(0[1-9]|[12]\d|3[01])`)

// startFromName finds a date such as 2026-03-14 or 20260314 in a file name.
func startFromName(path string) time.Time {
	m := dateInName.FindStringSubmatch(filepath.Base(path))
	if m == nil {
		return time.Time{}
	}
	t, err := time.Parse("20060102", m[1]+m[2]+m[3])
	if err != nil {
		return time.Time{}
	}
	return t
}

// IsRideName reports whether a file name looks like a ride file: .fit,
// .tcx, .gpx or .csv, optionally followed by .gz, in any case. Hidden files
// are not.
func IsRideName(name string) bool {
	base := strings.ToLower(filepath.Base(name))
	if strings.HasPrefix(base, ".") {
		return false
	}
	base = strings.TrimSuffix(base, ".gz")
	switch filepath.Ext(base) {
	case ".fit", ".tcx", ".gpx", ".csv":
		return true
	}
	return false
}

// session is one recorded session of a file (a FIT session, a TCX
// activity) before cleaning.
type session struct {
	sport   string
	samples []Sample
}

// cleanSessions cleans every session whose sport is accepted into a ride.
// When none is left the error gives each session's reason.
func cleanSessions(parts []session, opts Options, loc *time.Location) ([]Ride, error) {
	var rides []Ride
	var reasons []string
	why := func(i int, reason string) {
		if len(parts) > 1 {
			reason = fmt.Sprintf("session %d: %s", i+1, reason)
		}
		reasons = append(reasons, reason)
	}
	for i, p := range parts {
		if !sportAccepted(p.sport, opts) {
			why(i, fmt.Sprintf("sport is %s, not cycling (--sport any keeps it)", p.sport))
			continue
		}
		if len(p.samples) == 0 {
			why(i, "no samples with a time")
			continue
		}
		ride, err := Clean(p.samples, opts.SpikeCeilingW, loc)
		if err != nil {
			why(i, err.Error())
			continue
		}
		ride.Session = i
		ride.Sport = p.sport
		rides = append(rides, ride)
	}
	if len(rides) == 0 {
		return nil, errors.New(strings.Join(reasons, "; "))
	}
	return rides, nil
}

// sportAccepted keeps cycling and rides whose sport was not recorded; other
// sports only with opts.AnySport.
func sportAccepted(sport string, opts Options) bool {
	return opts.AnySport || sport == "cycling" || sport == "unknown"
}

// open opens a plain file or an archive member (ARCHIVE:MEMBER), with its
// modification time.
func open(p string) (io.ReadCloser, time.Time, error) {
	if archive, member, ok := splitMember(p); ok {
		return openMember(archive, member)
	}
	f, err := openRegular(p)
	if err != nil {
		return nil, time.Time{}, err
	}
	var mtime time.Time
	if st, err := f.Stat(); err == nil {
		mtime = st.ModTime()
	}
	return f, mtime, nil
}

// HashFile is the SHA-256 of a file's bytes, read as a stream within the
// same 1-GiB bound as ReadFile (never held in memory); an error is the
// reason alone (the caller names the file).
func HashFile(path string) (string, error) {
	f, _, err := open(path)
	if err != nil {
		return "", err
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, &capReader{f, maxFileBytes}); err != nil {
		if errors.Is(err, errTooLarge) {
			return "", errors.New("file is larger than 1 GiB: not a ride file")
		}
		return "", unwrapPathError(err)
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// openRegular opens a regular file; a pipe, device or socket is refused
// before it is opened (opening a pipe waits for a writer forever).
func openRegular(path string) (*os.File, error) {
	st, err := os.Stat(path)
	if err != nil {
		return nil, unwrapPathError(err)
	}
	if !st.Mode().IsRegular() {
		return nil, errors.New("not a regular file (a pipe, device or socket): not read")
	}
	f, err := os.Open(path)
	if err != nil {
		return nil, unwrapPathError(err)
	}
	return f, nil
}
