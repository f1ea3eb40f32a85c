package view

import (
	"fmt"
	"io"
	"text/tabwriter"

	"github.com/sustain-cycling/sustain/estimate"
)

func RenderTrials(w io.Writer, es []estimate.Effort, t estimate.Trials) {
	fmt.Fprintln(w, "Multi-trial critical-power test (2-parameter model, Monod & Scherrer 1965)")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	for _, e := range es {
		fmt.Fprintln(tw, EffortRow(e.Point))
	}
	tw.Flush()
	fmt.Fprintf(w, "\n  CP %.1f W ± %.1f (%.1f %%)   W′ %.1f kJ ± %.1f (%.0f %%)\n", t.Fit.CPW, t.Fit.CPSEW, t.CPSEPct, t.Fit.WPrimeJ/1000, t.Fit.WPrimeSEJ/1000, t.WSEPct)
	if t.Accepted {
		fmt.Fprintln(w, "  The fit meets the usual quality bar (CP within about 2–5 %, W′ within about 10 %; from memory of lab practice).")
	} else {
		fmt.Fprintln(w, "  The fit misses the usual quality bar (from memory of lab practice):")
		for _, p := range t.Problems {
			fmt.Fprintf(w, "  - %s\n", p)
		}
	}
	fmt.Fprintf(w, "\nCaution: %s\n", estimate.Caution)
}
