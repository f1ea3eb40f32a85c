package ingest

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"

	"github.com/sustain-cycling/sustain/internal/synth"
	"github.com/tormoder/fit"
)

// decodeFITLibrary is the FIT library's decode of a FIT activity, the
// oracle of the tolerant reader (decodeFIT): the decoder this project used
// before it had its own. A file cut short keeps the records decoded
// before the cut (Truncated); a checksum mismatch on a complete file is an
// error unless opts.Salvage.
func decodeFITLibrary(r io.Reader, opts Options) ([]Ride, error) {
	f, err := fit.Decode(r)
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

// fitFiles is every FIT file the project can find: the FIT module's
// device files, ../shared/realfit, invented rides, and the fuzz seeds.
func fitFiles(t *testing.T) map[string][]byte {
	t.Helper()
	out := map[string][]byte{}
	add := func(root string) {
		filepath.WalkDir(root, func(p string, d fs.DirEntry, err error) error {
			if err == nil && !d.IsDir() && strings.EqualFold(filepath.Ext(p), ".fit") {
				if b, err := os.ReadFile(p); err == nil {
					out[p] = b
				}
			}
			return nil
		})
	}
	if dir, err := exec.Command("go", "list", "-m", "-f", "{{.Dir}}", "github.com/tormoder/fit").Output(); err == nil {
		add(filepath.Join(strings.TrimSpace(string(dir)), "testdata"))
	}
	add(filepath.Join("..", "..", "shared", "realfit"))
	add(filepath.Join("..", "testdata"))
	a := synth.Athlete{CPW: 250, WPrimeJ: 20000, PmaxW: 900}
	for i, minutes := range []int{1, 60, 180} {
		var buf bytes.Buffer
		tr := synth.FieldRide(a, time.Date(2026, 1, 2, 8, 0, 0, 0, time.UTC), minutes, []int{30}, uint64(i))
		if i == 1 {
			for k := 100; k < len(tr.PowerW); k += 97 {
				tr.PowerW[k] = math.NaN() // invalid values too
			}
		}
		synth.WriteFIT(&buf, tr)
		out[fmt.Sprintf("synth-%d.fit", minutes)] = buf.Bytes()
	}
	return out
}

// The tolerant reader gives the same rides as the FIT library wherever the
// library reads a file without error: the same sessions, sports, start
// instants, and 1-Hz power, heart rate and cadence.
func TestFITReaderMatchesLibrary(t *testing.T) {
	compared := 0
	for name, b := range fitFiles(t) {
		for _, opts := range []Options{{}, {AnySport: true}} {
			want, err := decodeFITLibrary(bytes.NewReader(b), opts)
			if err != nil {
				continue
			}
			got, err := decodeFIT(bytes.NewReader(b), opts)
			if err != nil {
				t.Errorf("%s: the library reads it, the reader says %v", name, err)
				continue
			}
			if len(got) != len(want) {
				t.Errorf("%s: %d rides, the library %d", name, len(got), len(want))
				continue
			}
			for i := range got {
				g, w := got[i], want[i]
				// the same instant; the reader also reads the activity's local
				// time offset on files where the library's decode gave UTC
				if !g.Start.Equal(w.Start) || g.Sport != w.Sport || g.Session != w.Session ||
					!reflect.DeepEqual(g.PowerW, w.PowerW) || !reflect.DeepEqual(g.HeartRateBPM, w.HeartRateBPM) || !reflect.DeepEqual(g.CadenceRPM, w.CadenceRPM) {
					t.Errorf("%s ride %d: %v %s %d s; the library %v %s %d s", name, i, g.Start, g.Sport, len(g.PowerW), w.Start, w.Sport, len(w.PowerW))
				}
			}
			compared++
		}
	}
	t.Logf("%d file readings compared", compared)
	if compared < 10 {
		t.Errorf("only %d compared", compared)
	}
}
