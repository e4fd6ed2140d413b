// Command matchbench reads vector-network-analyser sweeps, finds where a
// device resonates and how wide its usable band is, and designs matching
// networks from parts that can be bought. With no subcommand it serves the
// bench web app; the other subcommands print what the same engine finds.
//
// Exit codes: 0 on success, 1 when an input cannot be read or a check
// fails, 2 for bad usage.
package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"strings"
	"syscall"
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

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	code := run(ctx, os.Args[1:], os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}

func run(ctx context.Context, args []string, stdout, stderr io.Writer) int {
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
