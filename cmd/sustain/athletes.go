package main

import (
	"github.com/sustain-cycling/sustain/internal/athletes"
	"github.com/urfave/cli/v2"
)

// massFlag is the rider's mass for one run (it overrides an athletes file).
func massFlag() cli.Flag {
	return &cli.Float64Flag{Name: "mass", Usage: "rider mass in kg, to add W/kg (overrides --athletes for this run)"}
}

// athletesFile is the --athletes file, read once a run; ok is false when
// none was named.
func athletesFile(c *cli.Context) (f athletes.File, ok bool, err error) {
	p := c.String("athletes")
	if p == "" {
		return f, false, nil
	}
	if f, ok := c.App.Metadata["athletes"].(athletes.File); ok {
		return f, true, nil
	}
	if f, err = athletes.Read(p); err != nil {
		return f, false, usageError{err.Error()}
	}
	c.App.Metadata["athletes"] = f
	return f, true, nil
}

// checkMass refuses a --mass that is not above 0 kg.
func checkMass(c *cli.Context) error {
	if c.IsSet("mass") && !(c.Float64("mass") > 0) {
		return usageError{"--mass must be above 0 kg"}
	}
	return nil
}

// massOn is the rider's body mass on date (YYYY-MM-DD) for the rides
// under paths: --mass when given (one run's override), else the mass in
// force that day in the athletes file for the athlete whose folder holds
// the first path; 0 when neither says.
func massOn(c *cli.Context, paths []string, date string) (float64, error) {
	if c.IsSet("mass") {
		return c.Float64("mass"), nil
	}
	f, ok, err := athletesFile(c)
	if err != nil || !ok || len(paths) == 0 {
		return 0, err
	}
	a, ok := f.Holding(paths[0])
	if !ok {
		return 0, nil
	}
	kg, _ := a.MassOn(date)
	return kg, nil
}

// massFunc is massOn as a function of the date (nil when no mass is
// known: neither --mass nor --athletes).
func massFunc(c *cli.Context, paths []string) func(date string) float64 {
	if !c.IsSet("mass") && c.String("athletes") == "" {
		return nil
	}
	return func(date string) float64 {
		kg, _ := massOn(c, paths, date)
		return kg
	}
}
