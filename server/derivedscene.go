package server

import (
	"context"
	"fmt"

	"matchbench/rfmath/match"
	"matchbench/rfmath/units"
	"matchbench/sessions"
	"matchbench/web"
)

// The scene's heavy derived results come from the server's derivedCache:
// fillDerived, called when a scene is built, puts into the scene what the
// cache holds for its state, or "computing…" while the cache computes it,
// so that drawing the scene (a page, a catch-up, an update) never runs the
// Monte Carlo or the limits itself. The jobs compute on a private copy of
// the scene with the very functions a scene would call (yield,
// limitsView).

// yieldOut is a Monte Carlo as the cache keeps it: what scene.yield returns.
type yieldOut struct {
	res *match.YieldResult
	msg string
}

// loadInputs are the inputs of a result that come from the network's load:
// its sweep, port and reference plane.
type loadInputs struct {
	SweepID  string             `json:"sweepId"`
	Port     int                `json:"port"`
	RefPlane *sessions.RefPlane `json:"refPlane,omitempty"`
}

func loadOf(st *sessions.State, n *sessions.Network) loadInputs {
	l := loadInputs{SweepID: n.SweepID, Port: max(n.Port, 1)}
	if i := st.SweepIndex(n.SweepID); i >= 0 {
		l.RefPlane = st.Sweeps[i].RefPlane
	}
	return l
}

// setInputs are the inputs that come from the load set the network is
// judged across, if any: the set and each member's load.
type setInputs struct {
	Set     *sessions.LoadSet `json:"set,omitempty"`
	Members []loadInputs      `json:"members,omitempty"`
}

func setOf(st *sessions.State, n *sessions.Network) setInputs {
	i := st.LoadSetIndex(n.SetID)
	if n.SetID == "" || i < 0 {
		return setInputs{}
	}
	in := setInputs{Set: &st.LoadSets[i]}
	for _, m := range st.LoadSets[i].Members {
		in.Members = append(in.Members, loadOf(st, &sessions.Network{SweepID: m.SweepID, Port: m.Port}))
	}
	return in
}

// stageInputs are the inputs a network of the transistor stage depends on
// beyond its own: the stage and its other network (its load is the
// device's port with the other network in place).
type stageInputs struct {
	Stage    *sessions.Stage    `json:"stage,omitempty"`
	Networks []sessions.Network `json:"networks,omitempty"`
}

func stageOfNet(st *sessions.State, ne *netEval) stageInputs {
	if ne.stageSide == "" || st.Stage == nil {
		return stageInputs{}
	}
	return stageInputs{Stage: st.Stage, Networks: st.Networks}
}

// jobContext is the context the scene's heavy computations run under: a
// derived job's (cancelled when the job is stale or the server stops), or
// the background for a scene drawn directly.
func (sc *scene) jobContext() context.Context {
	if sc.jobCtx != nil {
		return sc.jobCtx
	}
	return context.Background()
}

// fillDerived fills sc's Monte Carlo and limits from the derived-results
// cache, queueing what is missing. A scene with a network gets both.
func (s *Server) fillDerived(sc *scene) {
	ne := sc.net
	if s.derived == nil || ne == nil || ne.err != nil {
		return
	}
	n := ne.n
	load := loadOf(sc.st, n)
	sc.limitsV = &web.LimitsView{BodeFano: "Bode–Fano: computing…"}
	set, stage := setOf(sc.st, n), stageOfNet(sc.st, ne)
	key := derivedKey{sc.sid, "limits", digest(struct {
		Load     loadInputs      `json:"load"`
		Set      setInputs       `json:"set"`
		Stage    stageInputs     `json:"stage"`
		Bands    []sessions.Band `json:"bands"`
		DesignHz float64         `json:"designHz"`
		Radius   float64         `json:"radius"`
	}{load, set, stage, sc.st.Bands, n.DesignHz, n.ChuRadiusM})}
	if v, ok := s.derived.get(key, sc.limitsJob()); ok {
		lv := v.(web.LimitsView)
		sc.limitsV = &lv
	} else if n.ChuRadiusM > 0 {
		sc.limitsV.Chu = "Chu limit: computing…"
	}
	if sc.limitsV.Radius == "" && n.ChuRadiusM > 0 {
		sc.limitsV.Radius = units.Format(n.ChuRadiusM, "m", 3) // the form keeps its value meanwhile
	}

	if n.YieldBuilds <= 0 || len(n.Parts) == 0 {
		return // yield has nothing to run
	}
	key = derivedKey{sc.sid, "yield", digest(struct {
		Network *sessions.Network `json:"network"`
		Load    loadInputs        `json:"load"`
		Set     setInputs         `json:"set"`
		Stage   stageInputs       `json:"stage"`
		Bands   []sessions.Band   `json:"bands"`
	}{n, load, set, stage, sc.st.Bands})}
	sc.yieldDone = true
	if v, ok := s.derived.get(key, sc.yieldJob()); ok {
		out := v.(yieldOut)
		sc.yieldRes, sc.yieldMsg = out.res, out.msg
		return
	}
	sc.yieldPending = true
	sc.yieldMsg = fmt.Sprintf("Monte Carlo of %d builds: computing… The results appear here when they are ready.", n.YieldBuilds)
}

// yieldJob runs scene.yield on a private copy of sc.
func (sc *scene) yieldJob() derivedJob {
	sid, st, ne := sc.sid, sc.st, sc.net
	return func(ctx context.Context) (any, int64) {
		w := &scene{sid: sid, st: st, net: ne, netFigures: netFigures{jobCtx: ctx}}
		res, msg := w.yield()
		var n int64 = 256
		if res != nil {
			for _, t := range res.Traces {
				n += int64(16 * len(t))
			}
			n += int64(64 * len(res.Sensitivity))
		}
		return yieldOut{res, msg}, n
	}
}

// limitsJob runs scene.limitsView on a private copy of sc.
func (sc *scene) limitsJob() derivedJob {
	sid, st, ne := sc.sid, sc.st, sc.net
	return func(ctx context.Context) (any, int64) {
		w := &scene{sid: sid, st: st, net: ne, netFigures: netFigures{jobCtx: ctx}}
		return w.limitsView(), 1024
	}
}

// limits is the network panel's limits: from the cache, or computed here
// for a scene that fillDerived did not fill.
func (sc *scene) limits() web.LimitsView {
	if sc.limitsV != nil {
		return *sc.limitsV
	}
	return sc.limitsView()
}

// derivedPending reports whether sc shows a result that is still computing.
func (sc *scene) derivedPending() bool {
	return sc.yieldPending || (sc.limitsV != nil && sc.limitsV.BodeFano == "Bode–Fano: computing…")
}

// derivedReady redraws the pages of session sid: a result they show as
// computing is ready.
func (s *Server) derivedReady(sid string) {
	s.mu.Lock()
	rm := s.rooms[sid]
	s.mu.Unlock()
	if rm != nil {
		rm.askRedraw()
	}
}

// searchInPool runs a broadband search (search) when one of the server's
// search slots is free, as many as the derived-results workers, telling
// the session's pages while it waits for one. A cancelled wait returns the
// context's error.
func (s *Server) searchInPool(ctx context.Context, sid string, search func() (*match.Result, error)) (*match.Result, error) {
	select {
	case s.searches <- struct{}{}:
	default:
		s.toSend(sid, progressMsg{Type: "progress", Running: true, Msg: "waiting for another session's search to finish"})
		select {
		case s.searches <- struct{}{}:
		case <-ctx.Done():
			return nil, ctx.Err()
		}
	}
	defer func() { <-s.searches }()
	return search()
}
