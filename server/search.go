package server

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
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
	ne := sc.net
	if ne == nil || ne.err != nil {
		return errors.New("start a matching network on the load first: the search matches its load")
	}
	var bands []match.Band
	for _, b := range sc.st.Bands {
		if b.MinReturnLossDB > 0 {
			bands = append(bands, match.Band{LoHz: b.LoHz, HiHz: b.HiHz, MinReturnLossDB: b.MinReturnLossDB})
		}
	}
	if len(bands) == 0 {
		return errors.New("add a band with a return-loss requirement first: the search is judged on the bands")
	}
	n, err := strconv.Atoi(f["parts"])
	if err != nil || n < 1 || n > 4 {
		return &FieldError{"search.start", "parts", "Parts", fmt.Errorf("choose 1 to 4 parts")}
	}
	set := &match.Settings{LSeries: f["lseries"], CSeries: f["cseries"], MaxParts: n, Top: 6}
	for _, name := range []string{set.LSeries, set.CSeries} {
		if _, err := parts.Lookup(name); err != nil {
			return &FieldError{"search.start", "series", "Series", err}
		}
	}
	model := f["model"]
	if model != "" {
		fam, err := parts.LookupFamily(model)
		if err != nil {
			return &FieldError{"search.start", "model", "Model", err}
		}
		set.Model = fam
	}
	load, err := match.LoadFromSweep(ne.sweep, ne.port-1)
	if err != nil {
		return err
	}
	desc := fmt.Sprintf("up to %d parts, L from %s, C from %s, %s parts", n, set.LSeries, set.CSeries, map[bool]string{true: "typical " + model, false: "ideal"}[model != ""])

	s.search.mu.Lock()
	if s.search.jobs == nil {
		s.search.jobs = map[string]*searchJob{}
	}
	if s.search.jobs[sc.sid] != nil {
		s.search.mu.Unlock()
		return errors.New("a search is already running for this session; cancel it or wait")
	}
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Minute)
	job := &searchJob{cancel: cancel, done: make(chan struct{})}
	s.search.jobs[sc.sid] = job
	s.search.mu.Unlock()

	sid, sweepID, port := sc.sid, ne.n.SweepID, ne.port
	go func() {
		defer close(job.done)
		defer cancel()
		defer func() {
			s.search.mu.Lock()
			delete(s.search.jobs, sid)
			s.search.mu.Unlock()
		}()
		var last time.Time
		set.Progress = func(done, total int) {
			if now := time.Now(); now.Sub(last) > 100*time.Millisecond || done == total {
				last = now
				s.toSend(sid, progressMsg{Type: "progress", Done: done, Total: total, Running: true})
			}
		}
		s.toSend(sid, progressMsg{Type: "progress", Running: true, Msg: "searching " + desc})
		res, err := s.searchInPool(ctx, sid, func() (*match.Result, error) { return match.Search(ctx, load, bands, set) })
		if err != nil {
			msg := "the search failed: " + err.Error()
			if errors.Is(err, context.Canceled) {
				msg = "the search was cancelled"
			} else if errors.Is(err, context.DeadlineExceeded) {
				msg = "the search took more than 10 minutes and was stopped; try fewer parts"
			}
			s.toSend(sid, progressMsg{Type: "progress", Running: false, Msg: msg})
			return
		}
		out := &sessions.SearchResult{SweepID: sweepID, Port: port, Settings: desc, Exact: res.Exact}
		for _, d := range res.Designs {
			sd := sessions.Design{WorstRLdB: d.WorstRLdB, MarginDB: d.MarginDB}
			for _, p := range d.Network {
				sd.Parts = append(sd.Parts, sessions.Part{Kind: string(p.Kind), Value: p.Value, ESeries: p.Series, Model: model})
			}
			for _, b := range d.Bands {
				sd.Bands = append(sd.Bands, sessions.BandFigures{LoHz: b.LoHz, HiHz: b.HiHz, WorstRLdB: b.WorstRLdB, MeanRLdB: b.MeanRLdB})
			}
			out.Designs = append(out.Designs, sd)
		}
		if len(res.Designs) == 0 || !res.Designs[0].Meets() {
			out.Note = fmt.Sprintf("No network of up to %d parts meets every band's requirement.", n)
		}
		if _, err := s.store.ApplyAs(context.Background(), sessions.Edit, sid, sessions.Change{Op: sessions.OpSearchStore, Search: out}); err != nil {
			s.log.Error("store search", "err", err)
			s.toSend(sid, progressMsg{Type: "progress", Running: false, Msg: "the result could not be stored: " + err.Error()})
			return
		}
		s.toSend(sid, progressMsg{Type: "progress", Running: false, Msg: fmt.Sprintf("search done: %d designs, %s combinations", len(out.Designs), units.Format(res.Combinations, "", 3))})
	}()
	return nil
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
			row := web.DesignRow{Index: i, Worst: fmtDB(d.WorstRLdB), Margin: fmt.Sprintf("%+.2f dB", d.MarginDB), Pass: d.MarginDB >= 0}
			var ps []string
			for _, p := range d.Parts {
				ps = append(ps, kindLabels[p.Kind]+" "+units.Format(p.Value, unitOf(p.Kind), 3))
			}
			row.Parts = strings.Join(ps, " → ")
			var bs []string
			for _, b := range d.Bands {
				bs = append(bs, fmt.Sprintf("%s–%s: worst %s, mean %s", fmtF(b.LoHz), fmtF(b.HiHz), fmtDB(b.WorstRLdB), fmtDB(b.MeanRLdB)))
			}
			row.Bands = strings.Join(bs, "; ")
			v.Designs = append(v.Designs, row)
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
		v.SynthNote = err.Error()
		return v
	}
	v.SynthAt = fmtF(fd)
	v.SynthLoad = fmtZ(zl, 'f', 2)
	for i, l := range syn.LNetworks {
		var ps []string
		for _, p := range l.Parts {
			ps = append(ps, kindLabels[string(p.Kind)]+" "+units.Format(p.Value, p.Kind.Unit(), 4))
		}
		if len(ps) == 0 {
			ps = []string{"nothing: already matched"}
		}
		v.LNets = append(v.LNets, web.SynthRow{Index: i, Label: orientationText[l.Orientation], Parts: strings.Join(ps, " → "), CanUse: len(l.Parts) > 0})
	}
	for _, no := range syn.NoL {
		v.NoL = append(v.NoL, fmt.Sprintf("No L-network with the %s: %s", orientationText[no.Orientation], no.Reason))
	}
	for i, st := range syn.Stubs {
		v.Stubs = append(v.Stubs, web.SynthRow{Index: i, Label: string(st.Type) + " stub",
			Parts: fmt.Sprintf("line %.4f λ from the load, then a %s stub %.4f λ long", st.DWavelengths, st.Type, st.LWavelengths), CanUse: true})
	}
	for _, q := range syn.QuarterWaves {
		v.Quarter = append(v.Quarter, fmt.Sprintf("%.4f λ of %s line, then λ/4 of %.2f Ω (sees %.2f Ω)", q.DWavelengths, units.Format(ne.z0, "Ω", 3), q.Z1Ohm, q.ROhm))
	}
	v.SynthNote = strings.Join(syn.Notes, "; ")
	return v
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
		return sessions.Change{Op: sessions.OpNetworkAdd, Name: fmt.Sprintf("Search %d", idx+1), SweepID: r.SweepID, Port: r.Port,
			DesignHz: designHz(sc, r.SweepID), Parts: r.Designs[idx].Parts}, nil
	case "synth.use", "stub.use":
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
		lambda := rfmath.SpeedOfLight / fd
		switch {
		case form == "synth.use" && idx < len(syn.LNetworks):
			l := syn.LNetworks[idx]
			ch.Name = "L-network, " + orientationText[l.Orientation]
			for _, p := range l.Parts {
				ch.Parts = append(ch.Parts, sessions.Part{Kind: string(p.Kind), Value: p.Value})
			}
		case form == "stub.use" && idx < len(syn.Stubs):
			st := syn.Stubs[idx]
			ch.Name = fmt.Sprintf("%s stub", st.Type)
			kind := sessions.PartStubOpen
			if st.Type == match.ShortStub {
				kind = sessions.PartStubShort
			}
			params := map[string]float64{"z0Ohm": ne.z0, "vf": 1}
			if st.DWavelengths > 0 {
				ch.Parts = append(ch.Parts, sessions.Part{Kind: sessions.PartLine, Value: st.DWavelengths * lambda, Params: params})
			}
			ch.Parts = append(ch.Parts, sessions.Part{Kind: kind, Value: max(st.LWavelengths, 1e-6) * lambda, Params: params})
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

// designHz is the centre of the first band with a requirement inside the
// sweep, or 0 (the store picks its default).
func designHz(sc *scene, sweepID string) float64 {
	sw := sc.all[sweepID]
	for _, b := range sc.st.Bands {
		c := (b.LoHz + b.HiHz) / 2
		if sw != nil && c >= sw.FreqHz[0] && c <= sw.FreqHz[sw.Len()-1] {
			return c
		}
	}
	return 0
}
