// Command report prints the accuracy report (`make accuracy`).
package main

import (
	"flag"
	"fmt"
	"os"
	"time"

	"github.com/sustain-cycling/sustain/internal/accuracy"
	"github.com/sustain-cycling/sustain/internal/synth"
)

func main() {
	seeds := flag.Int("seeds", 20, "seeds per kind and truth model")
	kind := flag.String("kind", "", "one kind only")
	flag.Parse()
	kinds := synth.FieldKinds
	if *kind != "" {
		kinds = []string{*kind}
	}
	t0 := time.Now()
	os_, err := accuracy.RunAll(kinds, synth.TruthModels, *seeds)
	if err != nil {
		fmt.Fprintln(os.Stderr, "accuracy:", err)
		os.Exit(1)
	}
	accuracy.Write(os.Stdout, os_, *seeds)
	fmt.Fprintf(os.Stderr, "%d seasons in %s\n", len(os_), time.Since(t0).Round(time.Second))
}
