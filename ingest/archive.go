package ingest

import (
	"archive/zip"
	"errors"
	"fmt"
	"io"
	"os"
	"path"
	"strings"
	"time"
)

// Archives: a .zip (a training service's bulk export) is read in place,
// never extracted: every member that is a ride by name (IsRideName) is a
// file of its own, named ARCHIVE:MEMBER (export.zip:activities/123.fit.gz)
// everywhere a file is named. Each member has the caps of any file; an
// archive may hold at most MaxArchiveMembers members and expand to at most
// MaxArchiveBytes in all.
const (
	MaxArchiveMembers = 20_000
	MaxArchiveBytes   = 8 << 30
	memberSep         = ":"
)

// IsArchiveName reports whether a file name is a zip archive.
func IsArchiveName(name string) bool {
	return strings.EqualFold(path.Ext(name), ".zip")
}

// splitMember splits ARCHIVE:MEMBER when ARCHIVE is a zip file that
// exists; ok false for a plain path.
func splitMember(p string) (archive, member string, ok bool) {
	lower := strings.ToLower(p)
	for from := 0; ; {
		i := strings.Index(lower[from:], ".zip"+memberSep)
		if i < 0 {
			return "", "", false
		}
		end := from + i + len(".zip")
		if st, err := os.Stat(p[:end]); err == nil && st.Mode().IsRegular() {
			return p[:end], p[end+len(memberSep):], true
		}
		from = end
	}
}

// archiveMembers lists an archive's ride members as ARCHIVE:MEMBER paths,
// and a reason when the archive cannot be read or breaks a cap.
func archiveMembers(archive string) ([]string, string) {
	zr, err := zip.OpenReader(archive)
	if err != nil {
		return nil, "not a readable zip archive"
	}
	defer zr.Close()
	if len(zr.File) > MaxArchiveMembers {
		return nil, fmt.Sprintf("the archive holds %d members, more than %d: not read", len(zr.File), MaxArchiveMembers)
	}
	var total uint64
	var out []string
	for _, f := range zr.File {
		if f.FileInfo().IsDir() || !IsRideName(path.Base(f.Name)) {
			continue
		}
		if total += f.UncompressedSize64; total > MaxArchiveBytes {
			return nil, fmt.Sprintf("the archive expands to more than %d GiB: not read", MaxArchiveBytes>>30)
		}
		out = append(out, archive+memberSep+f.Name)
	}
	return out, ""
}

// openMember opens one member of an archive, its size capped as a plain
// file's; the archive's modification time stands for the member's.
func openMember(archive, member string) (io.ReadCloser, time.Time, error) {
	zr, err := zip.OpenReader(archive)
	if err != nil {
		return nil, time.Time{}, errors.New("its archive is not a readable zip archive")
	}
	for _, f := range zr.File {
		if f.Name == member {
			rc, err := f.Open()
			if err != nil {
				zr.Close()
				return nil, time.Time{}, errors.New("the member cannot be read from its archive (damaged or of an unknown compression)")
			}
			mt := f.Modified
			if st, err := os.Stat(archive); err == nil && mt.IsZero() {
				mt = st.ModTime()
			}
			return &memberReader{rc, zr}, mt, nil
		}
	}
	zr.Close()
	return nil, time.Time{}, errors.New("no such member in its archive")
}

type memberReader struct {
	io.ReadCloser
	zr *zip.ReadCloser
}

func (m *memberReader) Read(p []byte) (int, error) {
	n, err := m.ReadCloser.Read(p)
	if err != nil && err != io.EOF {
		err = errors.New("the member is damaged in its archive")
	}
	return n, err
}

func (m *memberReader) Close() error {
	m.ReadCloser.Close()
	return m.zr.Close()
}

// StatFile gives a file's size and modification time, for an archive
// member its uncompressed size and its archive's time with the member's
// checksum folded in (so a changed member is a changed file).
func StatFile(p string) (size int64, mtime time.Time, err error) {
	if archive, member, ok := splitMember(p); ok {
		st, err := os.Stat(archive)
		if err != nil {
			return 0, time.Time{}, err
		}
		zr, err := zip.OpenReader(archive)
		if err != nil {
			return 0, time.Time{}, err
		}
		defer zr.Close()
		for _, f := range zr.File {
			if f.Name == member {
				return int64(f.UncompressedSize64), st.ModTime().Add(time.Duration(f.CRC32)), nil
			}
		}
		return 0, time.Time{}, errors.New("no such member")
	}
	st, err := os.Stat(p)
	if err != nil {
		return 0, time.Time{}, err
	}
	return st.Size(), st.ModTime(), nil
}
