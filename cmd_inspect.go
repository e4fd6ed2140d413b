package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
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
}

type crossJSON struct {
	Port   int     `json:"port"`
	FreqHz float64 `json:"freq_hz"`
	Kind   string  `json:"kind"` // "series" (X rises through zero) or "parallel"
}

type readoutJSON struct {
	Port           int      `json:"port"`
	FreqHz         float64  `json:"freq_hz"`
	ROhm           float64  `json:"r_ohm"`
	XOhm           float64  `json:"x_ohm"`
	GammaMag       float64  `json:"gamma_mag"`
	GammaDeg       float64  `json:"gamma_deg"`
	ReturnLossDB   jsonNum  `json:"return_loss_db"`
	VSWR           jsonNum  `json:"vswr"`
	MismatchLossDB jsonNum  `json:"mismatch_loss_db"`
	Q              jsonNum  `json:"q"`
	EquivKind      string   `json:"equiv_kind"`
	EquivValue     float64  `json:"equiv_value"`
	Warnings       []string `json:"warnings,omitempty"`
}

// jsonNum is a float64 that encodes ±Inf and NaN as null, since JSON has no
// such numbers (a perfect match has infinite return loss).
type jsonNum float64

func (n jsonNum) MarshalJSON() ([]byte, error) {
	f := float64(n)
	if math.IsInf(f, 0) || math.IsNaN(f) {
		return []byte("null"), nil
	}
	return json.Marshal(f)
}

func runInspect(_ context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("inspect", "FILE [--z0 OHMS] [--at FREQ ...] [--rl DB] [--json]", stderr)
	z0 := fs.Float64("z0", 0, "show the sweep in this reference `impedance` in ohms (default: the file's)")
	var at listFlag
	fs.Var(&at, "at", "read out R, X, |Γ|, return loss, VSWR, Q and equivalent L/C at this `frequency` (repeatable; SI prefixes: 2.45GHz, 915e6)")
	rl := fs.Float64("rl", 10, "return-loss `threshold` in dB that marks a usable band")
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
	rep, err := inspect(ls, *z0, threshold, freqs)
	if err != nil {
		return err
	}
	if *asJSON {
		enc := json.NewEncoder(stdout)
		enc.SetIndent("", "  ")
		return enc.Encode(rep)
	}
	printInspect(stdout, rep)
	return nil
}

// inspect computes the report. freqs outside the sweep are a usage error.
func inspect(ls *loadedSweep, z0, threshold float64, freqs []float64) (*inspectReport, error) {
	s := ls.Sweep
	rep := &inspectReport{
		File:        ls.Path,
		Points:      s.Len(),
		Ports:       s.Ports,
		FminHz:      s.FreqHz[0],
		FmaxHz:      s.FreqHz[s.Len()-1],
		FileZ0Ohm:   append([]float64(nil), s.Z0...),
		ThresholdDB: threshold,
	}
	if z0 > 0 {
		to := make([]float64, s.Ports)
		for i := range to {
			to[i] = z0
		}
		r, err := renormalizeSweep(s, to)
		if err != nil {
			return nil, err
		}
		s = r
	}
	rep.Z0Ohm = s.Z0[0]
	rep.Deepest, rep.Dips, rep.ZeroCrossings = []dipJSON{}, []dipJSON{}, []crossJSON{}
	rep.ZeroCrossingsHz, rep.Readouts = []float64{}, []readoutJSON{}

	reflPorts := 1
	if s.Ports >= 2 {
		reflPorts = 2
	}
	gammas := make([][]complex128, reflPorts)
	for p := range reflPorts {
		g := s.Param(nil, p, p)
		gammas[p] = g
		d := rfmath.DeepestDip(s.FreqHz, g)
		rep.Deepest = append(rep.Deepest, dipOf(p+1, d))
		for _, d := range rfmath.Dips(s.FreqHz, g, threshold) {
			rep.Dips = append(rep.Dips, dipOf(p+1, d))
		}
		z := make([]complex128, len(g))
		for k, gk := range g {
			z[k] = rfmath.ZFromGamma(gk, complex(s.Z0[p], 0))
		}
		for _, c := range rfmath.ReactanceZeroCrossings(s.FreqHz, z) {
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
	m := make([]complex128, s.Ports*s.Ports)
	for _, f := range freqs {
		if _, err := s.InterpAt(m, f); err != nil {
			return nil, usagef("--at %s is outside the sweep (%s to %s)",
				units.FormatFrequency(f, 6), units.FormatFrequency(rep.FminHz, 6), units.FormatFrequency(rep.FmaxHz, 6))
		}
		for p := range reflPorts {
			r := rfmath.NewReadout(f, m[p*s.Ports+p], s.Z0[p])
			rep.Readouts = append(rep.Readouts, readoutOf(p+1, r))
		}
	}
	return rep, nil
}

func renormalizeSweep(s *rfmath.Sweep, to []float64) (*rfmath.Sweep, error) {
	out := s.Clone()
	copy(out.Z0, to)
	for k := range s.Len() {
		if _, err := rfmath.Renormalize(out.Matrix(k), s.Matrix(k), s.Ports, s.Z0, to); err != nil {
			return nil, fmt.Errorf("renormalising point %d (%s): %w", k+1, units.FormatFrequency(s.FreqHz[k], 6), err)
		}
	}
	return out, nil
}

func dipOf(port int, d rfmath.Dip) dipJSON {
	return dipJSON{Port: port, FreqHz: d.FreqHz, ReturnLossDB: jsonNum(d.ReturnLossDB), LoHz: d.LoHz, HiHz: d.HiHz, LoOpen: d.LoOpen, HiOpen: d.HiOpen}
}

func readoutOf(port int, r rfmath.Readout) readoutJSON {
	return readoutJSON{
		Port: port, FreqHz: r.FreqHz, ROhm: real(r.Z), XOhm: imag(r.Z),
		GammaMag: r.GammaMag, GammaDeg: r.GammaDeg, ReturnLossDB: jsonNum(r.ReturnLossDB),
		VSWR: jsonNum(r.VSWR), MismatchLossDB: jsonNum(r.MismatchLossDB), Q: jsonNum(r.Q),
		EquivKind: r.Equiv.Kind, EquivValue: r.Equiv.Value, Warnings: r.Warnings,
	}
}

func fmtDB(v float64) string {
	if math.IsInf(v, 1) {
		return "∞"
	}
	return fmt.Sprintf("%.2f", v)
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
		case "L":
			eq = units.Format(r.EquivValue, "H", 4)
		case "C":
			eq = units.Format(r.EquivValue, "F", 4)
		}
		fmt.Fprintf(tw, "  S%d%d\t%s\t%.2f %s j%.2f\t%.4f ∠ %.1f\t%s\t%s\t%s\t%s\t%s\t\n",
			r.Port, r.Port, ff(r.FreqHz), r.ROhm, sign(r.XOhm), math.Abs(r.XOhm), r.GammaMag, r.GammaDeg,
			fmtDB(float64(r.ReturnLossDB)), fmtNum(float64(r.VSWR), 3), fmtNum(float64(r.MismatchLossDB), 3), fmtNum(float64(r.Q), 3), eq)
	}
	tw.Flush()
	for _, r := range rep.Readouts {
		if len(r.Warnings) > 0 {
			fmt.Fprintf(w, "  note at %s: %s\n", ff(r.FreqHz), strings.Join(r.Warnings, "; "))
		}
	}
}

func sign(x float64) string {
	if x < 0 {
		return "−"
	}
	return "+"
}

func fmtNum(v float64, digits int) string {
	switch {
	case math.IsInf(v, 1):
		return "∞"
	case math.IsNaN(v):
		return "n/a"
	}
	return fmt.Sprintf("%.*f", digits, v)
}
