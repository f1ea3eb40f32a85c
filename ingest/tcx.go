package ingest

import (
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"time"
	"unicode/utf8"
)

// decodeTCX streams a Training Center Database (v2) file token by token, so
// a long ride is never held as a tree. Elements are matched by local name,
// whatever namespace prefix the writer used. Each Activity is one ride.
func decodeTCX(r io.Reader, opts Options) ([]Ride, error) {
	d := xml.NewDecoder(&tokenCap{r: r})
	d.Strict = true
	d.CharsetReader = charsetReader
	total := 0

	var (
		acts     []session
		cur      *session
		inPoint  bool
		pt       Sample
		ptTime   bool
		path     []string // local names of open elements
		text     strings.Builder
		sawTCX   bool
		loc      *time.Location
		decodeEr error
	)
	for {
		tok, err := d.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			decodeEr = err
			break
		}
		switch t := tok.(type) {
		case xml.StartElement:
			name := t.Name.Local
			if len(path) >= maxXMLDepth {
				return nil, fmt.Errorf("XML nested more than %d deep: not a ride file", maxXMLDepth)
			}
			path = append(path, name)
			text.Reset()
			switch name {
			case "TrainingCenterDatabase":
				sawTCX = true
			case "Activity":
				acts = append(acts, session{sport: "unknown"})
				cur = &acts[len(acts)-1]
				for _, a := range t.Attr {
					if a.Name.Local == "Sport" {
						cur.sport = tcxSport(a.Value)
					}
				}
			case "Trackpoint":
				inPoint = true
				ptTime = false
				pt = Sample{Power: math.NaN(), HeartRate: math.NaN(), Cadence: math.NaN()}
			}
		case xml.CharData:
			if inPoint {
				text.Write(t)
			}
		case xml.EndElement:
			name := t.Name.Local
			parent := ""
			if len(path) >= 2 {
				parent = path[len(path)-2]
			}
			if len(path) > 0 {
				path = path[:len(path)-1]
			}
			if !inPoint {
				continue
			}
			v := strings.TrimSpace(text.String())
			text.Reset()
			switch name {
			case "Time":
				if parent == "Trackpoint" {
					if tm, err := time.Parse(time.RFC3339Nano, v); err == nil {
						pt.UnixS = unixSeconds(tm)
						ptTime = true
						if loc == nil {
							loc = tm.Location()
						}
					}
				}
			case "Value":
				if parent == "HeartRateBpm" {
					pt.HeartRate = parseNumber(v)
				}
			case "Cadence":
				if parent == "Trackpoint" {
					pt.Cadence = parseNumber(v)
				}
			case "Watts":
				pt.Power = parseNumber(v)
			case "Trackpoint":
				inPoint = false
				if ptTime {
					if err := addPoint(&acts, &cur, pt, &total); err != nil {
						return nil, err
					}
				}
			}
		}
	}
	return xmlRides(acts, sawTCX, decodeEr, errors.New("XML file is not a TCX (no TrainingCenterDatabase element)"), errors.New("TCX file has no activity"), opts, loc)
}

func tcxSport(s string) string {
	switch strings.ToLower(s) {
	case "biking", "cycling":
		return "cycling"
	case "running":
		return "running"
	}
	return "unknown"
}

// parseNumber reads a decimal number; anything else is NaN (missing).
func parseNumber(s string) float64 {
	v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
	if err != nil {
		return math.NaN()
	}
	return v
}

// XML bounds: an element, attribute or text run longer than
// MaxXMLTokenBytes, or elements nested deeper than maxXMLDepth, are no
// ride file, and refusing them keeps the decoder's buffers bounded.
const (
	MaxXMLTokenBytes = 1 << 20
	maxXMLDepth      = 256
)

var errXMLTokenTooLong = fmt.Errorf("an XML element or text of more than %d KiB: not a ride file", MaxXMLTokenBytes>>10)

// tokenCap fails when more than MaxXMLTokenBytes pass without a '<' or '>'.
type tokenCap struct {
	r   io.Reader
	run int
}

func (c *tokenCap) Read(p []byte) (int, error) {
	n, err := c.r.Read(p)
	for _, b := range p[:n] {
		if b == '<' || b == '>' {
			c.run = 0
		} else if c.run++; c.run > MaxXMLTokenBytes {
			return 0, errXMLTokenTooLong
		}
	}
	return n, err
}

// charsetReader reads the single-byte character sets ride files declare
// (Latin-1 and its Windows cousin, ASCII) as UTF-8; names and numbers are
// all a ride needs from them. Any other set is refused in plain words.
func charsetReader(charset string, r io.Reader) (io.Reader, error) {
	switch strings.ToLower(strings.ReplaceAll(charset, "_", "-")) {
	case "iso-8859-1", "latin1", "latin-1", "windows-1252", "cp1252", "us-ascii", "ascii":
		return latin1{r}, nil
	}
	return nil, fmt.Errorf("the file declares the character set %q, which sustain does not read", charset)
}

// latin1 turns single bytes into their code points, as UTF-8 (at most two
// bytes each, so it reads at most half of p).
type latin1 struct{ r io.Reader }

func (l latin1) Read(p []byte) (int, error) {
	if len(p) < 2 {
		return 0, io.ErrShortBuffer
	}
	buf := make([]byte, len(p)/2)
	n, err := l.r.Read(buf)
	out := p[:0]
	for _, b := range buf[:n] {
		out = utf8.AppendRune(out, rune(b))
	}
	return len(out), err
}

// addPoint adds a timed point to the current session (opening one when the
// file has none), within MaxSamples points a file.
func addPoint(parts *[]session, cur **session, pt Sample, total *int) error {
	if *cur == nil {
		*parts = append(*parts, session{sport: "unknown"})
		*cur = &(*parts)[len(*parts)-1]
	}
	if *total++; *total > MaxSamples {
		return fmt.Errorf("more than %d points: not the recording of a ride", MaxSamples)
	}
	(*cur).samples = append((*cur).samples, pt)
	return nil
}

// xmlRides ends a streamed XML decode (TCX, GPX): the bounds' errors as
// they are, a malformed file kept only with --salvage when something was
// read (flagged), the root element required, the sessions cleaned.
func xmlRides(parts []session, sawRoot bool, decodeEr, notRoot, none error, opts Options, loc *time.Location) ([]Ride, error) {
	if errors.Is(decodeEr, errXMLTokenTooLong) {
		return nil, decodeEr
	}
	if decodeEr != nil && !(opts.Salvage && len(parts) > 0) {
		return nil, fmt.Errorf("malformed XML: %v", decodeEr)
	}
	if !sawRoot {
		return nil, notRoot
	}
	if len(parts) == 0 {
		return nil, none
	}
	rides, err := cleanSessions(parts, opts, loc)
	if err != nil {
		return nil, err
	}
	for i := range rides {
		rides[i].Quality.Salvaged = decodeEr != nil
	}
	return rides, nil
}
