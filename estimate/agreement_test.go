package estimate

import (
	"encoding/csv"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"testing"
)

// Bland & Altman (1986, Lancet), peak expiratory flow, large Wright meter
// against mini Wright meter, 17 subjects (../shared/reference/bland-altman-1986/):
// mean difference −2.1 l/min, SD of differences 38.8 l/min, limits of
// agreement −2.1 ± 2 × 38.8 = −79.7 to 75.5 (1.96 SD: −78.1 to 73.9).
func TestAgreementBlandAltman1986(t *testing.T) {
	f, err := os.Open(filepath.Join("..", "..", "shared", "reference", "bland-altman-1986", "pefr.csv"))
	if err != nil {
		if os.Getenv("CI") != "" {
			t.Fatal(err)
		}
		t.Skip(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var wright, mini []float64
	for _, r := range rows[1:] {
		a, _ := strconv.ParseFloat(r[1], 64)
		b, _ := strconv.ParseFloat(r[2], 64)
		wright, mini = append(wright, a), append(mini, b)
	}
	ag, err := Agree(wright, mini)
	if err != nil {
		t.Fatal(err)
	}
	near := func(what string, got, want, tol float64) {
		if math.Abs(got-want) > tol {
			t.Errorf("%s = %.2f, published %.1f", what, got, want)
		}
	}
	near("bias", ag.Bias, -2.1, 0.05)
	near("SD", ag.SD, 38.8, 0.05)
	near("lower limit (1.96 SD)", ag.LowerL, -78.1, 0.1)
	near("upper limit (1.96 SD)", ag.UpperL, 73.9, 0.1)
	near("lower limit (2 SD, as the paper)", ag.Bias-2*ag.SD, -79.7, 0.1)
	near("upper limit (2 SD, as the paper)", ag.Bias+2*ag.SD, 75.5, 0.1)
	if ag.N != 17 || !(ag.R > 0.9) {
		t.Errorf("n %d r %.3f", ag.N, ag.R)
	}
}
