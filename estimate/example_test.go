package estimate_test

import (
	"fmt"

	"github.com/sustain-cycling/sustain/estimate"
)

// Fitting the 2-parameter model P = CP + W′/t to four efforts.
func ExampleLevenbergMarquardt() {
	t := []float64{180, 300, 600, 900}
	p := []float64{400, 340, 295, 280} // CP 250 W and W′ 27 kJ exactly
	sol, err := estimate.LevenbergMarquardt(estimate.Problem{
		X: t, Y: p,
		F: func(x float64, b []float64) float64 { return b[0] + b[1]/x },
	}, []float64{200, 10000})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("CP %.0f W, W′ %.1f kJ\n", sol.Params[0], sol.Params[1]/1000)
	// Output:
	// CP 250 W, W′ 27.0 kJ
}

func ExampleMortonPower() {
	// Morton (1996) with CP 250 W, W′ 20 kJ, Pmax 1000 W
	fmt.Printf("%.2f W\n", estimate.MortonPower(180, 250, 20000, 1000))
	// Output: 346.77 W
}
