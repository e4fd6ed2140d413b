package sessions

import (
	"context"
	"testing"
)

func TestRefPlaneAndTDROps(t *testing.T) {
	t.Parallel()
	st := openStore(t, Options{})
	s := create(t, st, "rp")
	ctx := context.Background()
	dev := addSweep(t, st, s.ID, testSweep(21, 1, 1e9, 2e9), "dev")
	fix := addSweep(t, st, s.ID, testSweep(21, 2, 1e9, 2e9), "fix")

	apply(t, st, s.ID, Change{Op: OpSweepRefPlane, SweepID: dev, RefPlane: &RefPlane{DelayS: 1.2635e-9, LossDB: 0.225, LossRefHz: 1e9, FixtureSweepID: fix}})
	cur, _ := state(t, st, s.ID)
	rp := cur.Sweeps[0].RefPlane
	if rp == nil || rp.DelayS != 1.2635e-9 || rp.FixturePortFacingAnalyser != 1 {
		t.Fatalf("refplane %+v", rp)
	}
	apply(t, st, s.ID, Change{Op: OpSweepRefPlane, SweepID: dev, RefPlane: &RefPlane{}})
	cur, _ = state(t, st, s.ID)
	if cur.Sweeps[0].RefPlane != nil {
		t.Errorf("an all-zero plane should clear it: %+v", cur.Sweeps[0].RefPlane)
	}
	apply(t, st, s.ID, Change{Op: OpUndo})
	cur, _ = state(t, st, s.ID)
	if cur.Sweeps[0].RefPlane == nil {
		t.Error("undo did not bring the plane back")
	}

	bad := []struct {
		rp    RefPlane
		field string
	}{
		{RefPlane{DelayS: 1}, "refPlane.delayS"},
		{RefPlane{LossDB: 1}, "refPlane.lossRefHz"},
		{RefPlane{FixtureSweepID: dev}, "refPlane.fixtureSweepId"},
		{RefPlane{FixtureSweepID: fix, FixturePortFacingAnalyser: 3}, "refPlane.fixturePortFacingAnalyser"},
		{RefPlane{RenormOhm: -75}, "refPlane.renormOhm"},
	}
	for _, b := range bad {
		_, err := st.Apply(ctx, s.ID, Change{Op: OpSweepRefPlane, SweepID: dev, RefPlane: &b.rp})
		wantErr(t, err, ErrInvalid, b.field)
	}
	// A 1-port cannot be a fixture.
	_, err := st.Apply(ctx, s.ID, Change{Op: OpSweepRefPlane, SweepID: fix, RefPlane: &RefPlane{FixtureSweepID: dev}})
	wantErr(t, err, ErrInvalid, "refPlane.fixtureSweepId")

	apply(t, st, s.ID, Change{Op: OpTDRSet, TimeDomain: &TimeDomain{SweepID: dev}})
	cur, _ = state(t, st, s.ID)
	if td := cur.TimeDomain; td.Mode != "step" || td.Window != "kaiser" || td.Beta != 6 || td.VF != 1 {
		t.Errorf("defaults %+v", td)
	}
	_, err = st.Apply(ctx, s.ID, Change{Op: OpTDRSet, TimeDomain: &TimeDomain{Mode: "sideways"}})
	wantErr(t, err, ErrInvalid, "timeDomain.mode")
	_, err = st.Apply(ctx, s.ID, Change{Op: OpTDRSet, TimeDomain: &TimeDomain{VF: 2}})
	wantErr(t, err, ErrInvalid, "timeDomain.vf")
}
