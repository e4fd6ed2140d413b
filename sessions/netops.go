package sessions

import (
	"maps"
	"math"
	"slices"
	"strings"

	"matchbench/rfmath"
	"matchbench/rfmath/parts"
)

// computeNetwork applies the network and part ops to next (a clone of cur).
func computeNetwork(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	netOf := func(id string) (int, error) {
		if id == "" {
			id = cur.ActiveNetwork
		}
		if id == "" {
			return -1, invalid(op, "networkId", "the session has no matching network yet")
		}
		i := cur.NetworkIndex(id)
		if i < 0 {
			return -1, notFound(op, "networkId", "network", id)
		}
		return i, nil
	}
	partOf := func(n *Network, id string) (int, error) {
		if id == "" {
			return -1, invalid(op, "partId", "missing")
		}
		i := slices.IndexFunc(n.Parts, func(p Part) bool { return p.ID == id })
		if i < 0 {
			return -1, notFound(op, "partId", "part", id)
		}
		return i, nil
	}
	// partIn finds part partID of network netID (the active one when
	// empty) in next, the state being built.
	partIn := func(netID, partID string) (*Network, int, error) {
		i, err := netOf(netID)
		if err != nil {
			return nil, 0, err
		}
		n := &next.Networks[i]
		j, err := partOf(n, partID)
		return n, j, err
	}
	sweepRef := func(id string) (SweepRef, error) {
		i := cur.SweepIndex(id)
		if i < 0 {
			return SweepRef{}, notFound(op, "sweepId", "sweep", id)
		}
		return cur.Sweeps[i], nil
	}

	switch op {
	case OpNetworkAdd:
		if len(cur.Networks) >= lim.Networks {
			return invalid(op, "", "the session already has %d networks, the limit", len(cur.Networks))
		}
		sweepID := ch.SweepID
		if sweepID == "" {
			if len(cur.Sweeps) == 0 {
				return invalid(op, "sweepId", "upload a sweep of the load first")
			}
			sweepID = cur.Sweeps[0].ID
		}
		ref, err := sweepRef(sweepID)
		if err != nil {
			return err
		}
		port := max(ch.Port, 1)
		if port > min(ref.Ports, 2) {
			return invalid(op, "port", "sweep %q has no reflection at port %d", ref.Name, port)
		}
		design := ch.DesignHz
		if design == 0 {
			design = defaultDesignHz(cur, ref)
		}
		if !finite(design) || design < ref.FminHz || design > ref.FmaxHz {
			return invalid(op, "designHz", "%g Hz is outside the sweep (%g–%g Hz)", design, ref.FminHz, ref.FmaxHz)
		}
		name, err := text(op, "name", ch.Name, false, lim.TextRunes)
		if err != nil {
			return err
		}
		id, err := uniqueID(func(id string) bool { return cur.NetworkIndex(id) >= 0 })
		if err != nil {
			return err
		}
		if name == "" {
			name = "Network " + string(rune('A'+len(cur.Networks)%26))
		}
		n := Network{ID: id, Name: name, SweepID: sweepID, Port: port, DesignHz: design, PowerW: 0.1, Parts: []Part{}}
		if ch.SetID != "" && ch.SetID != "none" {
			si := cur.LoadSetIndex(ch.SetID)
			if si < 0 {
				return notFound(op, "setId", "load set", ch.SetID)
			}
			if !isMember(cur.LoadSets[si], sweepID) {
				return invalid(op, "sweepId", "sweep %q is not in load set %q", ref.Name, cur.LoadSets[si].Name)
			}
			n.SetID = ch.SetID
		}
		if len(ch.Parts) > lim.PartsPerNetwork {
			return invalid(op, "parts", "%d parts; a network holds at most %d", len(ch.Parts), lim.PartsPerNetwork)
		}
		for _, p := range ch.Parts {
			p.ID = ""
			if err := checkPart(op, &p); err != nil {
				return err
			}
			p.ID, err = uniqueID(func(id string) bool { return slices.ContainsFunc(n.Parts, func(q Part) bool { return q.ID == id }) })
			if err != nil {
				return err
			}
			n.Parts = append(n.Parts, p)
		}
		if n.Layout, err = checkLayout(op, ch.Layout, len(n.Parts)); err != nil {
			return err
		}
		next.Networks = append(next.Networks, n)
		next.ActiveNetwork = id
		r.ev.SweepID = sweepID

	case OpNetworkSet:
		i, err := netOf(ch.NetworkID)
		if err != nil {
			return err
		}
		n := &next.Networks[i]
		if ch.Name != "" {
			if n.Name, err = text(op, "name", ch.Name, true, lim.TextRunes); err != nil {
				return err
			}
		}
		if ch.SweepID != "" {
			ref, err := sweepRef(ch.SweepID)
			if err != nil {
				return err
			}
			n.SweepID = ref.ID
			if n.DesignHz < ref.FminHz || n.DesignHz > ref.FmaxHz {
				n.DesignHz = defaultDesignHz(cur, ref)
			}
		}
		if ch.Port != 0 {
			n.Port = ch.Port
		}
		switch ch.SetID {
		case "":
		case "none":
			n.SetID = ""
		default:
			si := cur.LoadSetIndex(ch.SetID)
			if si < 0 {
				return notFound(op, "setId", "load set", ch.SetID)
			}
			set := cur.LoadSets[si]
			n.SetID = set.ID
			if !isMember(set, n.SweepID) {
				// The chart follows a member: the first that must pass.
				for _, m := range set.Members {
					if !m.Advisory {
						n.SweepID, n.Port = m.SweepID, m.Port
						break
					}
				}
			}
		}
		ref, err := sweepRef(n.SweepID)
		if err != nil {
			return err
		}
		if n.Port < 1 || n.Port > min(ref.Ports, 2) {
			return invalid(op, "port", "sweep %q has no reflection at port %d", ref.Name, n.Port)
		}
		if n.DesignHz < ref.FminHz || n.DesignHz > ref.FmaxHz {
			n.DesignHz = defaultDesignHz(cur, ref)
		}
		if ch.DesignHz != 0 {
			if !finite(ch.DesignHz) || ch.DesignHz < ref.FminHz || ch.DesignHz > ref.FmaxHz {
				return invalid(op, "designHz", "%g Hz is outside the sweep (%g–%g Hz)", ch.DesignHz, ref.FminHz, ref.FmaxHz)
			}
			n.DesignHz = ch.DesignHz
		}
		switch {
		case ch.YieldBuilds < 0:
			n.YieldBuilds = 0
		case ch.YieldBuilds > 100000:
			return invalid(op, "yieldBuilds", "%d builds; at most 100000", ch.YieldBuilds)
		case ch.YieldBuilds > 0:
			n.YieldBuilds = ch.YieldBuilds
		}
		switch {
		case ch.ChuRadiusM < 0:
			n.ChuRadiusM = 0
		case ch.ChuRadiusM > 100 || !finite(ch.ChuRadiusM):
			return invalid(op, "chuRadiusM", "%g m is not a sphere around an antenna on a board", ch.ChuRadiusM)
		case ch.ChuRadiusM > 0:
			n.ChuRadiusM = ch.ChuRadiusM
		}
		if ch.PowerW != nil {
			if !finite(*ch.PowerW) || *ch.PowerW < 0 || *ch.PowerW > 1e4 {
				return invalid(op, "powerW", "%g W is not within 0–10 kW", *ch.PowerW)
			}
			n.PowerW = *ch.PowerW
		}

	case OpNetworkSelect:
		i, err := netOf(ch.NetworkID)
		if err != nil {
			return err
		}
		next.ActiveNetwork = cur.Networks[i].ID

	case OpNetworkRemove:
		if ch.NetworkID == "" {
			return invalid(op, "networkId", "missing")
		}
		i, err := netOf(ch.NetworkID)
		if err != nil {
			return err
		}
		next.Networks = slices.Delete(next.Networks, i, i+1)
		if next.ActiveNetwork == ch.NetworkID {
			next.ActiveNetwork = ""
			if len(next.Networks) > 0 {
				next.ActiveNetwork = next.Networks[max(i-1, 0)].ID
			}
		}

	case OpPartAdd:
		i, err := netOf(ch.NetworkID)
		if err != nil {
			return err
		}
		n := &next.Networks[i]
		if len(n.Parts) >= lim.PartsPerNetwork {
			return invalid(op, "", "the network already has %d parts, the limit", len(n.Parts))
		}
		p := Part{Kind: ch.Kind, Params: ch.Params}
		if ch.Value != nil {
			p.Value = *ch.Value
		}
		if ch.Model != nil {
			p.Model = *ch.Model
		}
		if ch.ESeries != nil {
			p.ESeries = *ch.ESeries
		}
		if err := checkPart(op, &p); err != nil {
			return err
		}
		if p.ID, err = uniqueID(func(id string) bool { return slices.ContainsFunc(n.Parts, func(q Part) bool { return q.ID == id }) }); err != nil {
			return err
		}
		at := len(n.Parts)
		if ch.Index != nil {
			if *ch.Index < 0 || *ch.Index > len(n.Parts) {
				return invalid(op, "index", "%d is not within 0–%d", *ch.Index, len(n.Parts))
			}
			at = *ch.Index
		}
		n.Parts = slices.Insert(n.Parts, at, p)
		n.Layout = shiftTraces(n.Layout, at, +1)
		r.ev.PartID = p.ID

	case OpPartSet:
		n, j, err := partIn(ch.NetworkID, ch.PartID)
		if err != nil {
			return err
		}
		p := n.Parts[j]
		if ch.Value != nil {
			p.Value = *ch.Value
		}
		if ch.Model != nil {
			p.Model = *ch.Model
		}
		if ch.ESeries != nil {
			p.ESeries = *ch.ESeries
		}
		if ch.Params != nil {
			merged := maps.Clone(p.Params)
			if merged == nil {
				merged = map[string]float64{}
			}
			for k, v := range ch.Params {
				if math.IsNaN(v) { // NaN clears a parameter
					delete(merged, k)
					continue
				}
				merged[k] = v
			}
			p.Params = merged
		}
		if err := checkPart(op, &p); err != nil {
			return err
		}
		n.Parts[j] = p
		r.ev.PartID = p.ID

	case OpPartRemove:
		n, j, err := partIn(ch.NetworkID, ch.PartID)
		if err != nil {
			return err
		}
		n.Parts = slices.Delete(n.Parts, j, j+1)
		n.Layout = shiftTraces(n.Layout, j, -1)
		r.ev.PartID = ch.PartID

	case OpPartMove:
		n, j, err := partIn(ch.NetworkID, ch.PartID)
		if err != nil {
			return err
		}
		if ch.Index == nil || *ch.Index < 0 || *ch.Index >= len(n.Parts) {
			return invalid(op, "index", "want 0–%d", len(n.Parts)-1)
		}
		p := n.Parts[j]
		n.Parts = slices.Delete(n.Parts, j, j+1)
		n.Parts = slices.Insert(n.Parts, *ch.Index, p)
		r.ev.PartID = ch.PartID
	}
	if a := next.Active(); a != nil {
		r.ev.NetworkID = a.ID
	}
	return nil
}

// defaultDesignHz is the centre of the first band inside the sweep, else
// the sweep's centre.
func defaultDesignHz(st *State, ref SweepRef) float64 {
	for _, b := range st.Bands {
		c := (b.LoHz + b.HiHz) / 2
		if c >= ref.FminHz && c <= ref.FmaxHz {
			return c
		}
	}
	return (ref.FminHz + ref.FmaxHz) / 2
}

// partParams are the parameters a part may carry, each with its check.
var partParams = map[string]func(v float64) bool{
	"q":          func(v float64) bool { return v >= 0 && v < 1e6 },
	"qRefHz":     func(v float64) bool { return v > 0 },
	"srfHz":      func(v float64) bool { return v >= 0 },
	"esrOhm":     func(v float64) bool { return v >= 0 && v < 1e6 },
	"z0Ohm":      func(v float64) bool { return v > 0 && v < 1e6 },
	"vf":         func(v float64) bool { return v > 0 && v <= 1 },
	"lossDBPerM": func(v float64) bool { return v >= 0 && v < 1e4 },
	"lossRefHz":  func(v float64) bool { return v > 0 },
	"tolRel":     func(v float64) bool { return v >= 0 && v < 1 },
	"tolAbs":     func(v float64) bool { return v >= 0 },
	"maxV":       func(v float64) bool { return v > 0 },
	"maxA":       func(v float64) bool { return v > 0 },
}

// checkPart validates a part in place (normalising its model and series
// names). The error names the field.
func checkPart(op string, p *Part) error {
	if !p.Kind.Valid() {
		var names []string
		for _, k := range PartKinds {
			names = append(names, string(k))
		}
		return invalid(op, "kind", "unknown part kind %q (want one of %s)", p.Kind, strings.Join(names, ", "))
	}
	if !finite(p.Value) || p.Value <= 0 {
		return invalid(op, "value", "%g: a part's value must be a positive number", p.Value)
	}
	if p.Value > 1e9 {
		return invalid(op, "value", "%g is too large for a part", p.Value)
	}
	m := strings.TrimSpace(p.Model)
	if m == "ideal" {
		m = ""
	}
	if m != "" {
		if !isLumped(p.Kind) {
			return invalid(op, "model", "a %s has no part model", p.Kind)
		}
		if _, err := parts.LookupModel(m); err != nil {
			return invalid(op, "model", "%v", err)
		}
	}
	p.Model = m
	es := strings.ToUpper(strings.TrimSpace(p.ESeries))
	if es != "" {
		if !isLumped(p.Kind) {
			return invalid(op, "series", "a %s has no standard values", p.Kind)
		}
		if _, err := parts.Lookup(es); err != nil {
			return invalid(op, "series", "%v", err)
		}
	}
	p.ESeries = es
	for k, v := range p.Params {
		ok := partParams[k]
		if ok == nil {
			return invalid(op, "params."+k, "unknown part parameter")
		}
		if !finite(v) || !ok(v) {
			return invalid(op, "params."+k, "%g is out of range", v)
		}
	}
	if len(p.Params) == 0 {
		p.Params = nil
	}
	return nil
}

func isLumped(kind rfmath.PartKind) bool { return kind.Component() != "" }
