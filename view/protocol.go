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

// RenderAllOut writes a 3-minute all-out test of the ride in file (dated
// date): its end-test power and work above it, and whether it was all out.
func RenderAllOut(w io.Writer, file, date string, a estimate.AllOut) {
	fmt.Fprintf(w, "3-minute all-out test, %s (%s), from %s\n\n", Shown(file), date, Clock(a.StartS))
	fmt.Fprintf(w, "  end-test power (mean of the last 30 s, estimates CP)   %.0f W\n", a.EndPowerW)
	fmt.Fprintf(w, "  work above end-test power (estimates W′)              %.1f kJ\n", a.WorkAboveJ/1000)
	fmt.Fprintf(w, "  mean power %.0f W, first 30 s %.0f W, peak %.0f W\n", a.MeanW, a.First30W, a.PeakW)
	if a.WasAllOut {
		fmt.Fprintln(w, "\n  The effort looks all-out: a fast start well above the end, no coasting, no late rise.")
	} else {
		fmt.Fprintln(w, "\n  This was not an all-out effort, so these figures do not estimate CP and W′:")
		for _, p := range a.Problems {
			fmt.Fprintf(w, "  - %s\n", p)
		}
	}
	fmt.Fprintf(w, "\nMethod: Vanhatalo, Doust & Burnley (2007). Caution: %s\n", estimate.Caution)
}
