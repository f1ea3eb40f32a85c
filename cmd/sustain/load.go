package main

import (
	"fmt"
	"io"
	"os"

	"github.com/schollz/progressbar/v3"
	"github.com/sustain-cycling/sustain/ingest"
	"github.com/urfave/cli/v2"
	"golang.org/x/term"
)

// ingestFlags are the reading and cleaning options every command shares.
func ingestFlags() []cli.Flag {
	return []cli.Flag{
		&cli.BoolFlag{Name: "json", Usage: "print JSON (keys are stable; units are suffixes)"},
		&cli.Float64Flag{Name: "spike-ceiling", Value: ingest.DefaultSpikeCeilingW, Usage: "power above this many watts is a spike and treated as missing"},
		&cli.BoolFlag{Name: "salvage", Usage: "read the records of a damaged file (bad FIT checksum, malformed TCX) instead of skipping it"},
		&cli.StringFlag{Name: "sport", Value: "cycling", Usage: "cycling: keep cycling sessions (and those with no sport recorded); any: keep every sport"},
		&cli.IntFlag{Name: "workers", Usage: "files decoded at once (default: one per CPU)"},
	}
}

// ingestOptions reads the shared flags.
func ingestOptions(c *cli.Context) (ingest.Options, error) {
	opts := ingest.Options{
		SpikeCeilingW: c.Float64("spike-ceiling"),
		Salvage:       c.Bool("salvage"),
		Workers:       c.Int("workers"),
	}
	switch c.String("sport") {
	case "cycling":
	case "any":
		opts.AnySport = true
	default:
		return opts, usageError{fmt.Sprintf("--sport takes cycling or any, not %q", c.String("sport"))}
	}
	if opts.SpikeCeilingW <= 0 {
		return opts, usageError{"--spike-ceiling must be above 0 W"}
	}
	return opts, nil
}

// scan reads the rides under the command's path arguments, with a progress
// bar on stderr for long walks when stderr is a terminal.
func scan(c *cli.Context) (ingest.Result, error) {
	if c.NArg() == 0 {
		return ingest.Result{}, usageError{"name at least one ride file or folder"}
	}
	opts, err := ingestOptions(c)
	if err != nil {
		return ingest.Result{}, err
	}
	var bar *progressbar.ProgressBar
	if f, ok := c.App.ErrWriter.(*os.File); ok && term.IsTerminal(int(f.Fd())) {
		opts.Progress = func(done, total int) {
			if total < 20 {
				return
			}
			if bar == nil {
				bar = progressbar.NewOptions(total,
					progressbar.OptionSetWriter(f),
					progressbar.OptionSetDescription("reading rides"),
					progressbar.OptionShowCount(),
					progressbar.OptionClearOnFinish())
			}
			bar.Set(done)
		}
	}
	res := ingest.Scan(c.Args().Slice(), opts)
	if bar != nil {
		bar.Finish()
	}
	return res, nil
}

// reportSkipped writes one line per skipped file to w.
func reportSkipped(w io.Writer, skipped []ingest.Skipped) {
	for _, s := range skipped {
		fmt.Fprintf(w, "skipped %s: %s\n", s.File, s.Reason)
	}
}

// nothingRead is the exit for a run that analysed no ride.
func nothingRead(res ingest.Result) error {
	if len(res.Rides) > 0 {
		return nil
	}
	return cli.Exit(fmt.Sprintf("no ride could be read (%d files skipped)", len(res.Skipped)), exitNothing)
}
