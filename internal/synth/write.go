package synth

import (
	"encoding/binary"
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"strconv"
	"time"

	"github.com/tormoder/fit"
)

func (t Track) skipped(i int) bool { return i < len(t.Skip) && t.Skip[i] }

func at(v []float64, i int) float64 {
	if i < len(v) {
		return v[i]
	}
	return math.NaN()
}

// WriteFIT writes the track as a FIT activity file with one session.
func WriteFIT(w io.Writer, t Track) error { return WriteFITSessions(w, t) }

// WriteFITSessions writes one FIT activity file with a session per track
// (a multisport file: a ride, then a run, …).
func WriteFITSessions(w io.Writer, tracks ...Track) error {
	if len(tracks) == 0 {
		return fmt.Errorf("no track to write")
	}
	h := fit.NewHeader(fit.V20, false)
	f, err := fit.NewFile(fit.FileTypeActivity, h)
	if err != nil {
		return err
	}
	f.FileId.TimeCreated = tracks[0].Start
	f.FileId.Manufacturer = fit.ManufacturerDevelopment
	act, err := f.Activity()
	if err != nil {
		return err
	}
	var end time.Time
	for _, t := range tracks {
		for i, p := range t.PowerW {
			if t.skipped(i) {
				continue
			}
			r := fit.NewRecordMsg()
			r.Timestamp = t.Start.Add(time.Duration(i) * time.Second)
			if !math.IsNaN(p) && p >= 0 && p < 0xFFFF {
				r.Power = uint16(math.Round(p))
			}
			if h := at(t.HeartRateBPM, i); h > 0 && h < 255 {
				r.HeartRate = uint8(h)
			}
			if c := at(t.CadenceRPM, i); c >= 0 && c < 255 {
				r.Cadence = uint8(c)
			}
			act.Records = append(act.Records, r)
		}
		end = t.Start.Add(time.Duration(len(t.PowerW)-1) * time.Second)
		s := fit.NewSessionMsg()
		s.StartTime = t.Start
		s.Timestamp = end
		s.Sport = fitSport(t.Sport)
		s.TotalElapsedTime = uint32(len(t.PowerW) * 1000)
		act.Sessions = append(act.Sessions, s)
	}
	a := fit.NewActivityMsg()
	a.Timestamp = end
	a.NumSessions = uint16(len(tracks))
	act.Activity = a
	return fit.Encode(w, f, binary.LittleEndian)
}

func fitSport(s string) fit.Sport {
	switch s {
	case "running":
		return fit.SportRunning
	case "cycling", "":
		return fit.SportCycling
	}
	return fit.SportGeneric
}

// WriteTCX writes the track as a Training Center Database v2 file, power in
// the ns3 trackpoint extension.
func WriteTCX(w io.Writer, t Track) error {
	sport := "Biking"
	switch t.Sport {
	case "running":
		sport = "Running"
	case "cycling", "":
	default:
		sport = "Other"
	}
	bw := &errWriter{w: w}
	bw.printf(`<?xml version="1.0" encoding="UTF-8"?>
<TrainingCenterDatabase xmlns="http://www.garmin.com/xmlschemas/TrainingCenterDatabase/v2" xmlns:ns3="http://www.garmin.com/xmlschemas/ActivityExtension/v2">
 <Activities>
  <Activity Sport="%s">
   <Id>%s</Id>
   <Lap StartTime="%s">
    <Track>
`, sport, t.Start.UTC().Format(time.RFC3339), t.Start.UTC().Format(time.RFC3339))
	for i, p := range t.PowerW {
		if t.skipped(i) {
			continue
		}
		bw.printf("     <Trackpoint><Time>%s</Time>", t.Start.Add(time.Duration(i)*time.Second).UTC().Format(time.RFC3339))
		if h := at(t.HeartRateBPM, i); h > 0 {
			bw.printf("<HeartRateBpm><Value>%d</Value></HeartRateBpm>", int(h))
		}
		if c := at(t.CadenceRPM, i); c >= 0 {
			bw.printf("<Cadence>%d</Cadence>", int(c))
		}
		if !math.IsNaN(p) {
			bw.printf("<Extensions><ns3:TPX><ns3:Watts>%s</ns3:Watts></ns3:TPX></Extensions>", strconv.FormatFloat(p, 'f', -1, 64))
		}
		bw.printf("</Trackpoint>\n")
	}
	bw.printf("    </Track>\n   </Lap>\n  </Activity>\n </Activities>\n</TrainingCenterDatabase>\n")
	return bw.err
}

// WriteGPX writes the track as GPX 1.1, with power, heart rate and
// cadence in each point's extensions (an invented namespace: readers match
// extensions by local name).
func WriteGPX(w io.Writer, t Track) error {
	bw := &errWriter{w: w}
	sport := t.Sport
	if sport == "" {
		sport = "cycling"
	}
	bw.printf(`<?xml version="1.0" encoding="UTF-8"?>
<gpx version="1.1" creator="sustain synth" xmlns="http://www.topografix.com/GPX/1/1" xmlns:x="urn:sustain:synth:point">
 <trk><name>invented ride</name><type>%s</type><trkseg>
`, sport)
	for i, p := range t.PowerW {
		if t.skipped(i) {
			continue
		}
		bw.printf(`  <trkpt lat="46.5" lon="7.5"><time>%s</time><extensions>`, t.Start.Add(time.Duration(i)*time.Second).UTC().Format(time.RFC3339))
		if !math.IsNaN(p) {
			bw.printf("<x:power>%s</x:power>", strconv.FormatFloat(p, 'f', -1, 64))
		}
		if h := at(t.HeartRateBPM, i); h > 0 {
			bw.printf("<x:hr>%d</x:hr>", int(h))
		}
		if c := at(t.CadenceRPM, i); c >= 0 {
			bw.printf("<x:cad>%d</x:cad>", int(c))
		}
		bw.printf("</extensions></trkpt>\n")
	}
	bw.printf(" </trkseg></trk>\n</gpx>\n")
	return bw.err
}

// WriteCSV writes the track as CSV with an RFC 3339 time column.
func WriteCSV(w io.Writer, t Track) error {
	cw := csv.NewWriter(w)
	if err := cw.Write([]string{"timestamp", "power", "heart_rate", "cadence"}); err != nil {
		return err
	}
	num := func(v float64) string {
		if math.IsNaN(v) {
			return ""
		}
		return strconv.FormatFloat(v, 'f', -1, 64)
	}
	for i, p := range t.PowerW {
		if t.skipped(i) {
			continue
		}
		ts := t.Start.Add(time.Duration(i) * time.Second).UTC().Format(time.RFC3339)
		if err := cw.Write([]string{ts, num(p), num(at(t.HeartRateBPM, i)), num(at(t.CadenceRPM, i))}); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

type errWriter struct {
	w   io.Writer
	err error
}

func (e *errWriter) printf(format string, args ...any) {
	if e.err == nil {
		_, e.err = fmt.Fprintf(e.w, format, args...)
	}
}
