package server

import (
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"matchbench/chartsvg"
	"matchbench/rfmath"
	"matchbench/rfmath/match"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/units"
	"matchbench/sessions"
	"matchbench/web"
)

// partColours tell the parts' steps apart on the matching path (an order
// of our own; none is a trace colour of the sweep palette).
var partColours = []string{"#7a3e9d", "#c2185b", "#00838f", "#8d6e63", "#3f51b5", "#827717", "#d84315", "#455a64"}

const (
	netColour    = "#222222"
	pathSamples  = 33  // points per matching-path step
	animFrames   = 24  // frames of a step's animation
	animMaxTrace = 300 // points of the morphing trace per frame
)

// netEval is the active network evaluated over its load's sweep.
type netEval struct {
	n      *sessions.Network
	design match.Network // the parts as typed, with their models
	built  match.Network // the parts at their standard values (as typed where they have none)
	snaps  bool          // some part's standard value differs from its typed one
	// lay is the network's board (zero without one); board is built placed
	// on it and typed the design as typed placed on it (match.Layout.Place):
	// the networks every figure, trace and export judges. Without a board
	// they are built and design themselves. boardErr says why a stored
	// board is left out.
	lay      match.Layout
	board    match.Placed
	typed    match.Network
	boardErr string
	load     match.Load
	sweep    *rfmath.Sweep
	port     int
	z0       float64
	gLoad    []complex128
	ideal    []complex128 // Γ with the values as typed
	buy      []complex128 // Γ with standard values; nil when no part snaps
	toLoad   []float64    // share of the available power at the load, as built
	set      *setEval     // the load set the network is judged across, or nil
	// stageSide is "source" or "load" for a network of the session's
	// transistor stage, whose load is then the device's port with the
	// other network in place (adaptStage, amp.go); "" otherwise.
	stageSide string
	err       error
}

// evalNetwork evaluates n over the sweep it sits on.
func (sc *scene) evalNetwork(n *sessions.Network) *netEval {
	ne := prepareNetwork(n, sc.all[n.SweepID])
	adaptStage(sc.st, ne)
	if ne.err != nil {
		return ne
	}
	var err error
	if ne.ideal, ne.toLoad, err = match.Response(ne.load, ne.typed, nil, nil); err != nil {
		ne.err = err
		return ne
	}
	if ne.snaps {
		if ne.buy, ne.toLoad, err = match.Response(ne.load, ne.board.Network, nil, nil); err != nil {
			ne.err = err
		}
	}
	sc.evalSet(ne)
	return ne
}

// prepareNetwork adapts n to the design type of rfmath/match on its load
// sweep sw without evaluating it over the sweep: what a part drag at the
// design frequency needs.
func prepareNetwork(n *sessions.Network, sw *rfmath.Sweep) *netEval {
	if sw == nil {
		return &netEval{n: n, err: fmt.Errorf("the network's load sweep is gone")}
	}
	port := max(n.Port, 1)
	ne := &netEval{n: n, sweep: sw, port: port, z0: sw.Z0[port-1], gLoad: reflection(sw, port-1)}
	ne.load = match.Load{FreqHz: sw.FreqHz, Gamma: ne.gLoad, Z0Ohm: ne.z0}
	if ne.design, ne.err = designOf(n); ne.err != nil {
		return ne
	}
	ne.built, ne.snaps = ne.design.Built(), ne.design.HasSnaps()
	if _, err := ne.built.Circuit(); err != nil {
		ne.err = err
		return ne
	}
	ne.placeOnBoard()
	return ne
}

// placeOnBoard places the network on its stored board (see netEval); a
// board that no longer fits the parts is left out with a note.
func (ne *netEval) placeOnBoard() {
	ne.board, ne.typed = match.Placed{Network: ne.built}, ne.design
	for i := range ne.built {
		ne.board.Origins = append(ne.board.Origins, match.Origin{Role: match.RolePart, Index: i})
	}
	lay, err := ne.n.Layout.Board(len(ne.n.Parts))
	if err != nil {
		ne.boardErr = "the board is left out: " + err.Error()
		return
	}
	if lay.IsZero() {
		return
	}
	b, err1 := lay.Place(ne.built)
	t, err2 := lay.Place(ne.design)
	if err1 != nil || err2 != nil {
		ne.boardErr = "the board is left out: " + errors.Join(err1, err2).Error()
		return
	}
	ne.lay, ne.board, ne.typed = lay, b, t.Network
}

// elem returns the index in the board's network of part i.
func (ne *netEval) elem(i int) int {
	if e := ne.board.Element(match.RolePart, i); e >= 0 {
		return e
	}
	return i
}

// elementName names element j of the board's network (match.Placed.Name).
func (ne *netEval) elementName(j int) string { return ne.board.Name(ne.design, j) }

// designOf adapts the stored network's parts to the design type that the
// search, the yield, the panel and the exports all judge, each by the one
// adapter from a stored part to rfmath ([sessions.Part.Design]).
func designOf(n *sessions.Network) (match.Network, error) {
	out := make(match.Network, len(n.Parts))
	for i, p := range n.Parts {
		d, err := p.Design()
		if err != nil {
			return nil, fmt.Errorf("%s: %w", designator(n.Parts, i), err)
		}
		out[i] = d
	}
	return out, nil
}

// result is the response that would be built: standard values when any
// part has them, else the typed values.
func (ne *netEval) result() []complex128 {
	if ne.buy != nil {
		return ne.buy
	}
	return ne.ideal
}

// loadAt interpolates the load's Γ at fHz.
func (ne *netEval) loadAt(fHz float64) complex128 {
	g, _ := ne.load.GammaAt(fHz)
	return g
}

// path returns the matching path at the design frequency against the
// load's own reference (see pathAt).
func (ne *netEval) path(override int, ov, frac float64) ([]chartsvg.PathSegment, []chartsvg.Marker) {
	return ne.pathAt(override, ov, frac, ne.z0)
}

// pathAt returns the matching path at the design frequency as a chart at
// reference chartZ0 draws it: one segment per part, each the track of Γ as
// that part grows in. override, when ≥ 0, draws part override at value ov
// and stops the path at fraction frac of its step (animation frames).
func (ne *netEval) pathAt(override int, ov, frac, chartZ0 float64) ([]chartsvg.PathSegment, []chartsvg.Marker) {
	if ne.err != nil {
		return nil, nil
	}
	if override >= 0 {
		override = ne.elem(override)
	}
	tracks := ne.board.Network.Path(ne.n.DesignHz, ne.loadAt(ne.n.DesignHz), ne.z0, pathSamples, override, ov, frac)
	segs := make([]chartsvg.PathSegment, 0, len(tracks))
	var handles []chartsvg.Marker
	for j, pts := range tracks {
		pts = toChart(pts, ne.z0, chartZ0)
		o := ne.board.Origins[j]
		if o.Role != match.RolePart {
			// The board's pads and traces: steps of the path without a handle.
			segs = append(segs, chartsvg.PathSegment{Kind: chartsvg.PathPoints, Points: pts, From: pts[0], To: pts[len(pts)-1], Color: boardColour})
			continue
		}
		i := o.Index
		p := ne.n.Parts[i]
		col := partColours[i%len(partColours)]
		segs = append(segs, chartsvg.PathSegment{Kind: chartsvg.PathPoints, Points: pts, From: pts[0], To: pts[len(pts)-1], Color: col})
		handles = append(handles, chartsvg.Marker{ID: "ph-" + p.ID, Num: i + 1, Gamma: pts[len(pts)-1], Color: col, Label: designator(ne.n.Parts, i), Shape: chartsvg.ShapeCircle})
	}
	return segs, handles
}

// boardColour draws the steps of the board's pads and traces on the
// matching path.
const boardColour = "#9e9e9e"

// designator names part i as a parts list would: L1, C2, R3, TL1, TS1, T1,
// counted by kind from the load (match.Network.Designator).
func designator(parts []sessions.Part, i int) string {
	n := make(match.Network, len(parts))
	for j, p := range parts {
		n[j].Kind = p.Kind
	}
	return n.Designator(i)
}

// netTraces are the chart traces of the active network against its load's
// own reference.
func (sc *scene) netTraces() []chartsvg.Trace {
	if sc.net == nil {
		return nil
	}
	return sc.netTracesAt(sc.net.z0)
}

// netTracesAt are the chart traces of the active network as a chart at
// reference chartZ0 draws them.
func (sc *scene) netTracesAt(chartZ0 float64) []chartsvg.Trace {
	ne := sc.net
	if ne == nil || ne.err != nil || len(ne.n.Parts) == 0 {
		return nil
	}
	out := []chartsvg.Trace{{ID: "net-" + ne.n.ID, Name: ne.n.Name, Color: netColour, FreqHz: ne.sweep.FreqHz, Gamma: toChart(ne.ideal, ne.z0, chartZ0), Dashed: ne.buy != nil, Ticks: -1}}
	if ne.buy != nil {
		out[0].Name += " (as typed)"
	}
	if ne.buy != nil {
		out = append(out, chartsvg.Trace{ID: "netbuy-" + ne.n.ID, Name: ne.n.Name + " (standard values)", Color: netColour, FreqHz: ne.sweep.FreqHz, Gamma: toChart(ne.buy, ne.z0, chartZ0), Ticks: -1})
	}
	return out
}

var kindLabels = map[rfmath.PartKind]string{
	sessions.PartSeriesL: "series L", sessions.PartSeriesC: "series C", sessions.PartSeriesR: "series R",
	sessions.PartShuntL: "shunt L", sessions.PartShuntC: "shunt C", sessions.PartShuntR: "shunt R",
	sessions.PartLine: "line", sessions.PartStubOpen: "open stub", sessions.PartStubShort: "shorted stub",
	sessions.PartTransformer: "transformer n:1",
}

// netBands returns the session's bands that lie within the network's load
// sweep, as rfmath/match wants them, and for every session band the index
// among those (−1 for a band outside the sweep). With onlyReq set, bands
// that ask nothing are left out.
func (ne *netEval) netBands(st *sessions.State, onlyReq bool) ([]match.Band, []int) {
	var bands []match.Band
	idx := make([]int, len(st.Bands))
	f := ne.sweep.FreqHz
	for i, b := range st.Bands {
		idx[i] = -1
		if b.LoHz < f[0] || b.HiHz > f[len(f)-1] || (onlyReq && !b.HasRequirement()) {
			continue
		}
		idx[i] = len(bands)
		bands = append(bands, match.Band{LoHz: b.LoHz, HiHz: b.HiHz, MinReturnLossDB: b.MinReturnLossDB, MinPowerToLoad: b.MinPowerToLoad})
	}
	return bands, idx
}

// metrics evaluates the network as built across the session's bands that
// its load covers (match.Evaluate, the one evaluator of band figures).
func (sc *scene) metrics() (match.Metrics, []int, error) {
	if sc.metricsDone {
		return sc.metricsRes, sc.metricsIdx, sc.metricsErr
	}
	sc.metricsDone = true
	ne := sc.net
	bands, idx := ne.netBands(sc.st, false)
	sc.metricsIdx = idx
	if len(bands) == 0 {
		return sc.metricsRes, idx, nil
	}
	if ne.set != nil {
		var sm match.SetMetrics
		sm, sc.metricsErr = match.EvaluateSet(ne.set.members, bands, ne.board.Network)
		sc.metricsRes, sc.setRes = sm.Metrics, &sm
		return sc.metricsRes, idx, sc.metricsErr
	}
	sc.metricsRes, sc.metricsErr = match.Evaluate(ne.load, bands, ne.board.Network)
	return sc.metricsRes, idx, sc.metricsErr
}

// metricRow is one band's figures as the panel and the report show them.
func metricRow(name string, r match.BandResult) web.NetMetricRow {
	row := web.NetMetricRow{
		Band:        name,
		Before:      units.FormatDB(r.Unmatched.WorstRLdB),
		Worst:       units.FormatDB(r.WorstRLdB),
		Mean:        units.FormatDB(r.MeanRLdB),
		PowerBefore: units.FormatShare(r.Unmatched.WorstPowerToLoad),
		PowerWorst:  units.FormatShare(r.WorstPowerToLoad),
		PowerMean:   units.FormatPercent(r.MeanPowerToLoad, 1),
		ML:          units.FormatDB(r.MismatchLossDB),
		NetLoss:     units.FormatDB(r.NetworkLossDB),
		Over:        r.OverDissipating(),
		Worse:       r.WorseThanNone(),
		Notes:       r.LossNotes(),
	}
	if r.Requirement().Any() {
		row.HasReq = true
		row.Pass = r.MarginDB >= 0
		row.Margin = signedDB(r.MarginDB)
		row.Req = requirementText(r.Band)
	}
	return row
}

// requirementText writes what a band asks: "RL ≥ 10 dB, ≥ 80 % to the load".
func requirementText(b match.Band) string {
	var s []string
	if b.MinReturnLossDB > 0 {
		s = append(s, "RL ≥ "+strconv.FormatFloat(b.MinReturnLossDB, 'g', 4, 64)+" dB")
	}
	if b.MinPowerToLoad > 0 {
		s = append(s, "≥ "+strconv.FormatFloat(100*b.MinPowerToLoad, 'g', 4, 64)+" % to the load")
	}
	return strings.Join(s, ", ")
}

// signedDB writes a margin with its sign: "+4.69 dB", "−1.20 dB".
func signedDB(v float64) string {
	switch {
	case math.IsInf(v, 1):
		return "+∞ dB"
	case v < 0:
		return "−" + units.FormatDB(-v)
	}
	return "+" + units.FormatDB(v)
}

// networkView builds the network panel's view model.
func (sc *scene) networkView() web.NetworkView {
	v := web.NetworkView{}
	for _, ref := range sc.st.Sweeps {
		label := ref.Name
		if ref.RefPlane != nil && sc.errs[ref.ID] == "" {
			label += " (corrected)"
		}
		v.Loads = append(v.Loads, web.Option{Value: ref.ID, Label: label})
	}
	if pick := sc.defaultLoad(); pick >= 0 {
		v.Loads[pick].Selected = true
	}
	for _, n := range sc.st.Networks {
		v.Networks = append(v.Networks, web.Option{Value: n.ID, Label: n.Name, Selected: n.ID == sc.st.ActiveNetwork})
	}
	for _, k := range sessions.PartKinds {
		v.Kinds = append(v.Kinds, web.Option{Value: string(k), Label: "+ " + kindLabels[k]})
	}
	ne := sc.net
	if ne == nil {
		return v
	}
	n := ne.n
	v.Active = true
	v.ID, v.Name = n.ID, n.Name
	v.DesignFreq = fmtF(n.DesignHz)
	v.PowerW = strconv.FormatFloat(n.PowerW, 'g', 4, 64)
	for i := range v.Loads {
		v.Loads[i].Selected = v.Loads[i].Value == n.SweepID
	}
	v.StageNote = stageNote(ne)
	if ne.err != nil {
		v.Error = plainWords(ne.err.Error())
		return v
	}
	for i, p := range n.Parts {
		d := ne.design[i]
		lo, hi := match.SliderRange(d, n.DesignHz, ne.z0)
		unit := p.Kind.Unit()
		row := web.PartRow{
			ID: p.ID, Index: i, Designator: designator(n.Parts, i), Kind: kindLabels[p.Kind], Color: partColours[i%len(partColours)],
			Value: units.Format(p.Value, unit, 4), Model: p.Model, Series: p.ESeries, Lumped: p.Kind.Component() != "",
			SliderMin: strconv.FormatFloat(math.Log10(lo), 'f', 4, 64), SliderMax: strconv.FormatFloat(math.Log10(hi), 'f', 4, 64),
			SliderVal: strconv.FormatFloat(math.Log10(p.Value), 'f', 4, 64), First: i == 0, Last: i == len(n.Parts)-1,
			LogValue: strconv.FormatFloat(math.Log10(p.Value), 'g', 15, 64),
		}
		if p.ESeries != "" {
			row.Buy = units.Format(d.BuyValue(), unit, 3)
		}
		if row.Lumped {
			fillPartFigures(&row, p, ne.built[i], n.DesignHz)
		}
		if p.Kind == sessions.PartLine || p.Kind == sessions.PartStubOpen || p.Kind == sessions.PartStubShort {
			fillLineFigures(&row, ne.built[i], n.DesignHz)
		}
		v.Parts = append(v.Parts, row)
	}
	m, idx, err := sc.metrics()
	if err != nil {
		v.Error = plainWords(err.Error())
	}
	for i, b := range sc.st.Bands {
		if idx[i] < 0 || err != nil {
			v.Metrics = append(v.Metrics, web.NetMetricRow{Band: b.Name, Note: "outside the load's sweep"})
			continue
		}
		row := metricRow(b.Name, m.Bands[idx[i]])
		if sm := sc.setRes; sm != nil && ne.set != nil {
			// The worst binding member in this band.
			for k, mm := range sm.Members {
				if !ne.set.members[k].Advisory && mm.Bands[idx[i]].MarginDB == m.Bands[idx[i]].MarginDB {
					row.Req += " · worst: " + ne.set.refs[k].Name
					break
				}
			}
		}
		v.Metrics = append(v.Metrics, row)
	}
	if ne.set != nil && sc.setRes != nil {
		bands, _ := ne.netBands(sc.st, false)
		v.Set = web.NetSetView{Name: ne.set.set.Name, Kind: ne.set.set.Kind, Members: memberRows(ne.set, *sc.setRes, bands)}
	}
	for _, s := range sc.st.LoadSets {
		v.Sets = append(v.Sets, web.Option{Value: s.ID, Label: s.Name, Selected: s.ID == n.SetID})
	}
	v.HasBuy = ne.buy != nil
	if svg, err := sc.schematicSVG("net-"); err == nil {
		v.Schematic = svg
	}
	v.Power, v.PowerNote = sc.powerRows()
	v.Search = sc.searchView()
	v.Limits = sc.limits()
	v.Yield = sc.yieldView()
	return v
}

// defaultLoad is the sweep a new network is offered to match, by its index:
// the first shown sweep with its reference plane applied (the corrected
// measurement of the load, not the cable or fixture it was measured
// through), else the first shown 1-port sweep that is no other sweep's
// fixture, else the first sweep; −1 for none.
func (sc *scene) defaultLoad() int {
	fixture := map[string]bool{}
	for _, ref := range sc.st.Sweeps {
		if ref.RefPlane != nil && ref.RefPlane.FixtureSweepID != "" {
			fixture[ref.RefPlane.FixtureSweepID] = true
		}
	}
	for i, ref := range sc.st.Sweeps {
		if ref.Visible && ref.RefPlane != nil && sc.errs[ref.ID] == "" {
			return i
		}
	}
	for i, ref := range sc.st.Sweeps {
		if ref.Visible && ref.Ports == 1 && !fixture[ref.ID] {
			return i
		}
	}
	if len(sc.st.Sweeps) > 0 {
		return 0
	}
	return -1
}

// partChange turns a network form into a change; fields as typed.
func (sc *scene) partChange(form string, f map[string]string) (sessions.Change, error) {
	ne := sc.net
	r := newFieldReader(form, f)
	switch form {
	case "network.add":
		return sessions.Change{Op: sessions.OpNetworkAdd, SweepID: f["sweepId"]}, nil
	case "network.set":
		return networkSetForm(r)
	}
	if ne == nil {
		return sessions.Change{}, fmt.Errorf("start a matching network first")
	}
	switch form {
	case "part.add":
		return partAddForm(r, ne)
	case "part.params":
		return partParamsForm(r, ne)
	case "part.set":
		return partSetForm(r, ne)
	}
	return sessions.Change{}, fmt.Errorf("unknown form %q", form)
}

// networkSetForm reads the network form: name, load, load set, design
// frequency, yield builds ("off" for none), Chu sphere radius and power.
func networkSetForm(r *fieldReader) (sessions.Change, error) {
	ch := sessions.Change{Op: sessions.OpNetworkSet, NetworkID: r.f["networkId"], Name: strings.TrimSpace(r.f["name"]), SweepID: r.f["sweepId"], SetID: r.f["setId"]}
	if s := strings.TrimSpace(r.f["design"]); s != "" {
		v, err := units.ParseFrequency(s)
		if err != nil {
			return ch, r.errAt("design", "Design frequency", err)
		}
		ch.DesignHz = v
	}
	if s, ok := r.f["yield"]; ok {
		switch n, err := strconv.Atoi(strings.TrimSpace(s)); {
		case strings.TrimSpace(s) == "" || s == "0" || s == "off":
			ch.YieldBuilds = -1
		case err != nil || n < 1:
			return ch, r.errAt("yield", "Builds", fmt.Errorf("%q is not a number of builds", s))
		default:
			ch.YieldBuilds = n
		}
	}
	if s, ok := r.f["radius"]; ok {
		if strings.TrimSpace(s) == "" {
			ch.ChuRadiusM = -1
		} else {
			m, err := units.ParseValue(s, "m")
			if err != nil {
				return ch, r.errAt("radius", "Sphere radius", err)
			}
			ch.ChuRadiusM = m
		}
	}
	if s := strings.TrimSpace(r.f["power"]); s != "" {
		v, err := units.ParseValue(s, "W")
		if err != nil {
			return ch, r.errAt("power", "Input power", err)
		}
		ch.PowerW = &v
	}
	return ch, nil
}

// partAddForm adds a part of the kind chosen at its default value for the
// design frequency.
func partAddForm(r *fieldReader, ne *netEval) (sessions.Change, error) {
	kind := rfmath.PartKind(r.f["kind"])
	if _, ok := kindLabels[kind]; !ok {
		return sessions.Change{}, r.errAt("kind", "Part", fmt.Errorf("unknown part kind %q", kind))
	}
	v := match.DefaultValue(kind, ne.n.DesignHz, ne.z0)
	return sessions.Change{Op: sessions.OpPartAdd, NetworkID: ne.n.ID, Kind: kind, Value: &v}, nil
}

// partParamsForm reads a part's own figures: Q and its frequency, ESR,
// ratings, self-resonance and tolerance, and a line's or stub's impedance,
// velocity factor (or effective permittivity) and loss. An empty field
// clears its figure (the model's again).
func partParamsForm(r *fieldReader, ne *netEval) (sessions.Change, error) {
	ch := sessions.Change{Op: sessions.OpPartSet, NetworkID: ne.n.ID, PartID: r.f["partId"], Params: map[string]float64{}}
	for _, fd := range []struct{ field, param, label, unit string }{
		{"q", "q", "Q", ""}, {"esr", "esrOhm", "ESR", "Ω"}, {"maxV", "maxV", "Rated voltage", "V"}, {"maxA", "maxA", "Rated current", "A"},
	} {
		t, ok := r.f[fd.field]
		if !ok {
			continue
		}
		if strings.TrimSpace(t) == "" {
			ch.Params[fd.param] = math.NaN() // clears it: the model's figure again
			continue
		}
		v, err := units.ParseValue(t, fd.unit)
		if err != nil {
			return ch, r.errAt(fd.field, fd.label, err)
		}
		ch.Params[fd.param] = v
	}
	for _, fd := range []struct{ field, param, label string }{{"qRef", "qRefHz", "Q frequency"}, {"srf", "srfHz", "Self-resonance"}} {
		t, ok := r.f[fd.field]
		if !ok {
			continue
		}
		if strings.TrimSpace(t) == "" {
			ch.Params[fd.param] = math.NaN()
			continue
		}
		v, err := units.ParseFrequency(t)
		if err != nil {
			return ch, r.errAt(fd.field, fd.label, err)
		}
		ch.Params[fd.param] = v
	}
	if err := lineParams(r, ch.Params); err != nil {
		return ch, err
	}
	if err := tolParam(r, ch.Params); err != nil {
		return ch, err
	}
	return ch, nil
}

// lineParams reads a line's or stub's impedance, velocity factor (or
// effective permittivity), loss in dB/m and the loss's frequency into
// params.
func lineParams(r *fieldReader, params map[string]float64) error {
	if t, ok := r.f["z0"]; ok {
		v, err := units.ParseValue(t, "Ω")
		if err != nil || !(v > 0) {
			return r.errAt("z0", "Line impedance", fmt.Errorf("%q is not an impedance in ohms", t))
		}
		params["z0Ohm"] = v
	}
	if t, ok := r.f["vfValue"]; ok && strings.TrimSpace(t) != "" {
		x, err := strconv.ParseFloat(strings.TrimSpace(t), 64)
		switch {
		case r.f["vfKind"] == "eeff" && (err != nil || !(x >= 1) || math.IsInf(x, 0)):
			return r.errAt("vfValue", "Effective permittivity", fmt.Errorf("%q is not an effective permittivity (at least 1)", t))
		case r.f["vfKind"] == "eeff":
			params["vf"] = 1 / math.Sqrt(x)
		case err != nil || !(x > 0 && x <= 1):
			return r.errAt("vfValue", "Velocity factor", fmt.Errorf("%q is not a velocity factor (above 0, at most 1)", t))
		default:
			params["vf"] = x
		}
	}
	if t, ok := r.f["loss"]; ok {
		s := strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(t), "dB/m"))
		if s == "" || s == "0" {
			params["lossDBPerM"] = math.NaN()
		} else {
			x, err := strconv.ParseFloat(s, 64)
			if err != nil || !(x >= 0) || x >= 1e4 {
				return r.errAt("loss", "Line loss", fmt.Errorf("%q is not a loss in dB per metre", t))
			}
			params["lossDBPerM"] = x
		}
	}
	if t, ok := r.f["lossRef"]; ok && strings.TrimSpace(t) != "" {
		x, err := units.ParseFrequency(t)
		if err != nil || !(x > 0) {
			return r.errAt("lossRef", "Loss frequency", fmt.Errorf("%q is not a frequency", t))
		}
		params["lossRefHz"] = x
	}
	return nil
}

// tolParam reads a part's tolerance in % into params (as a fraction).
func tolParam(r *fieldReader, params map[string]float64) error {
	if t, ok := r.f["tol"]; ok {
		if strings.TrimSpace(t) == "" {
			params["tolRel"] = math.NaN()
		} else {
			v, err := strconv.ParseFloat(strings.TrimSpace(strings.TrimSuffix(t, "%")), 64)
			if err != nil || !(v >= 0 && v < 100) {
				return r.errAt("tol", "Tolerance", fmt.Errorf("%q is not a percentage from 0 to 100", t))
			}
			params["tolRel"] = v / 100
		}
	}
	return nil
}

// partSetForm reads a part's value as typed (in its unit, or a line's
// length in wavelengths), from the slider (log10 of the value), or its
// model and E-series.
func partSetForm(r *fieldReader, ne *netEval) (sessions.Change, error) {
	ch := sessions.Change{Op: sessions.OpPartSet, NetworkID: ne.n.ID, PartID: r.f["partId"], Gesture: r.f["gesture"]}
	var part *sessions.Part
	for i := range ne.n.Parts {
		if ne.n.Parts[i].ID == ch.PartID {
			part = &ne.n.Parts[i]
		}
	}
	if part == nil {
		return ch, r.errAt("partId", "Part", fmt.Errorf("no part %q in the active network", ch.PartID))
	}
	if s, ok := r.f["value"]; ok {
		name := designator(ne.n.Parts, indexOf(ne.n.Parts, part.ID))
		v, inWL, err := wavelengthValue(s, match.Part{Kind: part.Kind, Params: part.Params}, ne.n.DesignHz)
		if inWL && part.Kind.Unit() != "m" {
			return ch, r.errAt("value", name, fmt.Errorf("only a line or a stub has a length in wavelengths"))
		}
		if !inWL {
			v, err = units.ParseValue(s, part.Kind.Unit())
		}
		if err != nil {
			return ch, r.errAt("value", name, err)
		}
		ch.Value = &v
	}
	if s, ok := r.f["log"]; ok {
		x, err := strconv.ParseFloat(s, 64)
		if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
			return ch, r.errAt("log", "Slider", fmt.Errorf("%q is not a number", s))
		}
		v := math.Pow(10, x)
		ch.Value = &v
	}
	if s, ok := r.f["model"]; ok {
		ch.Model = &s
	}
	if s, ok := r.f["series"]; ok {
		ch.ESeries = &s
	}
	return ch, nil
}

func indexOf(ps []sessions.Part, id string) int {
	for i, p := range ps {
		if p.ID == id {
			return i
		}
	}
	return -1
}

// dragValue returns the value that puts part id's design-frequency point
// nearest to target along its arc (match.Network.DragValue).
func (ne *netEval) dragValue(id string, target complex128) (float64, error) {
	i := indexOf(ne.n.Parts, id)
	if i < 0 {
		return 0, fmt.Errorf("no part %q in the active network", id)
	}
	fd := ne.n.DesignHz
	v, err := ne.board.Network.DragValue(ne.elem(i), fd, ne.loadAt(fd), ne.z0, target)
	if err != nil {
		return 0, fmt.Errorf("a %s cannot be dragged on the chart; type its value", kindLabels[ne.n.Parts[i].Kind])
	}
	return v, nil
}

// stepAnimation returns the frames of a matching step when ev added a part
// to the active network or changed a part's value by a jump (not a drag,
// whose moves are their own animation): the design point runs along the
// part's arc while the whole response morphs with it.
func stepAnimation(prev, sc *scene, ev sessions.Event, v *pageView) *anim {
	if prev == nil || sc.net == nil || sc.net.err != nil || ev.PartID == "" || ev.Gesture != "" {
		return nil
	}
	ne := sc.net
	i := indexOf(ne.n.Parts, ev.PartID)
	if i < 0 {
		return nil
	}
	p := ne.built[i]
	to := p.Value
	var from float64 // 0: the part grows in from nothing
	switch ev.Op {
	case sessions.OpPartAdd:
	case sessions.OpPartSet:
		if prev.net == nil || prev.net.err != nil || prev.net.n.ID != ne.n.ID {
			return nil
		}
		j := indexOf(prev.net.n.Parts, ev.PartID)
		if j < 0 || j != i {
			return nil
		}
		q := prev.net.built[j]
		from = q.Value
		if q.Kind != p.Kind || from == to {
			return nil
		}
	default:
		return nil
	}
	// A thinned grid for the morphing response.
	freq := ne.sweep.FreqHz
	stride := max(1, len(freq)/animMaxTrace)
	var fs []float64
	var gl []complex128
	for k := 0; k < len(freq); k += stride {
		fs = append(fs, freq[k])
		gl = append(gl, ne.gLoad[k])
	}
	a := &anim{MS: 700}
	resp := make([]complex128, len(fs))
	z0, chart := v.z0(), sc.chartFor(v)
	for f := 1; f <= animFrames; f++ {
		t := float64(f) / animFrames
		t = t * t * (3 - 2*t) // ease in and out
		var val float64
		if from == 0 {
			val = match.ScaledValue(p.Kind, to, math.Max(t, 1e-4))
		} else {
			val = from * math.Pow(to/from, t)
		}
		segs, _ := ne.pathAt(i, val, 1, z0)
		if _, err := ne.board.Network.MorphTo(resp, ne.elem(i), val, fs, gl, ne.z0); err != nil {
			return nil
		}
		pts := toChart(append([]complex128(nil), resp...), ne.z0, z0)
		segs = append(segs, chartsvg.PathSegment{Kind: chartsvg.PathPoints, Points: pts, From: pts[0], To: pts[len(pts)-1], Color: netColour})
		var b strings.Builder
		chart.RenderPath(&b, segs)
		a.Frames = append(a.Frames, []frag{{ID: "match-path", HTML: b.String(), SVG: true}})
	}
	return a
}

func fmtF4(f float64) string { return units.FormatFrequency(f, 4) }

// fillPartFigures shows a lumped part's own figures and, in words, what
// its model (with those figures) gives at the design frequency; d is the
// part as built.
func fillPartFigures(row *web.PartRow, p sessions.Part, d match.Part, fHz float64) {
	g := func(name string, f func(float64) string) string {
		if v, ok := p.Params[name]; ok {
			return f(v)
		}
		return ""
	}
	num := func(v float64) string { return strconv.FormatFloat(v, 'g', 4, 64) }
	freq := func(v float64) string { return units.FormatFrequency(v, 4) }
	row.Q, row.QRef, row.SRF, row.ESR = g("q", num), g("qRefHz", freq), g("srfHz", freq), g("esrOhm", num)
	row.Tol = g("tolRel", func(v float64) string { return num(100 * v) })
	row.MaxV, row.MaxA = g("maxV", num), g("maxA", num)
	c := d.Component(d.Value)
	z := c.ImpedanceAt(fHz)
	model := modelText(p.Model)
	q := rfmath.Q(z)
	switch m := c.(type) {
	case parts.Inductor:
		row.ModelNote = fmt.Sprintf("%s: Q %.3g at %s, self-resonance %s; at %s it is %s (Q %.3g)", model, m.Q, fmtF4(m.QRefHz), srfText(m.SRFHz), fmtF4(fHz), fmtZ(z, 'g', 4), q)
	case parts.Capacitor:
		row.ModelNote = fmt.Sprintf("%s: ESR %.3g Ω, self-resonance %s; at %s it is %s (Q %.3g)", model, m.ESR(), srfText(m.SRFHz), fmtF4(fHz), fmtZ(z, 'g', 4), q)
	default:
		row.ModelNote = fmt.Sprintf("%s: at %s it is %s", model, fmtF4(fHz), fmtZ(z, 'g', 4))
	}
	row.ModelNote += " (set the part's own figures)"
}

// fillLineFigures shows a line section's or stub's figures: impedance,
// velocity factor and the effective permittivity 1/VF² it means, loss in
// dB/m at its frequency, and its length in mm and in wavelengths on the
// line at the design frequency fHz, with its loss there.
func fillLineFigures(row *web.PartRow, d match.Part, fHz float64) {
	l := d.LineOf(d.Value)
	vf := l.VelocityFactor
	if vf == 0 {
		vf = 1
	}
	num := func(v float64) string { return strconv.FormatFloat(v, 'g', 4, 64) }
	row.Line = true
	row.Z0 = units.Format(l.Z0Ohm, "Ω", 4)
	row.VF, row.EEff = num(vf), num(1/(vf*vf))
	row.Loss, row.LossRef = num(l.LossDBPerM), fmtF4(l.LossRefHz)
	row.LengthMM = units.Format(l.LengthM, "m", 4)
	row.LengthWL = strconv.FormatFloat(l.ElectricalDeg(fHz)/360, 'f', 4, 64)
	row.DesignAt = fmtF4(fHz)
	if l.LossDBPerM > 0 {
		row.LineDB = fmt.Sprintf(", losing %s there", units.FormatDB(l.LossDB(fHz)))
	}
}

// wavelengthValue reads a length typed in wavelengths on the line ("0.25λ",
// "0.25 wl") at the design frequency fHz; ok is false for anything else.
func wavelengthValue(s string, d match.Part, fHz float64) (float64, bool, error) {
	t := strings.TrimSpace(s)
	for _, suf := range []string{"λ", "wl", "WL"} {
		if n, found := strings.CutSuffix(t, suf); found {
			x, err := strconv.ParseFloat(strings.TrimSpace(n), 64)
			if err != nil || !(x > 0) || math.IsInf(x, 0) {
				return 0, true, fmt.Errorf("%q is not a number of wavelengths", s)
			}
			vf := d.LineOf(1).VelocityFactor
			if vf == 0 {
				vf = 1
			}
			return x * vf * rfmath.SpeedOfLight / fHz, true, nil
		}
	}
	return 0, false, nil
}

// modelText names a part model as the panel shows it.
func modelText(name string) string {
	switch name {
	case "", "ideal":
		return "ideal"
	case parts.ConstantQName:
		return "constant Q"
	}
	return "typical " + name
}

func srfText(f float64) string {
	if !(f > 0) {
		return "none"
	}
	return fmtF4(f)
}
