package main

import (
	"fmt"
	"strconv"
	"strings"

	"github.com/sustain-cycling/sustain/estimate"
	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/powerduration"
	"github.com/sustain-cycling/sustain/view"
	"github.com/urfave/cli/v2"
)

func protocolCommand() *cli.Command {
	return &cli.Command{
		Name:  "protocol",
		Usage: "analyse a formal field test by its published rules: a 3-minute all-out test, or a multi-trial critical-power test",
		Subcommands: []*cli.Command{
			{
				Name:      "all-out",
				Usage:     "3-minute all-out test (Vanhatalo, Doust & Burnley 2007): end-test power estimates CP, work above it estimates W′",
				ArgsUsage: "FILE",
				Flags: append(ingestFlags(),
					&cli.StringFlag{Name: "start", Usage: "where the test starts in the ride, H:MM:SS (default: the ride's best 3 minutes)"}),
				Action: allOutAction,
			},
			{
				Name:      "trials",
				Usage:     "multi-trial CP test: separate maximal efforts fitted with the 2-parameter model. Quality bar, from memory of lab practice: CP standard error within about 2–5 %, W′ within about 10 %",
				ArgsUsage: "FILE@H:MM:SS+DURATION... (e.g. ride.fit@0:20:00+3m), or with --find: FILE...",
				Flags: append(ingestFlags(),
					&cli.BoolFlag{Name: "find", Usage: "take the best 3, 7 and 12 min of the given rides (a common field protocol)"}),
				Action: trialsAction,
			},
		},
	}
}

// parseClock reads H:MM:SS, MM:SS or seconds.
func parseClock(s string) (int, error) {
	parts := strings.Split(s, ":")
	if len(parts) > 3 {
		return 0, fmt.Errorf("time %q is not H:MM:SS", s)
	}
	total := 0
	for _, p := range parts {
		n, err := strconv.Atoi(p)
		if err != nil || n < 0 {
			return 0, fmt.Errorf("time %q is not H:MM:SS", s)
		}
		total = total*60 + n
	}
	return total, nil
}

// parseLength reads 3m, 180s, 180 or 3:00.
func parseLength(s string) (int, error) {
	switch {
	case strings.HasSuffix(s, "m"):
		n, err := strconv.Atoi(strings.TrimSuffix(s, "m"))
		if err != nil || n <= 0 {
			return 0, fmt.Errorf("duration %q is not like 3m", s)
		}
		return 60 * n, nil
	case strings.HasSuffix(s, "s"):
		s = strings.TrimSuffix(s, "s")
	}
	n, err := parseClock(s)
	if err != nil || n <= 0 {
		return 0, fmt.Errorf("duration %q is not like 3m or 180s", s)
	}
	return n, nil
}

// readOneRide reads the first ride of a file named by the user.
func readOneRide(c *cli.Context, path string) (*ingest.Ride, error) {
	opts, err := ingestOptions(c)
	if err != nil {
		return nil, err
	}
	rides, err := ingest.ReadFile(path, opts)
	if err != nil {
		return nil, cli.Exit(err.Error(), exitNothing)
	}
	return &rides[0], nil
}

func allOutAction(c *cli.Context) error {
	if c.NArg() != 1 {
		return usageError{"name one ride file"}
	}
	start := -1
	if s := c.String("start"); s != "" {
		v, err := parseClock(s)
		if err != nil {
			return usageError{"--start: " + err.Error()}
		}
		start = v
	}
	r, err := readOneRide(c, c.Args().First())
	if err != nil {
		return err
	}
	if start < 0 {
		best := powerduration.MeanMax(r.PowerW, []int{estimate.AllOutS})
		if len(best) == 0 {
			return cli.Exit(fmt.Sprintf("%s: the ride is shorter than 3 minutes", r.File), exitNothing)
		}
		start = best[0].OffsetS
	}
	a, err := estimate.ThreeMinuteAllOut(r.PowerW, start)
	if err != nil {
		return cli.Exit(fmt.Sprintf("%s: %v", r.File, err), exitNothing)
	}
	w := c.App.Writer
	if c.Bool("json") {
		return view.WriteJSON(w, map[string]any{"file": r.File, "date": r.Date(), "test": a, "caution": estimate.Caution})
	}
	view.RenderAllOut(w, r.File, r.Date(), a)
	return nil
}

func trialsAction(c *cli.Context) error {
	if c.NArg() == 0 {
		return usageError{"name the efforts as FILE@H:MM:SS+DURATION, or ride files with --find"}
	}
	var es []estimate.Effort
	if c.Bool("find") {
		res, curves, err := scanPaths(c, c.Args().Slice())
		if err != nil {
			return err
		}
		reportSkipped(c.App.ErrWriter, res.Skipped)
		best := powerduration.BestOf(curves)
		for _, d := range []int{180, 420, 720} {
			if p, ok := best.At(d); ok {
				es = append(es, estimate.Effort{Point: p, Status: estimate.EffortUsed})
			}
		}
	} else {
		for _, arg := range c.Args().Slice() {
			at := strings.LastIndex(arg, "@")
			plus := strings.LastIndex(arg, "+")
			if at < 0 || plus < at {
				return usageError{fmt.Sprintf("effort %q is not FILE@H:MM:SS+DURATION", arg)}
			}
			start, err := parseClock(arg[at+1 : plus])
			if err != nil {
				return usageError{err.Error()}
			}
			d, err := parseLength(arg[plus+1:])
			if err != nil {
				return usageError{err.Error()}
			}
			r, err := readOneRide(c, arg[:at])
			if err != nil {
				return err
			}
			p, err := powerduration.At(r, start, d)
			if err != nil {
				return cli.Exit(err.Error(), exitNothing)
			}
			es = append(es, estimate.Effort{Point: p, Status: estimate.EffortUsed})
		}
	}
	t, err := estimate.MultiTrial(es)
	if err != nil {
		return cli.Exit(err.Error(), exitNothing)
	}
	w := c.App.Writer
	if c.Bool("json") {
		return view.WriteJSON(w, map[string]any{"efforts": es, "cp_w": t.Fit.CPW, "w_prime_j": t.Fit.WPrimeJ, "cp_se_w": t.Fit.CPSEW,
			"w_prime_se_j": t.Fit.WPrimeSEJ, "cp_se_pct": t.CPSEPct, "w_prime_se_pct": t.WSEPct, "accepted": t.Accepted,
			"problems": t.Problems, "caution": estimate.Caution})
	}
	view.RenderTrials(w, es, t)
	return nil
}
