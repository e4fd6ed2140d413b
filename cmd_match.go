package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"text/tabwriter"
	"time"

	"matchbench/rfmath/match"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/units"
)

// matchDesignJSON is one element of the array `matchbench match --json`
// prints. Keys are part of the command-line contract; add, never rename.
type matchDesignJSON struct {
	Parts     []partJSON      `json:"parts"` // from the load toward the source
	WorstRLdB jsonNum         `json:"worst_rl_db"`
	MarginDB  jsonNum         `json:"margin_db"`
	Meets     bool            `json:"meets"`
	Bands     []matchBandJSON `json:"bands"`
	Yield     *float64        `json:"yield,omitempty"`
	Limit     *limitJSON      `json:"bode_fano,omitempty"`
	Stress    []stressJSON    `json:"stress,omitempty"`
	Model     string          `json:"model"`
	Search    *searchInfoJSON `json:"search,omitempty"`
}

type matchBandJSON struct {
	LoHz      float64 `json:"lo_hz"`
	HiHz      float64 `json:"hi_hz"`
	Required  float64 `json:"required_rl_db"`
	WorstRLdB jsonNum `json:"worst_rl_db"`
	MeanRLdB  jsonNum `json:"mean_rl_db"`
}

type limitJSON struct {
	Fit           string  `json:"fit"`
	FitErrorGamma float64 `json:"fit_error_gamma"`
	BestRLdB      jsonNum `json:"best_rl_db"`
	MaxMarginDB   jsonNum `json:"max_margin_db"`
}

type stressJSON struct {
	Kind     string   `json:"kind"`
	Value    float64  `json:"value"`
	VPeak    float64  `json:"v_peak"`
	IRMS     float64  `json:"i_rms_a"`
	Warnings []string `json:"warnings,omitempty"`
}

type searchInfoJSON struct {
	Exact        bool    `json:"exact"`
	Window       int     `json:"window,omitempty"`
	Combinations float64 `json:"combinations"`
	Seconds      float64 `json:"seconds"`
}

func runMatch(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("match", "FILE --band LO:HI[:RL] [--band ...] [--rl DB] [--series E24] [--parts 3] [--ideal] [--size 0402] [--top 5] [--builds 1000] [--power 1W] [--radius 8mm] [--json]", stderr)
	var bandArgs listFlag
	fs.Var(&bandArgs, "band", "a band to match, `LO:HI[:RL]` (SI prefixes: 2.40G:2.4835G, or 863M:870M:12 with its own return loss); repeatable")
	rl := fs.Float64("rl", 10, "required return `loss` in dB for bands that do not give their own")
	series := fs.String("series", "E24", "E-`series` of the part values (E6, E12, E24, E48, E96), or one per kind: L=E12,C=E24")
	nParts := fs.Int("parts", 3, "largest `number` of parts in a ladder (1 to 4); smaller ladders are searched too")
	ideal := fs.Bool("ideal", false, "lossless parts without parasitics (to compare with hand calculations)")
	size := fs.String("size", "0402", "case `size` whose typical part models to use (0402, 0603; typical values from memory, not a vendor's data)")
	top := fs.Int("top", 5, "number of designs to print (the best of each ladder shape)")
	window := fs.Int("window", 0, "search only ±`N` standard values around each continuous optimum (0: the whole range when it is small enough; -1: always the whole range)")
	builds := fs.Int("builds", 1000, "Monte Carlo `builds` per design for the yield under typical tolerances (0: none)")
	var power, radius quantityFlag
	power.unit, radius.unit = "W", "m"
	fs.Var(&power, "power", "input `power` (0.5, 500mW, 2W): print each part's peak voltage and RMS current in the best design and warn above its rating")
	fs.Var(&radius, "radius", "`radius` of the sphere around the antenna (8mm, 0.8cm, 0.008): compare the sweep's Q with the Chu limit")
	asJSON := fs.Bool("json", false, "print a JSON array of designs")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usagef("want one sweep file, got %d arguments", len(pos))
	}
	if math.IsNaN(*rl) || math.IsInf(*rl, 0) {
		return usagef("--rl %g: not a number of dB", *rl)
	}
	if len(bandArgs) == 0 {
		return usagef("--band is required, e.g. --band 2.40G:2.4835G")
	}
	bands := make([]match.Band, len(bandArgs))
	for i, s := range bandArgs {
		b, err := parseBand(s, math.Abs(*rl))
		if err != nil {
			return usagef("--band %s: %v", s, err)
		}
		bands[i] = b
	}
	lSer, cSer, err := parseSeries(*series)
	if err != nil {
		return usagef("--series %s: %v", *series, err)
	}
	if *nParts < 1 || *nParts > 4 {
		return usagef("--parts %d: want 1 to 4", *nParts)
	}
	if *top < 1 {
		return usagef("--top %d: want at least 1", *top)
	}
	if *builds < 0 || power.v < 0 || radius.v < 0 {
		return usagef("--builds, --power and --radius must not be negative")
	}
	var model parts.Model
	modelName := "ideal"
	if !*ideal {
		fam, err := parts.LookupFamily(*size)
		if err != nil {
			return usagef("--size %s: %v", *size, err)
		}
		model, modelName = fam, "typical "+fam.Name
	}

	ls, err := loadSweep(pos[0])
	if err != nil {
		return err
	}
	load, err := match.LoadFromSweep(ls.Sweep, 0)
	if err != nil {
		return err
	}
	for _, b := range bands {
		if b.LoHz < load.FreqHz[0] || b.HiHz > load.FreqHz[len(load.FreqHz)-1] {
			return usagef("--band %s lies outside the sweep (%s to %s)", b,
				units.FormatFrequency(load.FreqHz[0], 6), units.FormatFrequency(load.FreqHz[len(load.FreqHz)-1], 6))
		}
	}

	set := &match.Settings{LSeries: lSer, CSeries: cSer, Model: model, MaxParts: *nParts, Top: *top, Window: *window}
	t0 := time.Now()
	res, err := match.Search(ctx, load, bands, set)
	if err != nil {
		return err
	}
	took := time.Since(t0)
	lim, fit, limErr := match.BodeFanoOf(load, bands)

	designs := make([]matchDesignJSON, len(res.Designs))
	for i, d := range res.Designs {
		j := matchDesignJSON{
			Parts:     partsJSON(d.Network),
			WorstRLdB: jsonNum(d.WorstRLdB),
			MarginDB:  jsonNum(d.MarginDB),
			Meets:     d.Meets(),
			Model:     modelName,
		}
		for _, b := range d.Bands {
			j.Bands = append(j.Bands, matchBandJSON{b.LoHz, b.HiHz, b.MinReturnLossDB, jsonNum(b.WorstRLdB), jsonNum(b.MeanRLdB)})
		}
		if *builds > 0 {
			y, err := match.Yield(ctx, load, bands, d.Network, &match.YieldSettings{Builds: *builds, Model: model})
			if err != nil {
				return err
			}
			j.Yield = &y.Yield
		}
		if limErr == nil {
			j.Limit = &limitJSON{fit.String(), fit.RMSGammaError, jsonNum(lim.BestRLdB), jsonNum(lim.MaxMarginDB)}
		}
		if i == 0 {
			j.Search = &searchInfoJSON{res.Exact, res.Window, res.Combinations, took.Seconds()}
			if power.v > 0 {
				rep, err := match.Stress(load, bands, d.Network, match.StressSettings{PowerW: power.v, Model: model})
				if err != nil {
					return err
				}
				for _, r := range rep {
					j.Stress = append(j.Stress, stressJSON{string(r.Part.Kind), r.Part.Value, r.WorstV.VPeak, r.WorstI.IRMS, r.Warnings})
				}
			}
		}
		designs[i] = j
	}
	var chu *match.Chu
	var chuErr error
	if radius.v > 0 {
		lo, hi := bands[0].LoHz, bands[0].HiHz
		for _, b := range bands {
			lo, hi = math.Min(lo, b.LoHz), math.Max(hi, b.HiHz)
		}
		c, err := match.ChuCompare(load, math.Sqrt(lo*hi), radius.v)
		chu, chuErr = &c, err
	}

	best := res.Designs[0]
	if *asJSON {
		enc := json.NewEncoder(stdout)
		enc.SetIndent("", "  ")
		if err := enc.Encode(designs); err != nil {
			return err
		}
		if !best.Meets() {
			fmt.Fprintln(stderr, unmetNote(best, lim, limErr))
		}
		return nil
	}
	printMatch(stdout, ls.Path, load, bands, res, designs, modelName, lSer, cSer, took)
	fmt.Fprintln(stdout)
	if limErr != nil {
		fmt.Fprintf(stdout, "Bode–Fano: no RC, RL or RLC model fits the load near the bands (%v).\n", limErr)
	} else {
		fmt.Fprintf(stdout, "Bode–Fano: near the bands the load looks like a %s (fit error %s in Γ).\n", fit, fmtNum(fit.RMSGammaError, 3))
		fmt.Fprintf(stdout, "  No lossless network of any order can hold more than %s dB across all the bands at once", fmtDB(lim.BestRLdB))
		fmt.Fprintf(stdout, " (largest common margin over the requirements: %s dB)", signed(lim.MaxMarginDB))
		if lim.BestRLdB >= 60 {
			fmt.Fprint(stdout, ";\n  so far above any requirement that the bands are narrow for this load's Q, and the limit does not bind")
		}
		fmt.Fprintln(stdout, ".")
	}
	if best.Meets() {
		fmt.Fprintf(stdout, "Result: %s meets every band with %s dB to spare.\n", best.Network, signed(best.MarginDB))
	} else {
		fmt.Fprintln(stdout, unmetNote(best, lim, limErr))
	}
	if chu != nil {
		fmt.Fprintln(stdout)
		if chuErr != nil {
			fmt.Fprintf(stdout, "Chu limit: cannot measure the sweep's Q (%v).\n", chuErr)
			if limErr == nil && fit.ResonanceHz() > 0 {
				f0 := fit.ResonanceHz()
				ka := match.KA(radius.v, f0)
				ratio := fit.Q() / match.ChuQ(ka)
				fmt.Fprintf(stdout, "  The fitted %s resonates at %s with Q = %s; a sphere of radius %s there has ka = %s, so Q ≥ %s (Chu; McLean 1996): %s × the limit%s.\n",
					fit.RLC, units.FormatFrequency(f0, 6), fmtSig(fit.Q(), 3), units.Format(radius.v, "m", 3), fmtNum(ka, 3), fmtSig(match.ChuQ(ka), 3), fmtNum(ratio, 2), belowChu(ratio))
			}
		} else {
			fmt.Fprintf(stdout, "Chu limit (McLean 1996): a sphere of radius %s at %s has ka = %s, so Q ≥ %s.\n",
				units.Format(radius.v, "m", 3), units.FormatFrequency(chu.Measured.FreqHz, 6), fmtNum(chu.KA, 3), fmtSig(chu.ChuQ, 3))
			fmt.Fprintf(stdout, "  The sweep's resonance there has Q = %s (%s × the limit%s).\n", fmtSig(chu.Measured.Q, 3), fmtNum(chu.Ratio, 2), belowChu(chu.Ratio))
		}
	}
	if power.v > 0 {
		printStress(stdout, designs[0], power.v)
	}
	return nil
}

// belowChu explains a Q below the Chu limit.
func belowChu(ratio float64) string {
	if ratio >= 1 {
		return ""
	}
	return ": below it, so loss widens the band, or more than the sphere radiates (a board's ground plane does)"
}

// unmetNote says that no design meets the requirement, with the Bode–Fano
// figure.
func unmetNote(best match.Design, lim match.Limit, limErr error) string {
	s := fmt.Sprintf("No network found meets every band: the best, %s, misses by %s dB.", best.Network, fmtDB(-best.MarginDB))
	switch {
	case limErr != nil:
		s += " (No Bode–Fano figure: the load fits no RC, RL or RLC model.)"
	case !lim.Feasible():
		s += fmt.Sprintf(" The requirements are beyond the Bode–Fano limit of the fitted load (%s dB across the bands; %s dB short): no lossless network of any order can meet them. Relax a band, or change the antenna.",
			fmtDB(lim.BestRLdB), fmtDB(-lim.MaxMarginDB))
	default:
		s += fmt.Sprintf(" The Bode–Fano limit of the fitted load (%s dB across the bands) allows it: more parts (--parts 4) or finer values (--series E96) may reach it.",
			fmtDB(lim.BestRLdB))
	}
	return s
}

func printMatch(w io.Writer, path string, load match.Load, bands []match.Band, res *match.Result, designs []matchDesignJSON, model, lSer, cSer string, took time.Duration) {
	ff := func(f float64) string { return units.FormatFrequency(f, 6) }
	fmt.Fprintf(w, "%s: S11, %d points, %s to %s, reference %s\n", path, len(load.FreqHz),
		ff(load.FreqHz[0]), ff(load.FreqHz[len(load.FreqHz)-1]), units.Format(load.Z0Ohm, "Ω", 4))
	var bs []string
	for _, b := range bands {
		bs = append(bs, b.String())
	}
	fmt.Fprintf(w, "Bands: %s\n", strings.Join(bs, "; "))
	note := ""
	if model != "ideal" {
		note = " (typical values from memory, not a vendor's data)"
	}
	fmt.Fprintf(w, "Parts: inductors %s from %s to %s, capacitors %s from %s to %s; %s models%s\n",
		lSer, units.Format(res.LRange[0], "H", 3), units.Format(res.LRange[1], "H", 3),
		cSer, units.Format(res.CRange[0], "F", 3), units.Format(res.CRange[1], "F", 3), model, note)
	mode := "exact over every combination of standard values in those ranges"
	if !res.Exact {
		mode = fmt.Sprintf("exact within ±%d values of each continuous optimum, not over the whole ranges", res.Window)
	}
	fmt.Fprintf(w, "Searched %d ladder shapes, %.3g networks, %s, in %s\n\n", res.Topologies, res.Combinations, mode, took.Round(time.Millisecond))

	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	fmt.Fprint(tw, "#\tparts, from the load toward the source\tworst RL\tmargin\t")
	for _, b := range bands {
		fmt.Fprintf(tw, "%s–%s worst/mean\t", ff(b.LoHz), ff(b.HiHz))
	}
	if designs[0].Yield != nil {
		fmt.Fprint(tw, "yield\t")
	}
	fmt.Fprintln(tw)
	for i, d := range res.Designs {
		var ps []string
		for _, p := range d.Network {
			ps = append(ps, fmt.Sprintf("%s %s", p.Kind, units.Format(p.Value, p.Kind.Unit(), 3)))
		}
		fmt.Fprintf(tw, "%d\t%s\t%s dB\t%s dB\t", i+1, strings.Join(ps, ", "), fmtDB(d.WorstRLdB), signed(d.MarginDB))
		for _, b := range d.Bands {
			fmt.Fprintf(tw, "%s / %s dB\t", fmtDB(b.WorstRLdB), fmtDB(b.MeanRLdB))
		}
		if y := designs[i].Yield; y != nil {
			fmt.Fprintf(tw, "%.1f %%\t", 100**y)
		}
		fmt.Fprintln(tw)
	}
	tw.Flush()
	if designs[0].Yield != nil {
		fmt.Fprintln(w, "(yield: share of random builds meeting every band, with typical tolerances ±2 % or ±0.1 nH, ±2 % or ±0.05 pF — from memory)")
	}
}

func printStress(w io.Writer, d matchDesignJSON, powerW float64) {
	fmt.Fprintf(w, "\nPart stress of design 1 at %s in, worst over the band points:\n", units.Format(powerW, "W", 3))
	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "  part\tpeak voltage\tRMS current\t")
	for _, s := range d.Stress {
		fmt.Fprintf(tw, "  %s %s\t%s\t%s\t\n", s.Kind, units.Format(s.Value, match.Kind(s.Kind).Unit(), 3),
			units.Format(s.VPeak, "V", 3), units.Format(s.IRMS, "A", 3))
	}
	tw.Flush()
	for _, s := range d.Stress {
		for _, m := range s.Warnings {
			fmt.Fprintf(w, "WARNING: %s\n", m)
		}
	}
	fmt.Fprintln(w, "CAUTION: high RF power can burn and can shock. These figures come from ideal circuit theory and typical")
	fmt.Fprintln(w, "ratings; they do not replace a rated design review, the part maker's derating, or local regulations.")
}

// parseBand reads "LO:HI" or "LO:HI:RL" with SI frequency prefixes; a band
// without its own requirement takes def.
func parseBand(s string, def float64) (match.Band, error) {
	f := strings.Split(s, ":")
	if len(f) < 2 || len(f) > 3 {
		return match.Band{}, fmt.Errorf("want LO:HI or LO:HI:RL, e.g. 2.40G:2.4835G")
	}
	lo, err := units.ParseFrequency(f[0])
	if err != nil {
		return match.Band{}, err
	}
	hi, err := units.ParseFrequency(f[1])
	if err != nil {
		return match.Band{}, err
	}
	if !(lo > 0) || !(hi > lo) {
		return match.Band{}, fmt.Errorf("the band must run upward from a positive frequency")
	}
	b := match.Band{LoHz: lo, HiHz: hi, MinReturnLossDB: def}
	if len(f) == 3 {
		rl, err := strconv.ParseFloat(strings.TrimSuffix(strings.TrimSpace(strings.ToLower(f[2])), "db"), 64)
		if err != nil || math.IsNaN(rl) || math.IsInf(rl, 0) {
			return match.Band{}, fmt.Errorf("return loss %q is not a number of dB", f[2])
		}
		b.MinReturnLossDB = math.Abs(rl)
	}
	return b, nil
}

// parseSeries reads "E24" (both kinds) or "L=E12,C=E24".
func parseSeries(s string) (lSer, cSer string, err error) {
	if !strings.Contains(s, "=") {
		ser, err := parts.Lookup(s)
		if err != nil {
			return "", "", err
		}
		return ser.Name(), ser.Name(), nil
	}
	lSer, cSer = "E24", "E24"
	for _, kv := range strings.Split(s, ",") {
		k, v, ok := strings.Cut(strings.TrimSpace(kv), "=")
		if !ok {
			return "", "", fmt.Errorf("want L=E12,C=E24")
		}
		ser, err := parts.Lookup(v)
		if err != nil {
			return "", "", err
		}
		switch strings.ToUpper(strings.TrimSpace(k)) {
		case "L":
			lSer = ser.Name()
		case "C":
			cSer = ser.Name()
		default:
			return "", "", fmt.Errorf("unknown part kind %q (L or C)", k)
		}
	}
	return lSer, cSer, nil
}
