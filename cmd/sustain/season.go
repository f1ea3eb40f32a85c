package main

import (
	"fmt"
	"io"
	"strings"
	"text/tabwriter"

	"github.com/sustain-cycling/sustain/estimate"
	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/powerduration"
	"github.com/urfave/cli/v2"
)

func seasonCommand() *cli.Command {
	flags := append(ingestFlags(), estimateFlags()...)
	flags = append(flags,
		&cli.StringFlag{Name: "window", Value: "42d", Usage: "length of each rolling window"},
		&cli.StringFlag{Name: "step", Value: "7d", Usage: "distance between the ends of consecutive windows"},
		&cli.StringFlag{Name: "components", Value: estimate.ModelCP2, Usage: "model whose CP and W′ (and Pmax, for morton3 and omni) are followed: cp2, omni or morton3"},
		squadFlag(),
		&cli.StringFlag{Name: "athlete", Usage: "with --squad, show this athlete's season"},
		&cli.StringFlag{Name: "plot", Usage: "write CP, W′ and Pmax over the season to FILE.png or FILE.svg"},
		forceFlag(),
	)
	return &cli.Command{
		Name:      "season",
		Usage:     "rolling estimates across a season: which of CP, W′ and Pmax moved; one row per athlete for a folder of athletes",
		ArgsUsage: "PATH...",
		Flags:     flags,
		Action:    seasonAction,
	}
}

func seasonOptions(c *cli.Context) (estimate.SeasonOptions, error) {
	var so estimate.SeasonOptions
	o, err := estimateOptions(c)
	if err != nil {
		return so, err
	}
	so.Options = o
	if so.WindowDays, err = powerduration.ParseDays(c.String("window")); err != nil {
		return so, usageError{"--window: " + err.Error()}
	}
	if so.StepDays, err = powerduration.ParseDays(c.String("step")); err != nil {
		return so, usageError{"--step: " + err.Error()}
	}
	switch m, _ := estimate.ModelName(c.String("components")); m {
	case estimate.ModelMorton, estimate.ModelOmni, estimate.ModelCP2:
		so.Components = m
	default:
		return so, usageError{fmt.Sprintf("--components takes cp2, morton3 or omni, not %q", c.String("components"))}
	}
	return so, nil
}

func seasonAction(c *cli.Context) error {
	so, err := seasonOptions(c)
	if err != nil {
		return err
	}
	if err := checkMassAndPlot(c); err != nil {
		return err
	}
	members, err := squadOf(c)
	if err != nil {
		return err
	}
	if members != nil {
		return squadAction(c, so, members)
	}
	if c.String("athlete") != "" {
		return usageError{"--athlete goes with --squad (a folder with a subfolder per athlete)"}
	}
	res, curves, err := scan(c)
	if err != nil {
		return err
	}
	rep := estimate.Season(res.Rides, curves, so)
	return writeSeason(c, res, rep, so, plotTitle("Season", c.Args().Slice(), powerduration.Window{From: firstDate(res), To: lastDate(res)}, len(res.Rides)), c.Args().Slice())
}

func firstDate(res ingest.Result) string {
	if len(res.Rides) == 0 {
		return ""
	}
	return res.Rides[0].Date()
}

func lastDate(res ingest.Result) string {
	if len(res.Rides) == 0 {
		return ""
	}
	return res.Rides[len(res.Rides)-1].Date()
}

func writeSeason(c *cli.Context, res ingest.Result, rep estimate.SeasonReport, so estimate.SeasonOptions, title string, paths []string) error {
	out := seasonJSON(rep, res.Skipped, len(res.Rides))
	if err := out.perKG(c, paths); err != nil {
		return err
	}
	w := c.App.Writer
	if c.Bool("json") {
		if err := writeJSON(w, out); err != nil {
			return err
		}
	} else {
		renderSeason(w, out, so, firstDate(res), lastDate(res))
		reportSkipped(c.App.ErrWriter, out.Skipped)
	}
	if p := c.String("plot"); p != "" && !anyEstimated(rep) {
		fmt.Fprintf(c.App.ErrWriter, "no plot written to %s: no window had enough data for an estimate\n", p)
	} else if p != "" {
		if err := plotSeason(p, rep, title, massFunc(c, paths)); err != nil {
			return fmt.Errorf("plot %s: %w", p, err)
		}
		if !c.Bool("json") {
			fmt.Fprintf(c.App.ErrWriter, "plot written to %s\n", p)
		}
	}
	return nothingRead(res)
}

// anyEstimated reports whether any window of the season was estimated.
func anyEstimated(rep estimate.SeasonReport) bool {
	for _, w := range rep.Windows {
		if w.Estimated {
			return true
		}
	}
	return false
}

type seasonWindowJSON struct {
	From       string   `json:"from"`
	To         string   `json:"to"`
	Rides      int      `json:"rides"`
	Estimated  bool     `json:"estimated"`
	Reason     string   `json:"reason,omitempty"`
	Model      string   `json:"model"`
	CPW        *float64 `json:"cp_w"`
	CPSEW      *float64 `json:"cp_se_w"`
	CPHalfW    *float64 `json:"cp_half_w"`
	WPrimeJ    *float64 `json:"w_prime_j"`
	WPrimeSEJ  *float64 `json:"w_prime_se_j"`
	WPrimeHalf *float64 `json:"w_prime_half_j"`
	PmaxW      *float64 `json:"pmax_w"`
	PmaxSEW    *float64 `json:"pmax_se_w"`
	PmaxHalfW  *float64 `json:"pmax_half_w"`
	ThresholdW *float64 `json:"threshold_w"`
	LowW       *float64 `json:"threshold_low_w"`
	HighW      *float64 `json:"threshold_high_w"`
	Headline   string   `json:"threshold_model,omitempty"`
	Confidence *string  `json:"confidence"`
	// with a mass (--mass, or the athletes file's in force at the
	// window's end): per kilogram
	MassKG          *float64 `json:"mass_kg,omitempty"`
	CPWPerKG        *float64 `json:"cp_w_per_kg,omitempty"`
	ThresholdWPerKG *float64 `json:"threshold_w_per_kg,omitempty"`
}

// perKG adds to each estimated window its CP and threshold per kilogram,
// with the mass in force at the window's end.
func (out *seasonOut) perKG(c *cli.Context, paths []string) error {
	for i := range out.Windows {
		w := &out.Windows[i]
		if !w.Estimated {
			continue
		}
		kg, err := massOn(c, paths, w.To)
		if err != nil || kg <= 0 {
			return err
		}
		w.MassKG, w.CPWPerKG = ptr(kg), ptr(*w.CPW/kg)
		if w.ThresholdW != nil {
			w.ThresholdWPerKG = ptr(*w.ThresholdW / kg)
		}
	}
	return nil
}

// changeJSON: CP and Pmax changes are in watts (the _w keys), W′ changes
// in joules (the _j keys); the other pair is absent.
type changeJSON struct {
	From      powerduration.Window `json:"from"`
	To        powerduration.Window `json:"to"`
	Component string               `json:"component"`
	DeltaW    *float64             `json:"delta_w,omitempty"`
	SEW       *float64             `json:"se_w,omitempty"`
	HalfW     *float64             `json:"half_w,omitempty"`
	DeltaJ    *float64             `json:"delta_j,omitempty"`
	SEJ       *float64             `json:"se_j,omitempty"`
	HalfJ     *float64             `json:"half_j,omitempty"`
	Message   string               `json:"message"`
}

func changeOf(c estimate.Change) changeJSON {
	j := changeJSON{From: c.From, To: c.To, Component: c.Component, Message: c.Message}
	if c.Component == "w_prime" {
		j.DeltaJ, j.SEJ, j.HalfJ = ptr(c.Delta), ptr(c.SE), ptr(c.HalfWidth)
	} else {
		j.DeltaW, j.SEW, j.HalfW = ptr(c.Delta), ptr(c.SE), ptr(c.HalfWidth)
	}
	return j
}

type seasonOut struct {
	Rides   int                `json:"rides"`
	Skipped []ingest.Skipped   `json:"skipped"`
	Windows []seasonWindowJSON `json:"windows"`
	Changes []changeJSON       `json:"changes"`
	Overall string             `json:"overall"`
}

func seasonJSON(rep estimate.SeasonReport, skipped []ingest.Skipped, rides int) seasonOut {
	out := seasonOut{Rides: rides, Skipped: nonNil(skipped), Windows: []seasonWindowJSON{}, Changes: []changeJSON{}, Overall: rep.Overall}
	for _, w := range rep.Windows {
		j := seasonWindowJSON{From: w.From, To: w.To, Rides: w.Rides, Estimated: w.Estimated, Reason: w.Reason, Model: w.Model}
		if w.Estimated {
			j.CPW, j.CPSEW, j.CPHalfW = ptr(w.CPW), ptr(w.CPSEW), ptr(w.HalfW(w.CPSEW))
			j.WPrimeJ, j.WPrimeSEJ, j.WPrimeHalf = ptr(w.WPrimeJ), ptr(w.WPrimeSEJ), ptr(w.HalfW(w.WPrimeSEJ))
			if w.PmaxW > 0 {
				j.PmaxW, j.PmaxSEW, j.PmaxHalfW = ptr(w.PmaxW), ptr(w.PmaxSEW), ptr(w.HalfW(w.PmaxSEW))
			}
			if t := w.Threshold; t.Estimated() {
				j.ThresholdW, j.LowW, j.HighW, j.Headline = ptr(t.Watts), ptr(t.LowW), ptr(t.HighW), t.Model
			}
			conf := w.Confidence
			j.Confidence = &conf
		}
		out.Windows = append(out.Windows, j)
	}
	for _, c := range rep.Changes {
		out.Changes = append(out.Changes, changeOf(c))
	}
	return out
}

func num(v *float64, scale float64, se *float64) string {
	if v == nil {
		return "-"
	}
	if se == nil {
		return fmt.Sprintf("%.0f", *v/scale)
	}
	if scale == 1 {
		return fmt.Sprintf("%.0f ± %.0f", *v, *se)
	}
	return fmt.Sprintf("%.1f ± %.1f", *v/scale, *se/scale)
}

func renderSeason(w io.Writer, out seasonOut, so estimate.SeasonOptions, first, last string) {
	comps := "CP, W′ and Pmax"
	if so.Components == estimate.ModelCP2 {
		comps = "CP and W′"
	}
	fmt.Fprintf(w, "Season %s to %s: %s; windows of %d days every %d days; %s from the %s model\n",
		orOpen(first), orOpen(last), count(out.Rides, "ride"), so.WindowDays, so.StepDays, comps, so.Components)
	fmt.Fprintln(w, "(every ± below is the 95 % half-width: Student t for the fit's degrees of freedom × its standard error)")
	fmt.Fprintln(w)
	// a Pmax column only for a components model that has Pmax
	withPmax := so.Components != estimate.ModelCP2
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	pmaxHead, pmaxNone := "", ""
	if withPmax {
		pmaxHead, pmaxNone = "Pmax (W)\t", "-\t"
	}
	fmt.Fprintf(tw, "window\trides\tCP (W)\tW′ (kJ)\t%sthreshold (W, model)\tconfidence\t\n", pmaxHead)
	for _, x := range out.Windows {
		if !x.Estimated {
			fmt.Fprintf(tw, "%s – %s\t%d\t-\t-\t%s-\t-\tnot estimated: %s\n", x.From, x.To, x.Rides, pmaxNone, x.Reason)
			continue
		}
		th := "not estimated"
		if x.ThresholdW != nil {
			th = fmt.Sprintf("%.0f (%.0f–%.0f, %s)", *x.ThresholdW, *x.LowW, *x.HighW, x.Headline)
			if x.ThresholdWPerKG != nil {
				th += fmt.Sprintf(", %.2f W/kg at %.1f kg", *x.ThresholdWPerKG, *x.MassKG)
			}
		}
		pmax := ""
		if withPmax {
			pmax = num(x.PmaxW, 1, x.PmaxHalfW) + "\t"
		}
		fmt.Fprintf(tw, "%s – %s\t%d\t%s\t%s\t%s%s\t%s\t\n", x.From, x.To, x.Rides, num(x.CPW, 1, x.CPHalfW), num(x.WPrimeJ, 1000, x.WPrimeHalf),
			pmax, th, *x.Confidence)
	}
	tw.Flush()
	fmt.Fprintf(w, "\nWhat changed (each window against the one %d days earlier, beyond both windows' uncertainty)\n", so.WindowDays)
	if len(out.Changes) == 0 {
		fmt.Fprintln(w, "  Nothing moved beyond its uncertainty.")
	}
	for i := 0; i < len(out.Changes); {
		j, parts := i, []string{}
		for ; j < len(out.Changes) && out.Changes[j].From == out.Changes[i].From && out.Changes[j].To == out.Changes[i].To; j++ {
			parts = append(parts, shortChange(out.Changes[j]))
		}
		fmt.Fprintf(w, "  window ending %s → window ending %s: %s\n", out.Changes[i].From.To, out.Changes[i].To.To, strings.Join(parts, ", "))
		i = j
	}
	fmt.Fprintf(w, "\nOverall: %s\n", out.Overall)
}

// squad: one row per athlete, or one athlete's season with --athlete.
type athleteRow struct {
	Athlete     string               `json:"athlete"`
	Rides       int                  `json:"rides"`
	Skipped     []ingest.Skipped     `json:"skipped"`
	LastRide    string               `json:"last_ride"`
	Threshold   *thresholdJSON       `json:"threshold"`
	Change6wW   *float64             `json:"cp_change_6w_w"`
	Significant bool                 `json:"cp_change_significant"`
	Window      powerduration.Window `json:"window"`
}

func squadAction(c *cli.Context, so estimate.SeasonOptions, members []member) error {
	dir := c.Args().First()
	if dir == "" {
		dir = c.String("athletes")
	}
	if _, err := ingestOptions(c); err != nil {
		return err
	}
	if a := c.String("athlete"); a != "" {
		var names []string
		for _, m := range members {
			if m.Name == a {
				res, curves, err := scanPaths(c, []string{m.Folder})
				if err != nil {
					return err
				}
				rep := estimate.Season(res.Rides, curves, so)
				return writeSeason(c, res, rep, so, plotTitle("Season", []string{m.Folder}, powerduration.Window{From: firstDate(res), To: lastDate(res)}, len(res.Rides)), []string{m.Folder})
			}
			names = append(names, m.Name)
		}
		return usageError{fmt.Sprintf("no athlete %q in %s (its athletes: %s)", a, dir, strings.Join(names, ", "))}
	}
	if c.String("plot") != "" {
		return usageError{"--plot draws one athlete's season: add --athlete NAME"}
	}
	var rows []athleteRow
	anyRide := false
	for _, m := range members {
		n := m.Name
		res, curves, err := scanPaths(c, []string{m.Folder})
		if err != nil {
			return err
		}
		row := athleteRow{Athlete: n, Rides: len(res.Rides), Skipped: nonNil(res.Skipped), LastRide: lastDate(res)}
		if len(res.Rides) > 0 {
			anyRide = true
			rep := estimate.Season(res.Rides, curves, so)
			last := rep.Windows[len(rep.Windows)-1]
			th := thresholdOf(last.Threshold)
			kg, err := massOn(c, []string{m.Folder}, last.To)
			if err != nil {
				return err
			}
			th.perKG(kg)
			row.Threshold, row.Window = &th, last.Window
			if d, sig, ok := estimate.RecentChange(rep, 42); ok {
				row.Change6wW, row.Significant = ptr(d), sig
			}
		}
		rows = append(rows, row)
	}
	w := c.App.Writer
	if c.Bool("json") {
		if err := writeJSON(w, map[string]any{"athletes": rows}); err != nil {
			return err
		}
	} else {
		fmt.Fprintf(w, "Squad %s: %s; threshold from each athlete's latest %d-day window\n\n", dir, count(len(rows), "athlete"), so.WindowDays)
		tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
		fmt.Fprintln(tw, "athlete\tthreshold (W)\tconfidence\tCP change, 6 weeks\trides\tlast ride\t")
		for _, r := range rows {
			th, conf, ch := "-", "-", "-"
			if t := r.Threshold; t != nil && t.Watts != nil {
				th = fmt.Sprintf("%.0f (%.0f–%.0f, %s)", *t.Watts, *t.LowW, *t.HighW, t.Model)
				if t.WattsPerKG != nil {
					th += fmt.Sprintf(", %.2f W/kg", *t.WattsPerKG)
				}
				conf = t.Confidence
			} else if t != nil {
				th = "not estimated"
			}
			if r.Change6wW != nil {
				ch = fmt.Sprintf("%+.0f W", *r.Change6wW)
				if !r.Significant {
					ch += " (within uncertainty)"
				}
			}
			fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t%d\t%s\t\n", r.Athlete, th, conf, ch, r.Rides, orOpen(r.LastRide))
		}
		tw.Flush()
		fmt.Fprintf(w, "\nDetail for one athlete: sustain season %s --athlete NAME\n", dir)
	}
	if !anyRide {
		return cli.Exit("no ride could be read for any athlete", exitNothing)
	}
	return nil
}

func shortChange(c changeJSON) string {
	switch c.Component {
	case "cp":
		return fmt.Sprintf("CP %+.1f W (± %.1f)", *c.DeltaW, *c.HalfW)
	case "w_prime":
		return fmt.Sprintf("W′ %+.1f kJ (± %.1f)", *c.DeltaJ/1000, *c.HalfJ/1000)
	}
	return fmt.Sprintf("Pmax %+.0f W (± %.0f)", *c.DeltaW, *c.HalfW)
}
