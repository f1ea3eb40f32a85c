package ingest_test

import (
	"fmt"
	"strings"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
)

// A CSV ride with a 2-second dropout (filled) and a spike (removed).
func ExampleRead() {
	csv := "seconds,power\n0,200\n1,210\n4,240\n5,3000\n6,250\n"
	rides, err := ingest.Read(strings.NewReader(csv), "ride.csv", time.Date(2026, 5, 1, 9, 0, 0, 0, time.UTC), ingest.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	r := rides[0]
	fmt.Println(r.Date(), r.PowerW)
	fmt.Printf("dropouts %d s, spikes %d\n", r.Quality.DropoutSeconds, r.Quality.SpikesRemoved)
	// Output:
	// 2026-05-01 [200 210 220 230 240 245 250]
	// dropouts 3 s, spikes 1
}
