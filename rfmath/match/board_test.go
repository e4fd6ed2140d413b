package match

import (
	"errors"
	"math"
	"math/cmplx"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/parts"
)

// Microstrip figures against published values.
func TestMicrostrip(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name        string
		m           Microstrip
		z0, eps     float64
		z0Tol, eTol float64
	}{
		// Pozar, Microwave Engineering, Example 3.7 (from memory): a 50 Ω
		// line on 0.127 cm of εr 2.20 has W/d = 3.081 and εe = 1.87; the
		// synthesis formula that gave W/d is only the approximate inverse of
		// these, so Z0 is held to 1 %.
		{"Pozar example, εr 2.2", Microstrip{WidthM: 3.081 * 1.27e-3, HeightM: 1.27e-3, EpsR: 2.2}, 50, 1.87, 0.5, 0.005},
		// Common practice: a 50 Ω microstrip on 1.6 mm FR-4 (εr about 4.4)
		// is about 3 mm wide.
		{"3 mm on 1.6 mm FR-4", Microstrip{WidthM: 3e-3, HeightM: 1.6e-3, EpsR: 4.4}, 50, 3.33, 2, 0.05},
		// In air, W = h: εe = 1 exactly and Z0 = 60·ln(8 + 1/4) =
		// 126.61 Ω (the closed form's first branch, computed).
		{"air", Microstrip{WidthM: 1e-3, HeightM: 1e-3, EpsR: 1}, 126.61, 1, 0.01, 1e-12},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			if got := tc.m.Z0Ohm(); math.Abs(got-tc.z0) > tc.z0Tol {
				t.Errorf("Z0 = %.4g Ω, want %g ± %g", got, tc.z0, tc.z0Tol)
			}
			if got := tc.m.EpsEff(); math.Abs(got-tc.eps) > tc.eTol {
				t.Errorf("εe = %.5g, want %g ± %g", got, tc.eps, tc.eTol)
			}
		})
	}
	// The two branches of Hammerstad's Z0 meet at W/h = 1 to within 0.5 %
	// (a property of the published pair, computed: 126.6/√εe against
	// 126.0/√εe).
	lo := Microstrip{WidthM: 0.999999e-3, HeightM: 1e-3, EpsR: 4.2}.Z0Ohm()
	hi := Microstrip{WidthM: 1.000001e-3, HeightM: 1e-3, EpsR: 4.2}.Z0Ohm()
	if math.Abs(lo-hi)/hi > 0.005 {
		t.Errorf("branches at W/h = 1: %.4g and %.4g Ω", lo, hi)
	}
	// Wider is lower: Z0 falls as W grows.
	prev := math.Inf(1)
	for _, w := range []float64{0.05, 0.2, 0.5, 1, 2, 5, 10} {
		z := Microstrip{WidthM: w * 1e-3, HeightM: 1e-3, EpsR: 4.2}.Z0Ohm()
		if !(z < prev) {
			t.Errorf("Z0 at W/h %g is %g, not below %g", w, z, prev)
		}
		prev = z
	}
}

// A short trace is a series inductance Z0·τ with τ/(2·Z0) of capacitance
// at each end, to second order in βl (the telegrapher's line; common
// practice): the ABCD of the line and of that π network agree to about
// (βl)².
func TestTraceFirstOrder(t *testing.T) {
	t.Parallel()
	tr := Trace{LengthM: 1e-3, Z0Ohm: 80, EpsEff: 3}
	f := 500e6
	line := tr.Part(tr.LengthM)
	el, err := line.Element(line.Value)
	if err != nil {
		t.Fatal(err)
	}
	got := el.ABCD(f)
	w := 2 * math.Pi * f
	y := complex(0, w*tr.ShuntCF()/2)
	pi := rfmath.ShuntY(y).Mul(rfmath.SeriesZ(complex(0, w*tr.SeriesLH()))).Mul(rfmath.ShuntY(y))
	bl := w * tr.DelayS()
	for i := range got {
		scale := math.Max(cmplx.Abs(pi[i]), 1e-3) // B is ~jωL ohms, C ~jωC siemens
		if d := cmplx.Abs(got[i]-pi[i]) / scale; d > 2*bl*bl {
			t.Errorf("ABCD[%d]: line %v, π %v (βl = %.3g)", i, got[i], pi[i], bl)
		}
	}
	// L = Z0·√εe·l/c: 80 Ω × 1 mm × √3 / c = 0.4622 nH (computed).
	if got, want := tr.SeriesLH(), 80*1e-3*math.Sqrt(3)/rfmath.SpeedOfLight; math.Abs(got-want) > 1e-21 {
		t.Errorf("series L %g, want %g", got, want)
	}
}

// testNet is a three-part network of typical 0402 parts (the shape of the
// demo's design, values our own).
func testNet() Network {
	m := parts.Typical0402
	return Network{
		{Kind: ShuntL, Value: 2.2e-9, Series: "E24", Model: m},
		{Kind: SeriesL, Value: 3.3e-9, Series: "E24", Model: m},
		{Kind: ShuntC, Value: 6.8e-12, Series: "E24", Model: m},
	}
}

// Place against a ladder written out by hand: the pads at each node in
// parallel, the traces as lines, the parts as their models.
func TestPlaceMatchesHandLadder(t *testing.T) {
	t.Parallel()
	n := testNet()
	tr0 := Trace{Gap: 0, LengthM: 2e-3, Z0Ohm: 50, EpsEff: 3.2}
	tr2 := Trace{Gap: 2, LengthM: 0.7e-3, Z0Ohm: 65, EpsEff: 3.0}
	lay := Layout{Footprint: Footprint{Name: "test", PadCF: 0.11e-12}, Traces: []Trace{tr2, tr0}}
	pl, err := lay.Place(n)
	if err != nil {
		t.Fatal(err)
	}
	m := parts.Typical0402
	line := func(t Trace) rfmath.Line {
		return rfmath.Line{Z0Ohm: t.Z0Ohm, LengthM: t.LengthM, VelocityFactor: 1 / math.Sqrt(t.EpsEff)}
	}
	// load ─ trace 0 ─ [pads of L1, L2] L1 ─ L2 ─ [pad of L2] ─ trace 2 ─ [pad of C1] C1 ─ source
	hand := rfmath.Ladder{
		line(tr0),
		rfmath.ShuntC{CF: 0.22e-12},
		rfmath.Shunt{Part: m.Part(parts.KindL, 2.2e-9)},
		rfmath.Series{Part: m.Part(parts.KindL, 3.3e-9)},
		rfmath.ShuntC{CF: 0.11e-12},
		line(tr2),
		rfmath.ShuntC{CF: 0.11e-12},
		rfmath.Shunt{Part: m.Part(parts.KindC, 6.8e-12)},
	}
	c, err := pl.Network.Circuit()
	if err != nil {
		t.Fatal(err)
	}
	for _, f := range []float64{300e6, 915e6, 2.4e9} {
		for _, gl := range []complex128{0.3 - 0.4i, -0.7 + 0.1i} {
			got := c.GammaAt(f, gl, 50)
			want := hand.InputGamma(f, gl, 50)
			if cmplx.Abs(got-want) > 1e-12 {
				t.Errorf("%g Hz: Γ %v, hand ladder %v", f, got, want)
			}
		}
	}
	if want := []int{0, 2, 1, 1}; !equalInts(pl.NodePads, want) || pl.Nodes != 4 {
		t.Errorf("pads per node %v (%d nodes), want %v", pl.NodePads, pl.Nodes, want)
	}
	if want := []int{1, 1, 3}; !equalInts(pl.PartNodes, want) {
		t.Errorf("part nodes %v, want %v", pl.PartNodes, want)
	}
	if d := pl.Design(); len(d) != 3 || d[1].Value != 3.3e-9 {
		t.Errorf("design back %v", d)
	}
	for _, o := range []Origin{{RoleTrace, 0}, {RoleTrace, 2}, {RolePads, 1}, {RolePads, 2}, {RolePads, 3}, {RolePart, 2}} {
		if pl.Element(o.Role, o.Index) < 0 {
			t.Errorf("no element %+v", o)
		}
	}
	if pl.Element(RolePads, 0) >= 0 {
		t.Error("pads at the load plane, which no part touches")
	}
}

func equalInts(a, b []int) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

// The zero layout places the network as it is.
func TestPlaceZeroLayout(t *testing.T) {
	t.Parallel()
	n := testNet()
	pl, err := Layout{}.Place(n)
	if err != nil {
		t.Fatal(err)
	}
	if len(pl.Network) != len(n) {
		t.Fatalf("%d elements, want %d", len(pl.Network), len(n))
	}
	for i := range n {
		if pl.Network[i].Kind != n[i].Kind || pl.Network[i].Value != n[i].Value {
			t.Errorf("element %d: %v, want %v", i, pl.Network[i], n[i])
		}
	}
	if !(Layout{}).IsZero() || (Layout{Footprint: Footprint0402}).IsZero() {
		t.Error("IsZero")
	}
}

// Layouts that do not fit their network are refused with ErrLayout.
func TestLayoutErrors(t *testing.T) {
	t.Parallel()
	n := testNet()
	for _, tc := range []struct {
		name string
		lay  Layout
	}{
		{"gap past the source", Layout{Traces: []Trace{{Gap: 4, LengthM: 1e-3, Z0Ohm: 50, EpsEff: 3}}}},
		{"negative gap", Layout{Traces: []Trace{{Gap: -1, LengthM: 1e-3, Z0Ohm: 50, EpsEff: 3}}}},
		{"two in a gap", Layout{Traces: []Trace{{Gap: 1, LengthM: 1e-3, Z0Ohm: 50, EpsEff: 3}, {Gap: 1, LengthM: 2e-3, Z0Ohm: 50, EpsEff: 3}}}},
		{"negative length", Layout{Traces: []Trace{{Gap: 1, LengthM: -1e-3, Z0Ohm: 50, EpsEff: 3}}}},
		{"no impedance", Layout{Traces: []Trace{{Gap: 1, LengthM: 1e-3, EpsEff: 3}}}},
		{"permittivity below 1", Layout{Traces: []Trace{{Gap: 1, LengthM: 1e-3, Z0Ohm: 50, EpsEff: 0.5}}}},
		{"negative pads", Layout{Footprint: Footprint{PadCF: -1e-13}}},
		{"NaN pads", Layout{Footprint: Footprint{PadCF: math.NaN()}}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			if _, err := tc.lay.Place(n); !errors.Is(err, ErrLayout) {
				t.Errorf("error %v, want ErrLayout", err)
			}
		})
	}
	if _, err := LookupFootprint("0805"); !errors.Is(err, ErrLayout) {
		t.Errorf("0805: %v", err)
	}
	if f, err := LookupFootprint("none"); err != nil || f.PadCF != 0 {
		t.Errorf("none: %v %v", f, err)
	}
}

// Designators count by kind from the load, as a parts list does.
func TestDesignator(t *testing.T) {
	t.Parallel()
	n := Network{{Kind: ShuntL}, {Kind: SeriesC}, {Kind: Line}, {Kind: SeriesL}, {Kind: StubOpen}, {Kind: ShuntC}, {Kind: Transformer}}
	want := []string{"L1", "C1", "TL1", "L2", "TS1", "C2", "T1"}
	for i, w := range want {
		if got := n.Designator(i); got != w {
			t.Errorf("part %d: %s, want %s", i, got, w)
		}
	}
}

// Traces as the command line and the page write them.
func TestParseTrace(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		in   string
		want Trace
	}{
		{"2:0.5mm", Trace{Gap: 2, LengthM: 0.5e-3, Z0Ohm: 50, EpsEff: 1}},
		{"0:1.2mm:75:2.5", Trace{Gap: 0, LengthM: 1.2e-3, Z0Ohm: 75, EpsEff: 2.5}},
		{" 3 : 800u : 53.1 : 3.18 ", Trace{Gap: 3, LengthM: 800e-6, Z0Ohm: 53.1, EpsEff: 3.18}},
	} {
		got, err := ParseTrace(tc.in)
		if err != nil || got.Gap != tc.want.Gap || math.Abs(got.LengthM-tc.want.LengthM) > 1e-15 || got.Z0Ohm != tc.want.Z0Ohm || got.EpsEff != tc.want.EpsEff {
			t.Errorf("%q: %+v, %v; want %+v", tc.in, got, err, tc.want)
		}
		back, err := ParseTrace(got.String())
		if err != nil || math.Abs(back.LengthM-got.LengthM) > 1e-15 || back.Gap != got.Gap || back.Z0Ohm != got.Z0Ohm || back.EpsEff != got.EpsEff {
			t.Errorf("%q written %q read back %+v, %v", tc.in, got.String(), back, err)
		}
	}
	for _, bad := range []string{"", "2", "x:1mm", "-1:1mm", "2:1q", "2:1mm:50", "2:1mm:z:3", "2:1mm:50:e", "2:1mm:50:0.5", "2:-1mm", "0:1.2m"} {
		if _, err := ParseTrace(bad); !errors.Is(err, ErrLayout) {
			t.Errorf("%q: %v", bad, err)
		}
	}
}
