package sessions

import (
	"slices"
	"strconv"
)

// computeSet applies set.save and set.remove to next (a clone of cur).
func computeSet(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	switch op {
	case OpSetSave:
		i := -1
		if ch.SetID != "" {
			if i = cur.LoadSetIndex(ch.SetID); i < 0 {
				return notFound(op, "setId", "load set", ch.SetID)
			}
		} else if len(cur.LoadSets) >= lim.LoadSets {
			return invalid(op, "", "the session already has %d load sets, the limit", len(cur.LoadSets))
		}
		name, err := text(op, "name", ch.Name, false, lim.TextRunes)
		if err != nil {
			return err
		}
		kind := ch.SetKind
		if kind == "" {
			kind = SetConditions
		}
		if kind != SetConditions && kind != SetLot {
			return invalid(op, "setKind", "%q: a load set holds %q (one device in several conditions) or %q (boards of a lot)", kind, SetConditions, SetLot)
		}
		ms, err := checkMembers(op, cur, ch.Members, lim)
		if err != nil {
			return err
		}
		set := LoadSet{Name: name, Kind: kind, Members: ms}
		if i >= 0 {
			set.ID = ch.SetID
			if set.Name == "" {
				set.Name = cur.LoadSets[i].Name
			}
			next.LoadSets[i] = set
		} else {
			if set.ID, err = uniqueID(func(id string) bool { return cur.LoadSetIndex(id) >= 0 }); err != nil {
				return err
			}
			if set.Name == "" {
				set.Name = "Set " + strconv.Itoa(len(cur.LoadSets)+1)
			}
			next.LoadSets = append(next.LoadSets, set)
		}
		// A network judged across the set must still sit on one of its
		// members.
		for k := range next.Networks {
			if n := &next.Networks[k]; n.SetID == set.ID && !isMember(set, n.SweepID) {
				n.SetID = ""
			}
		}
		r.ev.SetID = set.ID

	case OpSetRemove:
		i := cur.LoadSetIndex(ch.SetID)
		if i < 0 {
			return notFound(op, "setId", "load set", ch.SetID)
		}
		next.LoadSets = slices.Delete(next.LoadSets, i, i+1)
		for k := range next.Networks {
			if next.Networks[k].SetID == ch.SetID {
				next.Networks[k].SetID = ""
			}
		}
		r.ev.SetID = ch.SetID
	}
	return nil
}

// checkMembers validates a set's members: listed sweeps with a reflection
// at the port, each once, finite weights, at least one that must pass.
func checkMembers(op string, cur *State, in []SetMember, lim Limits) ([]SetMember, error) {
	if len(in) == 0 {
		return nil, invalid(op, "members", "a load set needs at least one sweep")
	}
	if len(in) > lim.SetMembers {
		return nil, invalid(op, "members", "%d sweeps; a load set holds at most %d", len(in), lim.SetMembers)
	}
	out := make([]SetMember, len(in))
	binding := 0
	for k, m := range in {
		i := cur.SweepIndex(m.SweepID)
		if i < 0 {
			return nil, notFound(op, "members.sweepId", "sweep", m.SweepID)
		}
		ref := cur.Sweeps[i]
		m.Port = max(m.Port, 1)
		if m.Port > min(ref.Ports, 2) {
			return nil, invalid(op, "members.port", "sweep %q has no reflection at port %d", ref.Name, m.Port)
		}
		if !finite(m.Weight) || m.Weight < 0 || m.Weight > 1e6 {
			return nil, invalid(op, "members.weight", "%g: a weight is a number from 0 to a million (0 means 1)", m.Weight)
		}
		if slices.ContainsFunc(out[:k], func(o SetMember) bool { return o.SweepID == m.SweepID && o.Port == m.Port }) {
			return nil, invalid(op, "members", "sweep %q is in the set twice", ref.Name)
		}
		if !m.Advisory {
			binding++
		}
		out[k] = m
	}
	if binding == 0 {
		return nil, invalid(op, "members", "every sweep of the set is advisory; at least one must pass")
	}
	return out, nil
}

func isMember(s LoadSet, sweepID string) bool {
	return slices.ContainsFunc(s.Members, func(m SetMember) bool { return m.SweepID == sweepID })
}

// dropFromSets removes a sweep from every load set of next, and removes a
// set left with no sweep that must pass; networks judged across a removed
// set go back to their own sweep.
func dropFromSets(next *State, sweepID string) {
	kept := next.LoadSets[:0]
	for _, s := range next.LoadSets {
		s.Members = slices.DeleteFunc(s.Members, func(m SetMember) bool { return m.SweepID == sweepID })
		if slices.ContainsFunc(s.Members, func(m SetMember) bool { return !m.Advisory }) {
			kept = append(kept, s)
		}
	}
	next.LoadSets = kept
	for k := range next.Networks {
		if id := next.Networks[k].SetID; id != "" && next.LoadSetIndex(id) < 0 {
			next.Networks[k].SetID = ""
		}
	}
}
