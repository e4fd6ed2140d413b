package spice

import (
	"bufio"
	"bytes"
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"matchbench/rfmath"
	"matchbench/rfmath/match"
	"matchbench/rfmath/parts"
)

// needNgspice returns the path of ngspice, skipping the test when it is
// missing unless MATCHBENCH_REQUIRE_NGSPICE=1 or MATCHBENCH_REQUIRE_BROWSER=1
// (CI sets both), when it fails instead.
func needNgspice(t *testing.T) string {
	t.Helper()
	path, err := exec.LookPath("ngspice")
	if err != nil {
		if os.Getenv("MATCHBENCH_REQUIRE_NGSPICE") == "1" || os.Getenv("MATCHBENCH_REQUIRE_BROWSER") == "1" {
			t.Fatalf("ngspice is required (MATCHBENCH_REQUIRE_NGSPICE or MATCHBENCH_REQUIRE_BROWSER is 1) but not found: %v", err)
		}
		t.Skipf("skipping the comparison with ngspice: ngspice not found (apt-get install ngspice; " +
			"set MATCHBENCH_REQUIRE_NGSPICE=1 to make this a failure)")
	}
	return path
}

// rlcLoad is a one-port load made of constant R, L and C, written both as
// SPICE elements and as an impedance: a series R–L–C branch shunted by a
// capacitance, a simple antenna near its series resonance (invented
// values, not a measured part).
type rlcLoad struct {
	R, L, C, Cp float64
}

func (l rlcLoad) z(fHz float64) complex128 {
	return rfmath.Lumped{ROhm: l.R, LH: l.L, CF: l.C, ParallelCF: l.Cp, RLaw: rfmath.Flat}.ImpedanceAt(fHz)
}

// spice writes the load between node LOAD and ground. The series branch
// is closed to DC by its capacitor, so a large resistor from its inner node
// keeps the operating point defined; it changes |Z| by less than 1e-10
// relative here.
func (l rlcLoad) spice() string {
	return fmt.Sprintf("RLD LOAD ld1 %s\nLLD ld1 ld2 %s\nCLD ld2 0 %s\nCLDP LOAD 0 %s\nRLDC ld2 0 1t\n",
		value(l.R), value(l.L), value(l.C), value(l.Cp))
}

// ngspiceZin runs an AC analysis of the subcircuit netlist in sub, driven at
// SRC from 1 V through 50 Ω and terminated at LOAD by the load, on a linear
// grid of points from lo to hi, and returns the input impedance at SRC.
func ngspiceZin(t *testing.T, bin, sub, name string, load rlcLoad, lo, hi float64, points int) ([]float64, []complex128) {
	t.Helper()
	dir := t.TempDir()
	out := filepath.Join(dir, "zin.txt")
	deck := fmt.Sprintf("* matchbench netlist check\n%s"+
		"VS IN 0 DC 0 AC 1\nRS IN SRC 50\nX1 SRC LOAD %s\n%s"+
		".control\nset wr_singlescale\noption numdgt=15\nac lin %d %s %s\nlet zin = 50*v(src)/(1-v(src))\nwrdata %s zin\nquit\n.endc\n.end\n",
		sub, name, load.spice(), points, value(lo), value(hi), "zin.txt")
	cir := filepath.Join(dir, "check.cir")
	if err := os.WriteFile(cir, []byte(deck), 0o600); err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	cmd := exec.CommandContext(ctx, bin, "-b", cir)
	cmd.Dir = dir
	log, err := cmd.CombinedOutput()
	if err != nil {
		t.Fatalf("ngspice: %v\n%s\ndeck:\n%s", err, log, deck)
	}
	for _, l := range strings.Split(string(log), "\n") {
		if ll := strings.ToLower(l); strings.Contains(ll, "error") || strings.Contains(ll, "warning") {
			t.Errorf("ngspice says: %s", l)
		}
	}
	f, err := os.Open(out)
	if err != nil {
		t.Fatalf("ngspice wrote no result: %v\n%s\ndeck:\n%s", err, log, deck)
	}
	defer f.Close()
	var fs []float64
	var zs []complex128
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		w := strings.Fields(sc.Text())
		if len(w) != 3 {
			continue
		}
		var v [3]float64
		ok := true
		for i := range v {
			if v[i], err = strconv.ParseFloat(w[i], 64); err != nil {
				ok = false
			}
		}
		if ok {
			fs = append(fs, v[0])
			zs = append(zs, complex(v[1], v[2]))
		}
	}
	if len(fs) != points {
		t.Fatalf("ngspice gave %d points, want %d:\n%s", len(fs), points, log)
	}
	return fs, zs
}

// TestNgspiceZin exports networks of every kind of part on an R-L-C load,
// runs ngspice's AC analysis of the subcircuit and compares the input
// impedance with matchbench's across the sweep. The reference is ngspice
// (a general circuit simulator, Debian's package): the check is that both
// programs see the same circuit.
func TestNgspiceZin(t *testing.T) {
	bin := needNgspice(t)
	t.Parallel()
	e24 := "E24"
	l0402, l0603, cq := parts.Typical0402, parts.Typical0603, parts.ConstantQ{QL: 40, QC: 250}
	bands := []Range{{863e6, 870e6}, {902e6, 928e6}}
	cases := []struct {
		name    string
		net     match.Network
		load    rlcLoad
		lo, hi  float64
		points  int
		bandTol float64 // worst relative |ΔZin| within the bands
		spanTol float64 // worst relative |ΔZin| across the span; 0: not checked
		gTol    float64 // worst |ΔΓin| across the span
	}{
		{
			// Parts without loss and lossless lines: the subcircuit is the
			// circuit itself, so the two programs agree to rounding (values are
			// written to 10 digits; near a resonance that becomes 1e-8).
			name: "ideal parts, lines and a transformer",
			net: match.Network{
				{Kind: match.SeriesC, Value: 3.3e-12},
				{Kind: match.Line, Value: 0.03, Params: map[string]float64{"z0Ohm": 60, "vf": 0.7}},
				{Kind: match.StubOpen, Value: 0.02, Params: map[string]float64{"z0Ohm": 45, "vf": 0.8}},
				{Kind: match.ShuntL, Value: 15e-9},
				{Kind: match.StubShort, Value: 0.09, Params: map[string]float64{"z0Ohm": 70, "vf": 0.66}},
				{Kind: match.Transformer, Value: 1.3},
				{Kind: match.SeriesR, Value: 2.2},
				{Kind: match.ShuntC, Value: 1.5e-12},
			},
			load: rlcLoad{R: 30, L: 9e-9, C: 3.5e-12, Cp: 0.2e-12},
			lo:   700e6, hi: 1.1e9, points: 401, bandTol: 1e-7, spanTol: 1e-7, gTol: 1e-8,
		},
		{
			// Three typical 0402 parts of standard values, as the loss-aware
			// search designs them, over a sweep like the demo's narrow one.
			name: "0402 ladder, 700 MHz-1.1 GHz",
			net: match.Network{
				{Kind: match.ShuntC, Value: 2.2e-12, Series: e24, Model: l0402},
				{Kind: match.SeriesL, Value: 12e-9, Series: e24, Model: l0402},
				{Kind: match.ShuntL, Value: 22e-9, Series: e24, Model: l0402},
			},
			load: rlcLoad{R: 18, L: 12e-9, C: 2.8e-12, Cp: 0.25e-12},
			lo:   700e6, hi: 1.1e9, points: 401, bandTol: 1e-3, gTol: 2e-3,
		},
		{
			// The same over a sweep from 3 MHz, as the demo's via-cable
			// sweep runs: below 100 MHz the inductor model's Q is near 1.
			name: "0402 ladder, 3 MHz-1.5 GHz",
			net: match.Network{
				{Kind: match.ShuntC, Value: 2.2e-12, Series: e24, Model: l0402},
				{Kind: match.SeriesL, Value: 12e-9, Series: e24, Model: l0402},
				{Kind: match.ShuntL, Value: 22e-9, Series: e24, Model: l0402},
			},
			load: rlcLoad{R: 18, L: 12e-9, C: 2.8e-12, Cp: 0.25e-12},
			// There no passive circuit follows it closely (see FitLumped): the
			// reflection is checked, not the impedance.
			lo: 3e6, hi: 1.5e9, points: 500, bandTol: 1e-3, gTol: 0.06,
		},
		{
			// Every other kind: constant-Q parts, a resistor with its
			// inductance, a lossy line, lossy and lossless stubs and an
			// ideal transformer.
			name: "every kind",
			net: match.Network{
				{Kind: match.SeriesC, Value: 3.3e-12, Model: cq},
				{Kind: match.Line, Value: 0.03, Params: map[string]float64{"z0Ohm": 60, "vf": 0.7, "lossDBPerM": 2, "lossRefHz": 1e9}},
				{Kind: match.StubOpen, Value: 0.02, Params: map[string]float64{"z0Ohm": 45, "vf": 0.8, "lossDBPerM": 3, "lossRefHz": 1e9}},
				{Kind: match.SeriesL, Value: 6.8e-9, Model: cq},
				{Kind: match.StubShort, Value: 0.09, Params: map[string]float64{"z0Ohm": 70, "vf": 0.66}},
				{Kind: match.Transformer, Value: 1.3},
				{Kind: match.SeriesR, Value: 2.2, Model: l0603},
				{Kind: match.ShuntC, Value: 1.5e-12, Model: l0603, Params: map[string]float64{"esrOhm": 0.3}},
			},
			load: rlcLoad{R: 30, L: 9e-9, C: 3.5e-12, Cp: 0.2e-12},
			lo:   700e6, hi: 1.1e9, points: 401, bandTol: 1e-3, gTol: 2e-3,
		},
		{
			// No series part: the zero-volt through connection.
			name: "shunt parts only",
			net: match.Network{
				{Kind: match.ShuntL, Value: 18e-9, Model: l0402},
				{Kind: match.ShuntC, Value: 1e-12, Model: l0402},
			},
			load: rlcLoad{R: 40, L: 10e-9, C: 3e-12, Cp: 0.3e-12},
			lo:   700e6, hi: 1.1e9, points: 201, bandTol: 1e-3, gTol: 2e-3,
		},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			var sub bytes.Buffer
			sums, err := Write(&sub, c.net, Options{Name: "match_check", Fit: FitSpec{Span: Range{c.lo, c.hi}, Bands: bands, Z0Ohm: 50}})
			if err != nil {
				t.Fatal(err)
			}
			fs, zs := ngspiceZin(t, bin, sub.String(), "MATCH_CHECK", c.load, c.lo, c.hi, c.points)
			// matchbench's input impedance of the same network on the same
			// load at ngspice's frequencies.
			l := match.Load{FreqHz: fs, Gamma: make([]complex128, len(fs)), Z0Ohm: 50}
			for k, f := range fs {
				l.Gamma[k] = rfmath.GammaFromZ(c.load.z(f), 50)
			}
			g, _, err := match.Response(l, c.net, nil, nil)
			if err != nil {
				t.Fatal(err)
			}
			worstBand, worstSpan, worstG, nBand := 0.0, 0.0, 0.0, 0
			atBand, atSpan := 0.0, 0.0
			for k, f := range fs {
				zm := rfmath.ZFromGamma(g[k], 50)
				d := cmplx.Abs(zs[k]-zm) / cmplx.Abs(zm)
				if d > worstSpan {
					worstSpan, atSpan = d, f
				}
				worstG = math.Max(worstG, cmplx.Abs(rfmath.GammaFromZ(zs[k], 50)-g[k]))
				for _, b := range bands {
					if f >= b.LoHz && f <= b.HiHz {
						nBand++
						if d > worstBand {
							worstBand, atBand = d, f
						}
					}
				}
			}
			t.Logf("%d frequencies compared (%d in the bands): worst relative |ΔZin| %.3g at %.4g MHz in the bands, %.3g at %.4g MHz across %.4g MHz-%.4g MHz, worst |ΔΓin| %.3g",
				len(fs), nBand, worstBand, atBand/1e6, worstSpan, atSpan/1e6, c.lo/1e6, c.hi/1e6, worstG)
			for _, s := range sums {
				t.Logf("  %s: %d elements, exact %v, worst |dS21| %.2g in the bands, %.2g across the span", s.Designator, s.Elements, s.Exact, s.MaxDS21Bands, s.MaxDS21)
			}
			if nBand == 0 {
				t.Fatal("no frequency in the bands")
			}
			if worstBand > c.bandTol || math.IsNaN(worstBand) {
				t.Errorf("worst relative |ΔZin| in the bands %.3g at %.4g MHz, want ≤ %g", worstBand, atBand/1e6, c.bandTol)
			}
			if c.spanTol > 0 && (worstSpan > c.spanTol || math.IsNaN(worstSpan)) {
				t.Errorf("worst relative |ΔZin| across the span %.3g at %.4g MHz, want ≤ %g", worstSpan, atSpan/1e6, c.spanTol)
			}
			if worstG > c.gTol || math.IsNaN(worstG) {
				t.Errorf("worst |ΔΓin| across the span %.3g, want ≤ %g", worstG, c.gTol)
			}
		})
	}
}
