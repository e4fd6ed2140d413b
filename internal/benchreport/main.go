// Command benchreport is the Go side of scripts/bench: it writes the
// generated Touchstone file that the Go and numpy read benchmarks share, and
// summarises a results file (go test -bench output, with the numpy scripts'
// lines appended) as a table of ratios, each with its target and a verdict.
//
// Usage:
//
//	go run ./internal/benchreport gen [-points N] FILE
//	go run ./internal/benchreport summary [-numpy-skipped WHY] [-search-combined RE] [-search-fast RE] [-search-exhaustive RE] RESULTS...
//
// The summary takes the median of every metric over the runs (-count) and
// prints "not yet measured" for a figure whose benchmarks are missing, so
// that it works while packages are still being written. It never fails on a
// missed target: benchmarks are measurements, not tests.
package main

import (
	"flag"
	"fmt"
	"io"
	"os"
	"regexp"
)

func main() {
	if err := run(os.Args[1:], os.Stdout); err != nil {
		fmt.Fprintln(os.Stderr, "benchreport:", err)
		os.Exit(2)
	}
}

const usage = `usage:
  benchreport gen [-points N] FILE
  benchreport summary [-numpy-skipped WHY] [-search-combined RE] [-search-fast RE] [-search-exhaustive RE] RESULTS...`

func run(args []string, stdout io.Writer) error {
	if len(args) == 0 {
		return fmt.Errorf("no command\n%s", usage)
	}
	switch args[0] {
	case "gen":
		return gen(args[1:])
	case "summary":
		return summary(args[1:], stdout)
	}
	return fmt.Errorf("unknown command %q\n%s", args[0], usage)
}

func gen(args []string) error {
	fs := flag.NewFlagSet("gen", flag.ContinueOnError)
	points := fs.Int("points", 100_001, "frequency points")
	if err := fs.Parse(args); err != nil {
		return err
	}
	if fs.NArg() != 1 || *points < 1 {
		return fmt.Errorf("gen needs one FILE and a positive -points\n%s", usage)
	}
	f, err := os.Create(fs.Arg(0))
	if err != nil {
		return err
	}
	if err := writeTouchstone(f, *points); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

func summary(args []string, stdout io.Writer) error {
	fs := flag.NewFlagSet("summary", flag.ContinueOnError)
	var opt Options
	fs.StringVar(&opt.NumpySkipped, "numpy-skipped", "", "why the numpy scripts did not run")
	fast := fs.String("search-fast", DefaultSearchFast.String(), "name pattern of the 3-part E24 broadband search benchmark in rfmath/match")
	slow := fs.String("search-exhaustive", DefaultSearchExhaustive.String(), "name pattern of the plain exhaustive search benchmark in rfmath/match")
	both := fs.String("search-combined", DefaultSearchCombined.String(), "name pattern of rfmath/match benchmarks that time both searches and report speedup")
	if err := fs.Parse(args); err != nil {
		return err
	}
	if fs.NArg() == 0 {
		return fmt.Errorf("summary needs at least one RESULTS file\n%s", usage)
	}
	var err error
	if opt.SearchFast, err = regexp.Compile(*fast); err != nil {
		return err
	}
	if opt.SearchExhaustive, err = regexp.Compile(*slow); err != nil {
		return err
	}
	if opt.SearchCombined, err = regexp.Compile(*both); err != nil {
		return err
	}
	var readers []io.Reader
	for _, name := range fs.Args() {
		f, err := os.Open(name)
		if err != nil {
			return err
		}
		defer f.Close()
		readers = append(readers, f)
	}
	res, err := Parse(io.MultiReader(readers...))
	if err != nil {
		return err
	}
	Print(stdout, Build(res, opt))
	return nil
}
