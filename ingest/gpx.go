package ingest

import (
	"encoding/xml"
	"errors"
	"fmt"
	"io"
	"math"
	"strings"
	"time"
)

// decodeGPX streams a GPX 1.0 or 1.1 file token by token, as decodeTCX
// does, with the same bounds. Each track (trk) is one ride; a track
// point's time, and from its extensions (any namespace, matched by local
// name) power, heart rate (hr, heartrate) and cadence (cad, cadence).
// The track's type names its sport where it is given.
func decodeGPX(r io.Reader, opts Options) ([]Ride, error) {
	d := xml.NewDecoder(&tokenCap{r: r})
	d.Strict = true
	d.CharsetReader = charsetReader
	var (
		trks     []session
		cur      *session
		inPoint  bool
		pt       Sample
		ptTime   bool
		path     []string
		text     strings.Builder
		sawGPX   bool
		loc      *time.Location
		decodeEr error
		total    int
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
			if len(path) >= maxXMLDepth {
				return nil, fmt.Errorf("XML nested more than %d deep: not a ride file", maxXMLDepth)
			}
			name := t.Name.Local
			path = append(path, name)
			text.Reset()
			switch name {
			case "gpx":
				sawGPX = true
			case "trk":
				trks = append(trks, session{sport: "unknown"})
				cur = &trks[len(trks)-1]
			case "trkpt":
				inPoint, ptTime = true, false
				pt = Sample{Power: math.NaN(), HeartRate: math.NaN(), Cadence: math.NaN()}
			}
		case xml.CharData:
			if len(path) > 0 {
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
			v := strings.TrimSpace(text.String())
			text.Reset()
			if !inPoint {
				if name == "type" && parent == "trk" && cur != nil {
					cur.sport = tcxSport(v)
				}
				continue
			}
			switch strings.ToLower(name) {
			case "time":
				if parent == "trkpt" {
					if tm, err := time.Parse(time.RFC3339Nano, v); err == nil {
						pt.UnixS, ptTime = unixSeconds(tm), true
						if loc == nil {
							loc = tm.Location()
						}
					}
				}
			case "power", "watts":
				pt.Power = parseNumber(v)
			case "hr", "heartrate":
				pt.HeartRate = parseNumber(v)
			case "cad", "cadence":
				pt.Cadence = parseNumber(v)
			case "trkpt":
				inPoint = false
				if ptTime {
					if err := addPoint(&trks, &cur, pt, &total); err != nil {
						return nil, err
					}
				}
			}
		}
	}
	return xmlRides(trks, sawGPX, decodeEr, errors.New("XML file is not a GPX (no gpx element)"), errors.New("GPX file has no track"), opts, loc)
}
