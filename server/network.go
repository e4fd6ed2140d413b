package server

import (
	"fmt"
	"math"
	"math/cmplx"
	"strconv"
	"strings"

	"matchbench/chartsvg"
	"matchbench/rfmath"
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
	sweep  *rfmath.Sweep
	port   int
	z0     float64
	gLoad  []complex128
	ideal  []complex128 // with the values as typed
	buy    []complex128 // with standard values; nil when no part has a series
	ladder rfmath.Ladder
	buyL   rfmath.Ladder
	err    error
}

// evalNetwork evaluates n over the sweep it sits on.
func (sc *scene) evalNetwork(n *sessions.Network) *netEval {
	ne := prepareNetwork(n, sc.all[n.SweepID])
	if ne.err != nil {
		return ne
	}
	ne.ideal = ne.ladder.InputGammaTo(nil, ne.sweep.FreqHz, ne.gLoad, ne.z0)
	if ne.buyL != nil {
		ne.buy = ne.buyL.InputGammaTo(nil, ne.sweep.FreqHz, ne.gLoad, ne.z0)
	}
	return ne
}

// prepareNetwork builds n's ladders on its load sweep sw without
// evaluating them over the sweep: what a part drag at the design
// frequency needs. buyL is set when some part has a standard value that
// differs from its typed one.
func prepareNetwork(n *sessions.Network, sw *rfmath.Sweep) *netEval {
	if sw == nil {
		return &netEval{n: n, err: fmt.Errorf("the network's load sweep is gone")}
	}
	port := max(n.Port, 1)
	ne := &netEval{n: n, sweep: sw, port: port, z0: sw.Z0[port-1], gLoad: reflection(sw, port-1)}
	var err error
	if ne.ladder, err = n.Ladder(false); err != nil {
		ne.err = err
		return ne
	}
	for _, p := range n.Parts {
		if p.ESeries != "" && p.BuyValue() != p.Value {
			ne.buyL, _ = n.Ladder(true)
			break
		}
	}
	return ne
}

// result is the response that would be built: standard values when any
// part has them, else the typed values.
func (ne *netEval) result() []complex128 {
	if ne.buy != nil {
		return ne.buy
	}
	return ne.ideal
}

func (ne *netEval) resultLadder() rfmath.Ladder {
	if ne.buyL != nil {
		return ne.buyL
	}
	return ne.ladder
}

// loadAt interpolates the load's Γ at fHz.
func (ne *netEval) loadAt(fHz float64) complex128 {
	k, t, err := ne.sweep.Locate(fHz)
	if err != nil {
		return 0
	}
	if k+1 >= len(ne.gLoad) {
		return ne.gLoad[k]
	}
	return ne.gLoad[k] + complex(t, 0)*(ne.gLoad[k+1]-ne.gLoad[k])
}

// scaledValue is the value of part p at the fraction t ∈ (0, 1] of its way
// in: a series part's impedance or a shunt part's admittance grows as t,
// a line grows in length, a transformer's ratio goes from 1 to its own.
func scaledValue(p sessions.Part, v, t float64) float64 {
	switch p.Kind {
	case sessions.PartSeriesC, sessions.PartShuntL, sessions.PartShuntR:
		return v / t
	case sessions.PartTransformer:
		return 1 + t*(v-1)
	}
	return v * t
}

// stepGamma returns Γ at fHz seen through parts 0…i−1 at their values and
// part i at value vi.
func stepGamma(parts []sessions.Part, buy bool, i int, vi float64, fHz float64, gL complex128, z0 float64) complex128 {
	a := rfmath.Thru
	for j := 0; j <= i; j++ {
		v := parts[j].Value
		if buy {
			v = parts[j].BuyValue()
		}
		if j == i {
			v = vi
		}
		e, err := parts[j].ElementAt(v)
		if err != nil {
			return cmplx.NaN()
		}
		a = e.ABCD(fHz).Mul(a)
	}
	return a.InputGamma(gL, z0)
}

// path returns the matching path at the design frequency: one segment per
// part, each the track of Γ as that part grows in. override, when ≥ 0,
// draws part override at value ov and stops the path at fraction frac of
// its step (animation frames).
func (ne *netEval) path(override int, ov, frac float64) ([]chartsvg.PathSegment, []chartsvg.Marker) {
	if ne.err != nil {
		return nil, nil
	}
	fd := ne.n.DesignHz
	gL := ne.loadAt(fd)
	buy := ne.buyL != nil
	segs := make([]chartsvg.PathSegment, 0, len(ne.n.Parts))
	var handles []chartsvg.Marker
	for i, p := range ne.n.Parts {
		v := p.Value
		if buy {
			v = p.BuyValue()
		}
		if i == override {
			v = ov
		}
		last := 1.0
		if i == override && frac > 0 && frac < 1 {
			last = frac
		}
		pts := make([]complex128, 0, pathSamples)
		for s := range pathSamples {
			t := last * math.Max(float64(s)/float64(pathSamples-1), 1e-4)
			pts = append(pts, stepGamma(ne.n.Parts, buy, i, scaledValue(p, v, t), fd, gL, ne.z0))
		}
		col := partColours[i%len(partColours)]
		segs = append(segs, chartsvg.PathSegment{Kind: chartsvg.PathPoints, Points: pts, From: pts[0], To: pts[len(pts)-1], Color: col})
		handles = append(handles, chartsvg.Marker{ID: "ph-" + p.ID, Num: i + 1, Gamma: pts[len(pts)-1], Color: col, Label: designator(ne.n.Parts, i), Shape: chartsvg.ShapeCircle})
		if i == override {
			break
		}
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
		return string(p.LumpedKind())
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

// unitOf is the unit a part's value is typed in.
func unitOf(kind string) string {
	switch kind {
	case sessions.PartSeriesL, sessions.PartShuntL:
		return "H"
	case sessions.PartSeriesC, sessions.PartShuntC:
		return "F"
	case sessions.PartSeriesR, sessions.PartShuntR:
		return "Ω"
	case sessions.PartLine, sessions.PartStubOpen, sessions.PartStubShort:
		return "m"
	}
	return ""
}

var kindLabels = map[string]string{
	sessions.PartSeriesL: "series L", sessions.PartSeriesC: "series C", sessions.PartSeriesR: "series R",
	sessions.PartShuntL: "shunt L", sessions.PartShuntC: "shunt C", sessions.PartShuntR: "shunt R",
	sessions.PartLine: "line", sessions.PartStubOpen: "open stub", sessions.PartStubShort: "shorted stub",
	sessions.PartTransformer: "transformer n:1",
}

// defaultValue is a new part's value at the design frequency: a reactance
// or resistance of Z0, an eighth of a wavelength, or a ratio of 1.5.
func defaultValue(kind string, fHz, z0 float64) float64 {
	w := 2 * math.Pi * fHz
	switch kind {
	case sessions.PartSeriesL, sessions.PartShuntL:
		return z0 / w
	case sessions.PartSeriesC, sessions.PartShuntC:
		return 1 / (w * z0)
	case sessions.PartSeriesR, sessions.PartShuntR:
		return z0
	case sessions.PartLine, sessions.PartStubOpen, sessions.PartStubShort:
		return rfmath.SpeedOfLight / fHz / 8
	}
	return 1.5
}

// sliderRange is the value range of a part's logarithmic slider: two
// decades either side of the value at |X| = Z0, or of the value itself.
func sliderRange(p sessions.Part, fHz, z0 float64) (lo, hi float64) {
	c := defaultValue(p.Kind, fHz, z0)
	lo, hi = c/100, c*100
	if p.Kind == sessions.PartLine || p.Kind == sessions.PartStubOpen || p.Kind == sessions.PartStubShort {
		lo, hi = c/50, c*4 // up to a half wavelength
	}
	if p.Kind == sessions.PartTransformer {
		lo, hi = 0.1, 10
	}
	return math.Min(lo, p.Value), math.Max(hi, p.Value)
}

// bandFigures are a response's figures over one band.
type bandFigures struct {
	worstRL, meanRL, worstML, meanDelivered float64
	ok                                      bool
}

func figuresIn(freq []float64, g []complex128, lo, hi float64) bandFigures {
	var f bandFigures
	f.worstRL = math.Inf(1)
	n := 0
	for k, fk := range freq {
		if fk < lo || fk > hi {
			continue
		}
		m := cmplx.Abs(g[k])
		rl := rfmath.ReturnLossDB(m)
		f.worstRL = math.Min(f.worstRL, rl)
		f.meanRL += math.Min(rl, 60)
		f.worstML = math.Max(f.worstML, rfmath.MismatchLossDB(m))
		f.meanDelivered += rfmath.PowerDeliveredFraction(m)
		n++
	}
	if n == 0 || lo < freq[0] || hi > freq[len(freq)-1] {
		return f
	}
	f.meanRL /= float64(n)
	f.meanDelivered /= float64(n)
	f.ok = true
	return f
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
		v.Kinds = append(v.Kinds, web.Option{Value: k, Label: "+ " + kindLabels[k]})
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
		lo, hi := sliderRange(p, n.DesignHz, ne.z0)
		unit := unitOf(p.Kind)
		row := web.PartRow{
			ID: p.ID, Index: i, Designator: designator(n.Parts, i), Kind: kindLabels[p.Kind], Color: partColours[i%len(partColours)],
			Value: units.Format(p.Value, unit, 4), Model: p.Model, Series: p.ESeries, Lumped: p.LumpedKind() != "",
			SliderMin: strconv.FormatFloat(math.Log10(lo), 'f', 4, 64), SliderMax: strconv.FormatFloat(math.Log10(hi), 'f', 4, 64),
			SliderVal: strconv.FormatFloat(math.Log10(p.Value), 'f', 4, 64), First: i == 0, Last: i == len(n.Parts)-1,
		}
		if p.ESeries != "" {
			row.Buy = units.Format(p.BuyValue(), unit, 3)
		}
		if p.LumpedKind() != "" {
			fillPartFigures(&row, p, n.DesignHz)
		}
		v.Parts = append(v.Parts, row)
	}
	res := ne.result()
	for _, b := range sc.st.Bands {
		before := figuresIn(ne.sweep.FreqHz, ne.gLoad, b.LoHz, b.HiHz)
		after := figuresIn(ne.sweep.FreqHz, res, b.LoHz, b.HiHz)
		row := web.NetMetricRow{Band: b.Name}
		if !after.ok {
			row.Note = "outside the load's sweep"
			v.Metrics = append(v.Metrics, row)
			continue
		}
		row.Before = fmtDB(before.worstRL)
		row.Worst = fmtDB(after.worstRL)
		row.Mean = fmtDB(after.meanRL)
		row.ML = fmtDB(after.worstML)
		row.Delivered = strconv.FormatFloat(100*after.meanDelivered, 'f', 1, 64) + " %"
		if b.MinReturnLossDB > 0 {
			row.HasReq = true
			row.Pass = after.worstRL >= b.MinReturnLossDB
			row.Margin = fmt.Sprintf("%+.2f dB", after.worstRL-b.MinReturnLossDB)
		}
		v.Metrics = append(v.Metrics, row)
	}
	v.HasBuy = ne.buy != nil
	v.Power, v.PowerNote = sc.powerRows()
	v.Search = sc.searchView()
	v.Limits = sc.limits()
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
		kind := f["kind"]
		if _, ok := kindLabels[kind]; !ok {
			return sessions.Change{}, fe("kind", "Part", fmt.Errorf("unknown part kind %q", kind))
		}
		v := defaultValue(kind, ne.n.DesignHz, ne.z0)
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
			v, err := units.ParseValue(s, unitOf(part.Kind))
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
// nearest to target along its arc (see rfmath.SeriesReactanceTo).
func (ne *netEval) dragValue(id string, target complex128) (float64, error) {
	i := indexOf(ne.n.Parts, id)
	if i < 0 {
		return 0, fmt.Errorf("no part %q in the active network", id)
	}
	p := ne.n.Parts[i]
	fd := ne.n.DesignHz
	buy := ne.buyL != nil
	before := ne.loadAt(fd)
	if i > 0 {
		pv := ne.n.Parts[i-1].Value
		if buy {
			pv = ne.n.Parts[i-1].BuyValue()
		}
		before = stepGamma(ne.n.Parts, buy, i-1, pv, fd, ne.loadAt(fd), ne.z0)
	}
	v, ok := rfmath.ValueAlongArc(rfmath.ArcKind(p.Kind), before, target, ne.z0, fd, p.Value)
	if !ok {
		return 0, fmt.Errorf("a %s cannot be dragged on the chart; type its value", kindLabels[p.Kind])
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
	p := ne.n.Parts[i]
	to := p.Value
	if ne.buyL != nil {
		to = p.BuyValue()
	}
	var from float64 // 0: the part grows in from nothing
	switch ev.Op {
	case sessions.OpPartAdd:
	case sessions.OpPartSet:
		if prev.net == nil || prev.net.n.ID != ne.n.ID {
			return nil
		}
		j := indexOf(prev.net.n.Parts, p.ID)
		if j < 0 || j != i {
			return nil
		}
		q := prev.net.n.Parts[j]
		from = q.Value
		if prev.net.buyL != nil {
			from = q.BuyValue()
		}
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
	buy := ne.buyL != nil
	a := &anim{MS: 700}
	for f := 1; f <= animFrames; f++ {
		t := float64(f) / animFrames
		t = t * t * (3 - 2*t) // ease in and out
		var v float64
		if from == 0 {
			v = scaledValue(p, to, math.Max(t, 1e-4))
		} else {
			v = from * math.Pow(to/from, t)
		}
		segs, _ := ne.path(i, v, 1)
		resp := make([]complex128, len(fs))
		for k, fk := range fs {
			g := stepGamma(ne.n.Parts, buy, i, v, fk, gl[k], ne.z0)
			for j := i + 1; j < len(ne.n.Parts); j++ {
				vj := ne.n.Parts[j].Value
				if buy {
					vj = ne.n.Parts[j].BuyValue()
				}
				e, err := ne.n.Parts[j].ElementAt(vj)
				if err != nil {
					break
				}
				g = e.ABCD(fk).InputGamma(g, ne.z0)
			}
			resp[k] = g
		}
		segs = append(segs, chartsvg.PathSegment{Kind: chartsvg.PathPoints, Points: resp, From: resp[0], To: resp[len(resp)-1], Color: netColour})
		var b strings.Builder
		sc.chart.RenderPath(&b, segs)
		a.Frames = append(a.Frames, []frag{{ID: "match-path", HTML: b.String(), SVG: true}})
	}
	return a
}

func fmtF4(f float64) string { return units.FormatFrequency(f, 4) }

// fillPartFigures shows a lumped part's own figures and, in words, what
// its model gives at the design frequency.
func fillPartFigures(row *web.PartRow, p sessions.Part, fHz float64) {
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
	c := p.Component(p.BuyValue())
	z := c.ImpedanceAt(fHz)
	model := "ideal"
	if p.Model != "" {
		model = "typical " + p.Model
	}
	switch m := c.(type) {
	case parts.Inductor:
		row.ModelNote = fmt.Sprintf("%s: Q %.3g at %s, self-resonance %s; at %s it is %s", model, m.Q, fmtF4(m.QRefHz), fmtF4(m.SRFHz), fmtF4(fHz), fmtZ(z, 'g', 4))
	case parts.Capacitor:
		row.ModelNote = fmt.Sprintf("%s: ESR %.3g Ω, self-resonance %s; at %s it is %s", model, m.ESROhm, fmtF4(m.SRFHz), fmtF4(fHz), fmtZ(z, 'g', 4))
	default:
		row.ModelNote = fmt.Sprintf("%s: at %s it is %s", model, fmtF4(fHz), fmtZ(z, 'g', 4))
	}
	row.ModelNote += " (set the part's own figures)"
}
