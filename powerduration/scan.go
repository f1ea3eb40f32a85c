package powerduration

import (
	"sync"

	"github.com/sustain-cycling/sustain/ingest"
)

// Scan reads every ride under paths (see ingest.Scan) with its curve. Each
// ride's curve is computed on the goroutine that decoded it, and its power
// (with heart rate and cadence) is then let go: a later stage that needs
// it (efforts avoiding suspect power, W′ balance, a lactate trial) reads
// the ride's file again. So a scan's memory grows with the rides' curves,
// not with their power. The curves are in the rides' order.
func Scan(paths []string, opts ingest.Options) (ingest.Result, []RideCurve) {
	type key struct {
		file    string
		session int
	}
	var mu sync.Mutex
	byRide := map[key]RideCurve{}
	reduce := opts
	reduce.AfterRead = func(rides []ingest.Ride) {
		for i := range rides {
			r := &rides[i]
			c := OfRide(r)
			r.HeartRateBPM, r.CadenceRPM = nil, nil
			file, session, seconds := r.File, r.Session, len(r.PowerW)
			r.LeavePower(func() ([]float64, error) { return ingest.ReadPowerAgain(file, session, seconds, opts) })
			mu.Lock()
			byRide[key{r.File, r.Session}] = c
			mu.Unlock()
		}
	}
	res := ingest.Scan(paths, reduce)
	curves := make([]RideCurve, len(res.Rides))
	for i := range res.Rides {
		r := &res.Rides[i]
		curves[i] = byRide[key{r.File, r.Session}]
		curves[i].Source = SourceOf(r)
	}
	return res, curves
}
