// Package accuracy measures how well sustain's estimates recover the truth
// of invented athletes (internal/synth): seasons of every field kind
// (well tested, sparsely recorded, noisy, a training block, endurance
// only) for athletes whose maximal power follows each truth model
// (2-parameter, Morton, omni-domain), so that no fitted model is judged on
// data generated from itself.
//
// It is a report, like a benchmark, not a test: `make accuracy` prints,
// per kind, truth and model, the mean, SD and worst error of CP and W′,
// how often the reported range covers the true CP, how often a high or
// medium headline is more than 5 % off, and for seasons how often a real
// change of CP is named and a false change is named.
package accuracy

import (
	"fmt"
	"math"
	"runtime"
	"sync"
	"time"

	"github.com/sustain-cycling/sustain/estimate"
	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/internal/synth"
	"github.com/sustain-cycling/sustain/powerduration"
)

// Rides cleans an invented season's tracks exactly as files would be read
// (samples a track skips are not recorded).
func Rides(fs synth.FieldSeason) ([]ingest.Ride, []powerduration.RideCurve, error) {
	var rides []ingest.Ride
	for i, tr := range fs.Tracks {
		s := make([]ingest.Sample, 0, len(tr.PowerW))
		for k, p := range tr.PowerW {
			if tr.Skip != nil && tr.Skip[k] {
				continue
			}
			s = append(s, ingest.Sample{UnixS: float64(tr.Start.Unix() + int64(k)), Power: p, HeartRate: math.NaN(), Cadence: math.NaN()})
		}
		r, err := ingest.Clean(s, 0, time.UTC)
		if err != nil {
			return nil, nil, fmt.Errorf("ride %d: %w", i, err)
		}
		r.File = fmt.Sprintf("%s-%03d.fit", tr.Start.Format("2006-01-02"), i)
		r.Sport = "cycling"
		rides = append(rides, r)
	}
	ingest.SortRides(rides)
	return rides, powerduration.OfRides(rides, 1), nil
}

// Outcome is what one season's estimate and season report got.
type Outcome struct {
	Kind, Truth string
	Seed        uint64
	TrueCPW     float64 // at the end of the season
	TrueWPrimeJ float64
	// Headline
	Estimated  bool    // a number was printed (not "not estimated")
	CPW        float64 // the headline's CP
	LowW       float64
	HighW      float64
	Confidence string
	Model      string
	FloorW     float64 // the floor printed when not estimated (0: none)
	// Per model: CP and W′ of each fit (absent when it could not be fitted)
	Models map[string][2]float64
	// OmniRMSEW is the omni-domain fit's RMSE on its own efforts.
	OmniRMSEW float64
	// Season: a rise of CP named (block) or any change named (stable)
	CPRiseNamed, ChangeNamed bool
	SeasonEndCPW             float64 // the last estimated window's CP (0: none)
}

// Run analyses one invented season as `sustain estimate` (the 90 days
// ending at the newest ride) and `sustain season` (defaults) would.
func Run(kind, truth string, seed uint64) (Outcome, error) {
	fs := synth.NewFieldSeason(kind, truth, seed)
	rides, curves, err := Rides(fs)
	if err != nil {
		return Outcome{}, err
	}
	end := fs.On(7*fs.Weeks - 1)
	o := Outcome{Kind: kind, Truth: truth, Seed: seed, TrueCPW: end.CPW, TrueWPrimeJ: end.WPrimeJ, Models: map[string][2]float64{}}
	w := powerduration.LastDays(powerduration.Newest(curves), 90)
	rep := estimate.Estimate(rides, curves, w, estimate.Options{})
	if th := rep.Threshold; th != nil {
		if th.Estimated() {
			o.Estimated = true
			o.CPW, o.LowW, o.HighW, o.Confidence, o.Model = th.Watts, th.LowW, th.HighW, th.Confidence, th.Model
		} else {
			o.FloorW = th.FloorW
		}
	}
	for _, f := range rep.Models {
		o.Models[f.Model] = [2]float64{f.CPW, f.WPrimeJ}
		if f.Model == estimate.ModelOmni {
			o.OmniRMSEW = f.RMSEW
		}
	}
	srep := estimate.Season(rides, curves, estimate.SeasonOptions{})
	for _, c := range srep.Changes {
		o.ChangeNamed = true
		o.CPRiseNamed = o.CPRiseNamed || (c.Component == "cp" && c.Delta > 0)
	}
	for _, c := range srep.OverallChanges {
		o.ChangeNamed = true
		o.CPRiseNamed = o.CPRiseNamed || (c.Component == "cp" && c.Delta > 0)
	}
	for i := len(srep.Windows) - 1; i >= 0; i-- {
		if srep.Windows[i].Estimated {
			o.SeasonEndCPW = srep.Windows[i].CPW
			break
		}
	}
	return o, nil
}

// RunAll runs every kind and truth model over seeds 1..seeds on all CPUs.
func RunAll(kinds, truths []string, seeds int) ([]Outcome, error) {
	type job struct {
		kind, truth string
		seed        uint64
	}
	var jobs []job
	for _, k := range kinds {
		for _, t := range truths {
			for s := 1; s <= seeds; s++ {
				jobs = append(jobs, job{k, t, uint64(s)})
			}
		}
	}
	out := make([]Outcome, len(jobs))
	errs := make([]error, len(jobs))
	next := make(chan int)
	var wg sync.WaitGroup
	for range runtime.NumCPU() {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				j := jobs[i]
				out[i], errs[i] = Run(j.kind, j.truth, j.seed)
			}
		}()
	}
	for i := range jobs {
		next <- i
	}
	close(next)
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return nil, err
		}
	}
	return out, nil
}
