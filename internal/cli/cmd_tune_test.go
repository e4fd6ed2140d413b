package cli

import (
	"bytes"
	"context"
	"encoding/json"
	"io"
	"log/slog"
	"math"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"

	"matchbench/internal/demo"
	"matchbench/rfmath"
	"matchbench/rfmath/match"
	"matchbench/rfmath/units"
	"matchbench/server"
	"matchbench/sessions"
)

// tuneDemoArgs runs `tune` on the shipped demo files, as the README shows.
var tuneDemoArgs = []string{"tune", "--load", "testdata/demo/fieldnode-antenna.s1p", "--built", "testdata/demo/fieldnode-first-build.s1p",
	"--network", "testdata/demo/fieldnode-network.json", "--band", "863M:870M", "--band", "902M:928M"}

type tuneOut struct {
	Network json.RawMessage `json:"network"`
	Fit     struct {
		Points      int     `json:"points"`
		RMSResidual float64 `json:"rms_residual_gamma"`
		Params      []struct {
			Name         string  `json:"name"`
			Kind         string  `json:"kind"`
			Index        int     `json:"index"`
			Value        float64 `json:"value"`
			Sigma        float64 `json:"sigma"`
			Undetermined bool    `json:"undetermined"`
		} `json:"params"`
		Correlation [][]float64 `json:"correlation"`
		Warnings    []string    `json:"warnings"`
	} `json:"fit"`
	AsBuilt struct {
		MarginDB float64 `json:"margin_db"`
		Meets    bool    `json:"meets"`
	} `json:"as_built"`
	Suggestions []struct {
		Changes []struct {
			Index int     `json:"index"`
			To    float64 `json:"to"`
		} `json:"changes"`
		Network          json.RawMessage `json:"network"`
		MarginDB         float64         `json:"margin_db"`
		WorstRLdB        float64         `json:"worst_rl_db"`
		WorstPowerToLoad float64         `json:"worst_power_to_load"`
		Meets            bool            `json:"meets"`
		Yield            float64         `json:"yield"`
	} `json:"suggestions"`
	Best *int `json:"best"`
}

func runTuneDemo(t *testing.T) tuneOut {
	t.Helper()
	code, out, errOut := runCLI(t, append(tuneDemoArgs, "--json")...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var o tuneOut
	if err := json.Unmarshal([]byte(out), &o); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	return o
}

// The fit of the demo's first build recovers the board internal/demo
// invented (its actual part values, pads and trace) within 3σ of the
// stated uncertainties.
func TestTuneDemoRecoversTheBoard(t *testing.T) {
	t.Parallel()
	o := runTuneDemo(t)
	pad := demo.FirstBuildPadCF
	truth := map[string]float64{
		"L1": demo.FirstBuildValues[0], "L2": demo.FirstBuildValues[1], "C1": demo.FirstBuildValues[2],
		"pads at the L1–L2 node": 2 * pad, "pad at L2's source end": pad, "pad at C1": pad,
		"trace L2–C1": demo.FirstBuildTraceM,
	}
	if len(o.Fit.Params) != len(truth) {
		t.Fatalf("%d parameters, want %d: %+v", len(o.Fit.Params), len(truth), o.Fit.Params)
	}
	for _, p := range o.Fit.Params {
		tv, ok := truth[p.Name]
		if !ok {
			t.Errorf("unexpected parameter %q", p.Name)
			continue
		}
		z := (p.Value - tv) / p.Sigma
		t.Logf("%-24s true %.4g fitted %.4g ± %.2g (%+.2f σ)", p.Name, tv, p.Value, p.Sigma, z)
		if !(math.Abs(z) <= 3) {
			t.Errorf("%s: fitted %g ± %g, true %g", p.Name, p.Value, p.Sigma, tv)
		}
	}
	// The demo's analyser noise is σ = 0.002 per component on both sweeps.
	if o.Fit.RMSResidual < 0.002 || o.Fit.RMSResidual > 0.006 || o.Fit.Points != 401 {
		t.Errorf("rms residual %g over %d points", o.Fit.RMSResidual, o.Fit.Points)
	}
	if o.AsBuilt.Meets {
		t.Errorf("the first build meets (%g dB): the demo board should miss", o.AsBuilt.MarginDB)
	}
}

// One round of the suggested swap on the demo's board as it really is
// meets every band. The check builds the true board with the new value by
// internal/demo's own ladder (not the fit's model) and judges it at the
// bands' points with rfmath's band figures; it holds with the new part at
// its nominal value.
func TestTuneDemoSwapMeetsOnTheTrueBoard(t *testing.T) {
	t.Parallel()
	o := runTuneDemo(t)
	if o.Best == nil {
		t.Fatal("no suggestion")
	}
	s := o.Suggestions[*o.Best]
	if !s.Meets || s.MarginDB < 0 {
		t.Fatalf("best suggestion predicted to miss: %+v", s)
	}
	values := append([]float64(nil), demo.FirstBuildValues...)
	for _, c := range s.Changes {
		values[c.Index] = c.To
	}
	margin := trueBoardMargin(t, values)
	t.Logf("best suggestion %+v: predicted %.3f dB, true board %.3f dB", s.Changes, s.MarginDB, margin)
	if margin < 0 {
		t.Errorf("on the true board the suggestion misses by %.3f dB", -margin)
	}
	if math.Abs(margin-s.MarginDB) > 0.15 {
		t.Errorf("predicted %.3f dB, true board %.3f dB", s.MarginDB, margin)
	}
	// The suggestion's network is a network file of the design with the
	// change made.
	ns, _, err := match.UnmarshalNetworks(s.Network)
	if err != nil {
		t.Fatal(err)
	}
	for i, p := range ns[0] {
		want := demo.FieldnodeDesign[i].Value
		for _, c := range s.Changes {
			if c.Index == i {
				want = c.To
			}
		}
		if p.Value != want || p.Kind != demo.FieldnodeDesign[i].Kind {
			t.Errorf("next network part %d: %v, want %s %g", i, p, demo.FieldnodeDesign[i].Kind, want)
		}
	}
}

// trueBoardMargin returns the least margin over the demo bands (10 dB
// return loss) of the demo's board with the parts at values, by
// internal/demo's ladder on the noise-free antenna model.
func trueBoardMargin(t *testing.T, values []float64) float64 {
	t.Helper()
	c := demo.FirstBoard(values, demo.FirstBuildPadCF, demo.FirstBuildTraceM).Circuit()
	freq := demo.AntennaGrid()
	gam := make([]complex128, len(freq))
	for k, f := range freq {
		gam[k] = demo.FieldnodeAntennaGamma(f)
	}
	margin := math.Inf(1)
	for _, b := range demo.FieldnodeBands {
		fs, err := rfmath.BandFreqs(nil, freq, b.LoHz, b.HiHz)
		if err != nil {
			t.Fatal(err)
		}
		var sum rfmath.BandSummary
		for _, f := range fs {
			g, _ := rfmath.InterpGamma(freq, gam, f)
			gin, p := c.PowerAt(f, g, 50)
			sum.Add(f, gin, p)
		}
		margin = math.Min(margin, rfmath.Requirement{MinReturnLossDB: b.MinReturnLossDB}.MarginDB(sum.Figures()))
	}
	return margin
}

// The text output shows the same numbers as the JSON: each fitted value,
// the best suggestion and its margin.
func TestTuneText(t *testing.T) {
	t.Parallel()
	o := runTuneDemo(t)
	code, text, errOut := runCLI(t, tuneDemoArgs...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	for _, p := range o.Fit.Params {
		unit := map[string]string{"part": "", "pads": "F", "trace": "m"}[p.Kind]
		if unit == "" {
			unit = map[bool]string{true: "H", false: "F"}[strings.HasPrefix(p.Name, "L")]
		}
		row := regexp.MustCompile(regexp.QuoteMeta(p.Name) + `\s+\S+ \S+\s+` + regexp.QuoteMeta(units.Format(p.Value, unit, 4)))
		if !row.MatchString(text) {
			t.Errorf("no row %q with %s in:\n%s", p.Name, units.Format(p.Value, unit, 4), text)
		}
	}
	b := o.Suggestions[*o.Best]
	for _, w := range []string{"Try first:", signed(b.MarginDB) + " dB to spare", units.FormatDB(b.WorstRLdB), "The board as fitted:", "misses"} {
		if !strings.Contains(text, w) {
			t.Errorf("text lacks %q:\n%s", w, text)
		}
	}
	for _, w := range o.Fit.Warnings {
		if !strings.Contains(text, "(!) "+w+".") {
			t.Errorf("text lacks the warning %q", w)
		}
	}
}

// The README's tune example runs as written.
func TestTuneREADMEExample(t *testing.T) {
	t.Parallel()
	readme, err := os.ReadFile("README.md")
	if err != nil {
		t.Fatal(err)
	}
	var found bool
	for _, line := range strings.Split(string(readme), "\n") {
		line = strings.TrimSpace(line)
		if !strings.HasPrefix(line, "matchbench tune --load testdata/") {
			continue
		}
		found = true
		args := strings.Fields(strings.TrimPrefix(line, "matchbench "))
		if code, _, errOut := runCLI(t, args...); code != 0 {
			t.Errorf("%s: exit %d: %s", line, code, errOut)
		}
	}
	if !found {
		t.Error("the README has no `matchbench tune --load testdata/…` example")
	}
}

// A design printed by `match --json` feeds `tune --network` as it is.
func TestTuneTakesMatchJSON(t *testing.T) {
	t.Parallel()
	code, out, errOut := runCLI(t, "match", "testdata/demo/fieldnode-antenna.s1p", "--band", "863M:870M", "--band", "902M:928M", "--parts", "2", "--top", "2", "--builds", "0", "--json")
	if code != 0 {
		t.Fatalf("match: exit %d: %s", code, errOut)
	}
	path := filepath.Join(t.TempDir(), "designs.json")
	if err := os.WriteFile(path, []byte(out), 0o644); err != nil {
		t.Fatal(err)
	}
	var designs []struct {
		Parts []struct {
			Kind  string  `json:"kind"`
			Value float64 `json:"value"`
		} `json:"parts"`
	}
	if err := json.Unmarshal([]byte(out), &designs); err != nil {
		t.Fatal(err)
	}
	code, tout, errOut := runCLI(t, "tune", "--load", "testdata/demo/fieldnode-antenna.s1p", "--built", "testdata/demo/fieldnode-first-build.s1p",
		"--network", path, "--design", "2", "--footprint", "0402", "--band", "863M:870M", "--band", "902M:928M", "--builds", "0", "--json")
	if code != 0 {
		t.Fatalf("tune: exit %d: %s", code, errOut)
	}
	var o struct {
		Network match.NetworkFile `json:"network"`
	}
	if err := json.Unmarshal([]byte(tout), &o); err != nil {
		t.Fatal(err)
	}
	if len(o.Network.Parts) != len(designs[1].Parts) || o.Network.Model != "typical 0402" || o.Network.Layout == nil || o.Network.Layout.Footprint != "0402" {
		t.Fatalf("tune read %+v from design 2 %+v", o.Network, designs[1])
	}
	for i, p := range designs[1].Parts {
		if o.Network.Parts[i].Kind != p.Kind || o.Network.Parts[i].Value != p.Value {
			t.Errorf("part %d: %+v, want %+v", i, o.Network.Parts[i], p)
		}
	}
}

// Bad usage and bad files are reported with the right exit code and say
// what and where.
func TestTuneErrors(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	bad := filepath.Join(dir, "bad.json")
	os.WriteFile(bad, []byte("{\n  \"parts\": [\n    {\"kind\": \"shunt_Q\", \"value\": 1e-9}\n  ]\n}\n"), 0o644)
	broken := filepath.Join(dir, "broken.json")
	os.WriteFile(broken, []byte("{\n  \"parts\": [\n"), 0o644)
	base := func(over ...string) []string {
		args := []string{"tune", "--load", "testdata/demo/fieldnode-antenna.s1p", "--built", "testdata/demo/fieldnode-first-build.s1p",
			"--network", "testdata/demo/fieldnode-network.json", "--band", "863M:870M"}
		return append(args, over...)
	}
	for _, tc := range []struct {
		name  string
		args  []string
		code  int
		words string
	}{
		{"no built", []string{"tune", "--load", "testdata/demo/fieldnode-antenna.s1p", "--network", "x.json", "--band", "863M:870M"}, exitUsage, "--built is required"},
		{"no band", []string{"tune", "--load", "a", "--built", "b", "--network", "c"}, exitUsage, "--band is required"},
		{"positional", append(base(), "extra.s1p"), exitUsage, "not as arguments"},
		{"band outside", base("--band", "2.4G:2.5G"), exitUsage, "outside the load sweep"},
		{"bad trace", base("--trace", "x:1mm"), exitUsage, "--trace x:1mm"},
		{"trace gap", base("--trace", "7:1mm"), exitUsage, "gap 7"},
		{"bad footprint", base("--footprint", "1206"), exitUsage, "--footprint 1206"},
		{"bad pad", base("--pad", "-1p"), exitUsage, "--pad -1p"},
		{"bad design", base("--design", "3"), exitUsage, "holds 1 network"},
		{"bad carry", base("--carry", "some"), exitUsage, "--carry some"},
		{"bad steps", base("--steps", "0"), exitUsage, "--steps 0"},
		{"missing network", base("--network", filepath.Join(dir, "none.json")), exitInput, "none.json"},
		{"bad kind", base("--network", bad), exitInput, `part 1: kind "shunt_Q"`},
		{"broken json", base("--network", broken), exitInput, "line 2, column 13: unexpected end"},
		{"missing built", base("--built", filepath.Join(dir, "none.s1p")), exitInput, "none.s1p"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			code, _, errOut := runCLI(t, tc.args...)
			if code != tc.code || !strings.Contains(errOut, tc.words) {
				t.Errorf("exit %d, stderr %q; want %d with %q", code, errOut, tc.code, tc.words)
			}
		})
	}
}

// The committed network file is what `matchbench demo` writes, and the
// demo's trace figures are Hammerstad's for its width and substrate.
func TestDemoNetworkFile(t *testing.T) {
	t.Parallel()
	want, err := demoNetworkFile()
	if err != nil {
		t.Fatal(err)
	}
	got, err := os.ReadFile(filepath.Join("testdata", "demo", demoNetworkFileName))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("testdata/demo/%s differs from the model (remake with: go run . demo testdata/demo)", demoNetworkFileName)
	}
	m := match.Microstrip{WidthM: demo.FieldnodeTraceWidthM, HeightM: demo.FieldnodeTraceHeightM, EpsR: demo.FieldnodeTraceEpsR}
	if math.Abs(m.Z0Ohm()-demo.FieldnodeTraceZ0Ohm) > 0.01 || math.Abs(m.EpsEff()-demo.FieldnodeTraceEpsEff) > 0.001 {
		t.Errorf("demo trace %g Ω, εeff %g; Hammerstad gives %.4g Ω, %.4g", demo.FieldnodeTraceZ0Ohm, demo.FieldnodeTraceEpsEff, m.Z0Ohm(), m.EpsEff())
	}
}

// internal/demo's ladder of the first board is the design placed on the
// board by match.Layout.Place with the board's true pads and trace: two
// constructions of one circuit.
func TestDemoFirstBoardIsPlaced(t *testing.T) {
	t.Parallel()
	n, _ := demoFieldnodeNetwork()
	for i, v := range demo.FirstBuildValues {
		n[i].Value = v
	}
	lay := match.Layout{Footprint: match.Footprint{PadCF: demo.FirstBuildPadCF},
		Traces: []match.Trace{{Gap: demo.FieldnodeTraceGap, LengthM: demo.FirstBuildTraceM, Z0Ohm: demo.FieldnodeTraceZ0Ohm, EpsEff: demo.FieldnodeTraceEpsEff}}}
	pl, err := lay.Place(n)
	if err != nil {
		t.Fatal(err)
	}
	c, err := pl.Network.Circuit()
	if err != nil {
		t.Fatal(err)
	}
	hand := demo.FirstBoard(demo.FirstBuildValues, demo.FirstBuildPadCF, demo.FirstBuildTraceM)
	for _, f := range []float64{700e6, 866e6, 915e6, 1100e6} {
		g := demo.FieldnodeAntennaGamma(f)
		if d := c.GammaAt(f, g, 50) - hand.InputGamma(f, g, 50); math.Hypot(real(d), imag(d)) > 1e-12 {
			t.Errorf("%g Hz: placed and demo ladders differ by %v", f, d)
		}
	}
}

// The README's sentence about the demo's tuning round quotes what `tune`
// finds: the first build's miss in the EU band, the fitted pads at the
// L1–L2 node and the trace, and the suggested swap.
func TestTuneDemoFiguresInREADME(t *testing.T) {
	t.Parallel()
	o := runTuneDemo(t)
	var out struct {
		AsBuilt struct {
			Bands []struct {
				LoHz     float64 `json:"lo_hz"`
				MarginDB float64 `json:"margin_db"`
			} `json:"bands"`
		} `json:"as_built"`
		Suggestions []struct {
			Changes []struct {
				Designator string  `json:"designator"`
				From       float64 `json:"from"`
				To         float64 `json:"to"`
			} `json:"changes"`
		} `json:"suggestions"`
	}
	_, js, _ := runCLI(t, append(tuneDemoArgs, "--json")...)
	if err := json.Unmarshal([]byte(js), &out); err != nil {
		t.Fatal(err)
	}
	var pads, trace float64
	for _, p := range o.Fit.Params {
		switch p.Name {
		case "pads at the L1–L2 node":
			pads = p.Value
		case "trace L2–C1":
			trace = p.Value
		}
	}
	c := out.Suggestions[*o.Best].Changes
	if len(c) != 1 || out.AsBuilt.Bands[0].LoHz != 863e6 {
		t.Fatalf("best %+v, bands %+v", c, out.AsBuilt.Bands)
	}
	want := []string{
		"the first build misses the EU band by " + strings.TrimSuffix(units.FormatDB(-out.AsBuilt.Bands[0].MarginDB), " dB")[:3] + " dB",
		"pads at the L1–L2 node at about " + units.Format(math.Round(pads*1e14)/1e14, "F", 2),
		"between L2 and C1 at about " + units.Format(math.Round(trace*1e5)/1e5, "m", 2),
		"suggests " + c[0].Designator + " " + units.Format(c[0].From, "H", 3) + " → " + units.Format(c[0].To, "H", 3),
	}
	readme, err := os.ReadFile("README.md")
	if err != nil {
		t.Fatal(err)
	}
	for _, w := range want {
		if !strings.Contains(string(readme), w) {
			t.Errorf("README does not say %q", w)
		}
	}
}

// The Fieldnode demo session is coherent with the demo files: its network
// is the design the network file holds, and it keeps one round of tuning
// on the first build whose swap to try first is predicted to meet every
// band.
func TestDemoSessionTuningRound(t *testing.T) {
	t.Parallel()
	st, err := sessions.Open(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	srv := server.New(server.Config{Store: st, Log: slog.New(slog.NewTextHandler(io.Discard, nil))})
	t.Cleanup(func() { srv.Shutdown(); st.Close() })
	if _, err := seedDemo(context.Background(), st, srv); err != nil {
		t.Fatal(err)
	}
	list, _ := st.List(context.Background())
	var fn *sessions.State
	for _, s := range list {
		if strings.Contains(s.Name, "Fieldnode") {
			fn, _, _ = st.State(context.Background(), s.ID)
		}
	}
	if fn == nil || fn.Active() == nil {
		t.Fatal("no Fieldnode demo session with a network")
	}
	for i, p := range fn.Active().Parts {
		if d := demo.FieldnodeDesign[i]; p.Kind != d.Kind || p.Value != d.Value {
			t.Errorf("demo network part %d: %s %g; internal/demo's design: %s %g", i, p.Kind, p.Value, d.Kind, d.Value)
		}
	}
	if len(fn.Tuning) != 1 {
		t.Fatalf("%d rounds of tuning", len(fn.Tuning))
	}
	r := fn.Tuning[0]
	if r.AsBuilt.Meets || r.Best < 0 || !r.Suggestions[r.Best].Figs.Meets || r.Chosen != -1 || r.Layout == nil || r.Layout.Footprint != "0402" {
		t.Errorf("demo round: as built %+v, best %d, chosen %d, layout %+v", r.AsBuilt, r.Best, r.Chosen, r.Layout)
	}
}
