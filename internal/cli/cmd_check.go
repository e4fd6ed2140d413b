package cli

import (
	"context"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"runtime"
	"strconv"
	"strings"
	"sync"

	"gonum.org/v1/gonum/stat"

	"matchbench/rfmath"
	"matchbench/rfmath/limits"
	"matchbench/rfmath/match"
	"matchbench/rfmath/units"
)

// checkReport is what `matchbench check --json` prints. Keys are part of the
// command-line contract; add, never rename.
type checkReport struct {
	// Network is the network file each load was judged through, if any.
	Network string          `json:"network,omitempty"`
	Bands   []bandJSON      `json:"bands"`
	Files   []checkFileJSON `json:"files"`
	Summary checkSummary    `json:"summary"`
}

type bandJSON struct {
	LoHz            float64 `json:"lo_hz"`
	HiHz            float64 `json:"hi_hz"`
	Kind            string  `json:"kind"` // "rl", "vswr" or "power"
	Value           float64 `json:"value"`
	MinReturnLossDB float64 `json:"min_return_loss_db"`
	Label           string  `json:"label,omitempty"`
}

type checkFileJSON struct {
	File  string `json:"file"`
	Pass  bool   `json:"pass"`
	Error string `json:"error,omitempty"` // the file could not be read or used
	// Worst is the band result of least margin (nil when Error is set).
	Worst *bandResultJSON  `json:"worst,omitempty"`
	Bands []bandResultJSON `json:"bands,omitempty"`
	Dip   *checkDipJSON    `json:"deepest_dip,omitempty"`
}

type bandResultJSON struct {
	Band         int     `json:"band"` // index into bands, from 0
	Covered      bool    `json:"covered"`
	Pass         bool    `json:"pass"`
	FreqHz       float64 `json:"worst_hz"`
	ReturnLossDB jsonNum `json:"worst_return_loss_db"`
	PowerToLoad  jsonNum `json:"worst_power_to_load"` // share of the available power the load takes there, 1 − |Γ|²
	MarginDB     jsonNum `json:"margin_db"`           // null when not covered
}

type checkDipJSON struct {
	FreqHz       float64 `json:"freq_hz"`
	ReturnLossDB jsonNum `json:"return_loss_db"`
}

type checkSummary struct {
	Files      int     `json:"files"`
	Passed     int     `json:"passed"`
	Failed     int     `json:"failed"`     // read, but failing a band
	Unreadable int     `json:"unreadable"` // could not be read or used
	Yield      float64 `json:"yield"`      // passed/files
	// DipHz is the spread of the deepest dip's frequency over the boards
	// that could be read.
	DipHz *spreadJSON `json:"deepest_dip_hz,omitempty"`
	// WorstFile is the board of least margin (a band not covered counts
	// lowest); empty when no file could be read.
	WorstFile     string  `json:"worst_file,omitempty"`
	WorstMarginDB jsonNum `json:"worst_margin_db"`
	WorstHz       float64 `json:"worst_hz,omitempty"`
}

type spreadJSON struct {
	N    int     `json:"n"`
	Min  float64 `json:"min"`
	Mean float64 `json:"mean"`
	Max  float64 `json:"max"`
	Std  float64 `json:"std"` // sample standard deviation; 0 for one board
}

// limitFlag collects --rl and --vswr in the order given.
type limitFlag struct {
	kind limits.Kind
	list *[]limits.Band
}

func (l limitFlag) String() string { return "" }

func (l limitFlag) Set(s string) error {
	if l.kind == limits.Power {
		v, err := limits.ParseShare(s)
		if err != nil {
			return err
		}
		*l.list = append(*l.list, limits.Band{Kind: l.kind, Value: v})
		return nil
	}
	v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
	if err != nil {
		return fmt.Errorf("%q is not a number", s)
	}
	if l.kind == limits.ReturnLoss {
		v = math.Abs(v) // "-10 dB" is a common way to write 10 dB of return loss
	}
	*l.list = append(*l.list, limits.Band{Kind: l.kind, Value: v})
	return nil
}

const checkUsage = "FILE... --band LO:HI --rl DB|--vswr X|--min-power P [--band ...] [--limits FILE] [--port N] [--json]"

func runCheck(_ context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("check", checkUsage, stderr)
	var bandArgs listFlag
	var lims []limits.Band
	fs.Var(&bandArgs, "band", "a band `LO:HI` to check, SI prefixes allowed (902M:928M); repeatable, each paired with the --rl or --vswr in the same place, or all with a single one")
	fs.Var(limitFlag{limits.ReturnLoss, &lims}, "rl", "least return loss in `dB` over the band (repeatable)")
	fs.Var(limitFlag{limits.VSWR, &lims}, "vswr", "greatest VSWR over the band, a `ratio` above 1 (repeatable)")
	fs.Var(limitFlag{limits.Power, &lims}, "min-power", "least share of the available power the load takes over the band: a `percentage` (80%) or a loss (1dB) (repeatable)")
	limitFile := fs.String("limits", "", "read bands and limits from this limit `file` (see the README for its format)")
	port := fs.Int("port", 1, "check the reflection S(N,N) of this `port` of multi-port files")
	netPath := fs.String("network", "", "judge each file through this matching network: a network `file` (NET.json) as `match --json`, `tune` and the web app write it; each file is then the load the network is fitted to")
	asJSON := fs.Bool("json", false, "print one JSON object")
	fs.Usage = func() {
		fmt.Fprintf(stderr, "usage: matchbench check %s\n\n", checkUsage)
		fmt.Fprintln(stderr, "Checks each sweep against return-loss, VSWR or power limits over bands. Exit code 0 when")
		fmt.Fprintln(stderr, "every file passes, 1 when any fails or cannot be read, 2 for bad usage.")
		fmt.Fprintln(stderr, "\nflags:")
		fs.PrintDefaults()
	}
	files, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	bands, err := checkBands(bandArgs, lims, *limitFile)
	if err != nil {
		return err
	}
	if len(files) == 0 {
		return usagef("want at least one sweep file")
	}
	if *port < 1 {
		return usagef("--port %d: ports count from 1", *port)
	}
	var through *placedNetwork
	if *netPath != "" {
		data, err := os.ReadFile(*netPath)
		if err != nil {
			return usagef("--network: %v", err)
		}
		nets, lays, err := match.UnmarshalNetworks(data)
		if err != nil {
			return usagef("--network %s: %v", *netPath, err)
		}
		p, err := lays[0].Place(nets[0])
		if err != nil {
			return usagef("--network %s: %v", *netPath, err)
		}
		through = &placedNetwork{path: *netPath, net: p.Network}
	}
	rep := checkFiles(files, bands, *port, through)
	if *asJSON {
		if err := writeJSON(stdout, rep); err != nil {
			return err
		}
	} else {
		printCheck(stdout, rep, bands)
	}
	if rep.Summary.Passed != rep.Summary.Files {
		return errSilentFail
	}
	return nil
}

// checkBands builds the bands from the flags and the limit file.
func checkBands(bandArgs []string, lims []limits.Band, limitFile string) ([]limits.Band, error) {
	var bands []limits.Band
	switch {
	case len(bandArgs) == 0 && len(lims) > 0:
		return nil, usagef("--rl, --vswr and --min-power need a --band")
	case len(bandArgs) > 0 && len(lims) == 0:
		return nil, usagef("--band needs a limit: --rl DB, --vswr X or --min-power P")
	case len(bandArgs) > 0 && len(lims) != 1 && len(lims) != len(bandArgs):
		return nil, usagef("%d bands and %d limits: give one limit for all bands or one for each", len(bandArgs), len(lims))
	}
	for i, s := range bandArgs {
		lo, hi, ok := strings.Cut(s, ":")
		if !ok {
			return nil, usagef("--band %q: want LO:HI, such as 902M:928M", s)
		}
		b := lims[0]
		if len(lims) > 1 {
			b = lims[i]
		}
		var err error
		if b.LoHz, err = units.ParseFrequency(lo); err != nil {
			return nil, usagef("--band %q: %v", s, err)
		}
		if b.HiHz, err = units.ParseFrequency(hi); err != nil {
			return nil, usagef("--band %q: %v", s, err)
		}
		if err := b.Validate(); err != nil {
			return nil, usagef("--band %q: %v", s, err)
		}
		bands = append(bands, b)
	}
	if limitFile != "" {
		fh, err := os.Open(limitFile)
		if err != nil {
			return nil, usagef("--limits: %v", err)
		}
		fb, err := limits.Parse(fh, limitFile)
		fh.Close()
		if err != nil {
			return nil, usagef("--limits: %v", err)
		}
		bands = append(bands, fb...)
	}
	if len(bands) == 0 {
		return nil, usagef("no band to check: give --band LO:HI with --rl DB, or --limits FILE")
	}
	return bands, nil
}

// checkFiles reads and checks every file, several at once, and returns the
// report with the files in the order given.
func checkFiles(files []string, bands []limits.Band, port int, through *placedNetwork) *checkReport {
	rep := &checkReport{Files: make([]checkFileJSON, len(files))}
	if through != nil {
		rep.Network = through.path
	}
	for _, b := range bands {
		rep.Bands = append(rep.Bands, bandJSON{LoHz: b.LoHz, HiHz: b.HiHz, Kind: b.Kind.String(), Value: b.Value, MinReturnLossDB: b.MinReturnLossDB(), Label: b.Label})
	}
	results := make([][]limits.Result, len(files))
	workers := min(runtime.GOMAXPROCS(0), len(files))
	next := make(chan int)
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				rep.Files[i], results[i] = checkFile(files[i], bands, port, through)
			}
		}()
	}
	for i := range files {
		next <- i
	}
	close(next)
	wg.Wait()

	s := &rep.Summary
	s.Files = len(files)
	s.WorstMarginDB = jsonNum(math.NaN())
	var dips []float64
	worstRank := math.Inf(1)
	for i, f := range rep.Files {
		switch {
		case f.Error != "":
			s.Unreadable++
			continue
		case f.Pass:
			s.Passed++
		default:
			s.Failed++
		}
		if f.Dip != nil {
			dips = append(dips, f.Dip.FreqHz)
		}
		w := results[i][limits.Worst(results[i])]
		rank := w.MarginDB
		if !w.Covered {
			rank = math.Inf(-1)
		}
		if s.WorstFile == "" || rank < worstRank {
			worstRank = rank
			s.WorstFile, s.WorstMarginDB, s.WorstHz = f.File, jsonNum(w.MarginDB), w.WorstHz
		}
	}
	if s.Files > 0 {
		s.Yield = float64(s.Passed) / float64(s.Files)
	}
	if len(dips) > 0 {
		sp := &spreadJSON{N: len(dips), Min: dips[0], Max: dips[0]}
		for _, d := range dips {
			sp.Min, sp.Max = math.Min(sp.Min, d), math.Max(sp.Max, d)
		}
		if len(dips) == 1 {
			sp.Mean = dips[0]
		} else {
			sp.Mean, sp.Std = stat.MeanStdDev(dips, nil)
		}
		s.DipHz = sp
	}
	return rep
}

// placedNetwork is a matching network the files are judged through.
type placedNetwork struct {
	path string
	net  match.Network
}

// checkThrough checks the load g at freqHz, seen through the network n,
// against each band: the band's requirement (a return loss, a VSWR as its
// return loss, or a least power to the load) judged by match.Evaluate, the
// evaluator of every design's band figures, so that the network's loss
// counts in the power to the load. A band outside the sweep is not covered.
func checkThrough(freqHz []float64, g []complex128, z0 float64, bands []limits.Band, n match.Network) []limits.Result {
	load := match.Load{FreqHz: freqHz, Gamma: g, Z0Ohm: z0}
	out := make([]limits.Result, len(bands))
	for i, b := range bands {
		r := limits.Result{Band: b, MarginDB: math.NaN()}
		req := b.Requirement()
		m, err := match.Evaluate(load, []match.Band{{LoHz: b.LoHz, HiHz: b.HiHz, MinReturnLossDB: req.MinReturnLossDB, MinPowerToLoad: req.MinPowerToLoad}}, n)
		if err == nil {
			f := m.Bands[0]
			r.Covered, r.Points = true, f.Points
			r.WorstHz, r.WorstReturnLossDB, r.WorstPowerToLoad, r.MarginDB = f.WorstRLHz, f.WorstRLdB, f.WorstPowerToLoad, f.MarginDB
			if b.Kind == limits.Power {
				r.WorstHz = f.WorstPowerHz
			}
			r.Pass = r.MarginDB >= 0
		}
		out[i] = r
	}
	return out
}

// checkFile reads one file and checks it against the bands, through the
// network when there is one.
func checkFile(path string, bands []limits.Band, port int, through *placedNetwork) (checkFileJSON, []limits.Result) {
	out := checkFileJSON{File: path}
	ls, err := loadSweep(path)
	if err != nil {
		out.Error = "cannot read: " + err.Error()
		return out, nil
	}
	s := ls.Sweep
	if port > s.Ports {
		out.Error = fmt.Sprintf("has %d port(s); --port %d asks for S%d%d", s.Ports, port, port, port)
		return out, nil
	}
	g := s.Param(nil, port-1, port-1)
	var res []limits.Result
	if through != nil {
		res = checkThrough(s.FreqHz, g, s.Z0[port-1], bands, through.net)
	} else {
		res = limits.Check(s.FreqHz, g, bands)
	}
	out.Pass = true
	for i, r := range res {
		out.Bands = append(out.Bands, bandResultJSON{Band: i, Covered: r.Covered, Pass: r.Pass, FreqHz: r.WorstHz, ReturnLossDB: jsonNum(r.WorstReturnLossDB),
			PowerToLoad: jsonNum(r.WorstPowerToLoad), MarginDB: jsonNum(r.MarginDB)})
		out.Pass = out.Pass && r.Pass
	}
	w := out.Bands[limits.Worst(res)]
	out.Worst = &w
	if d := rfmath.DeepestDip(s.FreqHz, g); d.Index >= 0 {
		out.Dip = &checkDipJSON{FreqHz: d.FreqHz, ReturnLossDB: jsonNum(d.ReturnLossDB)}
	}
	return out, res
}

func printCheck(w io.Writer, rep *checkReport, bands []limits.Band) {
	ff := func(f float64) string { return units.FormatFrequency(f, 6) }
	if rep.Network != "" {
		fmt.Fprintf(w, "Each file is the load, seen through the network of %s (its parts' losses count in the power to the load):\n", rep.Network)
	}
	for _, f := range rep.Files {
		switch {
		case f.Error != "":
			fmt.Fprintf(w, "ERROR  %s: %s\n", f.File, f.Error)
		case !f.Worst.Covered:
			b := bands[f.Worst.Band]
			fmt.Fprintf(w, "FAIL   %s: the sweep does not cover %s–%s\n", f.File, ff(b.LoHz), ff(b.HiHz))
		default:
			verdict := "PASS"
			if !f.Pass {
				verdict = "FAIL"
			}
			fmt.Fprintf(w, "%-6s %s: margin %s dB at %s (RL %s dB, %s of the power to the load; %s)\n", verdict, f.File,
				signed(float64(f.Worst.MarginDB)), ff(f.Worst.FreqHz), fmtDB(float64(f.Worst.ReturnLossDB)), units.FormatPercent(float64(f.Worst.PowerToLoad), 1), bands[f.Worst.Band])
		}
	}
	s := rep.Summary
	if s.Files < 2 {
		return
	}
	fmt.Fprintf(w, "\nLot: %d files, %d pass, %d fail", s.Files, s.Passed, s.Failed)
	if s.Unreadable > 0 {
		fmt.Fprintf(w, ", %d unreadable", s.Unreadable)
	}
	fmt.Fprintf(w, ": yield %.1f %%\n", 100*s.Yield)
	if d := s.DipHz; d != nil {
		boards := "boards"
		if d.N == 1 {
			boards = "board"
		}
		fmt.Fprintf(w, "Deepest dip: min %s, mean %s, max %s, σ %s (%d %s)\n", ff(d.Min), ff(d.Mean), ff(d.Max), units.FormatFrequency(d.Std, 3), d.N, boards)
	}
	if s.WorstFile != "" {
		m := float64(s.WorstMarginDB)
		if math.IsNaN(m) {
			fmt.Fprintf(w, "Worst board: %s (a band outside its sweep)\n", s.WorstFile)
		} else {
			fmt.Fprintf(w, "Worst board: %s, margin %s dB at %s\n", s.WorstFile, signed(m), ff(s.WorstHz))
		}
	}
}

var _ flag.Value = limitFlag{}
