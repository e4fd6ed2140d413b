package server

import (
	"bufio"
	"context"
	"encoding/csv"
	"io"
	"log/slog"
	"math"
	"math/cmplx"
	"net/http"
	"net/http/httptest"
	"strconv"
	"strings"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/touchstone"
	"matchbench/sessions"
)

// netFixture is a session whose load is a 200 Ω resistor swept 50–150 MHz
// in 50 Ω, with the low-pass L section of REFERENCE-CHECKS §6c L-3 (shunt
// C = 13.783 pF across the load, then series L = 137.83 nH; values C) as
// its active network: it matches 200 Ω to 50 Ω at 100 MHz.
func netFixture(t *testing.T) (*fixture, string) {
	t.Helper()
	st, err := sessions.Open(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	se, err := st.Create(ctx, "L-3")
	if err != nil {
		t.Fatal(err)
	}
	sw := rfmath.NewSweep(101, 1, 50)
	for k := range sw.FreqHz {
		sw.FreqHz[k] = 50e6 + 1e6*float64(k)
		sw.Data[k] = rfmath.GammaFromZ(200, 50)
	}
	ev, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpSweepAdd, Name: "r200", FileName: "r200.s1p", Raw: []byte("!\n"), Sweep: sw})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpBandSet, Name: "b", LoHz: 95e6, HiHz: 105e6, MinReturnLossDB: 10}); err != nil {
		t.Fatal(err)
	}
	nev, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpNetworkAdd, Name: "Lsec", SweepID: ev.SweepID, DesignHz: 100e6,
		Parts: []sessions.Part{{Kind: sessions.PartShuntC, Value: 13.783e-12}, {Kind: sessions.PartSeriesL, Value: 137.83e-9}}})
	if err != nil {
		t.Fatal(err)
	}
	srv := New(Config{Store: st, Log: slog.New(slog.NewTextHandler(io.Discard, nil))})
	ts := httptest.NewServer(srv)
	t.Cleanup(func() { srv.Shutdown(); ts.Close(); st.Close() })
	return &fixture{store: st, srv: srv, ts: ts, sess: se, sweep: ev.SweepID}, nev.NetworkID
}

// zDomain is the independent computation: the load in parallel with the
// shunt C, then in series with the L, by plain impedance arithmetic.
func zDomain(f, c, l float64) complex128 {
	w := 2 * math.Pi * f
	zc := 1 / complex(0, w*c)
	zp := 200 * zc / (200 + zc)
	return zp + complex(0, w*l)
}

func TestNetworkEvaluation(t *testing.T) {
	t.Parallel()
	f, _ := netFixture(t)
	st := stateOf(t, f)
	sc := f.srv.scene(f.sess.ID, st)
	ne := sc.net
	if ne == nil || ne.err != nil {
		t.Fatalf("no network: %+v", ne)
	}
	for k, fk := range ne.sweep.FreqHz {
		want := rfmath.GammaFromZ(zDomain(fk, 13.783e-12, 137.83e-9), 50)
		if cmplx.Abs(ne.ideal[k]-want) > 1e-12 {
			t.Fatalf("%g Hz: ladder Γ %v, Z-domain Γ %v", fk, ne.ideal[k], want)
		}
	}
	// At 100 MHz the match is exact to the C values' five digits.
	if g := ne.ideal[50]; cmplx.Abs(g) > 1e-4 {
		t.Errorf("Γ at 100 MHz = %v, want ≈ 0", g)
	}
	nv := sc.networkView()
	if len(nv.Parts) != 2 || nv.Parts[0].Designator != "C1" || nv.Parts[1].Designator != "L1" || len(nv.Metrics) != 1 || !nv.Metrics[0].Pass {
		t.Errorf("network view %+v", nv)
	}
}

// Each step of the matching path stays on its circle: the shunt C keeps
// the load's conductance (1/200 S), the series L keeps the resistance it
// starts from (REFERENCE-CHECKS §6c; common practice of chart reading).
func TestMatchingPathArcs(t *testing.T) {
	t.Parallel()
	f, _ := netFixture(t)
	st := stateOf(t, f)
	ne := f.srv.scene(f.sess.ID, st).net
	for _, frac := range []float64{1, 0.4} {
		segs, handles := ne.path(1, 137.83e-9*frac, 1)
		if len(segs) != 2 || len(handles) != 2 {
			t.Fatalf("%d segments, %d handles", len(segs), len(handles))
		}
		for _, g := range segs[0].Points {
			if y := rfmath.YFromGamma(g, 50); math.Abs(real(y)-1.0/200) > 1e-9 {
				t.Fatalf("shunt C step leaves G = 1/200: %v", y)
			}
		}
		r0 := real(rfmath.ZFromGamma(segs[1].Points[0], 50))
		for _, g := range segs[1].Points {
			if z := rfmath.ZFromGamma(g, 50); math.Abs(real(z)-r0) > 1e-9*r0 {
				t.Fatalf("series L step leaves R = %g: %v", r0, z)
			}
		}
	}
	// Animation of a part's value jump: 24 frames of the path layer.
	prev := f.srv.scene(f.sess.ID, st)
	next := *prev
	nst := *st
	nst.Networks = append([]sessions.Network(nil), st.Networks...)
	nst.Networks[0].Parts = append([]sessions.Part(nil), st.Networks[0].Parts...)
	nst.Networks[0].Parts[1].Value = 100e-9
	next.st = &nst
	next.net = next.evalNetwork(&nst.Networks[0])
	a := stepAnimation(prev, &next, sessions.Event{Op: sessions.OpPartSet, PartID: nst.Networks[0].Parts[1].ID}, nil)
	if a == nil || len(a.Frames) != animFrames || a.Frames[0][0].ID != "match-path" {
		t.Fatalf("animation %+v", a)
	}
}

func fetch(t *testing.T, url string) string {
	t.Helper()
	res, err := http.Get(url)
	if err != nil {
		t.Fatal(err)
	}
	defer res.Body.Close()
	b, err := io.ReadAll(res.Body)
	if err != nil {
		t.Fatalf("%s: %v", url, err)
	}
	if res.StatusCode != 200 {
		t.Fatalf("%s: %d %s", url, res.StatusCode, b)
	}
	return string(b)
}

// The exports read back: the matched Touchstone file equals the computed
// response, the network's 2-port cascaded with the load gives it again, the
// netlist has the right nodes and values, the parts list the parts.
func TestNetworkExports(t *testing.T) {
	t.Parallel()
	f, _ := netFixture(t)
	base := f.ts.URL + "/s/" + f.sess.ViewToken
	tf, err := touchstone.Read(strings.NewReader(fetch(t, base+"/export/matched.s1p")), "m.s1p", touchstone.DefaultLimits)
	if err != nil {
		t.Fatal(err)
	}
	for k, fk := range tf.Sweep.FreqHz {
		want := rfmath.GammaFromZ(zDomain(fk, 13.783e-12, 137.83e-9), 50)
		if cmplx.Abs(tf.Sweep.Data[k]-want) > 1e-9 {
			t.Fatalf("matched.s1p at %g Hz: %v, want %v", fk, tf.Sweep.Data[k], want)
		}
	}
	n2, err := touchstone.Read(strings.NewReader(fetch(t, base+"/export/network.s2p")), "n.s2p", touchstone.DefaultLimits)
	if err != nil {
		t.Fatal(err)
	}
	for k, fk := range n2.Sweep.FreqHz {
		s := n2.Sweep.Matrix(k)
		// Port 2 faces the load: Γin = S11 + S12·S21·ΓL/(1 − S22·ΓL).
		gl := rfmath.GammaFromZ(200, 50)
		gin := s[0] + s[1]*s[2]*gl/(1-s[3]*gl)
		want := rfmath.GammaFromZ(zDomain(fk, 13.783e-12, 137.83e-9), 50)
		if cmplx.Abs(gin-want) > 1e-9 {
			t.Fatalf("network.s2p with the load at %g Hz: %v, want %v", fk, gin, want)
		}
	}
	// A simple netlist reader: element name, two nodes, value.
	net := fetch(t, base+"/export/network.cir")
	elems := map[string][3]string{}
	sc := bufio.NewScanner(strings.NewReader(net))
	for sc.Scan() {
		line := strings.TrimSpace(sc.Text())
		if line == "" || line[0] == '*' || line[0] == '.' {
			continue
		}
		fs := strings.Fields(line)
		if len(fs) < 4 {
			t.Fatalf("netlist line %q", line)
		}
		elems[fs[0]] = [3]string{fs[1], fs[2], fs[3]}
	}
	if !strings.Contains(net, ".SUBCKT MATCH_LSEC SRC LOAD\n") || !strings.Contains(net, ".ENDS MATCH_LSEC") {
		t.Errorf("netlist lacks its subcircuit lines:\n%s", net)
	}
	// The shunt C hangs from LOAD to ground; the series L, the last series
	// part, runs from LOAD to SRC (no through elements).
	if e := elems["C_C1"]; e[0] != "LOAD" || e[1] != "0" || spiceNum(t, e[2]) != 13.783e-12 {
		t.Errorf("C1 = %v, want LOAD 0 13.783p", e)
	}
	if e := elems["L_L1"]; e[0] != "LOAD" || e[1] != "SRC" || math.Abs(spiceNum(t, e[2])-137.83e-9) > 1e-15 {
		t.Errorf("L1 = %v, want LOAD SRC 137.83n", e)
	}
	if len(elems) != 2 {
		t.Errorf("%d elements, want 2: %v", len(elems), elems)
	}
	rows, err := csv.NewReader(strings.NewReader(fetch(t, base+"/export/parts.csv"))).ReadAll()
	if err != nil || len(rows) != 3 || rows[0][0] != "Designators" || rows[1][0] != "C1" || rows[1][2] != "capacitor" || rows[1][3] != "13.8pF" ||
		rows[2][0] != "L1" || rows[2][2] != "inductor" || rows[2][3] != "138nH" || rows[1][5] != "C0G (NP0)" {
		t.Errorf("parts.csv %v, %v", rows, err)
	}
	page := fetch(t, base+"/report")
	for _, want := range []string{"Matching network design review", "<h1>Lsec</h1>", `data-testid="report-parts"`, "Cautions", "138nH",
		"The load as measured.", `data-testid="report-schematic"`, "no fixture was removed"} {
		if !strings.Contains(page, want) {
			t.Errorf("report lacks %q", want)
		}
	}
}

// spiceNum reads a SPICE number with a scale suffix.
func spiceNum(t *testing.T, s string) float64 {
	t.Helper()
	mult := map[string]float64{"t": 1e12, "g": 1e9, "meg": 1e6, "k": 1e3, "m": 1e-3, "u": 1e-6, "n": 1e-9, "p": 1e-12, "f": 1e-15}
	s = strings.ToLower(s)
	for _, sfx := range []string{"meg", "t", "g", "k", "m", "u", "n", "p", "f"} {
		if strings.HasSuffix(s, sfx) {
			v, err := strconv.ParseFloat(strings.TrimSuffix(s, sfx), 64)
			if err != nil {
				t.Fatalf("spice number %q", s)
			}
			return v * mult[sfx]
		}
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatalf("spice number %q", s)
	}
	return v
}

// Building over the websocket: start a network, add parts by form, drag a
// part's point; the viewer sees the network panel and the animation.
func TestNetworkOverWebsocket(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 301)
	ed := wsDial(t, f, f.sess.EditToken)
	vw := wsDial(t, f, f.sess.ViewToken)
	if err := vw.WriteJSON(inMsg{Type: "hello", V: 0}); err != nil {
		t.Fatal(err)
	}
	readUntil(t, vw, func(m outMsg) bool { return m.Type == "update" })
	send := func(m inMsg) outMsg {
		if err := ed.WriteJSON(m); err != nil {
			t.Fatal(err)
		}
		return readUntil(t, ed, func(o outMsg) bool { return (o.Type == "ack" || o.Type == "error") && o.ID == m.ID })
	}
	if a := send(inMsg{Type: "form", ID: 1, Form: "network.add", Fields: map[string]string{"sweepId": f.sweep}}); a.Type != "ack" {
		t.Fatalf("network.add: %+v", a)
	}
	if a := send(inMsg{Type: "form", ID: 2, Form: "part.add", Fields: map[string]string{"kind": "shunt_C"}}); a.Type != "ack" {
		t.Fatalf("part.add: %+v", a)
	}
	up := readUntil(t, vw, func(m outMsg) bool { return m.Type == "update" && m.Op == sessions.OpPartAdd })
	if up.Anim == nil || len(up.Anim.Frames) != animFrames || !hasFrag(up, "network-panel") {
		t.Fatalf("viewer's part.add update: anim %v, frags %d", up.Anim != nil, len(up.Frags))
	}
	for _, fr := range up.Frags {
		if fr.ID == "network-panel" && strings.Contains(fr.HTML, "add-parts") {
			t.Error("the viewer's network panel offers the add buttons")
		}
	}
	st := stateOf(t, f)
	n := st.Active()
	// Default value: |X| = Z0 at the design frequency (175 MHz, the centre).
	if want := 1 / (2 * math.Pi * n.DesignHz * 50); len(n.Parts) != 1 || math.Abs(n.Parts[0].Value-want) > 1e-6*want {
		t.Fatalf("parts %+v, want one shunt C of %g F", n.Parts, want)
	}
	pid := n.Parts[0].ID
	if a := send(inMsg{Type: "form", ID: 3, Form: "part.set", Fields: map[string]string{"partId": pid, "value": "2.2 pF", "series": "E12", "model": "0402"}}); a.Type != "ack" {
		t.Fatalf("part.set: %+v", a)
	}
	if a := send(inMsg{Type: "form", ID: 4, Form: "part.set", Fields: map[string]string{"partId": pid, "value": "2.2 nH"}}); a.Type != "error" || !strings.Contains(a.Msg, "C1") {
		t.Errorf("a value in the wrong unit: %+v", a)
	}
	// Drag the part's point to where 4.7 pF puts it: the value follows.
	st = stateOf(t, f)
	sc := f.srv.scene(f.sess.ID, st)
	g0 := sc.net.loadAt(sc.net.n.DesignHz)
	target := rfmath.Ladder{rfmath.ShuntC{CF: 4.7e-12}}.InputGamma(sc.net.n.DesignHz, g0, 50)
	if a := send(inMsg{Type: "partdrag", ID: 5, Change: &sessions.Change{PartID: pid, Gamma: &sessions.Point{Re: real(target), Im: imag(target)}, Gesture: "d"}}); a.Type != "ack" {
		t.Fatalf("partdrag: %+v", a)
	}
	st = stateOf(t, f)
	if v := st.Active().Parts[0].Value; math.Abs(v-4.7e-12) > 1e-6*4.7e-12 {
		t.Errorf("after the drag C1 = %g, want 4.7 pF", v)
	}
	// The viewer may not build.
	if err := vw.WriteJSON(inMsg{Type: "partdrag", ID: 9, Change: &sessions.Change{PartID: pid, Gamma: &sessions.Point{}}}); err != nil {
		t.Fatal(err)
	}
	if e := readUntil(t, vw, func(m outMsg) bool { return m.Type == "error" }); !strings.Contains(e.Msg, "view-only") {
		t.Errorf("viewer partdrag: %+v", e)
	}
}

// A part's own figures override its model: a Q of 20 at 100 MHz on the
// series L of the L-3 section adds R = ωL/Q = 2π·100 MHz·137.83 nH/20 =
// 4.330 Ω in series at 100 MHz (the definition of Q; common practice), so
// Zin moves from 50 to 54.33 Ω there. An empty field gives the model back.
func TestPartFigures(t *testing.T) {
	t.Parallel()
	f, _ := netFixture(t)
	ctx := context.Background()
	st := stateOf(t, f)
	sc := f.srv.scene(f.sess.ID, st)
	pid := st.Active().Parts[1].ID
	ch, err := sc.partChange("part.params", map[string]string{"partId": pid, "q": "20", "qRef": "100M", "tol": "5"})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := f.store.Apply(ctx, f.sess.ID, ch); err != nil {
		t.Fatal(err)
	}
	st = stateOf(t, f)
	p := st.Active().Parts[1]
	if p.Params["q"] != 20 || p.Params["qRefHz"] != 100e6 || p.Params["tolRel"] != 0.05 {
		t.Fatalf("params %+v", p.Params)
	}
	sc = f.srv.scene(f.sess.ID, st)
	l, err := sc.net.built.Ladder()
	if err != nil {
		t.Fatal(err)
	}
	if z := l.InputZ(100e6, 200); math.Abs(real(z)-(50+2*math.Pi*100e6*137.83e-9/20)) > 0.01 {
		t.Errorf("Zin with Q 20: %v, want R ≈ 54.33 Ω", z)
	}
	nv := sc.networkView()
	if nv.Parts[1].Q != "20" || nv.Parts[1].Tol != "5" || !strings.Contains(nv.Parts[1].ModelNote, "Q 20") {
		t.Errorf("part row %+v", nv.Parts[1])
	}
	ch, err = sc.partChange("part.params", map[string]string{"partId": pid, "q": "", "qRef": "", "tol": ""})
	if err != nil {
		t.Fatal(err)
	}
	if _, err := f.store.Apply(ctx, f.sess.ID, ch); err != nil {
		t.Fatal(err)
	}
	st = stateOf(t, f)
	if len(st.Active().Parts[1].Params) != 0 {
		t.Errorf("cleared params %+v", st.Active().Parts[1].Params)
	}
	if _, err := sc.partChange("part.params", map[string]string{"partId": pid, "tol": "150"}); err == nil {
		t.Error("a 150 % tolerance was accepted")
	}
}

// The stored network evaluates, through the one adapter (designOf), as the
// ladder it describes: the low-pass L section of REFERENCE-CHECKS §6c L-3
// (50 Ω to 200 Ω at 100 MHz; shunt C = 13.783 pF across the 200 Ω side,
// series L = 137.83 nH; values C) brings 200 Ω to 50 Ω.
func TestDesignOf(t *testing.T) {
	t.Parallel()
	n := sessions.Network{Parts: []sessions.Part{{Kind: sessions.PartShuntC, Value: 13.783e-12}, {Kind: sessions.PartSeriesL, Value: 137.83e-9}}}
	ladder := func() rfmath.Ladder {
		t.Helper()
		d, err := designOf(&n)
		if err != nil {
			t.Fatal(err)
		}
		l, err := d.Built().Ladder()
		if err != nil {
			t.Fatal(err)
		}
		return l
	}
	if z := ladder().InputZ(100e6, 200); cmplx.Abs(z-50) > 0.01 {
		t.Errorf("Zin = %v, want 50 Ω", z)
	}
	// Snapped to E24 by ratio (REFERENCE-CHECKS §14's rule): 13.783 pF lies
	// below √(13·15) = 13.96, so 13 pF; 137.83 nH lies below √(130·150) =
	// 139.6, so 130 nH. The match is then off, but not far.
	n.Parts[0].ESeries, n.Parts[1].ESeries = "E24", "E24"
	d, err := designOf(&n)
	if err != nil {
		t.Fatal(err)
	}
	if got := d[0].BuyValue(); math.Abs(got-13e-12) > 1e-18 {
		t.Errorf("E24 value of 13.783 pF = %g, want 13 pF", got)
	}
	if got := d[1].BuyValue(); math.Abs(got-130e-9) > 1e-15 {
		t.Errorf("E24 value of 137.83 nH = %g, want 130 nH", got)
	}
	zb := ladder().InputZ(100e6, 200)
	if cmplx.Abs(zb-50) < 0.5 || cmplx.Abs(zb-50) > 20 {
		t.Errorf("standard-value Zin = %v: should be off 50 Ω, but not far", zb)
	}
	n.Parts[0].ESeries, n.Parts[1].ESeries = "", ""
	// A model adds loss: Re(Zin) moves, and Q from Params is honoured.
	n.Parts[1].Model = "0603"
	if z := ladder().InputZ(100e6, 200); cmplx.Abs(z-50) < 1e-3 {
		t.Errorf("a modelled inductor left Zin at exactly %v", z)
	}
	n.Parts[1].Model, n.Parts[1].Params = "", map[string]float64{"q": 1e5, "qRefHz": 100e6}
	if z := ladder().InputZ(100e6, 200); cmplx.Abs(z-50) > 0.05 {
		t.Errorf("Q = 1e5 should be nearly ideal: Zin %v", z)
	}
	// A constant-Q part: the series L with Q 20 adds ωL/20 at every
	// frequency (LS-2 of REFERENCE-CHECKS: R = |X|/Q).
	n.Parts[1].Model, n.Parts[1].Params = "constq", map[string]float64{"q": 20}
	if z := ladder().InputZ(100e6, 200); math.Abs(real(z)-(50+2*math.Pi*100e6*137.83e-9/20)) > 0.01 {
		t.Errorf("constant Q 20: Zin %v, want R ≈ 54.33 Ω", z)
	}
	n.Parts[1].Model = "0805"
	if _, err := designOf(&n); err == nil || !strings.Contains(err.Error(), "L1") {
		t.Errorf("unknown model: %v", err)
	}
}
