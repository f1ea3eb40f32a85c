package powerduration_test

import (
	"fmt"

	"github.com/sustain-cycling/sustain/powerduration"
)

func ExampleMeanMax() {
	power := []float64{100, 300, 200, 0, 400}
	for _, b := range powerduration.MeanMax(power, []int{1, 2, 3}) {
		fmt.Printf("%d s: %.0f W from second %d\n", b.DurationS, b.Watts, b.OffsetS)
	}
	// Output:
	// 1 s: 400 W from second 4
	// 2 s: 250 W from second 1
	// 3 s: 200 W from second 0
}
