package server

import (
	"context"
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"
	"time"

	"matchbench/rfmath/match"
	"matchbench/rfmath/units"
	"matchbench/sessions"
	"matchbench/web"
)

// tuneForms are the bench-tuning forms: the board a network is built on,
// a fit of a re-measured board, and a suggestion made the next network.
var tuneForms = map[string]bool{"network.layout": true, "tune.fit": true, "tune.use": true}

// tuneTimeout bounds one fit and its swap search; both take well under a
// second on a sweep of a few hundred points.
const tuneTimeout = 30 * time.Second

// tuneChange turns a tuning form, fields as typed, into a change. tune.fit
// is where a fit of the board as built runs: only on an editor's request,
// and its result is stored in the session whole (figures included), so
// that no page load computes it again.
func (sc *scene) tuneChange(ctx context.Context, form string, f map[string]string) (sessions.Change, error) {
	ne := sc.net
	if ne == nil || ne.err != nil {
		return sessions.Change{}, errors.New("start a matching network on the load first: a board is the network as built")
	}
	switch form {
	case "network.layout":
		lay, err := layoutFromFields(form, f)
		if err != nil {
			return sessions.Change{}, err
		}
		return sessions.Change{Op: sessions.OpNetworkLayout, NetworkID: ne.n.ID, Layout: lay}, nil
	case "tune.use":
		idx, err := strconv.Atoi(f["index"])
		if err != nil || idx < 0 {
			return sessions.Change{}, &FieldError{form, "index", "Suggestion", fmt.Errorf("which suggestion?")}
		}
		return sessions.Change{Op: sessions.OpTuneUse, TuneID: f["tuneId"], Index: &idx}, nil
	case "tune.fit":
		return sc.tuneFit(ctx, f)
	}
	return sessions.Change{}, fmt.Errorf("unknown form %q", form)
}

// layoutFromFields reads a board: footprint ("", "0402", "0603"), pad (a
// capacitance, empty for the footprint's), traces (GAP:LENGTH[:Z0:EPSEFF],
// several separated by ';').
func layoutFromFields(form string, f map[string]string) (*sessions.Layout, error) {
	l := &sessions.Layout{Footprint: strings.TrimSpace(f["footprint"])}
	if _, err := match.LookupFootprint(l.Footprint); err != nil {
		return nil, &FieldError{form, "footprint", "Footprint", err}
	}
	if s := strings.TrimSpace(f["pad"]); s != "" {
		c, err := units.ParseValue(s, "F")
		if err != nil || c < 0 || c > 100e-12 {
			return nil, &FieldError{form, "pad", "Pad capacitance", fmt.Errorf("%q is not a capacitance from 0 to 100 pF, such as 0.1p", s)}
		}
		l.PadCF = c
	}
	for _, s := range strings.FieldsFunc(f["traces"], func(r rune) bool { return r == ';' || r == ',' || r == '\n' }) {
		if strings.TrimSpace(s) == "" {
			continue
		}
		t, err := match.ParseTrace(s)
		if err != nil {
			return nil, &FieldError{form, "traces", "Traces", errors.New(strings.TrimPrefix(err.Error(), match.ErrLayout.Error()+": "))}
		}
		l.Traces = append(l.Traces, sessions.Trace{Gap: t.Gap, LengthM: t.LengthM, Z0Ohm: t.Z0Ohm, EpsEff: t.EpsEff})
	}
	return l, nil
}

// tuneFit fits the board as built (the sweep builtId with the active
// network fitted) on the network's load, searches the next swap on the
// session's bands and returns the round to store.
func (sc *scene) tuneFit(ctx context.Context, f map[string]string) (sessions.Change, error) {
	const form = "tune.fit"
	ne := sc.net
	builtID := f["builtId"]
	i := sc.st.SweepIndex(builtID)
	sw := sc.all[builtID]
	if i < 0 || sw == nil {
		return sessions.Change{}, &FieldError{form, "builtId", "Board as built", errors.New("choose the sweep of the board as built (upload it first)")}
	}
	if builtID == ne.n.SweepID {
		return sessions.Change{}, &FieldError{form, "builtId", "Board as built", errors.New("that is the network's load: choose the sweep measured with the network fitted")}
	}
	built, err := match.LoadFromSweep(sw, 0)
	if err != nil {
		return sessions.Change{}, &FieldError{form, "builtId", "Board as built", err}
	}
	bands, _ := ne.netBands(sc.st, true)
	if len(bands) == 0 {
		return sessions.Change{}, errors.New("add a band with a requirement inside the load's sweep first: the next swap is judged on the bands")
	}
	sl, err := layoutFromFields(form, f)
	if err != nil {
		return sessions.Change{}, err
	}
	lay, err := sl.Board(len(ne.n.Parts))
	if err != nil {
		return sessions.Change{}, &FieldError{form, "traces", "Board", errors.New(strings.TrimPrefix(err.Error(), match.ErrLayout.Error()+": "))}
	}
	ctx, cancel := context.WithTimeout(ctx, tuneTimeout)
	defer cancel()
	fit, err := match.FitBoard(ne.load, built, ne.built, lay, nil)
	if err != nil {
		return sessions.Change{}, fmt.Errorf("the board cannot be fitted: %w", err)
	}
	swaps, err := match.NextSwaps(ctx, ne.load, bands, fit, nil)
	if err != nil {
		return sessions.Change{}, fmt.Errorf("the next swap cannot be searched: %w", err)
	}
	return sessions.Change{Op: sessions.OpTuneStore, Tune: ne.round(sc.st, builtID, sl, bands, fit, swaps)}, nil
}

// round writes a fit and its swaps as the session keeps them.
func (ne *netEval) round(st *sessions.State, builtID string, lay *sessions.Layout, bands []match.Band, fit *match.BoardFit, sw *match.SwapResult) *sessions.TuneRound {
	partsOf := func(n match.Network) []sessions.Part {
		out := make([]sessions.Part, len(ne.n.Parts))
		for i, p := range ne.n.Parts {
			out[i] = sessions.Part{Kind: p.Kind, Value: n[i].Value, Model: p.Model, ESeries: p.ESeries, Params: p.Params}
		}
		return out
	}
	figs := func(m match.Metrics) sessions.TuneFigs {
		return sessions.TuneFigs{WorstRLdB: storable(m.WorstRLdB), WorstPowerToLoad: storable(m.WorstPowerToLoad), MarginDB: storable(m.MarginDB), Meets: m.Meets()}
	}
	var bs []string
	for _, b := range bands {
		bs = append(bs, b.String())
	}
	r := &sessions.TuneRound{
		NetworkID: ne.n.ID, NetworkName: ne.n.Name, LoadSweepID: ne.n.SweepID, Port: ne.port,
		BuiltSweepID: builtID, BuiltName: sweepName(st, builtID), Parts: partsOf(ne.built), Layout: lay, Bands: strings.Join(bs, "; "),
		Fit: sessions.TuneFit{Points: fit.Points, LoHz: fit.FitLoHz, HiHz: fit.FitHiHz, RMSResidual: storable(fit.RMSResidual),
			NominalRMSResidual: storable(fit.NominalRMSResidual), Warnings: fit.Warnings},
		AsBuilt: figs(sw.AsBuilt), Best: -1, Chosen: -1,
	}
	if !math.IsInf(fit.Condition, 0) {
		r.Fit.Condition = fit.Condition
	}
	for _, p := range fit.Params {
		tp := sessions.TuneParam{Name: p.Name, Kind: p.Kind.String(), Unit: p.Unit, Nominal: p.Nominal, Value: p.Value, Sigma: p.Sigma,
			Held: p.Held, Undetermined: p.Undetermined, AtBound: p.AtBound}
		if math.IsInf(p.Sigma, 0) || math.IsNaN(p.Sigma) {
			tp.Sigma, tp.Unknown = 0, true
		}
		r.Fit.Params = append(r.Fit.Params, tp)
	}
	best, ok := sw.Best()
	for _, list := range [][]match.Swap{sw.One, sw.Two} {
		for _, s := range list {
			var cs []string
			for _, c := range s.Changes {
				cs = append(cs, c.String())
			}
			y := s.Yield
			if math.IsNaN(y) {
				y = -1
			}
			if ok && sameSwap(s, best) {
				r.Best = len(r.Suggestions)
			}
			r.Suggestions = append(r.Suggestions, sessions.TuneSwap{Change: strings.Join(cs, ", "), Parts: partsOf(s.Network), Figs: figs(s.Metrics), Yield: y})
		}
	}
	return r
}

func sameSwap(a, b match.Swap) bool {
	if len(a.Changes) != len(b.Changes) {
		return false
	}
	for i := range a.Changes {
		if a.Changes[i].Part != b.Changes[i].Part || a.Changes[i].To != b.Changes[i].To {
			return false
		}
	}
	return true
}

// tuningView builds the bench-tuning panel from the stored rounds (no
// figure is computed here) and the form's defaults.
func (sc *scene) tuningView() web.TuningView {
	v := web.TuningView{}
	ne := sc.net
	if ne != nil && ne.err == nil {
		v.Active = true
		v.Network = ne.n.Name
		v.Board = ne.lay.Describe(ne.built)
		v.BoardNote = ne.boardErr
		if l := ne.n.Layout; l != nil {
			v.Footprint = l.Footprint
			if l.PadCF > 0 {
				v.Pad = units.Format(l.PadCF, "F", 4)
			}
			var ts []string
			for _, t := range l.Traces {
				ts = append(ts, match.Trace{Gap: t.Gap, LengthM: t.LengthM, Z0Ohm: t.Z0Ohm, EpsEff: t.EpsEff}.String())
			}
			v.Traces = strings.Join(ts, "; ")
		}
		for _, ref := range sc.st.Sweeps {
			if ref.ID != ne.n.SweepID {
				v.Sweeps = append(v.Sweeps, web.Option{Value: ref.ID, Label: ref.Name})
			}
		}
		// The latest round's sweep is offered first.
		if k := len(sc.st.Tuning); k > 0 {
			for i := range v.Sweeps {
				v.Sweeps[i].Selected = v.Sweeps[i].Value == sc.st.Tuning[k-1].BuiltSweepID
			}
		}
	}
	for i, r := range sc.st.Tuning {
		v.Rounds = append(v.Rounds, roundRow(sc.st, i, r))
	}
	return v
}

// roundRow shows a stored round.
func roundRow(st *sessions.State, i int, r sessions.TuneRound) web.TuneRoundRow {
	row := web.TuneRoundRow{ID: r.ID, Num: i + 1, Network: r.NetworkName, Built: r.BuiltName, Bands: r.Bands, Warnings: r.Fit.Warnings}
	if st.SweepIndex(r.BuiltSweepID) < 0 {
		row.Built += " (removed since)"
	}
	lay, _ := r.Layout.Board(len(r.Parts))
	n := make(match.Network, len(r.Parts))
	for j, p := range r.Parts {
		n[j] = match.Part{Kind: p.Kind, Value: p.Value, Series: p.ESeries}
	}
	row.Board = lay.Describe(n)
	var ps []string
	for j, p := range r.Parts {
		ps = append(ps, n.Designator(j)+" "+kindLabels[p.Kind]+" "+units.Format(p.Value, p.Kind.Unit(), 3))
	}
	row.Parts = strings.Join(ps, ", ")
	cond := "singular"
	if r.Fit.Condition > 0 {
		cond = fmt.Sprintf("%.3g", r.Fit.Condition)
	}
	row.Fit = fmt.Sprintf("%d points, %s to %s: rms error %.3g in Γ (%.3g for the design as declared); condition number %s",
		r.Fit.Points, fmtF(r.Fit.LoHz), fmtF(r.Fit.HiHz), r.Fit.RMSResidual, r.Fit.NominalRMSResidual, cond)
	for _, p := range r.Fit.Params {
		pr := web.TuneParamRow{Name: p.Name, Nominal: units.Format(p.Nominal, p.Unit, 4), Value: units.Format(p.Value, p.Unit, 4)}
		switch {
		case p.Held:
			pr.Sigma = "held"
		case p.Unknown:
			pr.Sigma = "± ∞"
		default:
			pr.Sigma = "± " + units.Format(p.Sigma, p.Unit, 2)
		}
		if p.Undetermined {
			pr.Note = "not determined"
		}
		if p.AtBound {
			pr.Note = strings.TrimPrefix(pr.Note+", at its bound", ", ")
		}
		row.Params = append(row.Params, pr)
	}
	row.AsBuilt = figsText(r.AsBuilt)
	row.AsBuiltPass = r.AsBuilt.Meets
	for k, s := range r.Suggestions {
		sr := web.TuneSwapRow{Index: k, Change: s.Change, Worst: units.FormatDB(s.Figs.WorstRLdB), Power: units.FormatShare(s.Figs.WorstPowerToLoad),
			Margin: signedDB(s.Figs.MarginDB), Pass: s.Figs.Meets, Best: k == r.Best, Chosen: k == r.Chosen, Yield: "—"}
		if s.Yield >= 0 {
			sr.Yield = units.FormatPercent(s.Yield, 0)
		}
		row.Swaps = append(row.Swaps, sr)
	}
	if r.Chosen >= 0 && r.Chosen < len(r.Suggestions) {
		row.Chosen = "Swap chosen: " + r.Suggestions[r.Chosen].Change
		if j := st.NetworkIndex(r.ChosenNetworkID); j >= 0 {
			row.Chosen += " → network “" + st.Networks[j].Name + "”"
		}
	}
	return row
}

// figsText writes a board's figures across the bands.
func figsText(f sessions.TuneFigs) string {
	verdict := "misses"
	if f.Meets {
		verdict = "meets every band"
	}
	return fmt.Sprintf("worst RL %s, worst power to the load %s, margin %s: %s", units.FormatDB(f.WorstRLdB), units.FormatShare(f.WorstPowerToLoad), signedDB(f.MarginDB), verdict)
}

// FitTuneRound fits the board as built for the active network of session
// sid, as an editor's tune.fit form does with fields (builtId, footprint,
// pad, traces), and stores the round. The demo sessions are seeded with it.
func (s *Server) FitTuneRound(ctx context.Context, sid string, fields map[string]string) error {
	st, _, err := s.store.State(ctx, sid)
	if err != nil {
		return err
	}
	ch, err := s.scene(sid, st).tuneChange(ctx, "tune.fit", fields)
	if err != nil {
		return err
	}
	_, err = s.store.ApplyAs(ctx, sessions.Edit, sid, ch)
	return err
}
