package lactate

import (
	"bytes"
	"math"
	"testing"
)

// The readers never panic, and whatever they accept is a test every
// method can be run on.
func FuzzReadSteps(f *testing.F) {
	f.Add([]byte("power_w,lactate_mmol\n100,1\n150,1.2\n200,2\n250,4\n"))
	f.Add([]byte("Date;Power (W);Lactate [mmol/L]\n2026-01-01;100;1,0\n2026-01-01;150;1,5\n"))
	f.Add([]byte("power_w,lactate_10_mmol,lactate_30_mmol\n250,2,2.5\n"))
	f.Add([]byte("\ufeffpower,la,hr\n\"100\",1\n1e308,2\n-5,NaN\n"))
	f.Fuzz(func(t *testing.T, b []byte) {
		tests, _, err := ReadSteps(bytes.NewReader(b), "f.csv")
		if err != nil {
			return
		}
		for _, st := range tests {
			a := Analyse(st)
			for _, th := range a.Thresholds {
				if th.OK() && (th.PowerW < st.Steps[0].PowerW-1e-6 || th.PowerW > st.Steps[len(st.Steps)-1].PowerW+1e-6 || math.IsInf(th.PowerW, 0)) {
					t.Fatalf("%s at %.1f W outside the test's %v–%v W", th.Method, th.PowerW, st.Steps[0].PowerW, st.Steps[len(st.Steps)-1].PowerW)
				}
			}
		}
		ReadTrials(bytes.NewReader(b), "f.csv")
	})
}
