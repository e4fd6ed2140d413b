package server

import (
	"bytes"
	"context"
	"io"
	"log/slog"
	"math"
	"math/cmplx"
	"net/http/httptest"
	"os"
	"strings"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/amp"
	"matchbench/rfmath/match"
	"matchbench/rfmath/touchstone"
	"matchbench/rfmath/units"
	"matchbench/sessions"
)

// ampFixture is a session holding the demo's invented LNA transistor (the
// file as written by internal/demo, with its noise parameters), the
// 2.4 GHz band, and the amplifier view at atHz.
func ampFixture(t testing.TB, atHz float64) (*fixture, *touchstone.File) {
	t.Helper()
	raw, err := os.ReadFile("../testdata/demo/wristtag-lna-transistor.s2p")
	if err != nil {
		t.Fatal(err)
	}
	tf, err := touchstone.Read(bytes.NewReader(raw), "wristtag-lna-transistor.s2p", touchstone.Limits{})
	if err != nil {
		t.Fatal(err)
	}
	st, err := sessions.Open(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	se, _ := st.Create(ctx, "lna")
	ev, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpSweepAdd, Name: "lna", FileName: "wristtag-lna-transistor.s2p", Raw: raw, Sweep: tf.Sweep})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpBandSet, Name: "ISM", LoHz: 2.4e9, HiHz: 2.4835e9, MinReturnLossDB: 8}); err != nil {
		t.Fatal(err)
	}
	g, n := []float64{1, 2}, []float64{0.5}
	if _, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpAmpSet, SweepID: ev.SweepID, FreqHz: atHz, AmpChange: sessions.AmpChange{GainStepsDB: &g, NFStepsDB: &n}}); err != nil {
		t.Fatal(err)
	}
	srv := New(Config{Store: st, Log: slog.New(slog.NewTextHandler(io.Discard, nil))})
	ts := httptest.NewServer(srv)
	t.Cleanup(func() { srv.Shutdown(); ts.Close(); st.Close() })
	return &fixture{store: st, srv: srv, ts: ts, sess: se, sweep: ev.SweepID}, tf
}

func (f *fixture) state(t testing.TB) *sessions.State {
	t.Helper()
	st, _, err := f.store.State(context.Background(), f.sess.ID)
	if err != nil {
		t.Fatal(err)
	}
	return st
}

// The panel at 2.44 GHz, where the device is unconditionally stable: both
// charts with their circles and handles, the figures of rfmath/amp as the
// command line prints them, and the readout at the default termination
// (Γopt) giving NFmin.
func TestAmpPanelStable(t *testing.T) {
	t.Parallel()
	f, tf := ampFixture(t, 2.44e9)
	_, page := get(t, f.ts.URL+"/s/"+f.sess.EditToken+"/")
	for _, id := range []string{`id="amps-region-instab"`, `id="amps-region-ga0"`, `id="amps-region-ga1"`, `id="amps-region-nf0"`, `id="amps-spot-gs"`, `id="amps-spot-opt"`, `id="amps-spot-conj"`,
		`id="ampl-region-outstab"`, `id="ampl-region-gp0"`, `id="ampl-spot-gl"`, `data-testid="amp-stability-plot"`, "unconditionally stable"} {
		if !strings.Contains(page, id) {
			t.Errorf("the page lacks %s", id)
		}
	}
	s, err := amp.SAt(tf.Sweep, 2.44e9)
	if err != nil {
		t.Fatal(err)
	}
	np, err := amp.NoiseAt(tf.Noise, 2.44e9)
	if err != nil {
		t.Fatal(err)
	}
	sc := f.srv.scene(f.sess.ID, f.state(t))
	v := sc.ampView()
	m, _ := amp.MAG(s)
	if v.K != fmtRatio(amp.RollettK(s)) || !strings.HasPrefix(v.MaxGain, "MAG "+units.FormatDB(amp.DB(m))) || v.Conj == "" || v.ConjNote != "" {
		t.Errorf("K %q, max gain %q, conjugate match %q / %q", v.K, v.MaxGain, v.Conj, v.ConjNote)
	}
	// The readout at Γopt: NF = NFmin (the default termination).
	if r := v.Readout; r.NF != units.FormatDB(np.NFminDB) || r.GA != units.FormatDB(amp.DB(amp.AvailableGain(s, amp.GammaOpt(np)))) {
		t.Errorf("readout NF %q, G_A %q; want NFmin %s and G_A(Γopt)", r.NF, r.GA, units.FormatDB(np.NFminDB))
	}
	if !strings.Contains(v.Noise, "NFmin "+units.FormatDB(np.NFminDB)) || len(v.NFCircles) != 1 || len(v.GainCircles) != 2 {
		t.Errorf("noise %q, circles %v, %v", v.Noise, v.NFCircles, v.GainCircles)
	}
}

// At 1 GHz the device is only conditionally stable: the conjugate match
// is refused with the reason, the maximum gain is MSG, and the stability
// circle's unstable side is shaded inside the disc.
func TestAmpPanelConditional(t *testing.T) {
	t.Parallel()
	f, tf := ampFixture(t, 1e9)
	sc := f.srv.scene(f.sess.ID, f.state(t))
	v := sc.ampView()
	s, _ := amp.SAt(tf.Sweep, 1e9)
	if v.Unconditional || !strings.Contains(v.ConjNote, "No simultaneous conjugate match") || !strings.Contains(v.ConjNote, "K = ") ||
		!strings.HasPrefix(v.MaxGain, "MSG "+units.FormatDB(amp.DB(amp.MSG(s)))) {
		t.Errorf("conditional device: unconditional %v, note %q, max gain %q", v.Unconditional, v.ConjNote, v.MaxGain)
	}
	src, _, _, _ := sc.ampCharts()
	var found bool
	for _, r := range src.Regions {
		if r.ID == "instab" {
			found = true
			c := amp.InputStabilityCircle(s)
			if r.Center != c.Center || r.Radius != c.Radius || r.Shade == 0 {
				t.Errorf("input stability region %+v, circle %+v", r, c)
			}
			if cmplx.Abs(c.Center)-c.Radius >= 1 {
				t.Errorf("at 1 GHz the unstable sources should reach into the disc: %+v", c)
			}
		}
	}
	if !found {
		t.Error("no input stability region")
	}
}

// A termination dragged over the websocket: the update carries only the
// two handles and the readout, whose noise figure and gain are
// rfmath/amp's at the new Γs; the drag is one undo step.
func TestAmpPointOverWebsocket(t *testing.T) {
	t.Parallel()
	f, tf := ampFixture(t, 2.44e9)
	c := wsDial(t, f, f.sess.EditToken)
	g := complex(0.3, 0.35)
	for i, p := range []complex128{0.1, 0.2 + 0.2i, g} {
		c.WriteJSON(inMsg{Type: "change", ID: int64(i + 1), Change: &sessions.Change{Op: sessions.OpAmpPoint, AmpChange: sessions.AmpChange{Plane: "source"}, Gamma: &sessions.Point{Re: real(p), Im: imag(p)}, Gesture: "g1"}})
	}
	var last outMsg
	for {
		m := readUntil(t, c, func(m outMsg) bool { return m.Type == "update" })
		last = m
		st := f.state(t)
		if st.Amp.GammaS != nil && complex(st.Amp.GammaS.Re, st.Amp.GammaS.Im) == g && m.V == mustVersion(t, f) {
			break
		}
	}
	ids := map[string]bool{}
	for _, fr := range last.Frags {
		ids[fr.ID] = true
	}
	if len(ids) != 3 || !ids["amps-spot-gs"] || !ids["ampl-spot-gl"] || !ids["amp-readout"] {
		t.Fatalf("a drag update sends %v", ids)
	}
	np, _ := amp.NoiseAt(tf.Noise, 2.44e9)
	s, _ := amp.SAt(tf.Sweep, 2.44e9)
	var ro string
	for _, fr := range last.Frags {
		if fr.ID == "amp-readout" {
			ro = fr.HTML
		}
	}
	for _, want := range []string{units.FormatDB(amp.NoiseFigureDB(np, 50, g)), units.FormatDB(amp.DB(amp.AvailableGain(s, g)))} {
		if !strings.Contains(ro, want) {
			t.Errorf("the readout lacks %s:\n%s", want, ro)
		}
	}
	c.WriteJSON(inMsg{Type: "change", ID: 9, Change: &sessions.Change{Op: sessions.OpUndo}})
	readUntil(t, c, func(m outMsg) bool { return m.Type == "ack" && m.ID == 9 })
	if st := f.state(t); st.Amp.GammaS != nil {
		t.Errorf("one undo leaves Γs %+v", st.Amp.GammaS)
	}
}

func mustVersion(t testing.TB, f *fixture) int64 {
	t.Helper()
	_, v, err := f.store.State(context.Background(), f.sess.ID)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// A stage network in the workbench is judged in the stage: the source
// network's load is the device's input with the load network in place,
// so the panel's worst return loss is the stage's input return loss, and
// the load network's is its output return loss (two computations: the
// workbench's match.Evaluate on match.StageLoads, the stage's
// amp.EvaluateStage).
func TestStageNetworksInTheWorkbench(t *testing.T) {
	t.Parallel()
	f, tf := ampFixture(t, 2.44e9)
	ctx := context.Background()
	st := f.state(t)
	band := st.Bands[0].ID
	ev, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpStageSet, AmpChange: sessions.AmpChange{StageReqs: []sessions.StageReq{{BandID: band, MinGainDB: 12, MaxNFdB: 1.5, MinInputRLdB: 8, MinOutputRLdB: 15}}}})
	if err != nil {
		t.Fatal(err)
	}
	stg := ev.State.Stage
	src := []sessions.Part{{Kind: sessions.PartShuntL, Value: 7.5e-9, ESeries: "E24", Model: "0402"}, {Kind: sessions.PartSeriesL, Value: 3.6e-9, ESeries: "E24", Model: "0402"}}
	load := []sessions.Part{{Kind: sessions.PartShuntC, Value: 0.33e-12, ESeries: "E24", Model: "0402"}, {Kind: sessions.PartSeriesL, Value: 1.8e-9, ESeries: "E24", Model: "0402"}}
	if _, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpStageStore, AmpChange: sessions.AmpChange{StageSearch: &sessions.StageSearchResult{Designs: []sessions.StageDesign{{Source: src, Load: load}}}}}); err != nil {
		t.Fatal(err)
	}
	zero := 0
	if _, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpStageUse, Index: &zero}); err != nil {
		t.Fatal(err)
	}
	st = f.state(t)
	sc := f.srv.scene(f.sess.ID, st)
	if sc.stage == nil || sc.stage.err != nil {
		t.Fatalf("stage: %+v", sc.stage)
	}
	sb := sc.stage.m.Bands[0]
	nv := sc.networkView()
	if st.ActiveNetwork != stg.SourceNetworkID || !strings.Contains(nv.StageNote, "device's input") {
		t.Fatalf("active %q, note %q", st.ActiveNetwork, nv.StageNote)
	}
	if got, want := nv.Metrics[0].Worst, units.FormatDB(sb.WorstInputRLdB); got != want {
		t.Errorf("source network in the workbench: worst RL %s, the stage's input RL %s", got, want)
	}
	if _, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpNetworkSelect, NetworkID: stg.LoadNetworkID}); err != nil {
		t.Fatal(err)
	}
	sc = f.srv.scene(f.sess.ID, f.state(t))
	nv = sc.networkView()
	if got, want := nv.Metrics[0].Worst, units.FormatDB(sb.WorstOutputRLdB); got != want || !strings.Contains(nv.StageNote, "device's output") {
		t.Errorf("load network in the workbench: worst RL %s, the stage's output RL %s (%q)", got, want, nv.StageNote)
	}
	// The page's stage figures are amp.EvaluateStage's for these networks.
	sn, _ := designOf(&sessions.Network{Parts: src})
	ln, _ := designOf(&sessions.Network{Parts: load})
	stage, err := match.StageOf(tf.Sweep, tf.Noise, 50, sn, ln)
	if err != nil {
		t.Fatal(err)
	}
	m, err := amp.EvaluateStage(stage, []amp.StageBand{{LoHz: 2.4e9, HiHz: 2.4835e9, StageRequirement: amp.StageRequirement{MinGainDB: 12, MaxNFdB: 1.5, MinInputRLdB: 8, MinOutputRLdB: 15}}})
	if err != nil {
		t.Fatal(err)
	}
	row := sc.stageView().Bands[0]
	if row.NF != units.FormatDB(m.Bands[0].WorstNFdB) || !strings.HasPrefix(row.Gain, units.FormatDB(m.Bands[0].MinGainDB)) || row.Margin != signedDB(m.MarginDB) || row.Pass != m.Meets() {
		t.Errorf("stage row %+v, evaluated %+v", row, m.Bands[0])
	}
	// The part drag path adapts the load too (the websocket's own
	// preparation of the active network).
	c := &conn{s: f.srv, sid: f.sess.ID}
	ne, err := c.activeNetwork(ctx)
	if err != nil || ne.stageSide != "load" {
		t.Errorf("the drag's network: side %q, %v", ne.stageSide, err)
	}
}

// The stage search runs in the background like the network search, stores
// its designs (best found) and puts one into both networks in one action.
func TestStageSearchOverWebsocket(t *testing.T) {
	t.Parallel()
	f, _ := ampFixture(t, 2.44e9)
	c := wsDial(t, f, f.sess.EditToken)
	c.WriteJSON(inMsg{Type: "form", ID: 1, Form: "stage.search", Fields: map[string]string{"parts": "1"}})
	e := readMsg(t, c, func(m map[string]any) bool { return m["id"] == 1.0 })
	if e["type"] != "error" || !strings.Contains(e["msg"].(string), "Set up a stage") {
		t.Errorf("a search without a stage: %v", e)
	}
	band := f.state(t).Bands[0].ID
	c.WriteJSON(inMsg{Type: "form", ID: 2, Form: "stage.set", Fields: map[string]string{"gain." + band: "12", "nf." + band: "1.5 dB", "inrl." + band: "", "outrl." + band: "10"}})
	readMsg(t, c, func(m map[string]any) bool { return m["type"] == "ack" && m["id"] == 2.0 })
	st := f.state(t)
	if st.Stage == nil || len(st.Stage.Reqs) != 1 || st.Stage.Reqs[0].MaxNFdB != 1.5 || st.Stage.Reqs[0].MinInputRLdB != 0 || st.Stage.Reqs[0].MinOutputRLdB != 10 {
		t.Fatalf("stage after the form: %+v", st.Stage)
	}
	c.WriteJSON(inMsg{Type: "form", ID: 3, Form: "stage.set", Fields: map[string]string{"gain." + band: "twelve"}})
	e = readMsg(t, c, func(m map[string]any) bool { return m["id"] == 3.0 })
	if e["type"] != "error" || !strings.Contains(e["msg"].(string), "Gain ≥ (ISM)") {
		t.Errorf("a bad requirement: %v", e)
	}
	c.WriteJSON(inMsg{Type: "form", ID: 4, Form: "stage.search", Fields: map[string]string{"parts": "1", "lseries": "E12", "cseries": "E12", "model": "0402"}})
	readMsg(t, c, func(m map[string]any) bool { return m["type"] == "ack" && m["id"] == 4.0 })
	done := readMsg(t, c, func(m map[string]any) bool { return m["type"] == "progress" && m["running"] == false })
	if msg, _ := done["msg"].(string); !strings.HasPrefix(msg, "stage search done (best found)") {
		t.Fatalf("stage search ended with %q", msg)
	}
	st = f.state(t)
	if st.Stage.Search == nil || len(st.Stage.Search.Designs) == 0 || !strings.Contains(st.Stage.Search.Settings, "best found") {
		t.Fatalf("stored %+v", st.Stage.Search)
	}
	c.WriteJSON(inMsg{Type: "form", ID: 5, Form: "stage.use", Fields: map[string]string{"index": "0"}})
	readMsg(t, c, func(m map[string]any) bool { return m["type"] == "ack" && m["id"] == 5.0 })
	st = f.state(t)
	d := st.Stage.Search.Designs[0]
	srcN := st.Networks[st.NetworkIndex(st.Stage.SourceNetworkID)]
	loadN := st.Networks[st.NetworkIndex(st.Stage.LoadNetworkID)]
	if len(srcN.Parts) != len(d.Source) || len(loadN.Parts) != len(d.Load) {
		t.Errorf("stage.use put %d and %d parts, the design has %d and %d", len(srcN.Parts), len(loadN.Parts), len(d.Source), len(d.Load))
	}
	// The design's row on the page is judged again by amp.EvaluateStage.
	sc := f.srv.scene(f.sess.ID, st)
	if row := sc.stageView().Search.Designs[0]; row.Margin == "" || !strings.Contains(row.Figures, "NF ≤") {
		t.Errorf("design row %+v", row)
	}
}

// Forms of the panel name the field they cannot read, and a 2-port
// without noise data says so instead of showing noise figures.
func TestAmpFormsAndNoNoise(t *testing.T) {
	t.Parallel()
	f, _ := ampFixture(t, 2.44e9)
	sc := f.srv.scene(f.sess.ID, f.state(t))
	for _, c := range []struct {
		form   string
		fields map[string]string
		want   string
	}{
		{"amp.set", map[string]string{"freq": "fast"}, "Frequency"},
		{"amp.set", map[string]string{"gainSteps": "1, -2"}, "Gain circles"},
		{"amp.set", map[string]string{"nfSteps": "x"}, "Noise circles"},
		{"stage.use", map[string]string{"index": "-1"}, "which design"},
		{"nope", nil, "unknown form"},
	} {
		_, err := sc.ampChange(c.form, c.fields)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s %v: %v, want %q", c.form, c.fields, err, c.want)
		}
	}
	ch, err := sc.ampChange("amp.set", map[string]string{"freq": "2.45 GHz", "gainSteps": "1; 3dB"})
	if err != nil || ch.FreqHz != 2.45e9 || ch.GainStepsDB == nil || (*ch.GainStepsDB)[1] != 3 || ch.NFStepsDB != nil {
		t.Errorf("amp.set: %+v, %v", ch, err)
	}
	ch, err = sc.ampChange("stage.set", map[string]string{"sourceNetworkId": "n1", "loadNetworkId": "n2"})
	if err != nil || ch.SourceNetworkID != "n1" || ch.LoadNetworkID != "n2" || ch.StageReqs != nil {
		t.Errorf("stage.set choosing networks: %+v, %v (no requirement field: requirements kept)", ch.AmpChange, err)
	}
	// A 2-port from a file without noise parameters.
	two := testTwoPort()
	ctx := context.Background()
	ev, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpSweepAdd, Name: "plain", FileName: "plain.s2p", Raw: touchstoneBytes(t, two), Sweep: two})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpAmpSet, SweepID: ev.SweepID, FreqHz: 2.44e9}); err != nil {
		t.Fatal(err)
	}
	v := f.srv.scene(f.sess.ID, f.state(t)).ampView()
	if v.Noise != "" || !strings.Contains(v.NoiseNote, "no noise parameters") || !strings.HasPrefix(v.Readout.NF, "n/a") {
		t.Errorf("no noise data: %q / %q, NF %q", v.Noise, v.NoiseNote, v.Readout.NF)
	}
}

// testTwoPort is an invented unconditionally stable 2-port (constant S:
// 0.5∠−60°, 0.05∠30°, 2∠80°, 0.4∠−40°) from 2 to 3 GHz, with no noise data.
func testTwoPort() *rfmath.Sweep {
	sw := rfmath.NewSweep(11, 2, 50)
	for k := range 11 {
		sw.FreqHz[k] = 2e9 + 1e8*float64(k)
		copy(sw.Matrix(k), []complex128{cmplx.Rect(0.5, -math.Pi/3), cmplx.Rect(0.05, math.Pi/6), cmplx.Rect(2, 80*math.Pi/180), cmplx.Rect(0.4, -40*math.Pi/180)})
	}
	return sw
}

// The network search run from a stage network searches that network in the
// stage: its stored designs say which side, its table judges them in the
// stage (the figures the workbench then shows for the design), and using
// one puts its parts into the stage's network rather than a new one.
func TestNetworkSearchOnAStageSide(t *testing.T) {
	t.Parallel()
	f, _ := ampFixture(t, 2.44e9)
	ctx := context.Background()
	ev, err := f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpStageSet})
	if err != nil {
		t.Fatal(err)
	}
	srcID := ev.State.Stage.SourceNetworkID
	c := wsDial(t, f, f.sess.EditToken)
	c.WriteJSON(inMsg{Type: "form", ID: 1, Form: "search.start", Fields: map[string]string{"parts": "2", "lseries": "E24", "cseries": "E24", "model": "0402"}})
	readMsg(t, c, func(m map[string]any) bool { return m["type"] == "ack" && m["id"] == 1.0 })
	readMsg(t, c, func(m map[string]any) bool { return m["type"] == "progress" && m["running"] == false })
	st := f.state(t)
	if st.Search == nil || st.Search.StageSide != "source" || len(st.Search.Designs) == 0 {
		t.Fatalf("stored search %+v", st.Search)
	}
	row := f.srv.scene(f.sess.ID, st).searchView().Designs[0]
	nets := len(st.Networks)
	c.WriteJSON(inMsg{Type: "form", ID: 2, Form: "search.use", Fields: map[string]string{"index": "0"}})
	readMsg(t, c, func(m map[string]any) bool { return m["type"] == "ack" && m["id"] == 2.0 })
	st = f.state(t)
	n := st.Networks[st.NetworkIndex(srcID)]
	if len(st.Networks) != nets || len(n.Parts) != len(st.Search.Designs[0].Parts) || st.ActiveNetwork != srcID {
		t.Fatalf("search.use: %d networks (was %d), source network %+v, active %q", len(st.Networks), nets, n.Parts, st.ActiveNetwork)
	}
	mv := f.srv.scene(f.sess.ID, st).networkView().Metrics[0]
	if mv.Worst != row.Worst || mv.PowerWorst != row.Power {
		t.Errorf("the workbench shows %s / %s for the design, the search table %s / %s", mv.Worst, mv.PowerWorst, row.Worst, row.Power)
	}
}
