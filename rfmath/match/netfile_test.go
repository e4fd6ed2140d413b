package match

import (
	"errors"
	"math"
	"reflect"
	"strings"
	"testing"

	"matchbench/rfmath/parts"
)

// A network and its layout survive the file: kinds, values, series,
// models, own figures, pads and traces.
func TestNetworkFileRoundTrip(t *testing.T) {
	t.Parallel()
	n := Network{
		{Kind: ShuntL, Value: 1.8e-9, Series: "E24", Model: parts.Typical0402, Params: map[string]float64{"q": 25}},
		{Kind: SeriesC, Value: 6.8e-12, Series: "E12", Model: parts.Typical0603},
		{Kind: ShuntC, Value: 1.5e-12, Model: parts.ConstantQ{QL: 40, QC: 250}},
		{Kind: SeriesL, Value: 3e-9, Model: parts.DefaultConstantQ},
		{Kind: Line, Value: 0.01, Params: map[string]float64{"z0Ohm": 60, "vf": 0.7}},
		{Kind: ShuntR, Value: 1e3},
	}
	lay := Layout{Footprint: Footprint{Name: "mine", PadCF: 0.09e-12}, Traces: []Trace{{Gap: 0, LengthM: 2e-3, Z0Ohm: 53, EpsEff: 3.2}, {Gap: 6, LengthM: 1e-3, Z0Ohm: 50, EpsEff: 3}}}
	b, err := MarshalNetwork(n, lay)
	if err != nil {
		t.Fatal(err)
	}
	ns, ls, err := UnmarshalNetworks(b)
	if err != nil {
		t.Fatalf("%v\n%s", err, b)
	}
	got := ns[0]
	if len(got) != len(n) {
		t.Fatalf("%d parts back", len(got))
	}
	// The circuits are the same: the same Γ at a few frequencies.
	c0, _ := n.Circuit()
	c1, _ := got.Circuit()
	for _, f := range []float64{0.5e9, 1e9, 2.4e9} {
		if d := abs(c0.GammaAt(f, 0.3+0.2i, 50) - c1.GammaAt(f, 0.3+0.2i, 50)); d > 1e-15 {
			t.Errorf("%g Hz: Γ differs by %g after the file", f, d)
		}
	}
	for i := range n {
		if got[i].Kind != n[i].Kind || got[i].Value != n[i].Value || got[i].Series != n[i].Series {
			t.Errorf("part %d: %v, want %v", i, got[i], n[i])
		}
	}
	if !reflect.DeepEqual(ls[0].Traces, lay.Traces) || ls[0].Footprint.PadCF != lay.Footprint.PadCF {
		t.Errorf("layout %+v, want %+v", ls[0], lay)
	}
	// A typical footprint is written by name alone.
	b, _ = MarshalNetwork(n[:1], Layout{Footprint: Footprint0402})
	if !strings.Contains(string(b), `"footprint": "0402"`) || strings.Contains(string(b), "pad_cf") {
		t.Errorf("typical footprint written as\n%s", b)
	}
}

// A design object as `matchbench match --json` prints it (keys it adds
// beyond parts and model are ignored) is a network file, and so is the
// whole array.
func TestNetworkFileFromMatchJSON(t *testing.T) {
	t.Parallel()
	const design = `{
  "parts": [
    {"kind": "shunt_L", "value": 1.8e-9, "series": "E24"},
    {"kind": "series_L", "value": 1.8e-9, "series": "E24"},
    {"kind": "shunt_C", "value": 7.5e-12, "series": "E24"}
  ],
  "worst_rl_db": 10.16, "worst_power_to_load": 0.629, "margin_db": 0.16, "meets": true,
  "over_dissipating": false, "worse_than_no_network": false,
  "bands": [{"lo_hz": 863000000, "hi_hz": 870000000, "required_rl_db": 10, "worst_rl_db": null}],
  "yield": 0.61, "model": "typical 0402"
}`
	ns, _, err := UnmarshalNetworks([]byte(design))
	if err != nil {
		t.Fatal(err)
	}
	if len(ns) != 1 || len(ns[0]) != 3 || ns[0][2].Model != parts.Typical0402 || ns[0][0].Kind != ShuntL {
		t.Fatalf("network %v", ns)
	}
	q := strings.Replace(design, `"typical 0402"`, `"constant Q (L 30, C lossless)"`, 1)
	ns, _, err = UnmarshalNetworks([]byte("[" + design + ",\n" + q + "]"))
	if err != nil {
		t.Fatal(err)
	}
	if len(ns) != 2 || ns[1][0].Model != (parts.ConstantQ{QL: 30}) {
		t.Fatalf("array: %v", ns)
	}
	if m, _ := ns[0].Circuit(); m.Len() != 3 {
		t.Error("circuit")
	}
}

// Model names as `match` prints them and as sessions store them.
func TestModelNames(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		in   string
		want parts.Model
	}{
		{"ideal", parts.Ideal}, {"", parts.Ideal}, {"0402", parts.Typical0402}, {"typical 0603", parts.Typical0603},
		{"constq", parts.DefaultConstantQ}, {"constant Q (L 30, C 300)", parts.ConstantQ{QL: 30, QC: 300}},
		{"constant Q (L lossless, C 120)", parts.ConstantQ{QC: 120}},
	} {
		got, err := ParseModelName(tc.in)
		if err != nil || got != tc.want {
			t.Errorf("%q: %v, %v", tc.in, got, err)
		}
		if tc.in != "" && tc.in != "0402" && tc.in != "constq" {
			if back := ModelName(got); back != tc.in {
				t.Errorf("%q written back as %q", tc.in, back)
			}
		}
	}
	for _, bad := range []string{"0805", "typical", "constant Q (L x)", "constant Q (R 3)"} {
		if _, err := ParseModelName(bad); err == nil {
			t.Errorf("%q accepted", bad)
		}
	}
}

// Bad files are refused with ErrNetworkFile and say where.
func TestNetworkFileErrors(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name, file, words string
	}{
		{"syntax", "{\n  \"parts\": [\n    {\"kind\": \"shunt_L\" \"value\": 1}\n  ]\n}", "line 3"},
		{"wrong type", `{"parts": [{"kind": "shunt_L", "value": "1n"}]}`, `"parts.value" should be a float64`},
		{"no parts", `{"model": "ideal"}`, `no "parts"`},
		{"empty array", `[]`, "empty array"},
		{"unknown kind", `{"parts": [{"kind": "shunt_X", "value": 1e-9}]}`, `part 1: kind "shunt_X"`},
		{"zero value", `{"parts": [{"kind": "shunt_L", "value": 0}]}`, "part 1 (shunt_L): value 0"},
		{"bad series", `{"parts": [{"kind": "shunt_L", "value": 1e-9, "series": "E7"}]}`, "part 1: series"},
		{"series on a line", `{"parts": [{"kind": "line", "value": 0.01, "series": "E24"}]}`, "no standard values"},
		{"bad model", `{"parts": [{"kind": "shunt_L", "value": 1e-9, "model": "0805"}]}`, `part 1: model "0805"`},
		{"bad top model", `{"parts": [{"kind": "shunt_L", "value": 1e-9}], "model": "typical 1206"}`, `model "typical 1206"`},
		{"unknown param", `{"parts": [{"kind": "shunt_L", "value": 1e-9}, {"kind": "series_C", "value": 1e-12, "params": {"Q": 3}}]}`, `part 2: unknown parameter "Q"`},
		{"param range", `{"parts": [{"kind": "shunt_L", "value": 1e-9, "params": {"vf": 2}}]}`, `"vf" = 2 is out of range`},
		{"footprint", `{"parts": [{"kind": "shunt_L", "value": 1e-9}], "layout": {"footprint": "1206"}}`, `layout: `},
		{"trace gap", `{"parts": [{"kind": "shunt_L", "value": 1e-9}], "layout": {"traces": [{"gap": 3, "length_m": 1e-3, "z0_ohm": 50}]}}`, "gap 3"},
		{"trace both", `{"parts": [{"kind": "shunt_L", "value": 1e-9}], "layout": {"traces": [{"gap": 0, "length_m": 1e-3, "z0_ohm": 50, "width_m": 1e-3}]}}`, "trace 1: give z0_ohm"},
		{"bad microstrip", `{"parts": [{"kind": "shunt_L", "value": 1e-9}], "layout": {"traces": [{"gap": 0, "length_m": 1e-3, "width_m": 1e-3, "height_m": 0, "eps_r": 4}]}}`, "trace 1: "},
		{"second of two", `[{"parts": [{"kind": "shunt_L", "value": 1e-9}]}, {"parts": []}]`, "network 2"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, _, err := UnmarshalNetworks([]byte(tc.file))
			if !errors.Is(err, ErrNetworkFile) || !strings.Contains(err.Error(), tc.words) {
				t.Errorf("error %v, want ErrNetworkFile with %q", err, tc.words)
			}
		})
	}
}

// A trace given by its width over a substrate takes Hammerstad's Z0 and
// effective permittivity.
func TestNetworkFileMicrostrip(t *testing.T) {
	t.Parallel()
	_, ls, err := UnmarshalNetworks([]byte(`{"parts": [{"kind": "shunt_L", "value": 1e-9}], "layout": {"traces": [{"gap": 1, "length_m": 1e-3, "width_m": 3e-3, "height_m": 1.6e-3, "eps_r": 4.4}]}}`))
	if err != nil {
		t.Fatal(err)
	}
	want := Microstrip{WidthM: 3e-3, HeightM: 1.6e-3, EpsR: 4.4}
	if tr := ls[0].Traces[0]; math.Abs(tr.Z0Ohm-want.Z0Ohm()) > 1e-12 || math.Abs(tr.EpsEff-want.EpsEff()) > 1e-12 || tr.Gap != 1 {
		t.Errorf("trace %+v", tr)
	}
}
