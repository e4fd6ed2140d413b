package server

import (
	"context"
	"strings"
	"testing"

	"matchbench/sessions"
)

// The network panel states the Bode–Fano limit, runs a reproducible Monte
// Carlo whose first builds are drawn on the chart, and compares the
// sweep's Q with the Chu limit when given a sphere.
func TestLimitsAndYield(t *testing.T) {
	t.Parallel()
	f, nid := netFixture(t)
	ctx := context.Background()
	st, _, _ := f.store.State(ctx, f.sess.ID)
	sc := f.srv.scene(f.sess.ID, st)
	lv := sc.limitsView()
	// A 200 Ω resistor has no reactance, so no RLC model fits it: the panel
	// says so rather than inventing a limit.
	if !strings.Contains(lv.BodeFano, "Bode–Fano: ") || !strings.Contains(lv.BodeFano, "cannot fit") {
		t.Errorf("limits %+v", lv)
	}
	ch, err := sc.partChange("network.set", map[string]string{"networkId": nid, "yield": "500"})
	if err != nil || ch.YieldBuilds != 500 {
		t.Fatalf("yield form: %+v, %v", ch, err)
	}
	if _, err := f.store.Apply(ctx, f.sess.ID, ch); err != nil {
		t.Fatal(err)
	}
	st, _, _ = f.store.State(ctx, f.sess.ID)
	f.srv.scene(f.sess.ID, st) // asks for the Monte Carlo
	settle(t, f.srv)
	a, b := f.srv.scene(f.sess.ID, st), f.srv.scene(f.sess.ID, st)
	ya, yb := a.yieldView(), b.yieldView()
	if ya.Summary == "" || ya.Summary != yb.Summary || len(ya.Parts) != 2 {
		t.Fatalf("yield views %+v / %+v", ya, yb)
	}
	if n := len(a.cloudTraces(50)); n != cloudTraces {
		t.Errorf("%d cloud traces, want %d", n, cloudTraces)
	}
	var svg strings.Builder
	a.renderChart(&svg)
	if !strings.Contains(svg.String(), `id="trace-mc-0"`) {
		t.Error("the chart does not draw the tolerance builds")
	}
	off, _ := a.partChange("network.set", map[string]string{"networkId": nid, "yield": "off"})
	if off.YieldBuilds != -1 {
		t.Errorf("yield off: %+v", off)
	}
	if _, err := a.partChange("network.set", map[string]string{"networkId": nid, "radius": "12 parsecs"}); err == nil {
		t.Error("a bad radius was accepted")
	}
}

// The Bode–Fano limit of the R-1 series RLC (R = 5 Ω, L = 100 nH,
// C = 10 pF) over 150–170 MHz: |Γ| ≥ exp(−π·R/(L·Δω)) (Bode–Fano for a
// series RLC; Pozar, Microwave Engineering, Section 5.9, from memory), so
// RL ≤ 8.686·π·5/(100 nH·2π·20 MHz) = 10.86 dB.
func TestBodeFanoInPanel(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 301)
	ctx := context.Background()
	f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpBandSet, Name: "b", LoHz: 150e6, HiHz: 170e6, MinReturnLossDB: 10})
	f.store.Apply(ctx, f.sess.ID, sessions.Change{Op: sessions.OpNetworkAdd, SweepID: f.sweep})
	st, _, _ := f.store.State(ctx, f.sess.ID)
	lv := f.srv.scene(f.sess.ID, st).limitsView()
	if !strings.Contains(lv.BodeFano, "series RLC") || !strings.Contains(lv.BodeFano, "10.9 dB") || !lv.Feasible {
		t.Errorf("Bode–Fano in the panel: %q (feasible %v); want a series RLC and 10.9 dB", lv.BodeFano, lv.Feasible)
	}
}
