package sessions

import (
	"math"
	"slices"
)

// checkRefPlane validates a reference plane for sweep id. A nil or all-zero
// plane means as measured (nil).
func checkRefPlane(op string, cur *State, id string, rp *RefPlane) (*RefPlane, error) {
	if rp == nil || *rp == (RefPlane{}) {
		return nil, nil
	}
	c := *rp
	for _, f := range []struct {
		name string
		v    float64
		ok   bool
	}{
		{"refPlane.delayS", c.DelayS, math.Abs(c.DelayS) <= 1e-6},
		{"refPlane.lossDB", c.LossDB, math.Abs(c.LossDB) <= 60},
		{"refPlane.lossRefHz", c.LossRefHz, c.LossRefHz >= 0},
		{"refPlane.flatLossDB", c.FlatLossDB, math.Abs(c.FlatLossDB) <= 60},
		{"refPlane.renormOhm", c.RenormOhm, c.RenormOhm >= 0 && c.RenormOhm <= 1e6},
	} {
		if !finite(f.v) || !f.ok {
			return nil, invalid(op, f.name, "%g is out of range", f.v)
		}
	}
	if c.LossDB != 0 && c.LossRefHz == 0 {
		return nil, invalid(op, "refPlane.lossRefHz", "a loss needs the frequency at which it holds")
	}
	if c.FixtureSweepID != "" {
		if c.FixtureSweepID == id {
			return nil, invalid(op, "refPlane.fixtureSweepId", "a sweep cannot be its own fixture")
		}
		i := slices.IndexFunc(cur.Sweeps, func(r SweepRef) bool { return r.ID == c.FixtureSweepID })
		if i < 0 {
			return nil, notFound(op, "refPlane.fixtureSweepId", "sweep", c.FixtureSweepID)
		}
		if cur.Sweeps[i].Ports != 2 {
			return nil, invalid(op, "refPlane.fixtureSweepId", "the fixture %q has %d ports; a fixture is a 2-port", cur.Sweeps[i].Name, cur.Sweeps[i].Ports)
		}
		if c.FixturePortFacingAnalyser == 0 {
			c.FixturePortFacingAnalyser = 1
		}
		if c.FixturePortFacingAnalyser != 1 && c.FixturePortFacingAnalyser != 2 {
			return nil, invalid(op, "refPlane.fixturePortFacingAnalyser", "want 1 or 2, not %d", c.FixturePortFacingAnalyser)
		}
	} else {
		c.FixturePortFacingAnalyser = 0
	}
	return &c, nil
}

// Time-domain modes and windows.
var (
	TDRModes   = []string{"step", "impulse", "bandpass"}
	TDRWindows = []string{"rect", "hann", "kaiser"}
)

func checkTimeDomain(op string, td *TimeDomain) error {
	if td.Mode == "" {
		td.Mode = "step"
	}
	if !slices.Contains(TDRModes, td.Mode) {
		return invalid(op, "timeDomain.mode", "unknown mode %q (want step, impulse or bandpass)", td.Mode)
	}
	if td.Window == "" {
		td.Window = "kaiser"
		if td.Beta == 0 {
			td.Beta = 6
		}
	}
	if !slices.Contains(TDRWindows, td.Window) {
		return invalid(op, "timeDomain.window", "unknown window %q (want rect, hann or kaiser)", td.Window)
	}
	if !finite(td.Beta) || td.Beta < 0 || td.Beta > 100 {
		return invalid(op, "timeDomain.beta", "%g is not within 0–100", td.Beta)
	}
	if td.VF == 0 {
		td.VF = 1
	}
	if !finite(td.VF) || td.VF <= 0 || td.VF > 1 {
		return invalid(op, "timeDomain.vf", "%g is not within (0, 1]", td.VF)
	}
	if !finite(td.GateCentreS) || !finite(td.GateSpanS) || td.GateSpanS < 0 || math.Abs(td.GateCentreS) > 1e-3 || td.GateSpanS > 1e-3 {
		return invalid(op, "timeDomain.gateSpanS", "the gate must be a finite centre and a span of 0–1 ms")
	}
	return nil
}
