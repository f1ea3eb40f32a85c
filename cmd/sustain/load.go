package main

import (
	"fmt"
	"io"
	"os"
	"sort"
	"strings"

	"github.com/schollz/progressbar/v3"
	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/internal/store"
	"github.com/sustain-cycling/sustain/powerduration"
	"github.com/sustain-cycling/sustain/view"
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
		&cli.StringFlag{Name: "store", Usage: "the store of decoded rides and curves (default: sustain/rides.db in your cache folder)"},
		&cli.BoolFlag{Name: "no-store", Usage: "decode every file, neither reading nor writing the store"},
		&cli.BoolFlag{Name: "keep-duplicates", Usage: "keep every copy of a ride recorded twice (by default the same ride from two files counts once)"},
		&cli.StringFlag{Name: "athletes", Usage: "athletes file (CSV: athlete, folder, date, mass_kg): W/kg with each athlete's mass in force on the day; with --squad, or alone in season, compare and export, the squad"},
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
	if opts.Workers < 0 {
		return opts, usageError{fmt.Sprintf("--workers takes a number of files decoded at once (0: one per CPU), not %d", opts.Workers)}
	}
	return opts, nil
}

// scan reads the rides under the command's path arguments.
func scan(c *cli.Context) (ingest.Result, []powerduration.RideCurve, error) {
	return scanIn(c, nil)
}

// scanIn is scan reading only the files only accepts (nil: every file).
func scanIn(c *cli.Context, only func(string) bool) (ingest.Result, []powerduration.RideCurve, error) {
	if c.NArg() == 0 {
		return ingest.Result{}, nil, usageError{"name at least one ride file or folder"}
	}
	res, curves, err := scanAll(c, c.Args().Slice(), only)
	if err != nil || c.Bool("keep-duplicates") {
		return res, curves, err
	}
	res, curves = dropDuplicates(res, curves)
	return res, curves, nil
}

// windowFilter is, for a command limited to a date window (--from, --to,
// --last, else defaultLast), which files to read: a FIT file whose start
// (peeked from its first records, see ingest.PeekStart) lies more than a
// day outside the window cannot hold a ride in it and is not decoded.
// --last ends at the newest ride peeked; a ride in a file that cannot be
// peeked can only move that end later, never bring a left-out file in.
// nil when the window leaves every file in.
func windowFilter(c *cli.Context, defaultLast string) (func(string) bool, error) {
	files, _ := ingest.ListFiles(c.Args().Slice())
	starts := make(map[string]string, len(files))
	newest := ""
	for _, f := range files {
		if t, ok := ingest.PeekStart(f); ok {
			d := t.Format("2006-01-02")
			starts[f], newest = d, max(newest, d)
		}
	}
	w, err := window(c, newest, defaultLast)
	if err != nil || (w.From == "" && w.To == "") || len(starts) == 0 {
		return nil, err
	}
	dayFrom := func(date string, days int) string {
		t, err := powerduration.ParseDate(date)
		if err != nil {
			return ""
		}
		return t.AddDate(0, 0, days).Format("2006-01-02")
	}
	from, to := dayFrom(w.From, -1), dayFrom(w.To, 1)
	return func(path string) bool {
		d, ok := starts[path]
		return !ok || ((from == "" || d >= from) && (to == "" || d <= to))
	}, nil
}

// openStore opens the command's store once (nil with --no-store, or when it
// cannot be opened: then the reason goes to stderr and the run goes on
// without it).
func openStore(c *cli.Context) *store.Store {
	if c.Bool("no-store") {
		return nil
	}
	if s, ok := c.App.Metadata["store"]; ok {
		st, _ := s.(*store.Store)
		return st
	}
	path := c.String("store")
	if path == "" {
		p, err := store.DefaultPath()
		if err != nil {
			fmt.Fprintf(c.App.ErrWriter, "sustain: no cache folder for the store (%v); reading every file\n", err)
			c.App.Metadata["store"] = (*store.Store)(nil)
			return nil
		}
		path = p
	}
	st, err := store.Open(path)
	if err != nil {
		fmt.Fprintf(c.App.ErrWriter, "sustain: %v; reading every file without the store\n", err)
		c.App.Metadata["store"] = (*store.Store)(nil)
		return nil
	}
	for _, n := range st.Notes {
		fmt.Fprintf(c.App.ErrWriter, "sustain: %s\n", n)
	}
	c.App.Metadata["store"] = st
	return st
}

// closeStore closes the store a command opened.
func closeStore(app *cli.App) {
	if st, ok := app.Metadata["store"].(*store.Store); ok && st != nil {
		st.Close()
	}
}

// scanPaths reads the rides under paths and their curves (see scanAll),
// each ride once: copies of one ride are left out, and listed in the
// result's Duplicates (see powerduration.Duplicates), unless
// --keep-duplicates.
func scanPaths(c *cli.Context, paths []string) (ingest.Result, []powerduration.RideCurve, error) {
	res, curves, err := scanAll(c, paths, nil)
	if err != nil || c.Bool("keep-duplicates") {
		return res, curves, err
	}
	res, curves = dropDuplicates(res, curves)
	return res, curves, nil
}

// dropDuplicates leaves out the copies of rides (see
// powerduration.Duplicates) and their curves.
func dropDuplicates(res ingest.Result, curves []powerduration.RideCurve) (ingest.Result, []powerduration.RideCurve) {
	drop, dups := powerduration.Duplicates(res.Rides, curves)
	if len(dups) == 0 {
		return res, curves
	}
	k := 0
	for i := range res.Rides {
		if !drop[i] {
			res.Rides[k], curves[k] = res.Rides[i], curves[i]
			k++
		}
	}
	res.Rides, curves = res.Rides[:k], curves[:k]
	res.Duplicates = dups
	return res, curves
}

// scanAll reads the rides under paths and their curves, through the store
// unless --no-store, with a progress bar on stderr for long walks when
// stderr is a terminal.
func scanAll(c *cli.Context, paths []string, only func(string) bool) (ingest.Result, []powerduration.RideCurve, error) {
	opts, err := ingestOptions(c)
	if err != nil {
		return ingest.Result{}, nil, err
	}
	opts.Only = only
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
	defer func() {
		if bar != nil {
			bar.Finish()
		}
	}()
	if st := openStore(c); st != nil {
		res, curves, stats, err := st.Scan(paths, opts)
		if err == nil {
			if stats.Rebuilt != "" {
				fmt.Fprintf(c.App.ErrWriter, "sustain: %s\n", stats.Rebuilt)
			}
			if stats.WriteFailed != "" {
				fmt.Fprintf(c.App.ErrWriter, "sustain: store %s: %s\n", st.Path, stats.WriteFailed)
			}
			if stats.Repaired > 0 {
				fmt.Fprintf(c.App.ErrWriter, "sustain: %d file(s) in the store failed their check (a damaged store?) and were read again from the files\n", stats.Repaired)
			}
			prev, _ := c.App.Metadata["stats"].(store.Stats)
			prev.Files += stats.Files
			prev.Decoded += stats.Decoded
			prev.Cached += stats.Cached
			c.App.Metadata["stats"] = prev
			return res, curves, nil
		}
		fmt.Fprintf(c.App.ErrWriter, "sustain: store %s: %v; reading every file without it\n", st.Path, err)
	}
	res, curves := powerduration.Scan(paths, opts)
	return res, curves, nil
}

// reportSkipped writes one line per skipped file to w (stderr: messages,
// not the result), or past ten files a count for each kind of reason, the
// most common first, and where to see each file.
func reportSkipped(w io.Writer, skipped []ingest.Skipped) {
	if len(skipped) <= maxSkipLines {
		listSkipped(w, skipped)
		return
	}
	byKind := map[string]int{}
	var kinds []string
	for _, s := range skipped {
		k := reasonKind(s.Reason)
		if byKind[k] == 0 {
			kinds = append(kinds, k)
		}
		byKind[k]++
	}
	sort.SliceStable(kinds, func(a, b int) bool { return byKind[kinds[a]] > byKind[kinds[b]] })
	parts := make([]string, len(kinds))
	for i, k := range kinds {
		parts[i] = fmt.Sprintf("%d %s", byKind[k], k)
	}
	fmt.Fprintf(w, "%s skipped: %s; `sustain inspect` lists each with its reason\n", view.Count(len(skipped), "file"), strings.Join(parts, ", "))
}

// listSkipped writes one line per skipped file to w.
func listSkipped(w io.Writer, skipped []ingest.Skipped) {
	for _, s := range skipped {
		fmt.Fprintf(w, "skipped %s: %s\n", view.Shown(s.File), s.Reason)
	}
}

// maxSkipLines: more skipped files than this are counted by reason.
const maxSkipLines = 10

// reasonKind is a reason without its particulars (a line number, a sport,
// a size): the words before the first colon or parenthesis.
func reasonKind(reason string) string {
	if i := strings.IndexAny(reason, ":("); i > 0 {
		reason = reason[:i]
	}
	return strings.TrimSpace(reason)
}

// nothingRead is the exit for a run that analysed no ride.
func nothingRead(res ingest.Result) error {
	if len(res.Rides) > 0 {
		return nil
	}
	return cli.Exit(fmt.Sprintf("no ride could be read (%s skipped)", view.Count(len(res.Skipped), "file")), exitNothing)
}
