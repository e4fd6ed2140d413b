package server

import (
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
	load   match.Load
	sweep  *rfmath.Sweep
	port   int
	z0     float64
	gLoad  []complex128
	ideal  []complex128 // Γ with the values as typed
	buy    []complex128 // Γ with standard values; nil when no part snaps
	toLoad []float64    // share of the available power at the load, as built
	err    error
}

// evalNetwork evaluates n over the sweep it sits on.
func (sc *scene) evalNetwork(n *sessions.Network) *netEval {
	ne := prepareNetwork(n, sc.all[n.SweepID])
	if ne.err != nil {
		return ne
	}
	var err error
	if ne.ideal, ne.toLoad, err = match.Response(ne.load, ne.design, nil, nil); err != nil {
		ne.err = err
		return ne
	}
	if ne.snaps {
		if ne.buy, ne.toLoad, err = match.Response(ne.load, ne.built, nil, nil); err != nil {
			ne.err = err
		}
	}
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
	}
	return ne
}

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

// path returns the matching path at the design frequency: one segment per
// part, each the track of Γ as that part grows in. override, when ≥ 0,
// draws part override at value ov and stops the path at fraction frac of
// its step (animation frames).
func (ne *netEval) path(override int, ov, frac float64) ([]chartsvg.PathSegment, []chartsvg.Marker) {
	if ne.err != nil {
		return nil, nil
	}
	tracks := ne.built.Path(ne.n.DesignHz, ne.loadAt(ne.n.DesignHz), ne.z0, pathSamples, override, ov, frac)
	segs := make([]chartsvg.PathSegment, 0, len(tracks))
	var handles []chartsvg.Marker
	for i, pts := range tracks {
		p := ne.n.Parts[i]
		col := partColours[i%len(partColours)]
		segs = append(segs, chartsvg.PathSegment{Kind: chartsvg.PathPoints, Points: pts, From: pts[0], To: pts[len(pts)-1], Color: col})
		handles = append(handles, chartsvg.Marker{ID: "ph-" + p.ID, Num: i + 1, Gamma: pts[len(pts)-1], Color: col, Label: designator(ne.n.Parts, i), Shape: chartsvg.ShapeCircle})
	}
	return segs, handles
}

// designator names part i as a parts list would: L1, C2, R3, TL1, TS1, T1,
// counted by kind from the load.
func designator(parts []sessions.Part, i int) string {
	prefix := func(p sessions.Part) string {
		switch p.Kind {
		case sessions.PartLine:
			return "TL"
		case sessions.PartStubOpen, sessions.PartStubShort:
			return "TS"
		case sessions.PartTransformer:
			return "T"
		}
		return string(p.Kind.Component())
	}
	want, n := prefix(parts[i]), 0
	for j := 0; j <= i; j++ {
		if prefix(parts[j]) == want {
			n++
		}
	}
	return want + strconv.Itoa(n)
}

// netTraces are the chart traces of the active network.
func (sc *scene) netTraces() []chartsvg.Trace {
	ne := sc.net
	if ne == nil || ne.err != nil || len(ne.n.Parts) == 0 {
		return nil
	}
	out := []chartsvg.Trace{{ID: "net-" + ne.n.ID, Name: ne.n.Name, Color: netColour, FreqHz: ne.sweep.FreqHz, Gamma: ne.ideal, Dashed: ne.buy != nil, Ticks: -1}}
	if ne.buy != nil {
		out[0].Name += " (as typed)"
	}
	if ne.buy != nil {
		out = append(out, chartsvg.Trace{ID: "netbuy-" + ne.n.ID, Name: ne.n.Name + " (standard values)", Color: netColour, FreqHz: ne.sweep.FreqHz, Gamma: ne.buy, Ticks: -1})
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
	sc.metricsRes, sc.metricsErr = match.Evaluate(ne.load, bands, ne.built)
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
		v.Loads = append(v.Loads, web.Option{Value: ref.ID, Label: ref.Name})
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
	if ne.err != nil {
		v.Error = ne.err.Error()
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
		}
		if p.ESeries != "" {
			row.Buy = units.Format(d.BuyValue(), unit, 3)
		}
		if row.Lumped {
			fillPartFigures(&row, p, ne.built[i], n.DesignHz)
		}
		v.Parts = append(v.Parts, row)
	}
	m, idx, err := sc.metrics()
	if err != nil {
		v.Error = err.Error()
	}
	for i, b := range sc.st.Bands {
		if idx[i] < 0 || err != nil {
			v.Metrics = append(v.Metrics, web.NetMetricRow{Band: b.Name, Note: "outside the load's sweep"})
			continue
		}
		v.Metrics = append(v.Metrics, metricRow(b.Name, m.Bands[idx[i]]))
	}
	v.HasBuy = ne.buy != nil
	if svg, err := sc.schematicSVG("net-"); err == nil {
		v.Schematic = svg
	}
	v.Power, v.PowerNote = sc.powerRows()
	v.Search = sc.searchView()
	v.Limits = sc.limitsView()
	v.Yield = sc.yieldView()
	return v
}

// partChange turns a network form into a change; fields as typed.
func (sc *scene) partChange(form string, f map[string]string) (sessions.Change, error) {
	ne := sc.net
	fe := func(field, label string, err error) error { return &FieldError{form, field, label, err} }
	switch form {
	case "network.add":
		return sessions.Change{Op: sessions.OpNetworkAdd, SweepID: f["sweepId"]}, nil
	case "network.set":
		ch := sessions.Change{Op: sessions.OpNetworkSet, NetworkID: f["networkId"], Name: strings.TrimSpace(f["name"]), SweepID: f["sweepId"]}
		if s := strings.TrimSpace(f["design"]); s != "" {
			v, err := units.ParseFrequency(s)
			if err != nil {
				return ch, fe("design", "Design frequency", err)
			}
			ch.DesignHz = v
		}
		if s, ok := f["yield"]; ok {
			switch n, err := strconv.Atoi(strings.TrimSpace(s)); {
			case strings.TrimSpace(s) == "" || s == "0" || s == "off":
				ch.YieldBuilds = -1
			case err != nil || n < 1:
				return ch, fe("yield", "Builds", fmt.Errorf("%q is not a number of builds", s))
			default:
				ch.YieldBuilds = n
			}
		}
		if s, ok := f["radius"]; ok {
			if strings.TrimSpace(s) == "" {
				ch.ChuRadiusM = -1
			} else {
				r, err := units.ParseValue(s, "m")
				if err != nil {
					return ch, fe("radius", "Sphere radius", err)
				}
				ch.ChuRadiusM = r
			}
		}
		if s := strings.TrimSpace(f["power"]); s != "" {
			v, err := units.ParseValue(s, "W")
			if err != nil {
				return ch, fe("power", "Input power", err)
			}
			ch.PowerW = &v
		}
		return ch, nil
	case "part.add":
		if ne == nil {
			return sessions.Change{}, fmt.Errorf("start a matching network first")
		}
		kind := rfmath.PartKind(f["kind"])
		if _, ok := kindLabels[kind]; !ok {
			return sessions.Change{}, fe("kind", "Part", fmt.Errorf("unknown part kind %q", kind))
		}
		v := match.DefaultValue(kind, ne.n.DesignHz, ne.z0)
		return sessions.Change{Op: sessions.OpPartAdd, NetworkID: ne.n.ID, Kind: kind, Value: &v}, nil
	case "part.params":
		if ne == nil {
			return sessions.Change{}, fmt.Errorf("start a matching network first")
		}
		ch := sessions.Change{Op: sessions.OpPartSet, NetworkID: ne.n.ID, PartID: f["partId"], Params: map[string]float64{}}
		for _, fd := range []struct{ field, param, label, unit string }{
			{"q", "q", "Q", ""}, {"esr", "esrOhm", "ESR", "Ω"}, {"maxV", "maxV", "Rated voltage", "V"}, {"maxA", "maxA", "Rated current", "A"},
		} {
			t, ok := f[fd.field]
			if !ok {
				continue
			}
			if strings.TrimSpace(t) == "" {
				ch.Params[fd.param] = math.NaN() // clears it: the model's figure again
				continue
			}
			v, err := units.ParseValue(t, fd.unit)
			if err != nil {
				return ch, fe(fd.field, fd.label, err)
			}
			ch.Params[fd.param] = v
		}
		for _, fd := range []struct{ field, param, label string }{{"qRef", "qRefHz", "Q frequency"}, {"srf", "srfHz", "Self-resonance"}} {
			t, ok := f[fd.field]
			if !ok {
				continue
			}
			if strings.TrimSpace(t) == "" {
				ch.Params[fd.param] = math.NaN()
				continue
			}
			v, err := units.ParseFrequency(t)
			if err != nil {
				return ch, fe(fd.field, fd.label, err)
			}
			ch.Params[fd.param] = v
		}
		if t, ok := f["tol"]; ok {
			if strings.TrimSpace(t) == "" {
				ch.Params["tolRel"] = math.NaN()
			} else {
				v, err := strconv.ParseFloat(strings.TrimSpace(strings.TrimSuffix(t, "%")), 64)
				if err != nil || !(v >= 0 && v < 100) {
					return ch, fe("tol", "Tolerance", fmt.Errorf("%q is not a percentage from 0 to 100", t))
				}
				ch.Params["tolRel"] = v / 100
			}
		}
		return ch, nil
	case "part.set":
		if ne == nil {
			return sessions.Change{}, fmt.Errorf("start a matching network first")
		}
		ch := sessions.Change{Op: sessions.OpPartSet, NetworkID: ne.n.ID, PartID: f["partId"], Gesture: f["gesture"]}
		var part *sessions.Part
		for i := range ne.n.Parts {
			if ne.n.Parts[i].ID == ch.PartID {
				part = &ne.n.Parts[i]
			}
		}
		if part == nil {
			return ch, fe("partId", "Part", fmt.Errorf("no part %q in the active network", ch.PartID))
		}
		if s, ok := f["value"]; ok {
			v, err := units.ParseValue(s, part.Kind.Unit())
			if err != nil {
				return ch, fe("value", designator(ne.n.Parts, indexOf(ne.n.Parts, part.ID)), err)
			}
			ch.Value = &v
		}
		if s, ok := f["log"]; ok {
			x, err := strconv.ParseFloat(s, 64)
			if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
				return ch, fe("log", "Slider", fmt.Errorf("%q is not a number", s))
			}
			v := math.Pow(10, x)
			ch.Value = &v
		}
		if s, ok := f["model"]; ok {
			ch.Model = &s
		}
		if s, ok := f["series"]; ok {
			ch.ESeries = &s
		}
		return ch, nil
	}
	return sessions.Change{}, fmt.Errorf("unknown form %q", form)
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
	v, err := ne.built.DragValue(i, fd, ne.loadAt(fd), ne.z0, target)
	if err != nil {
		return 0, fmt.Errorf("a %s cannot be dragged on the chart; type its value", kindLabels[ne.n.Parts[i].Kind])
	}
	return v, nil
}

// stepAnimation returns the frames of a matching step when ev added a part
// to the active network or changed a part's value by a jump (not a drag,
// whose moves are their own animation): the design point runs along the
// part's arc while the whole response morphs with it.
func stepAnimation(prev, sc *scene, ev sessions.Event) *anim {
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
	for f := 1; f <= animFrames; f++ {
		t := float64(f) / animFrames
		t = t * t * (3 - 2*t) // ease in and out
		var v float64
		if from == 0 {
			v = match.ScaledValue(p.Kind, to, math.Max(t, 1e-4))
		} else {
			v = from * math.Pow(to/from, t)
		}
		segs, _ := ne.path(i, v, 1)
		if _, err := ne.built.MorphTo(resp, i, v, fs, gl, ne.z0); err != nil {
			return nil
		}
		pts := append([]complex128(nil), resp...)
		segs = append(segs, chartsvg.PathSegment{Kind: chartsvg.PathPoints, Points: pts, From: pts[0], To: pts[len(pts)-1], Color: netColour})
		var b strings.Builder
		sc.chart.RenderPath(&b, segs)
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
