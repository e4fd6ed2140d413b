// Package cli is matchbench's command line: one file per command
// (serve, inspect, convert, chart, demo, match, tune, synth, check,
// deembed, tdr, amp), their shared flag types and output helpers, and
// [Run], which the matchbench binary calls with its arguments. The
// engine lives in rfmath and its subpackages; a command reads its files,
// calls the engine and prints what it found, as text or one JSON object.
//
// Exit codes: 0 on success, 1 when an input cannot be read or a check
// fails, 2 for bad usage.
package cli

import (
	"context"
	"errors"
	"fmt"
	"io"
	"strings"
)

// exit codes
const (
	exitOK    = 0
	exitInput = 1
	exitUsage = 2
)

// usageError marks an error as bad usage (exit code 2).
type usageError struct{ msg string }

func (e usageError) Error() string { return e.msg }

func usagef(format string, a ...any) error { return usageError{fmt.Sprintf(format, a...)} }

type command struct {
	name    string
	summary string
	run     func(ctx context.Context, args []string, stdout, stderr io.Writer) error
}

func commands() []command {
	return []command{
		{"serve", "start the bench web app (the default)", runServe},
		{"inspect", "print what a sweep shows: dips, band edges, resonances, readouts", runInspect},
		{"convert", "convert a sweep between Touchstone 1/2 and CSV", runConvert},
		{"chart", "draw sweeps on the reflection chart and plots, as SVG files", runChart},
		{"demo", "write the invented demo sweeps to a folder", runDemo},
		{"match", "search ladders of standard-value parts for the best match across bands", runMatch},
		{"tune", "fit the board as built from its re-measurement and suggest the next part swap", runTune},
		{"synth", "every L-network, stub and quarter-wave match of an impedance at one frequency", runSynth},
		{"check", "pass or fail sweeps against return-loss limits; a lot summary for many", runCheck},
		{"deembed", "move the reference plane: remove a fixture or a port extension, renormalise", runDeembed},
		{"tdr", "time-domain view of a reflection sweep: reflections by distance, impedance, gating", runTDR},
		{"amp", "a transistor 2-port at one frequency: stability, MAG/MSG, conjugate match, gain and noise circles", runAmp},
	}
}

// Run runs the command named by args[0] (serve when there is none or the
// first argument is a flag) with the rest of args, writing to stdout and
// stderr, and returns the process's exit code.
func Run(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	name := "serve"
	if len(args) > 0 && !strings.HasPrefix(args[0], "-") {
		name, args = args[0], args[1:]
	}
	if name == "help" {
		printUsage(stdout)
		return exitOK
	}
	for _, c := range commands() {
		if c.name != name {
			continue
		}
		err := c.run(ctx, args, stdout, stderr)
		var ue usageError
		switch {
		case err == nil:
			return exitOK
		case errors.Is(err, errHelp):
			return exitOK
		case errors.As(err, &ue):
			fmt.Fprintf(stderr, "matchbench %s: %v\n", name, err)
			fmt.Fprintf(stderr, "run 'matchbench %s -h' for its flags\n", name)
			return exitUsage
		case errors.Is(err, errSilentFail):
			return exitInput
		default:
			fmt.Fprintf(stderr, "matchbench %s: %v\n", name, err)
			return exitInput
		}
	}
	fmt.Fprintf(stderr, "matchbench: unknown command %q\n", name)
	printUsage(stderr)
	return exitUsage
}

// errHelp is returned when -h was asked for and the help has been printed.
var errHelp = errors.New("help shown")

// errSilentFail is returned by a command that has already reported its
// failure (for example a production check that found failing boards).
var errSilentFail = errors.New("failed")

func printUsage(w io.Writer) {
	fmt.Fprintln(w, "usage: matchbench [command] [flags] [args]")
	fmt.Fprintln(w)
	for _, c := range commands() {
		fmt.Fprintf(w, "  %-9s %s\n", c.name, c.summary)
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, "Run 'matchbench COMMAND -h' for a command's flags.")
}
