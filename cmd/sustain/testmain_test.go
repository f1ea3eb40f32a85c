package main

import (
	"os"
	"testing"
)

// TestMain keeps the tests' stores out of the user's cache folder, and lets
// the test binary act as the sustain command when SUSTAIN_RUN_MAIN is set
// (the multi-process store tests start it that way).
func TestMain(m *testing.M) {
	if os.Getenv("SUSTAIN_RUN_MAIN") != "" {
		os.Exit(run(append([]string{"sustain"}, os.Args[1:]...), os.Stdout, os.Stderr))
	}
	dir, err := os.MkdirTemp("", "sustain-test-cache-")
	if err != nil {
		panic(err)
	}
	os.Setenv("XDG_CACHE_HOME", dir)
	code := m.Run()
	os.RemoveAll(dir)
	os.Exit(code)
}
