package cli

import (
	"context"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"text/tabwriter"
	"time"

	"matchbench/rfmath/limits"
	"matchbench/rfmath/match"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/units"
)

// matchDesignJSON is one element of the array `matchbench match --json`
// prints. Keys are part of the command-line contract; add, never rename.
type matchDesignJSON struct {
	Parts            []partJSON      `json:"parts"` // from the load toward the source
	WorstRLdB        jsonNum         `json:"worst_rl_db"`
	WorstPowerToLoad jsonNum         `json:"worst_power_to_load"`
	MarginDB         jsonNum         `json:"margin_db"`
	Meets            bool            `json:"meets"`
	OverDissipating  bool            `json:"over_dissipating"`
	WorseThanNone    bool            `json:"worse_than_no_network"`
	Bands            []matchBandJSON `json:"bands"`
	Yield            *float64        `json:"yield,omitempty"`
	Limit            *limitJSON      `json:"bode_fano,omitempty"`
	Stress           []stressJSON    `json:"stress,omitempty"`
	Model            string          `json:"model"`
	Search           *searchInfoJSON `json:"search,omitempty"`
	// A search across several files: each member's figures, and the member
	// and band of least margin.
	Members     []memberJSON `json:"members,omitempty"`
	WorstMember string       `json:"worst_member,omitempty"`
	WorstBand   *int         `json:"worst_band,omitempty"`
	MeanPower   *jsonNum     `json:"weighted_mean_power_to_load,omitempty"`
}

type matchBandJSON struct {
	LoHz                float64  `json:"lo_hz"`
	HiHz                float64  `json:"hi_hz"`
	Required            float64  `json:"required_rl_db"`
	RequiredPower       float64  `json:"required_power_to_load,omitempty"`
	WorstRLdB           jsonNum  `json:"worst_rl_db"`
	MeanRLdB            jsonNum  `json:"mean_rl_db"`
	WorstPowerToLoad    jsonNum  `json:"worst_power_to_load"`
	MeanPowerToLoad     jsonNum  `json:"mean_power_to_load"`
	MismatchLossDB      jsonNum  `json:"mismatch_loss_db"`
	NetworkLossDB       jsonNum  `json:"network_loss_db"`
	WorstNetworkLossDB  jsonNum  `json:"worst_network_loss_db"`
	UnmatchedWorstRLdB  jsonNum  `json:"unmatched_worst_rl_db"`
	UnmatchedWorstPower jsonNum  `json:"unmatched_worst_power_to_load"`
	UnmatchedMeanPower  jsonNum  `json:"unmatched_mean_power_to_load"`
	MarginDB            jsonNum  `json:"margin_db"`
	Notes               []string `json:"notes,omitempty"`
}

// bandJSONOf writes one band's figures (match.Evaluate's) as JSON.
func bandJSONOf(b match.BandResult) matchBandJSON {
	return matchBandJSON{
		LoHz: b.LoHz, HiHz: b.HiHz, Required: b.MinReturnLossDB, RequiredPower: b.MinPowerToLoad,
		WorstRLdB: jsonNum(b.WorstRLdB), MeanRLdB: jsonNum(b.MeanRLdB),
		WorstPowerToLoad: jsonNum(b.WorstPowerToLoad), MeanPowerToLoad: jsonNum(b.MeanPowerToLoad),
		MismatchLossDB: jsonNum(b.MismatchLossDB), NetworkLossDB: jsonNum(b.NetworkLossDB), WorstNetworkLossDB: jsonNum(b.WorstNetworkLossDB),
		UnmatchedWorstRLdB: jsonNum(b.Unmatched.WorstRLdB), UnmatchedWorstPower: jsonNum(b.Unmatched.WorstPowerToLoad),
		UnmatchedMeanPower: jsonNum(b.Unmatched.MeanPowerToLoad), MarginDB: jsonNum(b.MarginDB), Notes: b.LossNotes(),
	}
}

type memberJSON struct {
	File             string          `json:"file"`
	Advisory         bool            `json:"advisory,omitempty"`
	Weight           float64         `json:"weight"`
	WorstRLdB        jsonNum         `json:"worst_rl_db"`
	WorstPowerToLoad jsonNum         `json:"worst_power_to_load"`
	MarginDB         jsonNum         `json:"margin_db"`
	Meets            bool            `json:"meets"`
	Bands            []matchBandJSON `json:"bands"`
}

type limitJSON struct {
	Fit           string  `json:"fit"`
	FitErrorGamma float64 `json:"fit_error_gamma"`
	BestRLdB      jsonNum `json:"best_rl_db"`
	MaxMarginDB   jsonNum `json:"max_margin_db"`
}

type stressJSON struct {
	Kind         string   `json:"kind"`
	Value        float64  `json:"value"`
	VPeak        float64  `json:"v_peak"`
	IRMS         float64  `json:"i_rms_a"`
	DissipationW float64  `json:"dissipation_w"`
	Warnings     []string `json:"warnings,omitempty"`
}

type searchInfoJSON struct {
	Objective    string  `json:"objective"`
	Exact        bool    `json:"exact"`
	Window       int     `json:"window,omitempty"`
	Combinations float64 `json:"combinations"`
	Seconds      float64 `json:"seconds"`
}

func runMatch(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("match", "FILE [FILE ...] | --set DIR --band LO:HI[:RL] [--band ...] [--rl DB] [--min-power 80%] [--series E24] [--parts 3] [--ideal | --size 0402 | --q L=30,C=300] [--objective power|rl] [--lot] [--top 5] [--builds 1000] [--power 1W] [--radius 8mm] [--json]", stderr)
	var bandArgs listFlag
	fs.Var(&bandArgs, "band", "a band to match, `LO:HI[:RL]` (SI prefixes: 2.40G:2.4835G, or 863M:870M:12 with its own return loss); repeatable")
	rl := fs.Float64("rl", 10, "required return `loss` in dB for bands that do not give their own")
	series := fs.String("series", "E24", "E-`series` of the part values (E6, E12, E24, E48, E96, E192), or one per kind: L=E12,C=E24")
	nParts := fs.Int("parts", 3, "largest `number` of parts in a ladder (1 to 4); smaller ladders are searched too")
	ideal := fs.Bool("ideal", false, "lossless parts without parasitics (to compare with hand calculations)")
	size := fs.String("size", "0402", "case `size` whose typical part models to use (0402, 0603; typical values from memory, not a vendor's data)")
	qFlag := fs.String("q", "", "what-if parts of a constant unloaded `Q`: L=30,C=300 (or one Q for both); each part is its ideal reactance X in series with |X|/Q, no self-resonance")
	objective := fs.String("objective", "power", "what the designs are ranked by: `power` (meet every requirement, then the most power to the load) or rl (return loss margin only)")
	minPower := fs.String("min-power", "", "least share of the available power that must reach the load in every band: a `percentage` (80%) or a loss (1dB)")
	top := fs.Int("top", 5, "number of designs to print (the best of each ladder shape)")
	window := fs.Int("window", 0, "search only ±`N` standard values around each continuous optimum (0: the whole range when it is small enough; -1: always the whole range)")
	builds := fs.Int("builds", 1000, "Monte Carlo `builds` per design for the yield under typical tolerances (0: none)")
	var power, radius quantityFlag
	power.unit, radius.unit = "W", "m"
	fs.Var(&power, "power", "input `power` (0.5, 500mW, 2W): print each part's peak voltage and RMS current in the best design and warn above its rating")
	fs.Var(&radius, "radius", "`radius` of the sphere around the antenna (8mm, 0.8cm, 0.008): compare the sweep's Q with the Chu limit")
	asJSON := fs.Bool("json", false, "print a JSON array of designs")
	setDir := fs.String("set", "", "match every sweep file in this `folder` at once (a set of conditions or a lot), as if each were given")
	lot := fs.Bool("lot", false, "the files are boards of a lot: the yield judges each build on one board drawn at random (by weight), not on every file")
	var advisory, weights listFlag
	fs.Var(&advisory, "advisory", "a `FILE` of the set that is judged and shown but does not bind the design (repeatable)")
	fs.Var(&weights, "weight", "`FILE=W`: the weight of one file of the set in a lot's draws and the weighted mean (default 1; repeatable)")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	if *setDir != "" {
		more, err := setFiles(*setDir)
		if err != nil {
			return err
		}
		pos = append(pos, more...)
	}
	if len(pos) == 0 {
		return usagef("want a sweep file (or several, or --set DIR)")
	}
	if math.IsNaN(*rl) || math.IsInf(*rl, 0) {
		return usagef("--rl %g: not a number of dB", *rl)
	}
	if len(bandArgs) == 0 {
		return usagef("--band is required, e.g. --band 2.40G:2.4835G")
	}
	bands, err := parseBands(bandArgs, *rl, *minPower)
	if err != nil {
		return err
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
	obj, err := match.ParseObjective(*objective)
	if err != nil {
		return usagef("--objective %s: want power or rl", *objective)
	}
	model, modelName, err := matchModel(*qFlag, *ideal, *size)
	if err != nil {
		return err
	}

	members, err := loadMembers(pos, advisory, weights, bands)
	if err != nil {
		return err
	}
	load := members[0].Load
	kind := match.Conditions
	if *lot {
		kind = match.Lot
	}

	set := &match.Settings{LSeries: lSer, CSeries: cSer, Model: model, MaxParts: *nParts, Top: *top, Window: *window, Objective: obj}
	t0 := time.Now()
	res, err := match.SearchSet(ctx, members, bands, set)
	if err != nil {
		return err
	}
	took := time.Since(t0)
	lim, fit, limErr := match.BodeFanoOfSet(members, bands)

	designs, err := matchDesignJSONs(ctx, matchRun{members: members, kind: kind, bands: bands, res: res, took: took,
		lim: lim, fit: fit, limErr: limErr, modelName: modelName, builds: *builds, powerW: power.v})
	if err != nil {
		return err
	}
	var chu *match.Chu
	var chuErr error
	if radius.v > 0 {
		var f *match.Fit
		if limErr == nil {
			f = &fit
		}
		c, err := match.ChuForBands(load, bands, 0, radius.v, f)
		chu, chuErr = &c, err
	}

	best := res.Designs[0]
	if *asJSON {
		if err := writeJSON(stdout, designs); err != nil {
			return err
		}
		if !best.Meets() {
			fmt.Fprintln(stderr, unmetNote(best, lim, limErr))
		}
		return nil
	}
	printMatch(stdout, members, bands, res, designs, modelName, lSer, cSer, took)
	fmt.Fprintln(stdout)
	printMatchLimits(stdout, best, lim, fit, limErr)
	if chu != nil {
		printChu(stdout, *chu, chuErr, fit, radius.v)
	}
	if power.v > 0 {
		printStress(stdout, designs[0], power.v)
	}
	return nil
}

// printMatchLimits prints the Bode–Fano limit of the load near the bands
// (or why no model fits) and the result: the best design's margin and worst
// power to the load, or how far it misses.
func printMatchLimits(stdout io.Writer, best match.Design, lim match.Limit, fit match.Fit, limErr error) {
	if limErr != nil {
		fmt.Fprintf(stdout, "Bode–Fano: no RC, RL or RLC model fits the load near the bands (%v).\n", limErr)
	} else {
		fmt.Fprintf(stdout, "Bode–Fano: near the bands the load looks like a %s (fit error %s in Γ).\n", fit, fmtNum(fit.RMSGammaError, 3))
		if !fit.Trusted() {
			fmt.Fprintf(stdout, "  The fit misses the load by more than %s in Γ: too poor to trust the limit below.\n", fmtSig(match.FitTrustRMSGamma, 2))
		}
		fmt.Fprintf(stdout, "  No lossless network of any order can hold more than %s dB across all the bands at once", fmtDB(lim.BestRLdB))
		fmt.Fprintf(stdout, " (largest common margin over the requirements: %s dB)", signed(lim.MaxMarginDB))
		if lim.BestRLdB >= 60 {
			fmt.Fprint(stdout, ";\n  so far above any requirement that the bands are narrow for this load's Q, and the limit does not bind")
		}
		fmt.Fprintln(stdout, ".")
	}
	if best.Meets() {
		fmt.Fprintf(stdout, "Result: %s meets every band with %s dB to spare; at worst %s of the available power reaches the load.\n",
			best.Network, signed(best.MarginDB), units.FormatShare(best.WorstPowerToLoad))
	} else {
		fmt.Fprintln(stdout, unmetNote(best, lim, limErr))
	}
}

// printChu prints the Chu comparison: the sweep's Q against the limit of a
// sphere of radius radiusM, or the fitted RLC's when the sweep's own Q
// cannot be measured, or why there is none.
func printChu(stdout io.Writer, c match.Chu, chuErr error, fit match.Fit, radiusM float64) {
	fmt.Fprintln(stdout)
	switch {
	case chuErr != nil:
		fmt.Fprintf(stdout, "Chu limit: cannot measure the sweep's Q (%v).\n", chuErr)
	case c.FromFit:
		fmt.Fprintf(stdout, "Chu limit: cannot measure the sweep's Q (%v).\n", c.Why)
		fmt.Fprintf(stdout, "  The fitted %s resonates at %s with Q = %s; a sphere of radius %s there has ka = %s, so Q ≥ %s (Chu; McLean 1996): %s × the limit%s.\n",
			fit.RLC, units.FormatFrequency(c.Measured.FreqHz, 6), fmtSig(c.Measured.Q, 3), units.Format(radiusM, "m", 3), fmtNum(c.KA, 3), fmtSig(c.ChuQ, 3), fmtNum(c.Ratio, 2), belowChu(c.Ratio))
	default:
		fmt.Fprintf(stdout, "Chu limit (McLean 1996): a sphere of radius %s at %s has ka = %s, so Q ≥ %s.\n",
			units.Format(radiusM, "m", 3), units.FormatFrequency(c.Measured.FreqHz, 6), fmtNum(c.KA, 3), fmtSig(c.ChuQ, 3))
		how := ""
		if c.SlopeQ {
			how = ", from the impedance's slope as a half-power edge lies beyond the sweep"
		}
		fmt.Fprintf(stdout, "  The sweep's resonance there has Q = %s%s (%s × the limit%s).\n", fmtSig(c.Measured.Q, 3), how, fmtNum(c.Ratio, 2), belowChu(c.Ratio))
	}
}

// matchModel is the part model the flags ask for: constant Q (--q), the
// typical parts of a case size (--size), or ideal parts (--ideal), with
// its name for the output.
func matchModel(qFlag string, ideal bool, size string) (parts.Model, string, error) {
	var model parts.Model
	modelName := "ideal"
	switch {
	case qFlag != "":
		if ideal {
			return nil, "", usagef("--q and --ideal: choose one part model")
		}
		cq, err := parts.ParseConstantQ(qFlag)
		if err != nil {
			return nil, "", usagef("--q %s: %v", qFlag, err)
		}
		model, modelName = cq, cq.String()
	case !ideal:
		fam, err := parts.LookupFamily(size)
		if err != nil {
			return nil, "", usagef("--size %s: %v", size, err)
		}
		model, modelName = fam, "typical "+fam.Name
	}
	return model, modelName, nil
}

// setDesignJSON adds design d's figures on each member of the set to j,
// and which member and band are worst.
func setDesignJSON(j *matchDesignJSON, d match.Design, members []match.Member) {
	for mi, mm := range d.Members {
		mj := memberJSON{File: members[mi].Name, Advisory: members[mi].Advisory, Weight: members[mi].Weight,
			WorstRLdB: jsonNum(mm.WorstRLdB), WorstPowerToLoad: jsonNum(mm.WorstPowerToLoad), MarginDB: jsonNum(mm.MarginDB), Meets: mm.Meets()}
		if mj.Weight == 0 {
			mj.Weight = 1
		}
		for _, b := range mm.Bands {
			mj.Bands = append(mj.Bands, bandJSONOf(b))
		}
		j.Members = append(j.Members, mj)
	}
	if d.WorstMember >= 0 {
		wb := d.WorstBand
		mp := jsonNum(d.MeanPowerToLoad)
		j.WorstMember, j.WorstBand, j.MeanPower = members[d.WorstMember].Name, &wb, &mp
	}
}

// parseBands reads the --band flags (each LO:HI, or LO:HI:RL with its own
// return loss, else rl) and gives every band the --min-power requirement;
// match and tune read their bands with it.
func parseBands(bandArgs []string, rl float64, minPower string) ([]match.Band, error) {
	bands := make([]match.Band, len(bandArgs))
	for i, s := range bandArgs {
		b, err := parseBand(s, math.Abs(rl))
		if err != nil {
			return nil, usagef("--band %s: %v", s, err)
		}
		bands[i] = b
	}
	if minPower != "" {
		share, err := limits.ParseShare(minPower)
		if err != nil {
			return nil, usagef("--min-power %s: %v", minPower, err)
		}
		for i := range bands {
			bands[i].MinPowerToLoad = share
		}
	}
	return bands, nil
}

// matchRun is what one search found, for the designs' JSON.
type matchRun struct {
	members   []match.Member
	kind      match.SetKind
	bands     []match.Band
	res       *match.Result
	took      time.Duration
	lim       match.Limit
	fit       match.Fit
	limErr    error
	modelName string
	builds    int
	powerW    float64
}

// matchDesignJSONs is the designs as --json prints them (and the text
// reads them): parts, figures per band and per member, the yield of
// r.builds builds, the Bode–Fano limit, and for the best the search and
// the parts' stress at r.powerW.
func matchDesignJSONs(ctx context.Context, r matchRun) ([]matchDesignJSON, error) {
	designs := make([]matchDesignJSON, len(r.res.Designs))
	for i, d := range r.res.Designs {
		j := matchDesignJSON{
			Parts:            partsJSON(d.Network),
			WorstRLdB:        jsonNum(d.WorstRLdB),
			WorstPowerToLoad: jsonNum(d.WorstPowerToLoad),
			MarginDB:         jsonNum(d.MarginDB),
			Meets:            d.Meets(),
			OverDissipating:  d.OverDissipating(),
			WorseThanNone:    d.WorseThanNone(),
			Model:            r.modelName,
		}
		for _, b := range d.Bands {
			j.Bands = append(j.Bands, bandJSONOf(b))
		}
		if len(r.members) > 1 {
			setDesignJSON(&j, d, r.members)
		}
		if r.builds > 0 {
			y, err := match.YieldSet(ctx, r.members, r.kind, r.bands, d.Network, &match.YieldSettings{Builds: r.builds})
			if err != nil {
				return nil, err
			}
			j.Yield = &y.Yield
		}
		if r.limErr == nil {
			j.Limit = &limitJSON{r.fit.String(), r.fit.RMSGammaError, jsonNum(r.lim.BestRLdB), jsonNum(r.lim.MaxMarginDB)}
		}
		if i == 0 {
			j.Search = &searchInfoJSON{r.res.Objective.String(), r.res.Exact, r.res.Window, r.res.Combinations, r.took.Seconds()}
			if r.powerW > 0 {
				rep, err := match.Stress(r.members[0].Load, r.bands, d.Network, match.StressSettings{PowerW: r.powerW})
				if err != nil {
					return nil, err
				}
				for _, r := range rep {
					j.Stress = append(j.Stress, stressJSON{string(r.Part.Kind), r.Part.Value, r.WorstV.VPeak, r.WorstI.IRMS, r.WorstP.DissipationW, r.Warnings})
				}
			}
		}
		designs[i] = j
	}
	return designs, nil
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

func printMatch(w io.Writer, members []match.Member, bands []match.Band, res *match.Result, designs []matchDesignJSON, model, lSer, cSer string, took time.Duration) {
	ff := func(f float64) string { return units.FormatFrequency(f, 6) }
	for _, m := range members {
		load := m.Load
		role := ""
		if m.Advisory {
			role = " (advisory: judged, does not bind)"
		}
		fmt.Fprintf(w, "%s: S11, %d points, %s to %s, reference %s%s\n", m.Name, len(load.FreqHz),
			ff(load.FreqHz[0]), ff(load.FreqHz[len(load.FreqHz)-1]), units.Format(load.Z0Ohm, "Ω", 4), role)
	}
	if len(members) > 1 {
		fmt.Fprintf(w, "A set of %d loads: every figure below is the worst over the binding loads, each judged on its own points\n", len(members))
	}
	var bs []string
	for _, b := range bands {
		bs = append(bs, b.String())
	}
	fmt.Fprintf(w, "Bands: %s\n", strings.Join(bs, "; "))
	note := ""
	if strings.HasPrefix(model, "typical") {
		note = " (typical values from memory, not a vendor's data)"
	}
	fmt.Fprintf(w, "Parts: inductors %s from %s to %s, capacitors %s from %s to %s; %s models%s\n",
		lSer, units.Format(res.LRange[0], "H", 3), units.Format(res.LRange[1], "H", 3),
		cSer, units.Format(res.CRange[0], "F", 3), units.Format(res.CRange[1], "F", 3), model, note)
	goal := "meet every requirement, then the most power to the load at the worst band point"
	if res.Objective == match.ReturnLoss {
		goal = "the largest return-loss margin over the requirements"
	}
	mode := "exact over every combination of standard values in those ranges"
	if !res.Exact {
		mode = fmt.Sprintf("best found: searched within ±%d values of each continuous optimum, not proven over the whole ranges", res.Window)
	}
	fmt.Fprintf(w, "Best by: %s\n", goal)
	fmt.Fprintf(w, "Searched %d ladder shapes, %.3g networks, %s, in %s\n", res.Topologies, res.Combinations, mode, took.Round(time.Millisecond))
	if len(res.Designs) > 0 && len(members) == 1 {
		fmt.Fprint(w, "No network:")
		for _, b := range res.Designs[0].Bands {
			fmt.Fprintf(w, "  %s–%s worst RL %s, worst power to the load %s;", ff(b.LoHz), ff(b.HiHz), units.FormatDB(b.Unmatched.WorstRLdB), units.FormatShare(b.Unmatched.WorstPowerToLoad))
		}
		fmt.Fprintln(w)
	}
	fmt.Fprintln(w)

	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	fmt.Fprint(tw, "#\tparts, from the load toward the source\tworst RL\tworst power to load\tmargin\t")
	for _, b := range bands {
		fmt.Fprintf(tw, "%s–%s RL worst/mean, power worst/mean\t", ff(b.LoHz), ff(b.HiHz))
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
		flag := ""
		if d.OverDissipating() || d.WorseThanNone() {
			flag = " (!)"
		}
		fmt.Fprintf(tw, "%d\t%s%s\t%s\t%s\t%s dB\t", i+1, strings.Join(ps, ", "), flag, units.FormatDB(d.WorstRLdB), units.FormatPercent(d.WorstPowerToLoad, 1), signed(d.MarginDB))
		for _, b := range d.Bands {
			fmt.Fprintf(tw, "%s / %s, %s / %s\t", units.FormatDB(b.WorstRLdB), units.FormatDB(b.MeanRLdB), units.FormatPercent(b.WorstPowerToLoad, 1), units.FormatPercent(b.MeanPowerToLoad, 1))
		}
		if y := designs[i].Yield; y != nil {
			fmt.Fprintf(tw, "%s\t", units.FormatPercent(*y, 1))
		}
		fmt.Fprintln(tw)
	}
	tw.Flush()
	fmt.Fprintln(w, "(power: the share of the power the source makes available that reaches the load through the parts as modelled, with their losses)")
	for i, d := range res.Designs {
		for _, b := range d.Bands {
			for _, n := range b.LossNotes() {
				fmt.Fprintf(w, "(!) design %d, %s–%s: %s.\n", i+1, ff(b.LoHz), ff(b.HiHz), n)
			}
		}
	}
	if designs[0].Yield != nil {
		fmt.Fprintln(w, "(yield: share of random builds meeting every requirement, with typical tolerances ±2 % or ±0.1 nH, ±2 % or ±0.05 pF — from memory)")
	}
	if len(members) > 1 && len(res.Designs) > 0 {
		printMembers(w, members, bands, res.Designs[0])
	}
}

// printMembers shows design 1 on every member of a set.
func printMembers(w io.Writer, members []match.Member, bands []match.Band, d match.Design) {
	ff := func(f float64) string { return units.FormatFrequency(f, 6) }
	fmt.Fprintf(w, "\nDesign 1 on each load (the least margin is on %s, %s–%s):\n", members[d.WorstMember].Name, ff(bands[d.WorstBand].LoHz), ff(bands[d.WorstBand].HiHz))
	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	fmt.Fprint(tw, "  load\tmargin\t")
	for _, b := range bands {
		fmt.Fprintf(tw, "%s–%s RL worst, power worst (alone)\t", ff(b.LoHz), ff(b.HiHz))
	}
	fmt.Fprintln(tw)
	for i, m := range d.Members {
		name := members[i].Name
		if members[i].Advisory {
			name += " (advisory)"
		}
		verdict := "meets"
		if !m.Meets() {
			verdict = "misses"
		}
		fmt.Fprintf(tw, "  %s\t%s dB %s\t", name, signed(m.MarginDB), verdict)
		for _, b := range m.Bands {
			fmt.Fprintf(tw, "%s, %s (%s)\t", units.FormatDB(b.WorstRLdB), units.FormatPercent(b.WorstPowerToLoad, 1), units.FormatPercent(b.Unmatched.WorstPowerToLoad, 1))
		}
		fmt.Fprintln(tw)
	}
	tw.Flush()
}

// setFiles lists the sweep files of a folder, sorted.
func setFiles(dir string) ([]string, error) {
	entries, err := os.ReadDir(dir)
	if err != nil {
		return nil, usagef("--set %s: %v", dir, err)
	}
	var out []string
	for _, e := range entries {
		if e.IsDir() {
			continue
		}
		switch ext := strings.ToLower(filepath.Ext(e.Name())); {
		case ext == ".csv", ext == ".ts", len(ext) >= 4 && ext[:2] == ".s" && ext[len(ext)-1] == 'p':
			out = append(out, filepath.Join(dir, e.Name()))
		}
	}
	if len(out) == 0 {
		return nil, usagef("--set %s: no sweep files (.sNp, .ts or .csv) in the folder", dir)
	}
	return out, nil
}

// loadMembers reads the files as the members of a set (one file is a set
// of one), with their advisory marks and weights, and checks that each
// covers every band.
func loadMembers(paths, advisory, weights []string, bands []match.Band) ([]match.Member, error) {
	w := map[string]float64{}
	for _, s := range weights {
		f, v, ok := strings.Cut(s, "=")
		x, err := strconv.ParseFloat(strings.TrimSpace(v), 64)
		if !ok || err != nil || !(x > 0) || math.IsInf(x, 0) {
			return nil, usagef("--weight %q: want FILE=W with a positive weight", s)
		}
		w[f] = x
	}
	adv := map[string]bool{}
	for _, a := range advisory {
		adv[a] = true
	}
	var ms []match.Member
	for _, p := range paths {
		ls, err := loadSweep(p)
		if err != nil {
			return nil, err
		}
		load, err := match.LoadFromSweep(ls.Sweep, 0)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", p, err)
		}
		for _, b := range bands {
			if b.LoHz < load.FreqHz[0] || b.HiHz > load.FreqHz[len(load.FreqHz)-1] {
				return nil, usagef("--band %s lies outside the sweep of %s (%s to %s)", b, p,
					units.FormatFrequency(load.FreqHz[0], 6), units.FormatFrequency(load.FreqHz[len(load.FreqHz)-1], 6))
			}
		}
		ms = append(ms, match.Member{Name: p, Load: load, Weight: w[p], Advisory: adv[p]})
		delete(w, p)
		delete(adv, p)
	}
	for f := range w {
		return nil, usagef("--weight %s: not one of the files", f)
	}
	for f := range adv {
		return nil, usagef("--advisory %s: not one of the files", f)
	}
	return ms, nil
}

func printStress(w io.Writer, d matchDesignJSON, powerW float64) {
	fmt.Fprintf(w, "\nPart stress of design 1 at %s in, worst over the band points:\n", units.Format(powerW, "W", 3))
	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "  part\tpeak voltage\tRMS current\theat\t")
	for _, s := range d.Stress {
		fmt.Fprintf(tw, "  %s %s\t%s\t%s\t%s\t\n", s.Kind, units.Format(s.Value, match.Kind(s.Kind).Unit(), 3),
			units.Format(s.VPeak, "V", 3), units.Format(s.IRMS, "A", 3), units.Format(s.DissipationW, "W", 3))
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
