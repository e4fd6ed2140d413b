package cli

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"math/cmplx"
	"strings"
	"text/tabwriter"

	"matchbench/rfmath"
	"matchbench/rfmath/units"
)

// inspectReport is what `matchbench inspect --json` prints. Keys are part of
// the command-line contract; add, never rename.
type inspectReport struct {
	File            string        `json:"file"`
	Points          int           `json:"points"`
	Ports           int           `json:"ports"`
	FminHz          float64       `json:"fmin_hz"`
	FmaxHz          float64       `json:"fmax_hz"`
	Z0Ohm           float64       `json:"z0_ohm"`
	FileZ0Ohm       []float64     `json:"file_z0_ohm"`
	ThresholdDB     float64       `json:"rl_threshold_db"`
	HysteresisDB    float64       `json:"hysteresis_db"`
	Deepest         []dipJSON     `json:"deepest"`
	Dips            []dipJSON     `json:"dips"`
	ZeroCrossingsHz []float64     `json:"zero_crossings_hz"`
	ZeroCrossings   []crossJSON   `json:"zero_crossings"`
	Readouts        []readoutJSON `json:"readouts"`
}

type dipJSON struct {
	Port         int     `json:"port"`
	FreqHz       float64 `json:"freq_hz"`
	ReturnLossDB jsonNum `json:"return_loss_db"`
	LoHz         float64 `json:"lo_hz"`
	HiHz         float64 `json:"hi_hz"`
	LoOpen       bool    `json:"lo_open,omitempty"`
	HiOpen       bool    `json:"hi_open,omitempty"`
	// Merged says that the band joins stretches at or above the threshold
	// across ridges that dip below it by less than the hysteresis; the
	// lowest of them is at RidgeHz with RidgeReturnLossDB.
	Merged            bool     `json:"merged_by_hysteresis"`
	RidgeHz           *float64 `json:"ridge_hz,omitempty"`
	RidgeReturnLossDB *jsonNum `json:"ridge_return_loss_db,omitempty"`
}

type crossJSON struct {
	Port   int     `json:"port"`
	FreqHz float64 `json:"freq_hz"`
	Kind   string  `json:"kind"` // "series" (X rises through zero) or "parallel"
}

type readoutJSON struct {
	Port           int      `json:"port"`
	FreqHz         float64  `json:"freq_hz"`
	ROhm           jsonNum  `json:"r_ohm"` // null at an open (Γ = 1)
	XOhm           jsonNum  `json:"x_ohm"`
	GammaMag       float64  `json:"gamma_mag"`
	GammaDeg       float64  `json:"gamma_deg"`
	ReturnLossDB   jsonNum  `json:"return_loss_db"`
	VSWR           jsonNum  `json:"vswr"`
	MismatchLossDB jsonNum  `json:"mismatch_loss_db"`
	Q              jsonNum  `json:"q"`
	EquivKind      string   `json:"equiv_kind"`  // "L", "C" or "none"
	EquivValue     jsonNum  `json:"equiv_value"` // H or F; 0 for none, null at an open
	Warnings       []string `json:"warnings,omitempty"`
}

// jsonNum is a float64 that encodes ±Inf and NaN as null, since JSON has no
// such numbers (a perfect match has infinite return loss), and −0 as 0.
type jsonNum float64

func (n jsonNum) MarshalJSON() ([]byte, error) {
	f := float64(n)
	if math.IsInf(f, 0) || math.IsNaN(f) {
		return []byte("null"), nil
	}
	if f == 0 {
		f = 0 // not −0
	}
	return json.Marshal(f)
}

func runInspect(_ context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("inspect", "FILE [--z0 OHMS] [--at FREQ ...] [--rl DB] [--hysteresis DB] [--json]", stderr)
	z0 := fs.Float64("z0", 0, "show the sweep in this reference `impedance` in ohms (default: the file's); values between points are interpolated in the file's reference first")
	var at listFlag
	fs.Var(&at, "at", "read out R, X, |Γ|, return loss, VSWR, Q and equivalent L/C at this `frequency` (repeatable; SI prefixes: 2.45GHz, 915e6)")
	rl := fs.Float64("rl", 10, "return-loss `threshold` in dB that marks a usable band")
	hyst := fs.Float64("hysteresis", rfmath.DipHysteresisDB, "join bands across a ridge whose return loss stays within this many `dB` below the threshold (0: split at every crossing)")
	asJSON := fs.Bool("json", false, "print one JSON object")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usagef("want one sweep file, got %d arguments", len(pos))
	}
	if *z0 < 0 || math.IsNaN(*z0) || math.IsInf(*z0, 0) {
		return usagef("--z0 %g: the reference impedance must be positive", *z0)
	}
	if math.IsNaN(*rl) || math.IsInf(*rl, 0) {
		return usagef("--rl %g: not a number of dB", *rl)
	}
	threshold := math.Abs(*rl) // "-10 dB" is a common way to write 10 dB of return loss
	if !(*hyst >= 0) || math.IsInf(*hyst, 0) || (*hyst >= threshold && *hyst > 0) {
		return usagef("--hysteresis %g: want 0 or more dB, less than the --rl threshold (%g dB)", *hyst, threshold)
	}
	freqs := make([]float64, len(at))
	for i, s := range at {
		f, err := units.ParseFrequency(s)
		if err != nil {
			return usagef("--at: %v", err)
		}
		freqs[i] = f
	}

	ls, err := loadSweep(pos[0])
	if err != nil {
		return err
	}
	rep, err := inspect(ls, *z0, threshold, *hyst, freqs)
	if err != nil {
		return err
	}
	if *asJSON {
		return writeJSON(stdout, rep)
	}
	printInspect(stdout, rep)
	return nil
}

// inspect computes the report. freqs outside the sweep are a usage error.
// Every figure of a reflection comes from one rfmath.Reflection, so the
// bands, crossings and readouts agree at every frequency.
func inspect(ls *loadedSweep, z0, threshold, hysteresis float64, freqs []float64) (*inspectReport, error) {
	s := ls.Sweep
	rep := &inspectReport{
		File:         ls.Path,
		Points:       s.Len(),
		Ports:        s.Ports,
		FminHz:       s.FreqHz[0],
		FmaxHz:       s.FreqHz[s.Len()-1],
		FileZ0Ohm:    append([]float64(nil), s.Z0...),
		ThresholdDB:  threshold,
		HysteresisDB: hysteresis,
	}
	var to []float64
	if z0 > 0 {
		to = make([]float64, s.Ports)
		for i := range to {
			to[i] = z0
		}
	}
	rep.Deepest, rep.Dips, rep.ZeroCrossings = []dipJSON{}, []dipJSON{}, []crossJSON{}
	rep.ZeroCrossingsHz, rep.Readouts = []float64{}, []readoutJSON{}

	reflPorts := 1
	if s.Ports >= 2 {
		reflPorts = 2
	}
	refl := make([]*rfmath.Reflection, reflPorts)
	for p := range reflPorts {
		r, err := rfmath.NewReflection(s, p, to)
		if err != nil {
			return nil, fmt.Errorf("%s: showing S%d%d in %g Ω: %w", ls.Path, p+1, p+1, z0, err)
		}
		refl[p] = r
		rep.Deepest = append(rep.Deepest, dipOf(p+1, r.DeepestDip()))
		for _, d := range r.Dips(threshold, hysteresis) {
			rep.Dips = append(rep.Dips, dipOf(p+1, d))
		}
		for _, c := range r.ZeroCrossings() {
			kind := "parallel"
			if c.Rising {
				kind = "series"
			}
			rep.ZeroCrossings = append(rep.ZeroCrossings, crossJSON{Port: p + 1, FreqHz: c.FreqHz, Kind: kind})
			if p == 0 {
				rep.ZeroCrossingsHz = append(rep.ZeroCrossingsHz, c.FreqHz)
			}
		}
	}
	rep.Z0Ohm = refl[0].Z0Ohm()
	for _, f := range freqs {
		for p, r := range refl {
			ro, err := r.Readout(f)
			if err != nil {
				return nil, usagef("--at %s is outside the sweep (%s to %s)",
					units.FormatFrequency(f, 6), units.FormatFrequency(rep.FminHz, 6), units.FormatFrequency(rep.FmaxHz, 6))
			}
			rep.Readouts = append(rep.Readouts, readoutOf(p+1, ro))
		}
	}
	return rep, nil
}

func dipOf(port int, d rfmath.Dip) dipJSON {
	j := dipJSON{Port: port, FreqHz: d.FreqHz, ReturnLossDB: jsonNum(d.ReturnLossDB), LoHz: d.LoHz, HiHz: d.HiHz, LoOpen: d.LoOpen, HiOpen: d.HiOpen}
	if d.Ridges > 0 {
		f, rl := d.RidgeHz, jsonNum(d.RidgeReturnLossDB)
		j.Merged, j.RidgeHz, j.RidgeReturnLossDB = true, &f, &rl
	}
	return j
}

func readoutOf(port int, r rfmath.Readout) readoutJSON {
	rj := readoutJSON{
		Port: port, FreqHz: r.FreqHz, ROhm: jsonNum(real(r.Z)), XOhm: jsonNum(imag(r.Z)),
		GammaMag: r.GammaMag, GammaDeg: r.GammaDeg, ReturnLossDB: jsonNum(r.ReturnLossDB),
		VSWR: jsonNum(r.VSWR), MismatchLossDB: jsonNum(r.MismatchLossDB), Q: jsonNum(r.Q),
		EquivKind: r.Equiv.Kind, EquivValue: jsonNum(r.Equiv.Value), Warnings: r.Warnings,
	}
	if cmplx.IsInf(r.Z) { // an open: no finite R or X
		rj.ROhm, rj.XOhm = jsonNum(math.Inf(1)), jsonNum(math.Inf(1))
	}
	return rj
}

func printInspect(w io.Writer, rep *inspectReport) {
	ff := func(f float64) string { return units.FormatFrequency(f, 6) }
	fmt.Fprintf(w, "%s: %d-port, %d points, %s to %s, reference %s\n",
		rep.File, rep.Ports, rep.Points, ff(rep.FminHz), ff(rep.FmaxHz), units.Format(rep.Z0Ohm, "Ω", 4))
	for _, d := range rep.Deepest {
		fmt.Fprintf(w, "S%d%d deepest dip: %s, return loss %s dB\n", d.Port, d.Port, ff(d.FreqHz), fmtDB(float64(d.ReturnLossDB)))
	}
	fmt.Fprintf(w, "\nBands with return loss ≥ %g dB:\n", rep.ThresholdDB)
	if len(rep.Dips) == 0 {
		fmt.Fprintln(w, "  none")
	} else {
		tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
		fmt.Fprintln(tw, "  param\tbest at\tRL (dB)\tfrom\tto\twidth\t")
		for _, d := range rep.Dips {
			lo, hi := ff(d.LoHz), ff(d.HiHz)
			if d.LoOpen {
				lo = "≤ " + lo
			}
			if d.HiOpen {
				hi = "≥ " + hi
			}
			fmt.Fprintf(tw, "  S%d%d\t%s\t%s\t%s\t%s\t%s\t\n", d.Port, d.Port, ff(d.FreqHz), fmtDB(float64(d.ReturnLossDB)), lo, hi, ff(d.HiHz-d.LoHz))
		}
		tw.Flush()
		for _, d := range rep.Dips {
			if d.Merged {
				fmt.Fprintf(w, "  (S%d%d %s–%s is one band across a ridge of %s dB at %s, within the %g dB hysteresis)\n",
					d.Port, d.Port, ff(d.LoHz), ff(d.HiHz), fmtDB(float64(*d.RidgeReturnLossDB)), ff(*d.RidgeHz), rep.HysteresisDB)
			}
		}
	}
	fmt.Fprintln(w, "\nReactance crosses zero:")
	if len(rep.ZeroCrossings) == 0 {
		fmt.Fprintln(w, "  nowhere in the sweep")
	}
	for _, c := range rep.ZeroCrossings {
		fmt.Fprintf(w, "  S%d%d at %s (%s-type resonance)\n", c.Port, c.Port, ff(c.FreqHz), c.Kind)
	}
	if len(rep.Readouts) == 0 {
		return
	}
	fmt.Fprintln(w, "\nReadouts:")
	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "  param\tfrequency\tR + jX (Ω)\t|Γ| ∠ deg\tRL (dB)\tVSWR\tML (dB)\tQ\tequivalent\t")
	for _, r := range rep.Readouts {
		eq := "—"
		switch r.EquivKind {
		case rfmath.KindL:
			eq = units.Format(float64(r.EquivValue), "H", 4)
		case rfmath.KindC:
			eq = units.Format(float64(r.EquivValue), "F", 4)
		}
		z := "∞ (open)"
		if rv, xv := float64(r.ROhm), float64(r.XOhm); !math.IsInf(rv, 0) && !math.IsInf(xv, 0) {
			z = fmt.Sprintf("%s %s j%s", fmtNum(rv, 2), sign(xv), fmtNum(math.Abs(xv), 2))
		}
		fmt.Fprintf(tw, "  S%d%d\t%s\t%s\t%s ∠ %s\t%s\t%s\t%s\t%s\t%s\t\n",
			r.Port, r.Port, ff(r.FreqHz), z, fmtNum(r.GammaMag, 4), fmtNum(r.GammaDeg, 1),
			fmtDB(float64(r.ReturnLossDB)), fmtNum(float64(r.VSWR), 3), fmtNum(float64(r.MismatchLossDB), 3), fmtNum(float64(r.Q), 3), eq)
	}
	tw.Flush()
	for _, r := range rep.Readouts {
		if len(r.Warnings) > 0 {
			fmt.Fprintf(w, "  note at %s: %s\n", ff(r.FreqHz), strings.Join(r.Warnings, "; "))
		}
	}
}
