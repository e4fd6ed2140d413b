package cli

import (
	"bufio"
	"context"
	"fmt"
	"io"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"strings"

	"matchbench/chartsvg"
	"matchbench/rfmath"
)

// runChart draws sweeps on the reflection chart and the rectangular plots
// and writes them as SVG files that a browser or a document opens.
func runChart(_ context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("chart", "FILE... --out DIR [--admittance] [--band LO:HI:RL ...]", stderr)
	out := fs.String("out", "", "`folder` to write chart.svg, reflection.svg, impedance.svg and vswr.svg into")
	adm := fs.Bool("admittance", false, "draw the admittance grid as well")
	var bands listFlag
	fs.Var(&bands, "band", "a band of interest `LO:HI[:RL]` drawn on the plots, with its return-loss requirement (repeatable)")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	if len(pos) == 0 || *out == "" {
		return usagef("want one or more sweep files and --out DIR")
	}
	var pb []chartsvg.Band
	for _, b := range bands {
		bd, err := parseBand(b, 0)
		if err != nil {
			return usagef("--band %q: %v", b, err)
		}
		pb = append(pb, chartsvg.Band{Name: strings.Join(strings.Split(b, ":")[:2], "–"), LoHz: bd.LoHz, HiHz: bd.HiHz, Limit: -bd.MinReturnLossDB, HasLimit: bd.MinReturnLossDB > 0})
	}
	chart := chartsvg.Chart{ImpedanceGrid: true, AdmittanceGrid: *adm, Z0Ohm: 50}
	var traces []chartsvg.Trace
	var refl, zx, vswr []chartsvg.Series
	for i, path := range pos {
		ls, err := loadSweep(path)
		if err != nil {
			return err
		}
		s := ls.Sweep
		g := s.Param(nil, 0, 0)
		name := strings.TrimSuffix(filepath.Base(path), filepath.Ext(path))
		id := fmt.Sprintf("s%d", i+1)
		col := chartsvg.Palette[i%len(chartsvg.Palette)]
		chart.Z0Ohm = s.Z0[0]
		traces = append(traces, chartsvg.Trace{ID: id, Name: name, Color: col, FreqHz: s.FreqHz, Gamma: g})
		db, r, x, v := make([]float64, len(g)), make([]float64, len(g)), make([]float64, len(g)), make([]float64, len(g))
		for k, gk := range g {
			m := cmplx.Abs(gk)
			db[k] = 20 * math.Log10(m)
			z := rfmath.ZFromGamma(gk, complex(s.Z0[0], 0))
			r[k], x[k] = real(z), imag(z)
			v[k] = rfmath.VSWR(m)
			if v[k] > 20 || math.IsNaN(v[k]) {
				v[k] = math.NaN()
			}
		}
		refl = append(refl, chartsvg.Series{ID: id, Name: name, Color: col, FreqHz: s.FreqHz, Y: db})
		zx = append(zx, chartsvg.Series{ID: id + "r", Name: name + " R", Color: col, FreqHz: s.FreqHz, Y: r},
			chartsvg.Series{ID: id + "x", Name: name + " X", Color: col, FreqHz: s.FreqHz, Y: x, Dashed: true})
		vswr = append(vswr, chartsvg.Series{ID: id, Name: name, Color: col, FreqHz: s.FreqHz, Y: v})
	}
	if err := os.MkdirAll(*out, 0o755); err != nil {
		return err
	}
	write := func(name string, render func(w io.Writer) error) error {
		p := filepath.Join(*out, name)
		f, err := os.Create(p)
		if err != nil {
			return err
		}
		bw := bufio.NewWriter(f)
		err = render(bw)
		if err == nil {
			err = bw.Flush()
		}
		if cerr := f.Close(); err == nil {
			err = cerr
		}
		if err == nil {
			fmt.Fprintf(stdout, "wrote %s\n", p)
		}
		return err
	}
	plots := []struct {
		file        string
		title, y, u string
		series      []chartsvg.Series
		withBands   bool
	}{
		{"reflection.svg", "Reflection |S11|", "|S11|", "dB", refl, true},
		{"impedance.svg", "Impedance: R solid, X dashed", "R, X", "Ω", zx, false},
		{"vswr.svg", "VSWR", "VSWR", "", vswr, false},
	}
	if err := write("chart.svg", func(w io.Writer) error { return chart.Render(w, traces, nil, nil) }); err != nil {
		return err
	}
	for _, p := range plots {
		pl := chartsvg.Plot{Title: p.title, YLabel: p.y, YUnit: p.u}
		var b []chartsvg.Band
		if p.withBands {
			b = pb
		}
		if err := write(p.file, func(w io.Writer) error { return pl.Render(w, p.series, b, nil) }); err != nil {
			return err
		}
	}
	return nil
}
