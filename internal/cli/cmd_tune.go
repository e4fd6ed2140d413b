package cli

import (
	"context"
	"fmt"
	"io"
	"math"
	"os"
	"strings"
	"text/tabwriter"

	"matchbench/rfmath/match"
	"matchbench/rfmath/units"
)

// tuneJSON is what `matchbench tune --json` prints. Keys are part of the
// command-line contract; add, never rename.
type tuneJSON struct {
	Load        string            `json:"load"`
	Built       string            `json:"built"`
	Network     match.NetworkFile `json:"network"` // the network as soldered, with the layout as declared
	Fit         tuneFitJSON       `json:"fit"`
	AsBuilt     tuneFiguresJSON   `json:"as_built"`
	Suggestions []tuneSwapJSON    `json:"suggestions"`
	Best        *int              `json:"best"` // index into suggestions of the one to try first; null when none
}

type tuneFitJSON struct {
	Points             int             `json:"points"`
	LoHz               float64         `json:"lo_hz"`
	HiHz               float64         `json:"hi_hz"`
	RMSResidual        jsonNum         `json:"rms_residual_gamma"`
	MaxResidual        jsonNum         `json:"max_residual_gamma"`
	NominalRMSResidual jsonNum         `json:"nominal_rms_residual_gamma"`
	ResidualSigma      jsonNum         `json:"residual_sigma"`
	Condition          jsonNum         `json:"condition"`
	Params             []tuneParamJSON `json:"params"`
	Correlation        [][]jsonNum     `json:"correlation"` // of the fitted (not held) params, in their order
	Warnings           []string        `json:"warnings"`
}

type tuneParamJSON struct {
	Name         string  `json:"name"`
	Kind         string  `json:"kind"` // part, pads, trace
	Index        int     `json:"index"`
	Unit         string  `json:"unit"`
	Nominal      float64 `json:"nominal"`
	Value        float64 `json:"value"`
	Sigma        jsonNum `json:"sigma"`
	Prior        jsonNum `json:"prior"`
	Held         bool    `json:"held"`
	Undetermined bool    `json:"undetermined"`
	AtBound      bool    `json:"at_bound"`
}

type tuneFiguresJSON struct {
	WorstRLdB        jsonNum         `json:"worst_rl_db"`
	WorstPowerToLoad jsonNum         `json:"worst_power_to_load"`
	MarginDB         jsonNum         `json:"margin_db"`
	Meets            bool            `json:"meets"`
	Bands            []matchBandJSON `json:"bands"`
}

type tuneSwapJSON struct {
	Changes []tuneChangeJSON  `json:"changes"`
	Network match.NetworkFile `json:"network"` // the next candidate, as a network file
	Yield   jsonNum           `json:"yield"`
	tuneFiguresJSON
}

type tuneChangeJSON struct {
	Index      int     `json:"index"` // the part, from the load, counting from 0
	Designator string  `json:"designator"`
	Kind       string  `json:"kind"`
	From       float64 `json:"from"`
	To         float64 `json:"to"`
	Steps      int     `json:"steps"`
	Series     string  `json:"series"`
}

func figuresJSON(m match.Metrics) tuneFiguresJSON {
	f := tuneFiguresJSON{WorstRLdB: jsonNum(m.WorstRLdB), WorstPowerToLoad: jsonNum(m.WorstPowerToLoad), MarginDB: jsonNum(m.MarginDB), Meets: m.Meets()}
	for _, b := range m.Bands {
		f.Bands = append(f.Bands, bandJSONOf(b))
	}
	return f
}

func runTune(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("tune", "--load LOAD.s1p --built BUILT.s1p --network NET.json --band LO:HI[:RL] [--band ...] [--footprint 0402] [--trace GAP:LENGTH[:Z0:EPSEFF]] [--json]", stderr)
	loadPath := fs.String("load", "", "the load measured alone (the antenna without the network), at the plane where the network's load end meets it: a `file`")
	builtPath := fs.String("built", "", "the board with the network fitted, measured at the network's source end: a `file`")
	netPath := fs.String("network", "", "the network as designed (and its layout): a network `file` as `match --json` and the web app write it")
	design := fs.Int("design", 1, "which `network` of a file that holds several (the output of match --json): 1 for the first")
	var bandArgs, traceArgs listFlag
	fs.Var(&bandArgs, "band", "a band the network must cover, `LO:HI[:RL]`; repeatable")
	rl := fs.Float64("rl", 10, "required return `loss` in dB for bands that do not give their own")
	minPower := fs.String("min-power", "", "least share of the available power that must reach the load in every band: a `percentage` (80%) or a loss (1dB)")
	objective := fs.String("objective", "power", "what the swaps are ranked by: `power` (meet every requirement, then the most power to the load) or rl")
	footprint := fs.String("footprint", "", "the parts' `footprint`: 0402, 0603 (typical pad capacitance, from memory) or none; overrides the file's layout")
	pad := fs.String("pad", "", "each pad's `capacitance` to ground (0.1p); overrides the footprint's typical figure")
	fs.Var(&traceArgs, "trace", "a trace in a gap of the network, `GAP:LENGTH[:Z0:EPSEFF]` (gap 0 between the load and the first part, g between parts g and g+1 counted from the load; 2:0.8mm:53:3.2); repeatable; replaces the file's traces")
	noPriors := fs.Bool("no-priors", false, "fit by the data alone: the layout's numbers get no prior (what the sweep cannot tell apart comes out with large uncertainties)")
	steps := fs.Int("steps", 4, "standard values either side of each part's own to try (`N`)")
	top := fs.Int("top", 3, "suggestions of each size (one part, two parts) to print")
	carry := fs.String("carry", "none", "what a new part keeps of the old one's offset from nominal: `none` (the new part at its nominal value) or offset")
	builds := fs.Int("builds", 500, "random builds of the new parts within their tolerances for each suggestion's yield (0: none)")
	asJSON := fs.Bool("json", false, "print one JSON object")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 0 {
		return usagef("tune takes its files as --load, --built and --network, not as arguments (%q)", pos)
	}
	for _, f := range []struct{ name, v string }{{"--load", *loadPath}, {"--built", *builtPath}, {"--network", *netPath}} {
		if f.v == "" {
			return usagef("%s is required", f.name)
		}
	}
	if len(bandArgs) == 0 {
		return usagef("--band is required, e.g. --band 902M:928M")
	}
	if math.IsNaN(*rl) || math.IsInf(*rl, 0) {
		return usagef("--rl %g: not a number of dB", *rl)
	}
	bands, err := parseBands(bandArgs, *rl, *minPower)
	if err != nil {
		return err
	}
	obj, err := match.ParseObjective(*objective)
	if err != nil {
		return usagef("--objective %s: want power or rl", *objective)
	}
	if *steps < 1 || *steps > 24 {
		return usagef("--steps %d: want 1 to 24", *steps)
	}
	if *top < 1 {
		return usagef("--top %d: want at least 1", *top)
	}
	if *builds < 0 {
		return usagef("--builds %d: must not be negative", *builds)
	}
	var cr match.Carry
	switch *carry {
	case "none":
		cr = match.CarryNone
	case "offset":
		cr = match.CarryOffset
	default:
		return usagef("--carry %s: want none or offset", *carry)
	}

	n, lay, err := tuneDesign(*netPath, *design, *footprint, *pad, traceArgs)
	if err != nil {
		return err
	}

	ls, err := loadSweep(*loadPath)
	if err != nil {
		return err
	}
	load, err := match.LoadFromSweep(ls.Sweep, 0)
	if err != nil {
		return fmt.Errorf("%s: %w", *loadPath, err)
	}
	bs, err := loadSweep(*builtPath)
	if err != nil {
		return err
	}
	built, err := match.LoadFromSweep(bs.Sweep, 0)
	if err != nil {
		return fmt.Errorf("%s: %w", *builtPath, err)
	}
	for _, b := range bands {
		if b.LoHz < load.FreqHz[0] || b.HiHz > load.FreqHz[len(load.FreqHz)-1] {
			return usagef("--band %s lies outside the load sweep (%s to %s)", b,
				units.FormatFrequency(load.FreqHz[0], 6), units.FormatFrequency(load.FreqHz[len(load.FreqHz)-1], 6))
		}
	}

	fit, err := match.FitBoard(load, built, n, lay, &match.FitSettings{NoPriors: *noPriors})
	if err != nil {
		return err
	}
	sw, err := match.NextSwaps(ctx, load, bands, fit, &match.SwapSettings{Steps: *steps, Top: *top, Objective: obj, Carry: cr, Builds: orNone(*builds)})
	if err != nil {
		return err
	}
	out := tuneOutput(ls.Path, bs.Path, n, lay, fit, sw)
	if *asJSON {
		return writeJSON(stdout, out)
	}
	printTune(stdout, load, built, ls.Path, bs.Path, n, lay, fit, sw, out, *steps)
	return nil
}

// tuneDesign reads network design (1 for the first) of the network file
// netPath, as built, with its layout changed by the --footprint, --pad and
// --trace flags.
func tuneDesign(netPath string, design int, footprint, pad string, traceArgs []string) (match.Network, match.Layout, error) {
	raw, err := os.ReadFile(netPath)
	if err != nil {
		return nil, match.Layout{}, err
	}
	nets, lays, err := match.UnmarshalNetworks(raw)
	if err != nil {
		return nil, match.Layout{}, fmt.Errorf("%s: %w", netPath, err)
	}
	if design < 1 || design > len(nets) {
		return nil, match.Layout{}, usagef("--design %d: %s holds %d network(s)", design, netPath, len(nets))
	}
	n, lay := nets[design-1].Built(), lays[design-1]
	if footprint != "" {
		fp, err := match.LookupFootprint(footprint)
		if err != nil {
			return nil, match.Layout{}, usagef("--footprint %s: %v", footprint, err)
		}
		lay.Footprint = fp
	}
	if pad != "" {
		c, err := units.ParseValue(pad, "F")
		if err != nil || c < 0 || c > 100e-12 {
			return nil, match.Layout{}, usagef("--pad %s: want a capacitance from 0 to 100 pF, such as 0.1p", pad)
		}
		lay.Footprint.PadCF = c
		if lay.Footprint.Name == "" {
			lay.Footprint.Name = "custom"
		}
	}
	if len(traceArgs) > 0 {
		lay.Traces = nil
		for _, s := range traceArgs {
			t, err := match.ParseTrace(s)
			if err != nil {
				return nil, match.Layout{}, usagef("--trace %s: %v", s, err)
			}
			lay.Traces = append(lay.Traces, t)
		}
	}
	if err := lay.Validate(len(n)); err != nil {
		return nil, match.Layout{}, usagef("%v", err)
	}
	return n, lay, nil
}

// orNone returns a count of builds as match.SwapSettings takes it: −1
// for none.
func orNone(builds int) int {
	if builds == 0 {
		return -1
	}
	return builds
}

// tuneOutput gathers the fit and the swaps as the JSON prints them; the
// text output prints the same numbers.
func tuneOutput(loadPath, builtPath string, n match.Network, lay match.Layout, fit *match.BoardFit, sw *match.SwapResult) tuneJSON {
	out := tuneJSON{Load: loadPath, Built: builtPath, Network: match.FileOf(n, lay), AsBuilt: figuresJSON(sw.AsBuilt), Suggestions: []tuneSwapJSON{}}
	f := &out.Fit
	f.Points, f.LoHz, f.HiHz = fit.Points, fit.FitLoHz, fit.FitHiHz
	f.RMSResidual, f.MaxResidual, f.NominalRMSResidual = jsonNum(fit.RMSResidual), jsonNum(fit.MaxResidual), jsonNum(fit.NominalRMSResidual)
	f.ResidualSigma, f.Condition = jsonNum(fit.ResidualSigma), jsonNum(fit.Condition)
	f.Warnings = append([]string{}, fit.Warnings...)
	for _, p := range fit.Params {
		f.Params = append(f.Params, tuneParamJSON{Name: p.Name, Kind: p.Kind.String(), Index: p.Index, Unit: p.Unit, Nominal: p.Nominal, Value: p.Value,
			Sigma: jsonNum(p.Sigma), Prior: jsonNum(p.Prior), Held: p.Held, Undetermined: p.Undetermined, AtBound: p.AtBound})
	}
	for _, row := range fit.Correlation {
		r := make([]jsonNum, len(row))
		for j, v := range row {
			r[j] = jsonNum(v)
		}
		f.Correlation = append(f.Correlation, r)
	}
	best, ok := sw.Best()
	for _, list := range [][]match.Swap{sw.One, sw.Two} {
		for _, s := range list {
			j := tuneSwapJSON{Network: match.FileOf(s.Network, lay), Yield: jsonNum(s.Yield), tuneFiguresJSON: figuresJSON(s.Metrics)}
			for _, c := range s.Changes {
				j.Changes = append(j.Changes, tuneChangeJSON{Index: c.Part, Designator: c.Designator, Kind: string(c.Kind), From: c.From, To: c.To, Steps: c.Steps, Series: c.Series})
			}
			if ok && sameChanges(s.Changes, best.Changes) {
				i := len(out.Suggestions)
				out.Best = &i
			}
			out.Suggestions = append(out.Suggestions, j)
		}
	}
	return out
}

func sameChanges(a, b []match.Change) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i].Part != b[i].Part || a[i].To != b[i].To {
			return false
		}
	}
	return true
}

func printTune(w io.Writer, load, built match.Load, loadPath, builtPath string, n match.Network, lay match.Layout, fit *match.BoardFit, sw *match.SwapResult, out tuneJSON, steps int) {
	ff := func(f float64) string { return units.FormatFrequency(f, 6) }
	fmt.Fprintf(w, "Load: %s, %d points, %s to %s\n", loadPath, len(load.FreqHz), ff(load.FreqHz[0]), ff(load.FreqHz[len(load.FreqHz)-1]))
	fmt.Fprintf(w, "Board as built: %s, %d points, %s to %s\n", builtPath, len(built.FreqHz), ff(built.FreqHz[0]), ff(built.FreqHz[len(built.FreqHz)-1]))
	var ps []string
	for i, p := range n {
		ps = append(ps, n.Designator(i)+" "+p.String())
	}
	models := out.Network.Model
	if models == "" {
		models = "mixed"
	}
	fmt.Fprintf(w, "Network, from the load: %s; %s parts\n", strings.Join(ps, ", "), models)
	fmt.Fprintf(w, "Layout as declared: %s\n", lay.Describe(n))
	fmt.Fprintln(w)
	fmt.Fprintf(w, "Fit over %d points, %s to %s: rms error %.3g in Γ (%.3g for the design as declared); condition number %.3g\n",
		fit.Points, ff(fit.FitLoHz), ff(fit.FitHiHz), fit.RMSResidual, fit.NominalRMSResidual, fit.Condition)
	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "  \tnominal\tfitted\t± 1σ\t")
	for _, p := range fit.Params {
		sig := "± " + units.Format(p.Sigma, p.Unit, 2)
		switch {
		case p.Held:
			sig = "(held)"
		case math.IsInf(p.Sigma, 1):
			sig = "± ∞"
		}
		flag := ""
		if p.Undetermined {
			flag = " (not determined)"
		}
		fmt.Fprintf(tw, "  %s\t%s\t%s\t%s%s\t\n", p.Name, units.Format(p.Nominal, p.Unit, 4), units.Format(p.Value, p.Unit, 4), sig, flag)
	}
	tw.Flush()
	for _, m := range fit.Warnings {
		fmt.Fprintf(w, "(!) %s.\n", m)
	}
	fmt.Fprintln(w)
	fmt.Fprintln(w, "The board as fitted:")
	printTuneBands(w, sw.AsBuilt)
	fmt.Fprintln(w)
	carry := "new parts at their nominal values"
	if sw.Carry == match.CarryOffset {
		carry = "new parts keeping the old ones' offsets from nominal"
	}
	fmt.Fprintf(w, "Next swap (predicted on the board as fitted, %s; yield: share of builds of the new parts within their tolerances that meet every band):\n", carry)
	tw = tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "  #\tchange\tworst RL\tworst power to load\tmargin\tyield\t")
	for i, s := range out.Suggestions {
		var cs []string
		for _, c := range s.Changes {
			cs = append(cs, match.Change{Designator: c.Designator, Kind: match.Kind(c.Kind), From: c.From, To: c.To, Steps: c.Steps, Series: c.Series}.String())
		}
		mark := ""
		if out.Best != nil && *out.Best == i {
			mark = " ←"
		}
		y := "—"
		if !math.IsNaN(float64(s.Yield)) {
			y = units.FormatPercent(float64(s.Yield), 0)
		}
		fmt.Fprintf(tw, "  %d\t%s%s\t%s\t%s\t%s dB\t%s\t\n", i+1, strings.Join(cs, ", "), mark, units.FormatDB(float64(s.WorstRLdB)),
			units.FormatPercent(float64(s.WorstPowerToLoad), 1), signed(float64(s.MarginDB)), y)
	}
	tw.Flush()
	if out.Best == nil {
		fmt.Fprintln(w, "No part of the network can be swapped for a standard value.")
		return
	}
	b := out.Suggestions[*out.Best]
	next, _ := sw.Best()
	verdict := fmt.Sprintf("meet every band with %s dB to spare", signed(float64(b.MarginDB)))
	if !b.Meets {
		verdict = fmt.Sprintf("miss by %s dB: no swap of one or two parts within ±%d values meets every band; consider more parts or a new design", fmtDB(-float64(b.MarginDB)), steps)
	}
	fmt.Fprintf(w, "Try first: %s — predicted to %s, %s of the available power reaching the load at worst.\n",
		strings.Join(changeTexts(next.Changes), " and "), verdict, units.FormatShare(float64(b.WorstPowerToLoad)))
	fmt.Fprintf(w, "The next network, from the load: %s (suggestion %d's \"network\" in --json is its network file).\n", next.Network, *out.Best+1)
}

func changeTexts(cs []match.Change) []string {
	out := make([]string, len(cs))
	for i, c := range cs {
		out[i] = c.String()
	}
	return out
}

// printTuneBands prints each band's figures, as match.Evaluate gives them.
func printTuneBands(w io.Writer, m match.Metrics) {
	for _, b := range m.Bands {
		verdict := "meets"
		if b.MarginDB < 0 {
			verdict = "misses"
		}
		fmt.Fprintf(w, "  %s: worst RL %s (alone %s), worst power to the load %s (alone %s), margin %s dB: %s\n",
			b.Band, units.FormatDB(b.WorstRLdB), units.FormatDB(b.Unmatched.WorstRLdB), units.FormatPercent(b.WorstPowerToLoad, 1),
			units.FormatPercent(b.Unmatched.WorstPowerToLoad, 1), signed(b.MarginDB), verdict)
		for _, note := range b.LossNotes() {
			fmt.Fprintf(w, "  (!) %s.\n", note)
		}
	}
}
