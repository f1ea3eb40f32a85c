package main

import (
	"fmt"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/internal/store"
	"github.com/sustain-cycling/sustain/view"
	"github.com/urfave/cli/v2"
)

func inspectCommand() *cli.Command {
	return &cli.Command{
		Name:      "inspect",
		Usage:     "read ride files and report, per ride, what was recorded and what cleaning had to do",
		ArgsUsage: "PATH...",
		Flags: append(ingestFlags(),
			&cli.BoolFlag{Name: "problems", Usage: "list only the rides that cleaning had to repair or that look suspect"}),
		Action: func(c *cli.Context) error {
			res, _, err := scan(c)
			if err != nil {
				return err
			}
			if c.Bool("problems") {
				res = onlyProblems(res)
			}
			out := view.NewInspection(res)
			if st, ok := c.App.Metadata["store"].(*store.Store); ok && st != nil {
				stats, _ := c.App.Metadata["stats"].(store.Stats)
				out.Store = &view.StoreCounts{Path: st.Path, Decoded: stats.Decoded, Cached: stats.Cached}
			}
			if c.Bool("json") {
				if err := view.WriteJSON(c.App.Writer, out); err != nil {
					return err
				}
			} else {
				view.RenderInspection(c.App.Writer, res)
				listSkipped(c.App.ErrWriter, res.Skipped) // inspect lists every file
				if out.Store != nil {
					fmt.Fprintf(c.App.ErrWriter, "store %s: %d files answered from it, %d decoded\n", out.Store.Path, out.Store.Cached, out.Store.Decoded)
				}
			}
			return nothingRead(res)
		},
	}
}

// onlyProblems keeps the rides whose quality report shows anything amiss;
// Rides still counts every ride read.
func onlyProblems(res ingest.Result) ingest.Result {
	var keep []ingest.Ride
	for _, r := range res.Rides {
		q := r.Quality
		if len(q.Gaps)+len(q.Dropouts)+len(q.StuckRuns)+q.SpikesRemoved+q.InvalidValues+q.TimeReversals > 0 || q.Truncated || q.Salvaged {
			keep = append(keep, r)
		}
	}
	return ingest.Result{Rides: keep, Skipped: res.Skipped, Read: len(res.Rides), Duplicates: res.Duplicates}
}
