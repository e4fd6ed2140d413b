package server

import (
	"fmt"
	"strconv"
	"strings"

	"matchbench/chartsvg"
	"matchbench/rfmath/match"
	"matchbench/rfmath/units"
	"matchbench/sessions"
	"matchbench/web"
)

// setEval is a load set as the active network judges it: its members as
// rfmath/match wants them (each sweep after its reference plane) and each
// member's response through the network as built.
type setEval struct {
	set     sessions.LoadSet
	refs    []sessions.SweepRef
	members []match.Member
	resp    [][]complex128 // Γ through the network as built, on each member's own points
}

// loadSetOf returns the members of the session's set id, judged on the
// scene's sweeps (corrected where a plane is set).
func (sc *scene) loadSetOf(id string) (*setEval, error) {
	i := sc.st.LoadSetIndex(id)
	if i < 0 {
		return nil, fmt.Errorf("the load set is gone")
	}
	set := sc.st.LoadSets[i]
	se := &setEval{set: set}
	for _, m := range set.Members {
		j := sc.st.SweepIndex(m.SweepID)
		sw := sc.all[m.SweepID]
		if j < 0 || sw == nil {
			return nil, fmt.Errorf("a sweep of load set %q cannot be read", set.Name)
		}
		port := max(m.Port, 1)
		ref := sc.st.Sweeps[j]
		se.refs = append(se.refs, ref)
		se.members = append(se.members, match.Member{Name: ref.Name, Load: match.Load{FreqHz: sw.FreqHz, Gamma: reflection(sw, port-1), Z0Ohm: sw.Z0[port-1]},
			Weight: m.Weight, Advisory: m.Advisory})
	}
	return se, nil
}

// kind returns the set's kind for the yield.
func (se *setEval) kind() match.SetKind {
	if se.set.Kind == sessions.SetLot {
		return match.Lot
	}
	return match.Conditions
}

// evalSet judges the active network across its load set, if it has one.
func (sc *scene) evalSet(ne *netEval) {
	if ne.n.SetID == "" || ne.err != nil {
		return
	}
	se, err := sc.loadSetOf(ne.n.SetID)
	if err != nil {
		ne.err = err
		return
	}
	c, err := ne.built.Circuit()
	if err != nil {
		ne.err = err
		return
	}
	for _, m := range se.members {
		se.resp = append(se.resp, c.GammaTo(nil, m.Load.FreqHz, m.Load.Gamma, m.Load.Z0Ohm))
	}
	ne.set = se
}

// setTraces are the members' responses through the active network, drawn
// thin in each sweep's colour beside the load's own, as a chart at
// reference chartZ0 draws them.
func (sc *scene) setTraces(chartZ0 float64) []chartsvg.Trace {
	ne := sc.net
	if ne == nil || ne.set == nil || len(ne.n.Parts) == 0 {
		return nil
	}
	var out []chartsvg.Trace
	for i, r := range ne.set.refs {
		if r.ID == ne.n.SweepID {
			continue // drawn as the network's own trace
		}
		out = append(out, chartsvg.Trace{ID: "setnet-" + r.ID, Name: r.Name + " through " + ne.n.Name, Color: r.Color,
			FreqHz: ne.set.members[i].Load.FreqHz, Gamma: toChart(ne.set.resp[i], ne.set.members[i].Load.Z0Ohm, chartZ0), Dashed: true, Ticks: -1})
	}
	return out
}

// memberRows are the figures of the active network on each member of its
// set (match.EvaluateSet).
func memberRows(se *setEval, sm match.SetMetrics, bands []match.Band) []web.MemberRow {
	var rows []web.MemberRow
	for i, m := range sm.Members {
		row := web.MemberRow{Name: se.refs[i].Name, Color: se.refs[i].Color, Advisory: se.members[i].Advisory,
			Margin: signedDB(m.MarginDB), Pass: m.Meets(), Worst: i == sm.WorstMember}
		for b, r := range m.Bands {
			row.Bands = append(row.Bands, fmt.Sprintf("%s: RL %s, %s to the load (alone %s)", bandLabel(bands[b]),
				fmtDB(r.WorstRLdB), fmtPct(r.WorstPowerToLoad), fmtPct(r.Unmatched.WorstPowerToLoad)))
		}
		rows = append(rows, row)
	}
	return rows
}

func fmtPct(v float64) string { return units.FormatPercent(v, 1) }

func bandLabel(b match.Band) string {
	return fmtF4(b.LoHz) + "–" + fmtF4(b.HiHz)
}

// setsView is the load sets panel.
func (sc *scene) setsView() web.SetsView {
	v := web.SetsView{}
	for _, r := range sc.st.Sweeps {
		v.Sweeps = append(v.Sweeps, web.Option{Value: r.ID, Label: r.Name})
	}
	for _, s := range sc.st.LoadSets {
		row := web.SetRow{ID: s.ID, Name: s.Name, Kind: s.Kind}
		for _, m := range s.Members {
			name := m.SweepID
			color := "#888888"
			if i := sc.st.SweepIndex(m.SweepID); i >= 0 {
				name, color = sc.st.Sweeps[i].Name, sc.st.Sweeps[i].Color
			}
			w := m.Weight
			if w == 0 {
				w = 1
			}
			row.Members = append(row.Members, web.SetMemberRow{SweepID: m.SweepID, Name: name, Color: color, Weight: strconv.FormatFloat(w, 'g', 4, 64), Must: !m.Advisory})
		}
		v.Sets = append(v.Sets, row)
	}
	return v
}

// setChange turns the load-set forms into changes: set.save with a field
// "in.<sweepId>" ("true") for each member, "w.<sweepId>" its weight and
// "must.<sweepId>" ("true" when it must pass); set.remove with setId.
func (sc *scene) setChange(form string, f map[string]string) (sessions.Change, error) {
	switch form {
	case "set.remove":
		return sessions.Change{Op: sessions.OpSetRemove, SetID: f["setId"]}, nil
	case "set.save":
		ch := sessions.Change{Op: sessions.OpSetSave, SetID: f["setId"], Name: strings.TrimSpace(f["name"]), SetKind: f["kind"]}
		for _, r := range sc.st.Sweeps {
			if f["in."+r.ID] != "true" {
				continue
			}
			m := sessions.SetMember{SweepID: r.ID, Advisory: f["must."+r.ID] == "false"}
			if t := strings.TrimSpace(f["w."+r.ID]); t != "" {
				w, err := strconv.ParseFloat(t, 64)
				if err != nil || !(w > 0) || w > 1e6 {
					return ch, &FieldError{form, "w." + r.ID, "Weight of " + r.Name, fmt.Errorf("%q is not a positive number", t)}
				}
				m.Weight = w
			}
			ch.Members = append(ch.Members, m)
		}
		if len(ch.Members) == 0 {
			return ch, &FieldError{form, "members", "Sweeps", fmt.Errorf("tick the sweeps that belong to the set")}
		}
		return ch, nil
	}
	return sessions.Change{}, fmt.Errorf("unknown form %q", form)
}
