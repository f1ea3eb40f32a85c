package ingest

import (
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strings"
	"time"

	"github.com/tormoder/fit"
)

// fitEpoch: FIT timestamps count from 1989-12-31; anything at or before it
// is the library's "no timestamp".
var fitEpoch = time.Date(1989, 12, 31, 0, 0, 0, 0, time.UTC).Unix()

// decodeFIT reads a FIT activity with the tolerant reader (fitreader.go).
// A file cut short, or damaged part way, keeps the records before the cut
// or damage (Truncated, with a note); a checksum mismatch on a complete
// file is an error unless opts.Salvage.
func decodeFIT(r io.Reader, opts Options) ([]Ride, error) {
	scratch := fitScratches.Get().(*fitScratch)
	defer scratch.release() // the rides returned are copies: nothing keeps the buffers
	data, err := boundedFIT(r, scratch.data)
	if err != nil {
		return nil, err
	}
	scratch.data = data
	f := readFIT(data, MaxFITRecords, scratch.records)
	scratch.records = f.records
	switch t := f.fileType; {
	case f.tooMany:
		return nil, fmt.Errorf("FIT file holds more than %d records: not the recording of a ride", MaxFITRecords)
	case f.damagedAt == "header":
		return nil, errors.New("not a readable FIT file: its header is not a FIT header")
	case t < 0 || t == 0 || t == int(fit.FileTypeInvalid):
		return nil, errors.New("FIT file holds no description of what it is (only a header, or cut short before its first message)")
	case f.crcBad && !opts.Salvage:
		return nil, errors.New("FIT checksum does not match (the file is damaged; --salvage reads it anyway)")
	case t != int(fit.FileTypeActivity):
		return nil, fmt.Errorf("FIT file is not an activity (file type %s)", strings.ToLower(fit.FileType(t).String()))
	}
	salvaged := f.crcBad
	loc := time.UTC
	if f.hasLocal && f.localOffS > -15*3600 && f.localOffS < 15*3600 {
		loc = time.FixedZone("", int(f.localOffS))
	}
	samples := f.records
	var dropped int
	if salvaged {
		samples, dropped = dropWildTimes(samples)
	}
	if len(samples) == 0 {
		if f.truncated {
			return nil, errors.New("FIT file cut short before any record")
		}
		return nil, errors.New("FIT activity has no timestamped records")
	}

	var parts []session
	if len(f.sessions) <= 1 {
		sport := "unknown"
		if len(f.sessions) == 1 {
			sport = fitSport(fit.Sport(f.sessions[0].sport))
		}
		parts = []session{{sport, samples}}
	} else {
		for _, s := range f.sessions {
			a, b := float64(int64(s.start)+fitEpochOffset), float64(int64(s.end)+fitEpochOffset)
			var in []Sample
			for _, x := range samples {
				if x.UnixS >= a && x.UnixS <= b {
					in = append(in, x)
				}
			}
			if len(in) > 0 {
				parts = append(parts, session{fitSport(fit.Sport(s.sport)), in})
			}
		}
		if len(parts) == 0 { // sessions without usable times
			parts = []session{{fitSport(fit.Sport(f.sessions[0].sport)), samples}}
		}
	}

	rides, err := cleanSessions(parts, opts, loc)
	if err != nil {
		return nil, err
	}
	cut := f.truncated || f.damagedAt != ""
	for i := range rides {
		q := &rides[i].Quality
		q.Truncated, q.Salvaged = cut, salvaged
		if f.damagedAt != "" {
			q.Notes = append(q.Notes, "the file is damaged at "+f.damagedAt+"; the records before the damage are kept")
		}
		if dropped > 0 {
			q.Notes = append(q.Notes, fmt.Sprintf("%d damaged records with impossible times dropped", dropped))
		}
		if f.chainNote != "" {
			q.Notes = append(q.Notes, f.chainNote)
		}
		if f.devPowerOK {
			q.Notes = append(q.Notes, "power read from a developer field named as power")
		}
		if rides[i].Sport == "unknown" {
			q.Notes = append(q.Notes, "sport not recorded; read as cycling")
		}
	}
	return rides, nil
}

func fitSport(s fit.Sport) string {
	switch s {
	case fit.SportCycling:
		return "cycling"
	case fit.SportGeneric, fit.SportInvalid, fit.SportAll:
		return "unknown"
	}
	return strings.ToLower(s.String())
}

// dropWildTimes keeps the samples within 24 h of the median time: in a
// damaged file a corrupted timestamp can land years away, and one such
// record must not make the whole ride unreadable.
func dropWildTimes(samples []Sample) ([]Sample, int) {
	if len(samples) == 0 {
		return samples, 0
	}
	times := make([]float64, len(samples))
	for i, s := range samples {
		times[i] = s.UnixS
	}
	slices.Sort(times)
	mid := times[len(times)/2]
	kept := samples[:0]
	for _, s := range samples {
		if math.Abs(s.UnixS-mid) <= 24*3600 {
			kept = append(kept, s)
		}
	}
	return kept, len(samples) - len(kept)
}
