package synth

import (
	"math"
	"math/rand/v2"
	"time"
)

// Kinds of invented field season, each with the faults riders' files
// really carry. They are the ground truth of the accuracy report.
const (
	// KindWellTested: maximal efforts of 1 to 20 min rotate through the
	// weeks (and a 45-min time trial twice), among mostly submaximal
	// riding with surges and sprints.
	KindWellTested = "well-tested"
	// KindSparse: as well tested, recorded every 1–6 s (a head unit's
	// "smart" recording) with auto-pauses at stops.
	KindSparse = "sparse"
	// KindNoisy: as well tested, with single-sample spikes below the
	// 2500-W ceiling, sensor dropouts, and stuck power runs that start
	// inside maximal efforts.
	KindNoisy = "noisy"
	// KindBlock: as well tested, while a training block raises CP by 6–8 %
	// (and trims W′) between weeks 4 and 9; a plateau follows.
	KindBlock = "block"
	// KindEndurance: endurance riding only, with submaximal surges and no
	// maximal effort at all.
	KindEndurance = "endurance-only"
)

// FieldKinds lists every kind.
var FieldKinds = []string{KindWellTested, KindSparse, KindNoisy, KindBlock, KindEndurance}

// TruthModels lists every truth model.
var TruthModels = []string{TruthCP2, TruthMorton, TruthOmni}

// FieldSeason is an invented season with its truth.
type FieldSeason struct {
	Kind, Truth string
	Start       time.Time
	Weeks       int
	Tracks      []Track
	// Base is the athlete on day 0; On gives the athlete on a given day
	// (days from Start).
	Base Athlete
	On   func(day int) Athlete
	// CPGainW is the rise of CP over the season (0 unless KindBlock).
	CPGainW float64
}

// NewFieldSeason invents a 14-week season of the given kind for an athlete
// whose maximal power follows truth. It is deterministic for a seed; the
// athlete (CP 230–330 W, W′ 14–26 kJ, Pmax 800–1300 W, long-duration
// decline 15–35 W) is drawn from the seed too. All values are invented.
func NewFieldSeason(kind, truth string, seed uint64) FieldSeason {
	rng := rand.New(rand.NewPCG(seed, 0xf1e1d^seed))
	base := Athlete{Name: "invented", Truth: truth,
		CPW: 230 + 100*rng.Float64(), WPrimeJ: 14000 + 12000*rng.Float64(),
		PmaxW: 800 + 500*rng.Float64(), A: 15 + 20*rng.Float64()}
	fs := FieldSeason{Kind: kind, Truth: truth, Base: base, Weeks: 14,
		Start: time.Date(2026, 2, 2, 0, 0, 0, 0, time.UTC)}
	fs.On = func(int) Athlete { return base }
	if kind == KindBlock {
		gain := (0.06 + 0.02*rng.Float64()) * base.CPW
		loss := 0.10 * base.WPrimeJ
		fs.CPGainW = gain
		fs.On = func(day int) Athlete {
			f := math.Min(1, math.Max(0, float64(day-21)/42))
			a := base
			a.CPW += gain * f
			a.WPrimeJ -= loss * f
			return a
		}
	}
	// weekly maximal efforts, seconds: every few weeks cover 1 to 20 min
	weekly := [][]int{{180, 60}, {720, 15}, {300, 10}, {1200}, {480, 30}, {240, 5}, {600, 120}, {900, 60}}
	for w := range fs.Weeks {
		for k, dow := range []int{0, 2, 4, 5} {
			day := 7*w + dow
			a := fs.On(day)
			at := fs.Start.AddDate(0, 0, day).Add(time.Duration(7+rng.IntN(4)) * time.Hour)
			var efforts []int
			switch {
			case kind == KindEndurance:
			case k == 1:
				efforts = weekly[w%len(weekly)][:1]
			case k == 3:
				efforts = weekly[w%len(weekly)][1:]
				if w == 5 || w == 11 {
					efforts = append(efforts, 2700) // a time trial
				}
			}
			minutes := 75 + 15*rng.IntN(6)
			if k == 3 {
				minutes += 60
			}
			tr := fieldRide(a, at, minutes, efforts, kind != KindEndurance, k == 3, rng)
			switch kind {
			case KindSparse:
				sparse(&tr, rng)
			case KindNoisy:
				noisy(&tr, rng)
			}
			fs.Tracks = append(fs.Tracks, tr)
		}
	}
	return fs
}

// fieldRide is an outdoor ride: endurance riding that wanders around
// 55–75 % of CP; surges of 30 s to 10 min, at 75–90 % of the athlete's
// best for their duration when hard, else climbs at tempo (80–95 % of
// CP); sprints on group rides; and the given maximal efforts at 97–100 %
// of the truth, each followed by recovery. Efforts' marks are kept in
// tr.Efforts.
func fieldRide(a Athlete, start time.Time, minutes int, efforts []int, hard, sprints bool, rng *rand.Rand) Track {
	n := minutes * 60
	p := make([]float64, 0, n+4000)
	level := 0.65 * a.CPW
	endurance := func(s int) {
		for range s {
			level += rng.NormFloat64() * 2
			level = math.Min(0.78*a.CPW, math.Max(0.5*a.CPW, level))
			p = append(p, math.Max(0, level+rng.NormFloat64()*0.12*a.CPW))
		}
	}
	steady := func(s int, w, noise float64) {
		for range s {
			p = append(p, math.Max(0, w*(1+rng.NormFloat64()*noise)))
		}
	}
	endurance(600)
	var marks []Mark
	for _, d := range efforts {
		endurance(300 + rng.IntN(600))
		target := (0.97 + 0.03*rng.Float64()) * a.MaxPower(float64(d))
		at := len(p)
		steady(d, target, 0.03)
		// the mean is the target (pedalling is uneven, the effort is not)
		mean := 0.0
		for _, w := range p[at:] {
			mean += w
		}
		shift := target - mean/float64(d)
		for i := at; i < len(p); i++ {
			p[i] += shift
		}
		marks = append(marks, Mark{StartS: at, Seconds: d, Watts: target})
		steady(300+rng.IntN(300), 0.4*a.CPW, 0.1)
	}
	for len(p) < n {
		switch r := rng.Float64(); {
		case r < 0.08:
			d := 30 + rng.IntN(570)
			w := (0.8 + 0.15*rng.Float64()) * a.CPW
			if hard {
				w = (0.75 + 0.15*rng.Float64()) * a.MaxPower(float64(d))
			}
			steady(d, w, 0.04)
			steady(120+rng.IntN(300), 0.45*a.CPW, 0.1)
		case r < 0.12 && sprints && hard:
			d := 5 + rng.IntN(10)
			steady(d, (0.8+0.15*rng.Float64())*a.MaxPower(float64(d)), 0.05)
			steady(60, 0.4*a.CPW, 0.1)
		default:
			endurance(120)
		}
	}
	for i := range p {
		p[i] = math.Round(p[i])
	}
	return Track{Start: start, Sport: "cycling", PowerW: p, Efforts: marks}
}

// sparse records the ride every 1–6 s and pauses recording at two to four
// stops of 30 s to 3 min (the rider stands still: 0 W, nothing recorded).
func sparse(tr *Track, rng *rand.Rand) {
	n := len(tr.PowerW)
	tr.Skip = make([]bool, n)
	for i := 0; i < n; {
		step := 1 + rng.IntN(6)
		for j := i + 1; j < min(i+step, n); j++ {
			tr.Skip[j] = true
		}
		i += step
	}
	for range 2 + rng.IntN(3) {
		at, d := rng.IntN(n), 30+rng.IntN(150)
		if tr.inEffort(at, d) {
			continue
		}
		for j := at; j < min(at+d, n); j++ {
			tr.PowerW[j], tr.Skip[j] = 0, true
		}
	}
}

// noisy adds single-sample spikes of 1200–2470 W (below the usual
// ceiling), sensor dropouts of 1–4 s, and, on a quarter of the rides with maximal
// efforts, a stuck run: the meter repeats one value for 70–150 s from a
// second inside an effort.
func noisy(tr *Track, rng *rand.Rand) {
	n := len(tr.PowerW)
	for range 1 + rng.IntN(3) {
		tr.PowerW[rng.IntN(n)] = 1200 + math.Round(1270*rng.Float64())
	}
	for range 3 + rng.IntN(6) {
		at := rng.IntN(n)
		for j := at; j < min(at+1+rng.IntN(4), n); j++ {
			tr.PowerW[j] = math.NaN()
		}
	}
	if len(tr.Efforts) > 0 && rng.IntN(4) == 0 {
		e := tr.Efforts[rng.IntN(len(tr.Efforts))]
		at := e.StartS + rng.IntN(max(e.Seconds/2, 1))
		v := math.Round(e.Watts)
		for j := at; j < min(at+70+rng.IntN(80), n); j++ {
			tr.PowerW[j] = v
		}
	}
}

// Mark is a maximal effort inside a track.
type Mark struct {
	StartS, Seconds int
	Watts           float64
}

func (tr *Track) inEffort(at, d int) bool {
	for _, e := range tr.Efforts {
		if at < e.StartS+e.Seconds+60 && e.StartS < at+d+60 {
			return true
		}
	}
	return false
}
