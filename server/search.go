package server

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"strconv"
	"strings"
	"sync"
	"time"

	"matchbench/rfmath"
	"matchbench/rfmath/match"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/units"
	"matchbench/sessions"
	"matchbench/web"
)

// searchJob is a broadband search running for one session. One runs at a
// time per session; sessions do not wait for each other.
type searchJob struct {
	cancel context.CancelFunc
	done   chan struct{}
}

type searchJobs struct {
	mu   sync.Mutex
	jobs map[string]*searchJob
}

// progressMsg is sent to every page of the session while a search runs.
type progressMsg struct {
	Type    string `json:"type"` // "progress"
	Done    int    `json:"done"`
	Total   int    `json:"total"`
	Running bool   `json:"running"`
	Msg     string `json:"msg,omitempty"`
}

// toSend broadcasts an unversioned message (progress) to the session's
// pages, if any are connected.
func (s *Server) toSend(sid string, v any) {
	b, err := json.Marshal(v)
	if err != nil {
		return
	}
	s.mu.Lock()
	rm := s.rooms[sid]
	s.mu.Unlock()
	if rm == nil {
		return
	}
	for _, c := range rm.snapshot() {
		c.queue(b)
	}
}

// startSearch runs a broadband search of standard values for the active
// network's load over the session's bands, reporting progress to the
// session's pages and storing the result in the session when done.
func (s *Server) startSearch(sc *scene, f map[string]string) error {
	req, err := searchRequestOf(sc, f)
	if err != nil {
		return err
	}
	job, ctx, err := s.newSearchJob(sc.sid)
	if err != nil {
		return err
	}
	go s.runSearch(ctx, job, sc.sid, req)
	return nil
}

// searchRequest is one search as the page asked for it: what is matched,
// over which bands, with which parts, and how it is described.
type searchRequest struct {
	members  []match.Member
	bands    []match.Band
	set      *match.Settings
	model    string  // the part family's name, "" for ideal parts
	qL, qC   float64 // the constant Q of L and C, for the constant-Q model
	lay      match.Layout
	board    *sessions.Layout // the board the result is stored with
	setID    string
	sweepID  string
	port     int
	stage    string
	desc     string
	maxParts int
}

// searchRequestOf reads the search form against the active network: its
// load (or its load set), its bands and board, and the part settings.
func searchRequestOf(sc *scene, f map[string]string) (*searchRequest, error) {
	ne := sc.net
	if ne == nil || ne.err != nil {
		return nil, errors.New("start a matching network on the load first: the search matches its load")
	}
	bands, _ := ne.netBands(sc.st, true)
	if len(bands) == 0 {
		return nil, errors.New("add a band with a requirement (return loss or power to the load) inside the load's sweep first: the search is judged on the bands")
	}
	req := &searchRequest{bands: bands, sweepID: ne.n.SweepID, port: ne.port, stage: ne.stageSide}
	if err := req.readParts(f); err != nil {
		return nil, err
	}
	req.members = []match.Member{{Name: sweepName(sc.st, ne.n.SweepID), Load: ne.load}}
	if f["target"] == "set" && ne.set != nil {
		req.members, req.setID = ne.set.members, ne.set.set.ID
	}
	req.desc = fmt.Sprintf("up to %d parts, L from %s, C from %s, %s parts, best by %s", req.maxParts, req.set.LSeries, req.set.CSeries, searchModelText(req.model, req.qL, req.qC), objectiveText[req.set.Objective])
	req.lay, req.board = ne.lay, ne.n.Layout
	switch {
	case req.lay.IsZero():
		req.board = nil
	case len(req.members) > 1:
		// The search across a set judges the parts alone; each design is
		// then shown on the network's board by the panel.
		req.lay, req.board = match.Layout{}, nil
		req.desc += ", parts alone (the board is not searched across a set)"
	default:
		req.desc += fmt.Sprintf(", judged on the board of “%s” (%s)", ne.n.Name, req.lay.Describe(ne.built))
	}
	return req, nil
}

// readParts reads the number of parts, the E-series, the objective and the
// part model of the search form.
func (req *searchRequest) readParts(f map[string]string) error {
	n, err := strconv.Atoi(f["parts"])
	if err != nil || n < 1 || n > 4 {
		return &FieldError{"search.start", "parts", "Parts", fmt.Errorf("choose 1 to 4 parts")}
	}
	req.maxParts = n
	req.set = &match.Settings{LSeries: f["lseries"], CSeries: f["cseries"], MaxParts: n, Top: 6}
	for _, name := range []string{req.set.LSeries, req.set.CSeries} {
		if _, err := parts.Lookup(name); err != nil {
			return &FieldError{"search.start", "series", "Series", err}
		}
	}
	if req.set.Objective, err = match.ParseObjective(f["objective"]); err != nil {
		return &FieldError{"search.start", "objective", "Best by", err}
	}
	req.model = strings.TrimSpace(f["model"])
	switch req.model {
	case "", "ideal":
		req.model = ""
	case parts.ConstantQName:
		for _, q := range []struct {
			field, label string
			v            *float64
		}{{"qL", "Q of L", &req.qL}, {"qC", "Q of C", &req.qC}} {
			x, err := strconv.ParseFloat(strings.TrimSpace(f[q.field]), 64)
			if err != nil || !(x > 0) || x > 1e6 {
				return &FieldError{"search.start", q.field, q.label, fmt.Errorf("%q is not a Q from 0 to a million", f[q.field])}
			}
			*q.v = x
		}
		req.set.Model = parts.ConstantQ{QL: req.qL, QC: req.qC}
	default:
		fam, err := parts.LookupFamily(req.model)
		if err != nil {
			return &FieldError{"search.start", "model", "Model", err}
		}
		req.set.Model = fam
	}
	return nil
}

// newSearchJob registers the session's search, or refuses a second one; the
// job's context ends after 10 minutes or on cancel.
func (s *Server) newSearchJob(sid string) (*searchJob, context.Context, error) {
	s.search.mu.Lock()
	defer s.search.mu.Unlock()
	if s.search.jobs == nil {
		s.search.jobs = map[string]*searchJob{}
	}
	if s.search.jobs[sid] != nil {
		return nil, nil, errors.New("a search is already running for this session; cancel it or wait")
	}
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Minute)
	job := &searchJob{cancel: cancel, done: make(chan struct{})}
	s.search.jobs[sid] = job
	return job, ctx, nil
}

// runSearch runs the search in the server's pool, reports its progress to
// the session's pages and stores the result.
func (s *Server) runSearch(ctx context.Context, job *searchJob, sid string, req *searchRequest) {
	defer close(job.done)
	defer job.cancel()
	defer func() {
		s.search.mu.Lock()
		delete(s.search.jobs, sid)
		s.search.mu.Unlock()
	}()
	var last time.Time
	req.set.Progress = func(done, total int) {
		if now := time.Now(); now.Sub(last) > 100*time.Millisecond || done == total {
			last = now
			s.toSend(sid, progressMsg{Type: "progress", Done: done, Total: total, Running: true})
		}
	}
	s.toSend(sid, progressMsg{Type: "progress", Running: true, Msg: "searching " + req.desc})
	res, err := s.searchInPool(ctx, sid, func() (*match.Result, error) {
		if !req.lay.IsZero() {
			return match.SearchOnBoard(ctx, req.members[0].Load, req.bands, req.set, req.lay)
		}
		return match.SearchSet(ctx, req.members, req.bands, req.set)
	})
	if err != nil {
		msg := "the search failed: " + plainDetail(err.Error())
		if errors.Is(err, context.Canceled) {
			msg = "the search was cancelled"
		} else if errors.Is(err, context.DeadlineExceeded) {
			msg = "the search took more than 10 minutes and was stopped; try fewer parts"
		}
		s.toSend(sid, progressMsg{Type: "progress", Running: false, Msg: msg})
		return
	}
	out := req.result(res)
	if _, err := s.store.ApplyAs(context.Background(), sessions.Edit, sid, sessions.Change{Op: sessions.OpSearchStore, Search: out}); err != nil {
		s.log.Error("store search", "err", err)
		s.toSend(sid, progressMsg{Type: "progress", Running: false, Msg: "the result could not be stored: " + err.Error()})
		return
	}
	s.toSend(sid, progressMsg{Type: "progress", Running: false, Msg: fmt.Sprintf("search done: %d designs, %s combinations", len(out.Designs), units.Format(res.Combinations, "", 3))})
}

// result is the search's result as the session stores it: each design's
// parts (with the model searched and its Q) and figures.
func (req *searchRequest) result(res *match.Result) *sessions.SearchResult {
	out := &sessions.SearchResult{SweepID: req.sweepID, SetID: req.setID, Port: req.port, Settings: req.desc, Exact: res.Exact, Objective: res.Objective.String(), Layout: req.board, StageSide: req.stage}
	for _, d := range res.Designs {
		sd := sessions.Design{WorstRLdB: storable(d.WorstRLdB), MarginDB: storable(d.MarginDB), WorstPowerToLoad: storable(d.WorstPowerToLoad)}
		for _, p := range d.Network {
			sp := sessions.Part{Kind: p.Kind, Value: p.Value, ESeries: p.Series, Model: req.model}
			if req.model == parts.ConstantQName {
				q := req.qC
				if p.Kind.Component() == rfmath.ComponentL {
					q = req.qL
				}
				sp.Params = map[string]float64{"q": q}
			}
			sd.Parts = append(sd.Parts, sp)
		}
		for _, b := range d.Bands {
			sd.Bands = append(sd.Bands, sessions.BandFigures{LoHz: b.LoHz, HiHz: b.HiHz, WorstRLdB: storable(b.WorstRLdB), MeanRLdB: storable(b.MeanRLdB)})
		}
		out.Designs = append(out.Designs, sd)
	}
	if len(res.Designs) == 0 || !res.Designs[0].Meets() {
		out.Note = fmt.Sprintf("No network of up to %d parts meets every band's requirement.", req.maxParts)
	}
	return out
}

// cancelSearch stops the session's search, if one runs.
func (s *Server) cancelSearch(sid string) bool {
	s.search.mu.Lock()
	job := s.search.jobs[sid]
	s.search.mu.Unlock()
	if job == nil {
		return false
	}
	job.cancel()
	<-job.done
	return true
}

// searchView shows the stored search result and the single-frequency
// solutions at the design frequency.
func (sc *scene) searchView() web.SearchView {
	v := web.SearchView{}
	if r := sc.st.Search; r != nil {
		v.Has = true
		v.Settings = r.Settings
		v.Note = r.Note
		v.Exact = r.Exact
		for i, d := range r.Designs {
			v.Designs = append(v.Designs, sc.designRow(r, i, d))
		}
	}
	ne := sc.net
	if ne == nil || ne.err != nil {
		return v
	}
	fd := ne.n.DesignHz
	zl := rfmath.ZFromGamma(ne.loadAt(fd), complex(ne.z0, 0))
	if cmplx.IsInf(zl) || cmplx.IsNaN(zl) {
		return v
	}
	syn, err := match.Synthesize(zl, complex(ne.z0, 0), fd)
	if err != nil {
		v.SynthNote = plainWords(err.Error())
		return v
	}
	v.SynthAt = fmtF(fd)
	v.SynthLoad = fmtZ(zl, 'f', 2)
	for i, l := range syn.LNetworks {
		var ps []string
		for _, p := range l.Parts {
			ps = append(ps, kindLabels[p.Kind]+" "+units.Format(p.Value, p.Kind.Unit(), 4))
		}
		if len(ps) == 0 {
			ps = []string{"nothing: already matched"}
		}
		v.LNets = append(v.LNets, web.SynthRow{Index: i, Label: orientationText[l.Orientation], Parts: strings.Join(ps, " → "), CanUse: len(l.Parts) > 0})
	}
	for _, no := range syn.NoL {
		v.NoL = append(v.NoL, fmt.Sprintf("No L-network with the %s: %s", orientationText[no.Orientation], no.Reason))
	}
	ls := sc.lineSettings()
	v.Line = web.LineSettings{Z0: units.Format(ne.z0, "Ω", 4), VF: strconv.FormatFloat(ls.vf, 'g', 4, 64),
		Loss: strconv.FormatFloat(ls.lossDBPerM, 'g', 4, 64), LossRef: units.FormatFrequency(ls.lossRefHz, 4)}
	wl := ls.vf * rfmath.SpeedOfLight / fd // a wavelength on the line, m
	mm := func(w float64) string { return units.Format(w*wl, "m", 4) }
	for i, st := range syn.Stubs {
		v.Stubs = append(v.Stubs, web.SynthRow{Index: i, Label: string(st.Type) + " stub",
			Parts: fmt.Sprintf("line %.4f λ (%s) from the load, then a %s stub %.4f λ (%s) long", st.DWavelengths, mm(st.DWavelengths), st.Type, st.LWavelengths, mm(st.LWavelengths)), CanUse: true})
	}
	for i, q := range syn.QuarterWaves {
		v.Quarters = append(v.Quarters, web.SynthRow{Index: i, Label: "quarter-wave",
			Parts: fmt.Sprintf("%.4f λ (%s) of %s line, then λ/4 (%s) of %.2f Ω (sees %.2f Ω)", q.DWavelengths, mm(q.DWavelengths), units.Format(ne.z0, "Ω", 3), mm(0.25), q.Z1Ohm, q.ROhm), CanUse: true})
	}
	v.SynthNote = strings.Join(syn.Notes, "; ")
	return v
}

// lineFigures are the figures of a line section or stub other than its
// length (match.Part's "vf", "lossDBPerM", "lossRefHz").
type lineFigures struct{ vf, lossDBPerM, lossRefHz float64 }

// lineSettings are the line figures the stub and quarter-wave solutions
// are built with by default: those of the active network's first line or
// stub, else an air line without loss (the page's fields change them).
func (sc *scene) lineSettings() lineFigures {
	ls := lineFigures{vf: 1, lossRefHz: 1e9}
	if ne := sc.net; ne != nil {
		for _, p := range ne.n.Parts {
			if p.Kind == sessions.PartLine || p.Kind == sessions.PartStubOpen || p.Kind == sessions.PartStubShort {
				d := match.Part{Kind: p.Kind, Params: p.Params}
				l := d.LineOf(1)
				return lineFigures{vf: l.VelocityFactor, lossDBPerM: l.LossDBPerM, lossRefHz: l.LossRefHz}
			}
		}
	}
	return ls
}

// lineFields reads the stub and quarter-wave forms' line figures: a
// velocity factor (or an effective permittivity, "eeff"), a loss in dB/m
// and the frequency it holds at; empty fields take the defaults.
func (sc *scene) lineFields(form string, f map[string]string) (lineFigures, error) {
	ls := sc.lineSettings()
	fe := func(field, label string, err error) error { return &FieldError{form, field, label, err} }
	if s := strings.TrimSpace(f["vf"]); s != "" {
		x, err := strconv.ParseFloat(s, 64)
		if err != nil || !(x > 0 && x <= 1) {
			return ls, fe("vf", "Velocity factor", fmt.Errorf("%q is not a velocity factor (above 0, at most 1)", s))
		}
		ls.vf = x
	}
	if s := strings.TrimSpace(f["eeff"]); s != "" {
		x, err := strconv.ParseFloat(s, 64)
		if err != nil || !(x >= 1) || math.IsInf(x, 0) {
			return ls, fe("eeff", "Effective permittivity", fmt.Errorf("%q is not an effective permittivity (at least 1)", s))
		}
		ls.vf = 1 / math.Sqrt(x)
	}
	if s := strings.TrimSpace(f["loss"]); s != "" {
		x, err := strconv.ParseFloat(strings.TrimSuffix(strings.TrimSpace(strings.TrimSuffix(s, "dB/m")), "dB"), 64)
		if err != nil || !(x >= 0) || x >= 1e4 {
			return ls, fe("loss", "Line loss", fmt.Errorf("%q is not a loss in dB per metre", s))
		}
		ls.lossDBPerM = x
	}
	if s := strings.TrimSpace(f["lossRef"]); s != "" {
		x, err := units.ParseFrequency(s)
		if err != nil || !(x > 0) {
			return ls, fe("lossRef", "Loss frequency", fmt.Errorf("%q is not a frequency", s))
		}
		ls.lossRefHz = x
	}
	return ls, nil
}

// params returns the line figures as a part's params, with impedance z0.
func (ls lineFigures) params(z0 float64) map[string]float64 {
	p := map[string]float64{"z0Ohm": z0, "vf": ls.vf}
	if ls.lossDBPerM > 0 {
		p["lossDBPerM"], p["lossRefHz"] = ls.lossDBPerM, ls.lossRefHz
	}
	return p
}

var orientationText = map[match.Orientation]string{
	match.ShuntAtLoad:  "shunt part next to the load",
	match.SeriesAtLoad: "series part next to the load",
}

// searchChange turns the search and synthesis forms into changes.
func (sc *scene) searchChange(form string, f map[string]string) (sessions.Change, error) {
	idx, err := strconv.Atoi(f["index"])
	if err != nil || idx < 0 {
		return sessions.Change{}, fmt.Errorf("which design?")
	}
	ne := sc.net
	switch form {
	case "search.use":
		r := sc.st.Search
		if r == nil || idx >= len(r.Designs) {
			return sessions.Change{}, fmt.Errorf("no such design")
		}
		setID := r.SetID
		if setID != "" && sc.st.LoadSetIndex(setID) < 0 {
			setID = "" // the set is gone: the design lands on its sweep alone
		}
		if ch, ok := stagePartsChange(sc.st, r, idx); ok { // amp.go: into the stage's network
			return ch, nil
		}
		return sessions.Change{Op: sessions.OpNetworkAdd, Name: fmt.Sprintf("Search %d", idx+1), SweepID: r.SweepID, Port: r.Port,
			DesignHz: designHz(sc, r.SweepID), Parts: r.Designs[idx].Parts, SetID: setID, Layout: r.Layout.For(len(r.Designs[idx].Parts))}, nil
	case "synth.use", "stub.use", "qw.use":
		if ne == nil || ne.err != nil {
			return sessions.Change{}, fmt.Errorf("start a matching network first")
		}
		fd := ne.n.DesignHz
		zl := rfmath.ZFromGamma(ne.loadAt(fd), complex(ne.z0, 0))
		syn, err := match.Synthesize(zl, complex(ne.z0, 0), fd)
		if err != nil {
			return sessions.Change{}, err
		}
		ch := sessions.Change{Op: sessions.OpNetworkAdd, SweepID: ne.n.SweepID, Port: ne.port, DesignHz: fd}
		ls, err := sc.lineFields(form, f)
		if err != nil {
			return ch, err
		}
		// Lengths are wavelengths on the line: its velocity factor
		// shortens them.
		lambda := ls.vf * rfmath.SpeedOfLight / fd
		switch {
		case form == "synth.use" && idx < len(syn.LNetworks):
			l := syn.LNetworks[idx]
			ch.Name = "L-network, " + orientationText[l.Orientation]
			for _, p := range l.Parts {
				ch.Parts = append(ch.Parts, sessions.Part{Kind: p.Kind, Value: p.Value})
			}
		case form == "stub.use" && idx < len(syn.Stubs):
			st := syn.Stubs[idx]
			ch.Name = fmt.Sprintf("%s stub", st.Type)
			kind := sessions.PartStubOpen
			if st.Type == match.ShortStub {
				kind = sessions.PartStubShort
			}
			if st.DWavelengths > 0 {
				ch.Parts = append(ch.Parts, sessions.Part{Kind: sessions.PartLine, Value: st.DWavelengths * lambda, Params: ls.params(ne.z0)})
			}
			ch.Parts = append(ch.Parts, sessions.Part{Kind: kind, Value: max(st.LWavelengths, 1e-6) * lambda, Params: ls.params(ne.z0)})
		case form == "qw.use" && idx < len(syn.QuarterWaves):
			q := syn.QuarterWaves[idx]
			ch.Name = fmt.Sprintf("quarter-wave, %.4g Ω", q.Z1Ohm)
			if q.DWavelengths > 0 {
				ch.Parts = append(ch.Parts, sessions.Part{Kind: sessions.PartLine, Value: q.DWavelengths * lambda, Params: ls.params(ne.z0)})
			}
			ch.Parts = append(ch.Parts, sessions.Part{Kind: sessions.PartLine, Value: q.LWavelengths * lambda, Params: ls.params(q.Z1Ohm)})
		default:
			return sessions.Change{}, fmt.Errorf("no such solution")
		}
		if len(ch.Parts) == 0 {
			return sessions.Change{}, fmt.Errorf("the load is already matched at %s", fmtF(fd))
		}
		return ch, nil
	}
	return sessions.Change{}, fmt.Errorf("unknown form %q", form)
}

// designHz is the centre (rfmath.BandCentreHz) of the first band inside the
// sweep, or 0 (the store picks its default).
func designHz(sc *scene, sweepID string) float64 {
	sw := sc.all[sweepID]
	for _, b := range sc.st.Bands {
		c := rfmath.BandCentreHz(b.LoHz, b.HiHz)
		if sw != nil && c >= sw.FreqHz[0] && c <= sw.FreqHz[sw.Len()-1] {
			return c
		}
	}
	return 0
}

var objectiveText = map[match.Objective]string{
	match.PowerToLoad: "power to the load",
	match.ReturnLoss:  "return loss only",
}

// searchModelText names the search's part model in its settings line.
func searchModelText(model string, qL, qC float64) string {
	switch model {
	case "":
		return "ideal"
	case parts.ConstantQName:
		return parts.ConstantQ{QL: qL, QC: qC}.String()
	}
	return "typical " + model
}

// designRow shows design i of the stored search r, judged now by
// match.Evaluate on the searched sweep as it is now corrected and on the
// session's current bands: the same evaluator, load and bands as the
// network panel, so a design used as a network shows the same figures
// there.
func (sc *scene) designRow(r *sessions.SearchResult, i int, d sessions.Design) web.DesignRow {
	row := web.DesignRow{Index: i}
	var ps []string
	for _, p := range d.Parts {
		ps = append(ps, kindLabels[p.Kind]+" "+units.Format(p.Value, p.Kind.Unit(), 3))
	}
	row.Parts = strings.Join(ps, " → ")
	sw := sc.all[r.SweepID]
	if sw == nil {
		row.Bands = "the searched sweep is gone"
		return row
	}
	ne := prepareNetwork(&sessions.Network{ID: stageNetworkID(sc.st, r), SweepID: r.SweepID, Port: r.Port, Parts: d.Parts, Layout: r.Layout.For(len(d.Parts))}, sw)
	adaptStage(sc.st, ne) // a stage side's design is judged in the stage, as it was searched
	bands, _ := ne.netBands(sc.st, true)
	if ne.err != nil || len(bands) == 0 {
		row.Bands = "no band with a requirement inside the sweep"
		if ne.err != nil {
			row.Bands = ne.err.Error()
		}
		return row
	}
	var m match.Metrics
	var err error
	if r.SetID != "" {
		se, serr := sc.loadSetOf(r.SetID)
		if serr != nil {
			row.Bands = serr.Error()
			return row
		}
		var sm match.SetMetrics
		sm, err = match.EvaluateSet(se.members, bands, ne.board.Network)
		m = sm.Metrics
		if err == nil && sm.WorstMember >= 0 {
			row.Parts += " (worst on " + se.refs[sm.WorstMember].Name + ")"
		}
	} else {
		m, err = match.Evaluate(ne.load, bands, ne.board.Network)
	}
	if err != nil {
		row.Bands = err.Error()
		return row
	}
	row.Worst, row.Margin, row.Pass = units.FormatDB(m.WorstRLdB), signedDB(m.MarginDB), m.Meets()
	row.Power = units.FormatShare(m.WorstPowerToLoad)
	before := math.Inf(1)
	var bs []string
	for _, b := range m.Bands {
		before = math.Min(before, b.Unmatched.WorstPowerToLoad)
		bs = append(bs, fmt.Sprintf("%s–%s: RL %s (mean %s), power %s (alone %s)",
			units.FormatFrequency(b.LoHz, 5), units.FormatFrequency(b.HiHz, 5), units.FormatDB(b.WorstRLdB), units.FormatDB(b.MeanRLdB),
			units.FormatPercent(b.WorstPowerToLoad, 1), units.FormatPercent(b.Unmatched.WorstPowerToLoad, 1)))
	}
	row.PowerBefore = units.FormatShare(before)
	row.Bands = strings.Join(bs, "; ")
	row.Over, row.Worse = m.OverDissipating(), m.WorseThanNone()
	return row
}

// storable returns v as JSON can hold it: a perfect match's +Inf return
// loss as 999 dB (the page judges designs again and never shows it).
func storable(v float64) float64 {
	switch {
	case math.IsInf(v, 1):
		return 999
	case math.IsInf(v, -1):
		return -999
	case math.IsNaN(v):
		return 0
	}
	return v
}
