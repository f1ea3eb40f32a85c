package ingest

import (
	"bytes"
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

// decodeFIT reads a FIT activity. A file cut short keeps the records decoded
// before the cut (Truncated); a checksum mismatch on a complete file is an
// error unless opts.Salvage.
func decodeFIT(r io.Reader, opts Options) ([]Ride, error) {
	data, err := boundedFIT(r)
	if err != nil {
		return nil, err
	}
	f, err := fit.Decode(bytes.NewReader(data))
	if f == nil {
		if err == nil {
			err = errors.New("no data")
		}
		return nil, fmt.Errorf("not a readable FIT file: %s", fitReason(err))
	}
	var truncated, salvaged bool
	if err != nil {
		var integrity fit.IntegrityError
		switch {
		case strings.Contains(err.Error(), io.ErrUnexpectedEOF.Error()), strings.Contains(err.Error(), "beyond data size"):
			// the file ends before its header says it does: cut short
			truncated = true
		case errors.As(err, &integrity):
			if !opts.Salvage {
				return nil, errors.New("FIT checksum does not match (the file is damaged; --salvage reads it anyway)")
			}
			salvaged = true
		default:
			if !opts.Salvage {
				return nil, fmt.Errorf("damaged FIT file (%s); --salvage keeps the records before the damage", fitReason(err))
			}
			salvaged = true
		}
	}
	switch t := f.Type(); {
	case t == 0 || t == fit.FileTypeInvalid:
		return nil, errors.New("FIT file holds no description of what it is (only a header, or cut short before its first message)")
	case t != fit.FileTypeActivity:
		return nil, fmt.Errorf("FIT file is not an activity (file type %s)", strings.ToLower(t.String()))
	}
	act, aerr := f.Activity()
	if aerr != nil {
		return nil, aerr
	}
	loc := time.UTC
	if a := act.Activity; a != nil && !a.LocalTimestamp.IsZero() && !a.Timestamp.IsZero() {
		if off := a.LocalTimestamp.Unix() - a.Timestamp.Unix(); off > -15*3600 && off < 15*3600 && a.LocalTimestamp.Unix() > fitEpoch {
			loc = time.FixedZone("", int(off))
		}
	}

	samples := make([]Sample, 0, len(act.Records))
	for _, rec := range act.Records {
		ts := rec.Timestamp.Unix()
		if ts <= fitEpoch {
			continue
		}
		s := Sample{UnixS: float64(ts), Power: math.NaN(), HeartRate: math.NaN(), Cadence: math.NaN()}
		if rec.Power != 0xFFFF {
			s.Power = float64(rec.Power)
		}
		if rec.HeartRate != 0xFF {
			s.HeartRate = float64(rec.HeartRate)
		}
		if rec.Cadence != 0xFF {
			s.Cadence = float64(rec.Cadence)
		}
		samples = append(samples, s)
	}
	var dropped int
	if salvaged {
		samples, dropped = dropWildTimes(samples)
	}
	if len(samples) == 0 {
		if truncated {
			return nil, errors.New("FIT file cut short before any record")
		}
		return nil, errors.New("FIT activity has no records")
	}

	var parts []session
	sessions := act.Sessions
	if len(sessions) <= 1 {
		sport := "unknown"
		if len(sessions) == 1 {
			sport = fitSport(sessions[0].Sport)
		}
		parts = []session{{sport, samples}}
	} else {
		for _, s := range sessions {
			a, b := s.StartTime.Unix(), s.Timestamp.Unix()
			var in []Sample
			for _, x := range samples {
				if x.UnixS >= float64(a) && x.UnixS <= float64(b) {
					in = append(in, x)
				}
			}
			if len(in) > 0 {
				parts = append(parts, session{fitSport(s.Sport), in})
			}
		}
		if len(parts) == 0 { // sessions without usable times
			parts = []session{{fitSport(sessions[0].Sport), samples}}
		}
	}

	rides, err := cleanSessions(parts, opts, loc)
	if err != nil {
		return nil, err
	}
	for i := range rides {
		rides[i].Quality.Truncated = truncated
		rides[i].Quality.Salvaged = salvaged
		if dropped > 0 {
			rides[i].Quality.Notes = append(rides[i].Quality.Notes, fmt.Sprintf("%d damaged records with impossible times dropped", dropped))
		}
		if rides[i].Sport == "unknown" {
			rides[i].Quality.Notes = append(rides[i].Quality.Notes, "sport not recorded; read as cycling")
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

// fitReason says in a rider's words what the FIT library found wrong,
// without its internals (message numbers, field layouts).
func fitReason(err error) string {
	m := err.Error()
	switch {
	case strings.Contains(m, "missing data definition"):
		return "a record refers to a message type the file never defined"
	case strings.Contains(m, "less than base type size"):
		return "a field is declared smaller than its type"
	case strings.Contains(m, "header"):
		return "its header is not a FIT header"
	}
	return "its data does not follow the FIT protocol"
}
