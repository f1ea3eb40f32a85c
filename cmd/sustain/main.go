// Command sustain estimates a cyclist's threshold power (critical power and
// the field rules of thumb) from the ride files they already record, and
// says how far the data supports each figure.
//
// This package parses flags, calls the pipeline packages (ingest,
// powerduration, estimate) and renders their results; it computes nothing
// itself.
package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"runtime/debug"
	"strings"

	"github.com/urfave/cli/v2"
)

// Exit statuses of the output contract (../shared/design.md).
const (
	exitOK      = 0
	exitNothing = 1
	exitUsage   = 2
)

// usageError marks an error in how the command was called (exit status 2).
type usageError struct{ msg string }

func (e usageError) Error() string { return e.msg }

func main() {
	os.Exit(run(os.Args, os.Stdout, os.Stderr))
}

// run executes the command line and returns the exit status.
func run(args []string, stdout, stderr io.Writer) int {
	app := newApp(stdout, stderr)
	err := app.Run(interspersed(app, args))
	if err == nil {
		return exitOK
	}
	var ec cli.ExitCoder
	if errors.As(err, &ec) {
		if msg := err.Error(); msg != "" {
			fmt.Fprintln(stderr, "sustain:", msg)
		}
		return ec.ExitCode()
	}
	var ue usageError
	if errors.As(err, &ue) || isFlagError(err) {
		fmt.Fprintln(stderr, "sustain:", err)
		return exitUsage
	}
	fmt.Fprintln(stderr, "sustain:", err)
	return exitNothing
}

func newApp(stdout, stderr io.Writer) *cli.App {
	app := &cli.App{
		Name:      "sustain",
		Usage:     "threshold power (critical power, W′, Pmax) from the ride files you already record",
		Version:   version(),
		Writer:    stdout,
		ErrWriter: stderr,
		// flag errors come back as errors and become exit status 2, with
		// no help text on stdout (which carries results only)
		OnUsageError:   onUsageError,
		ExitErrHandler: func(*cli.Context, error) {},
		// a repeatable flag takes one value each time: a value such as
		// FILE@0:10:00+30m=2.0,2.4 keeps its comma
		DisableSliceFlagSeparator: true,
		Metadata:                  map[string]any{},
		After: func(c *cli.Context) error {
			closeStore(c.App)
			return nil
		},
		Commands: []*cli.Command{
			inspectCommand(),
			curveCommand(),
			estimateCommand(),
			seasonCommand(),
			compareCommand(),
			protocolCommand(),
			lactateCommand(),
			exportCommand(),
			reportCommand(),
			demoCommand(),
		},
		Action: func(c *cli.Context) error {
			if c.NArg() > 0 {
				return usageError{fmt.Sprintf("no command %q; see sustain --help", c.Args().First())}
			}
			// no command: the help goes to stderr, and it is a usage error
			c.App.Writer = c.App.ErrWriter
			cli.ShowAppHelp(c)
			return usageError{"name a command (sustain --help lists them)"}
		},
	}
	var each func(cmds []*cli.Command)
	each = func(cmds []*cli.Command) {
		for _, cmd := range cmds {
			cmd.OnUsageError = onUsageError
			each(cmd.Subcommands)
		}
	}
	each(app.Commands)
	return app
}

// onUsageError turns a flag error into a usage error (exit status 2), with
// a pointer to the help instead of the help itself.
func onUsageError(c *cli.Context, err error, isSub bool) error {
	return usageError{err.Error() + " (see --help)"}
}

// version is the tool's version, with the commit it was built from when
// the build recorded one (analysts cite it in a methods section).
func version() string {
	v := "0.3.0-dev"
	info, ok := debug.ReadBuildInfo()
	if !ok {
		return v
	}
	if mv := info.Main.Version; mv != "" && mv != "(devel)" {
		v = mv
	}
	var commit, dirty string
	for _, s := range info.Settings {
		switch s.Key {
		case "vcs.revision":
			commit = s.Value[:min(12, len(s.Value))]
		case "vcs.modified":
			if s.Value == "true" {
				dirty = ", modified"
			}
		}
	}
	if commit != "" {
		v += " (commit " + commit + dirty + ")"
	}
	return v + ", " + info.GoVersion
}

func isFlagError(err error) bool {
	msg := err.Error()
	for _, p := range []string{"flag provided but not defined", "invalid value", "flag needs an argument", "Required flag"} {
		if strings.Contains(msg, p) {
			return true
		}
	}
	return false
}

// interspersed moves a command's flags before its paths, so that
// "sustain curve rides/ --json" reads like "sustain curve --json rides/"
// (the flag parser stops at the first path). Everything after "--" stays a path.
func interspersed(app *cli.App, args []string) []string {
	if len(args) < 2 {
		return args
	}
	var cmd *cli.Command
	at := 1
	for ; at < len(args); at++ {
		if !strings.HasPrefix(args[at], "-") {
			cmd = app.Command(args[at])
			break
		}
	}
	if cmd == nil {
		return args
	}
	// descend into a subcommand ("protocol all-out")
	for at+1 < len(args) && len(cmd.Subcommands) > 0 {
		sub := cmd.Command(args[at+1])
		if sub == nil {
			break
		}
		cmd, at = sub, at+1
	}
	takesValue := map[string]bool{}
	for _, f := range cmd.Flags {
		_, isBool := f.(*cli.BoolFlag)
		for _, n := range f.Names() {
			takesValue[n] = !isBool
		}
	}
	out := append([]string{}, args[:at+1]...)
	var paths []string
	rest := args[at+1:]
	for i := 0; i < len(rest); i++ {
		a := rest[i]
		if a == "--" {
			paths = append(paths, rest[i+1:]...)
			break
		}
		if !strings.HasPrefix(a, "-") || a == "-" {
			paths = append(paths, a)
			continue
		}
		out = append(out, a)
		name := strings.TrimLeft(a, "-")
		if !strings.Contains(name, "=") && takesValue[name] && i+1 < len(rest) {
			out = append(out, rest[i+1])
			i++
		}
	}
	if len(paths) > 0 {
		out = append(out, "--")
		out = append(out, paths...)
	}
	return out
}
