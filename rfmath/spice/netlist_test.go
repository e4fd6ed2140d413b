package spice

import (
	"bytes"
	"errors"
	"math"
	"strconv"
	"strings"
	"testing"

	"matchbench/rfmath/match"
	"matchbench/rfmath/parts"
)

// spiceNumber reads a SPICE number with its scale suffix (SPICE 3 manual,
// "General structure and conventions", from memory: f p n u m k meg g t,
// and mil, which the writer never uses).
func spiceNumber(s string) (float64, bool) {
	l := strings.ToLower(s)
	mul := 1.0
	for _, x := range []struct {
		s string
		m float64
	}{{"meg", 1e6}, {"t", 1e12}, {"g", 1e9}, {"k", 1e3}, {"m", 1e-3}, {"u", 1e-6}, {"n", 1e-9}, {"p", 1e-12}, {"f", 1e-15}} {
		if strings.HasSuffix(l, x.s) {
			l, mul = strings.TrimSuffix(l, x.s), x.m
			break
		}
	}
	v, err := strconv.ParseFloat(l, 64)
	return v * mul, err == nil
}

// TestWriteGrammar checks the netlist's form line by line: one
// subcircuit whose pins are SRC and LOAD (not ground), element lines of
// the classic forms with positive finite values (no zero-ohm through
// connections), unique element names, every node but 0 and the pins used
// at least twice (no dangling element but an open stub's end), and the
// same values written as the model has them.
func TestWriteGrammar(t *testing.T) {
	t.Parallel()
	n := match.Network{
		{Kind: match.ShuntC, Value: 2.2e-12, Series: "E24", Model: parts.Typical0402},
		{Kind: match.SeriesL, Value: 12e-9, Series: "E24", Model: parts.Typical0402},
		{Kind: match.Line, Value: 0.03, Params: map[string]float64{"z0Ohm": 60, "vf": 0.7, "lossDBPerM": 2, "lossRefHz": 1e9}},
		{Kind: match.StubOpen, Value: 0.02, Params: map[string]float64{"z0Ohm": 45}},
		{Kind: match.Transformer, Value: 1.3},
		{Kind: match.StubShort, Value: 0.05},
	}
	var b bytes.Buffer
	sums, err := Write(&b, n, Options{Name: "Search 1 (E24)", Designators: []string{"C1", "L1", "TL1", "TS1", "T1", "TS2"},
		Fit: FitSpec{Span: Range{700e6, 1.1e9}, Z0Ohm: 50}, Comments: []string{"session «bench», 868 MHz – 50 Ω"}})
	if err != nil {
		t.Fatal(err)
	}
	text := b.String()
	if len(sums) != len(n) || sums[0].Designator != "C1" || !sums[0].Exact || sums[1].Exact || sums[4].Elements != 3 {
		t.Errorf("summaries %+v", sums)
	}
	lines := strings.Split(strings.TrimSuffix(text, "\n"), "\n")
	var subckt, ends int
	names := map[string]bool{}
	uses := map[string]int{}
	for i, l := range lines {
		for _, r := range l {
			if r > 0x7e || r < 0x20 {
				t.Errorf("line %d: non-ASCII %q", i+1, l)
			}
		}
		f := strings.Fields(l)
		switch {
		case strings.HasPrefix(l, "*"):
			continue
		case f[0] == ".SUBCKT":
			subckt++
			if len(f) != 4 || f[1] != "SEARCH_1__E24_" || f[2] != "SRC" || f[3] != "LOAD" {
				t.Errorf("line %d: %q, want .SUBCKT SEARCH_1__E24_ SRC LOAD", i+1, l)
			}
			continue
		case f[0] == ".ENDS":
			ends++
			if len(f) != 2 || f[1] != "SEARCH_1__E24_" || i != len(lines)-1 {
				t.Errorf("line %d: %q", i+1, l)
			}
			continue
		}
		if names[f[0]] {
			t.Errorf("line %d: element %s named twice", i+1, f[0])
		}
		names[f[0]] = true
		var nodes []string
		var vals []string
		switch f[0][0] {
		case 'R', 'L', 'C':
			if len(f) != 4 {
				t.Fatalf("line %d: %q is not NAME N+ N- VALUE", i+1, l)
			}
			nodes, vals = f[1:3], f[3:]
		case 'T':
			if len(f) != 7 || !strings.HasPrefix(f[5], "Z0=") || !strings.HasPrefix(f[6], "TD=") {
				t.Fatalf("line %d: %q is not TNAME N1 N2 N3 N4 Z0= TD=", i+1, l)
			}
			nodes, vals = f[1:5], []string{f[5][3:], f[6][3:]}
		case 'E':
			nodes, vals = f[1:5], f[5:]
		case 'F':
			nodes, vals = f[1:3], f[4:]
		case 'V':
			if len(f) != 5 || f[3] != "DC" || f[4] != "0" {
				t.Fatalf("line %d: %q is not a zero-volt source", i+1, l)
			}
			nodes = f[1:3]
		default:
			t.Fatalf("line %d: %q: unknown element", i+1, l)
		}
		if nodes[0] == nodes[1] {
			t.Errorf("line %d: %q shorts its own nodes", i+1, l)
		}
		for _, nd := range nodes {
			uses[nd]++
		}
		for _, v := range vals {
			x, ok := spiceNumber(v)
			if !ok || !(x > 0) || math.IsInf(x, 0) {
				t.Errorf("line %d: value %q is not a positive finite number", i+1, v)
			}
		}
	}
	if subckt != 1 || ends != 1 {
		t.Errorf("%d .SUBCKT and %d .ENDS lines", subckt, ends)
	}
	for nd, k := range uses {
		if nd != "0" && nd != "SRC" && nd != "LOAD" && nd != "TS1_END" && k < 2 {
			t.Errorf("node %s is used by only one element", nd)
		}
	}
	for _, want := range []string{"C_C1 ", " 2.2p\n", "L_L1 LOAD ", "C_L1_P ", "T_TL1 ", "T_TS1 N3 0 TS1_END 0 Z0=45 ", "T_TS2 SRC 0 0 0 ",
		"E_T1 SRC T1_S N3 0 1.3\n", "V_T1 T1_S 0 DC 0\n", "F_T1 0 N3 V_T1 1.3\n", "* session ?bench?, 868 MHz - 50 ohm\n"} {
		if !strings.Contains(text, want) {
			t.Errorf("netlist lacks %q:\n%s", want, text)
		}
	}
}

// TestWriteRefuses: a network that cannot be built writes nothing and
// names the part.
func TestWriteRefuses(t *testing.T) {
	t.Parallel()
	spec := FitSpec{Span: Range{700e6, 1.1e9}, Z0Ohm: 50}
	for _, c := range []struct {
		name string
		n    match.Network
		opt  Options
		want error
		in   string
	}{
		{"NaN value", match.Network{{Kind: match.SeriesL, Value: math.NaN()}}, Options{Fit: spec, Designators: []string{"L7"}}, ErrPart, "L7"},
		{"infinite Q frequency", match.Network{{Kind: match.SeriesL, Value: 1e-9, Params: map[string]float64{"q": 1e-300, "qRefHz": 1e300}}},
			Options{Fit: spec}, ErrPart, "P1"},
		{"no span", match.Network{{Kind: match.SeriesL, Value: 1e-9}}, Options{}, ErrBand, ""},
	} {
		var b bytes.Buffer
		_, err := Write(&b, c.n, c.opt)
		if !errors.Is(err, c.want) || !strings.Contains(err.Error(), c.in) {
			t.Errorf("%s: error %v, want %v naming %q", c.name, err, c.want, c.in)
		}
		if b.Len() != 0 {
			t.Errorf("%s: wrote %d bytes", c.name, b.Len())
		}
	}
}

// TestWriteThrough: a network without series parts joins its pins with a
// zero-volt source.
func TestWriteThrough(t *testing.T) {
	t.Parallel()
	var b bytes.Buffer
	if _, err := Write(&b, match.Network{{Kind: match.ShuntC, Value: 1e-12}}, Options{Fit: FitSpec{Span: Range{1e9, 2e9}, Z0Ohm: 50}}); err != nil {
		t.Fatal(err)
	}
	if s := b.String(); !strings.Contains(s, "C_P1 LOAD 0 1p\n") || !strings.Contains(s, "V_THRU SRC LOAD DC 0\n") {
		t.Errorf("netlist:\n%s", s)
	}
}

func TestValue(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		v    float64
		want string
	}{
		{3.9e-9, "3.9n"}, {1.2e-12, "1.2p"}, {50, "50"}, {4700, "4.7k"}, {2.45e9, "2.45g"}, {1e6, "1meg"}, {0.3, "300m"}, {2e-16, "2.000000000e-16"},
	} {
		if got := value(c.v); got != c.want {
			t.Errorf("value(%g) = %q, want %q", c.v, got, c.want)
		}
		if x, ok := spiceNumber(value(c.v)); !ok || math.Abs(x-c.v) > 1e-9*c.v {
			t.Errorf("%q reads back as %g", value(c.v), x)
		}
	}
}
