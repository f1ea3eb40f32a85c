package view

import (
	"encoding/csv"
	"fmt"
	"io"
	"strconv"
	"text/tabwriter"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/powerduration"
)

type Curve struct {
	Window  powerduration.Window  `json:"window"`
	Rides   int                   `json:"rides"`
	Skipped []ingest.Skipped      `json:"skipped"`
	MassKG  float64               `json:"mass_kg,omitempty"`
	Points  []powerduration.Point `json:"points"`
	Compare *CurveCompared        `json:"compare,omitempty"`
}

type CurveCompared struct {
	Window powerduration.Window  `json:"window"`
	Rides  int                   `json:"rides"`
	Points []powerduration.Point `json:"points"`
}

func RenderCurve(w io.Writer, out Curve, paths []string) {
	fmt.Fprintf(w, "Best mean power, %s %s\n\n", Count(out.Rides, "ride"), Span(out.Window))
	if len(out.Points) == 0 {
		return
	}
	byDur := curveIndex(out.Points)
	var cmp map[int]powerduration.Point
	if out.Compare != nil {
		cmp = curveIndex(out.Compare.Points)
	}
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', tabwriter.AlignRight)
	head := "duration\twatts\t"
	if out.MassKG > 0 {
		head += "W/kg\t"
	}
	if cmp != nil {
		head += "compared\tchange\t"
	}
	fmt.Fprintln(tw, head+"date\t start in ride\t")
	files := map[string]bool{}
	for _, d := range powerduration.KeyDurations {
		p, ok := byDur[d]
		if !ok {
			continue
		}
		row := fmt.Sprintf("%s\t%.0f\t", DurationLabel(d), p.Watts)
		if out.MassKG > 0 {
			row += fmt.Sprintf("%.2f\t", p.Watts/out.MassKG)
		}
		if cmp != nil {
			if q, ok := cmp[d]; ok {
				row += fmt.Sprintf("%.0f\t%+.0f\t", q.Watts, p.Watts-q.Watts)
			} else {
				row += "-\t-\t"
			}
		}
		row += fmt.Sprintf("%s\t%s\t  %s", p.Date, Clock(p.OffsetS), Shown(p.File))
		files[p.File] = true
		fmt.Fprintln(tw, row)
	}
	tw.Flush()
	if out.Compare != nil {
		fmt.Fprintf(w, "\ncompared: %s %s\n", Count(out.Compare.Rides, "ride"), Span(out.Compare.Window))
	}
}

func curveIndex(ps []powerduration.Point) map[int]powerduration.Point {
	m := make(map[int]powerduration.Point, len(ps))
	for _, p := range ps {
		m[p.DurationS] = p
	}
	return m
}

func WriteCurveCSV(w io.Writer, out Curve) error {
	cw := csv.NewWriter(w)
	head := []string{"duration_s", "watts"}
	if out.MassKG > 0 {
		head = append(head, "w_per_kg")
	}
	cw.Write(append(head, "file", "date", "offset_s"))
	for _, p := range out.Points {
		row := []string{strconv.Itoa(p.DurationS), strconv.FormatFloat(p.Watts, 'f', 2, 64)}
		if out.MassKG > 0 {
			row = append(row, strconv.FormatFloat(p.Watts/out.MassKG, 'f', 3, 64))
		}
		cw.Write(append(row, p.File, p.Date, strconv.Itoa(p.OffsetS)))
	}
	cw.Flush()
	return cw.Error()
}
