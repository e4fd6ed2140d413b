package server

import (
	"bytes"
	"context"
	"math"
	"math/cmplx"
	"os"
	"strings"
	"testing"

	"matchbench/rfmath/touchstone"
	"matchbench/sessions"
)

// addFile adds a committed demo file to the fixture's session.
func addFile(t *testing.T, f *fixture, path string) string {
	t.Helper()
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	tf, err := touchstone.Read(bytes.NewReader(raw), path, touchstone.DefaultLimits)
	if err != nil {
		t.Fatal(err)
	}
	ev, err := f.store.Apply(context.Background(), f.sess.ID, sessions.Change{Op: sessions.OpSweepAdd, FileName: path, Raw: raw, Sweep: tf.Sweep})
	if err != nil {
		t.Fatal(err)
	}
	return ev.SweepID
}

// The demo antenna measured through the demo cable (invented data, see
// internal/demo) comes back to the antenna at its pad when the cable's
// 2-port is removed, and the extension fitted to the cable's open end is
// its delay, 0.25 m/(0.66·c) = 1.2635 ns (REFERENCE-CHECKS §10, §15).
func TestRefPlaneOnDemoCable(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 11)
	ctx := context.Background()
	via := addFile(t, f, "../testdata/demo/fieldnode-via-cable.s1p")
	fix := addFile(t, f, "../testdata/demo/cable-fixture.s2p")
	open := addFile(t, f, "../testdata/demo/cable-open-end.s1p")
	ant := addFile(t, f, "../testdata/demo/fieldnode-antenna.s1p")
	c := wsDial(t, f, f.sess.EditToken)
	send := func(m inMsg) outMsg {
		c.WriteJSON(m)
		return readUntil(t, c, func(o outMsg) bool { return (o.Type == "ack" || o.Type == "error") && o.ID == m.ID })
	}
	if a := send(inMsg{Type: "form", ID: 1, Form: "refplane.set", Fields: map[string]string{"sweepId": via, "fixture": fix, "fixturePort": "1"}}); a.Type != "ack" {
		t.Fatalf("refplane.set: %+v", a)
	}
	st, _, _ := f.store.State(ctx, f.sess.ID)
	sc := f.srv.scene(f.sess.ID, st)
	if sc.errs[via] != "" {
		t.Fatal(sc.errs[via])
	}
	corr, pad := sc.all[via], sc.all[ant]
	n, worst := 0, 0.0
	for k, fk := range corr.FreqHz {
		if fk < 700e6 || fk > 1100e6 {
			continue
		}
		i, u, err := pad.Locate(fk)
		if err != nil {
			continue
		}
		want := pad.Data[i] + complex(u, 0)*(pad.Data[min(i+1, pad.Len()-1)]-pad.Data[i])
		worst = math.Max(worst, cmplx.Abs(corr.Data[k]-want))
		n++
	}
	// Both files carry σ = 0.002 noise on Γ; the cable's round-trip loss
	// (≈ 0.45 dB at 1 GHz) lifts the through-cable noise by about 5 %.
	if n < 100 || worst > 0.03 {
		t.Errorf("corrected sweep vs the antenna at its pad: %d points, worst |ΔΓ| %.4f (want ≤ 0.03)", n, worst)
	}
	// Fit from the open end instead: the delay is the cable's.
	if a := send(inMsg{Type: "form", ID: 2, Form: "refplane.fit", Fields: map[string]string{"sweepId": via, "fromId": open, "standard": "open"}}); a.Type != "ack" {
		t.Fatalf("refplane.fit: %+v", a)
	}
	st, _, _ = f.store.State(ctx, f.sess.ID)
	rp := st.Sweeps[st.SweepIndex(via)].RefPlane
	if rp == nil || math.Abs(rp.DelayS-1.2635e-9) > 0.01e-9 {
		t.Errorf("fitted plane %+v, want a delay of 1.2635 ns", rp)
	}
	// The time domain of the cable's open end shows the open at the cable's
	// length; a gate makes a new sweep.
	if a := send(inMsg{Type: "form", ID: 3, Form: "tdr.set", Fields: map[string]string{"sweepId": open, "mode": "bandpass", "window": "kaiser", "beta": "6", "vf": "0.66", "gateCentre": "2.527n", "gateSpan": "1n"}}); a.Type != "ack" {
		t.Fatalf("tdr.set: %+v", a)
	}
	st, _, _ = f.store.State(ctx, f.sess.ID)
	sc = f.srv.scene(f.sess.ID, st)
	p, note := sc.tdrPlot()
	if p == nil {
		t.Fatalf("no time-domain plot: %s", note)
	}
	// The peak of the band-pass impulse sits at the open: 0.25 m one way.
	s := p.series[0]
	best := 0
	for i := range s.Y {
		if s.Y[i] > s.Y[best] {
			best = i
		}
	}
	if d := s.FreqHz[best]; math.Abs(d-0.25) > 0.03 {
		t.Errorf("open end seen at %.3f m, want 0.25 m (%s)", d, note)
	}
	nsw := len(st.Sweeps)
	if a := send(inMsg{Type: "form", ID: 4, Form: "tdr.gate"}); a.Type != "ack" {
		t.Fatalf("tdr.gate: %+v", a)
	}
	st, _, _ = f.store.State(ctx, f.sess.ID)
	if len(st.Sweeps) != nsw+1 || !strings.HasSuffix(st.Sweeps[nsw].Name, "gated") {
		t.Errorf("gate did not add a sweep: %+v", st.Sweeps)
	}
	// Bad input names the field.
	if a := send(inMsg{Type: "form", ID: 5, Form: "refplane.set", Fields: map[string]string{"sweepId": via, "delay": "1.2x"}}); a.Type != "error" || !strings.Contains(a.Msg, "Delay") {
		t.Errorf("bad delay: %+v", a)
	}
}
