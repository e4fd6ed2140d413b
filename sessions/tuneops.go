package sessions

import (
	"fmt"
	"slices"
	"strings"

	"matchbench/rfmath/match"
)

// Board returns the layout as rfmath/match takes it for a network of parts
// parts, checked. A nil layout is no board.
func (l *Layout) Board(parts int) (match.Layout, error) {
	if l == nil {
		return match.Layout{}, nil
	}
	fp, err := match.LookupFootprint(l.Footprint)
	if err != nil {
		return match.Layout{}, err
	}
	if l.PadCF != 0 {
		fp.PadCF = l.PadCF
		if fp.Name == "" {
			fp.Name = "custom"
		}
	}
	out := match.Layout{Footprint: fp}
	for _, t := range l.Traces {
		out.Traces = append(out.Traces, match.Trace{Gap: t.Gap, LengthM: t.LengthM, Z0Ohm: t.Z0Ohm, EpsEff: t.EpsEff})
	}
	if err := out.Validate(parts); err != nil {
		return match.Layout{}, err
	}
	return out, nil
}

// For returns the layout for a network of parts parts: a copy without the
// traces in gaps such a network does not have (nil for nil).
func (l *Layout) For(parts int) *Layout {
	if l == nil {
		return nil
	}
	c := l.clone()
	c.Traces = c.Traces[:0]
	for _, t := range l.Traces {
		if t.Gap >= 0 && t.Gap <= parts {
			c.Traces = append(c.Traces, t)
		}
	}
	return c
}

// checkLayout validates a layout for a network of parts parts and returns
// it normalised: nil when it adds nothing.
func checkLayout(op string, l *Layout, parts int) (*Layout, error) {
	if l == nil {
		return nil, nil
	}
	c := l.clone()
	c.Footprint = strings.TrimSpace(c.Footprint)
	if strings.EqualFold(c.Footprint, "none") {
		c.Footprint = ""
	}
	if !finite(c.PadCF) {
		return nil, invalid(op, "layout.padCF", "%g is not a number", c.PadCF)
	}
	if len(c.Traces) > parts+1 {
		return nil, invalid(op, "layout.traces", "%d traces; a network of %d parts has %d gaps", len(c.Traces), parts, parts+1)
	}
	for _, t := range c.Traces {
		if !finite(t.LengthM) || !finite(t.Z0Ohm) || !finite(t.EpsEff) {
			return nil, invalid(op, "layout.traces", "a trace's figures must be numbers")
		}
	}
	b, err := c.Board(parts)
	if err != nil {
		return nil, invalid(op, "layout", "%s", strings.TrimPrefix(err.Error(), match.ErrLayout.Error()+": "))
	}
	if b.IsZero() {
		return nil, nil
	}
	return c, nil
}

// computeTune applies network.layout, tune.store and tune.use to next (a
// clone of cur).
func computeTune(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	switch op {
	case OpNetworkLayout:
		id := ch.NetworkID
		if id == "" {
			id = cur.ActiveNetwork
		}
		i := cur.NetworkIndex(id)
		if i < 0 {
			if id == "" {
				return invalid(op, "networkId", "the session has no matching network yet")
			}
			return notFound(op, "networkId", "network", id)
		}
		lay, err := checkLayout(op, ch.Layout, len(cur.Networks[i].Parts))
		if err != nil {
			return err
		}
		next.Networks[i].Layout = lay
		r.ev.NetworkID = id

	case OpTuneStore:
		if ch.Tune == nil {
			return invalid(op, "tune", "missing")
		}
		if len(cur.Tuning) >= lim.TuneRounds {
			return invalid(op, "", "the session already keeps %d tuning rounds, the limit", len(cur.Tuning))
		}
		t := *ch.Tune
		for _, sid := range []struct{ field, id string }{{"tune.loadSweepId", t.LoadSweepID}, {"tune.builtSweepId", t.BuiltSweepID}} {
			if cur.SweepIndex(sid.id) < 0 {
				return notFound(op, sid.field, "sweep", sid.id)
			}
		}
		if len(t.Suggestions) > 24 || len(t.Fit.Params) > 64 || len(t.Fit.Warnings) > 64 {
			return invalid(op, "tune", "%d suggestions, %d parameters, %d warnings; at most 24, 64 and 64", len(t.Suggestions), len(t.Fit.Params), len(t.Fit.Warnings))
		}
		var err error
		if t.Parts, err = checkParts(op, "tune.parts", t.Parts, lim); err != nil {
			return err
		}
		if t.Layout, err = checkLayout(op, t.Layout, len(t.Parts)); err != nil {
			return err
		}
		t.Suggestions = slices.Clone(t.Suggestions)
		for j := range t.Suggestions {
			if t.Suggestions[j].Parts, err = checkParts(op, "tune.suggestions.parts", t.Suggestions[j].Parts, lim); err != nil {
				return err
			}
			if len(t.Suggestions[j].Parts) != len(t.Parts) {
				return invalid(op, "tune.suggestions.parts", "suggestion %d has %d parts; the network has %d", j+1, len(t.Suggestions[j].Parts), len(t.Parts))
			}
		}
		t.Fit.Params = slices.Clone(t.Fit.Params)
		t.Fit.Warnings = slices.Clone(t.Fit.Warnings)
		for _, x := range []float64{t.Fit.LoHz, t.Fit.HiHz, t.Fit.RMSResidual, t.Fit.NominalRMSResidual, t.Fit.Condition} {
			if !finite(x) {
				return invalid(op, "tune.fit", "a figure is not a number")
			}
		}
		for _, p := range t.Fit.Params {
			if !finite(p.Value) || !finite(p.Nominal) || !finite(p.Sigma) {
				return invalid(op, "tune.fit.params", "%s: a figure is not a number", p.Name)
			}
		}
		if t.Best < -1 || t.Best >= len(t.Suggestions) {
			return invalid(op, "tune.best", "%d is not a suggestion", t.Best)
		}
		name, err := text(op, "tune.networkName", t.NetworkName, false, lim.TextRunes)
		if err != nil {
			return err
		}
		t.NetworkName = name
		if t.BuiltName, err = text(op, "tune.builtName", t.BuiltName, false, lim.TextRunes); err != nil {
			return err
		}
		if t.ID, err = uniqueID(func(id string) bool { return cur.TuneIndex(id) >= 0 }); err != nil {
			return err
		}
		t.Chosen, t.ChosenNetworkID = -1, ""
		next.Tuning = append(next.Tuning, t)

	case OpTuneUse:
		i := cur.TuneIndex(ch.TuneID)
		if i < 0 {
			if ch.TuneID == "" {
				return invalid(op, "tuneId", "missing")
			}
			return notFound(op, "tuneId", "tuning round", ch.TuneID)
		}
		t := cur.Tuning[i]
		if ch.Index == nil || *ch.Index < 0 || *ch.Index >= len(t.Suggestions) {
			return invalid(op, "index", "round %d has suggestions 1 to %d", i+1, len(t.Suggestions))
		}
		k := *ch.Index
		if cur.SweepIndex(t.LoadSweepID) < 0 {
			return invalid(op, "tuneId", "the round's load sweep is gone")
		}
		add := Change{Op: OpNetworkAdd, SweepID: t.LoadSweepID, Port: t.Port, Parts: t.Suggestions[k].Parts, Layout: t.Layout,
			Name: fmt.Sprintf("Round %d: %s", i+1, t.Suggestions[k].Change)}
		if n := cur.NetworkIndex(t.NetworkID); n >= 0 {
			add.DesignHz = cur.Networks[n].DesignHz
		}
		if r := []rune(add.Name); len(r) > lim.TextRunes {
			add.Name = string(r[:lim.TextRunes])
		}
		if err := computeNetwork(cur, next, &add, r, lim); err != nil {
			return err
		}
		next.Tuning[i].Chosen = k
		next.Tuning[i].ChosenNetworkID = next.ActiveNetwork
	}
	return nil
}

// checkParts validates stored parts (as a search's or a round's) and
// returns a copy with their ids cleared.
func checkParts(op, field string, ps []Part, lim Limits) ([]Part, error) {
	if len(ps) > lim.PartsPerNetwork {
		return nil, invalid(op, field, "%d parts; a network holds at most %d", len(ps), lim.PartsPerNetwork)
	}
	out := slices.Clone(ps)
	for j := range out {
		out[j].ID = ""
		if err := checkPart(op, &out[j]); err != nil {
			return nil, err
		}
	}
	return out, nil
}

// shiftTraces moves the traces of l past gap at by delta gaps when a part
// is added (delta +1: the new part takes gap at, its traces stay on the
// load side) or removed (−1: gaps at and at+1 merge, keeping one trace),
// so each trace stays between the same parts. It returns a new layout.
func shiftTraces(l *Layout, at, delta int) *Layout {
	if l == nil {
		return nil
	}
	c := l.clone()
	c.Traces = c.Traces[:0]
	seen := map[int]bool{}
	for _, t := range l.Traces {
		if t.Gap > at {
			t.Gap += delta
		}
		if seen[t.Gap] {
			continue
		}
		seen[t.Gap] = true
		c.Traces = append(c.Traces, t)
	}
	return c
}
