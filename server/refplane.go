package server

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
	"sync"

	"matchbench/chartsvg"
	"matchbench/rfmath"
	"matchbench/rfmath/deembed"
	"matchbench/rfmath/tdr"
	"matchbench/rfmath/touchstone"
	"matchbench/rfmath/units"
	"matchbench/sessions"
	"matchbench/web"
)

// corrections caches corrected sweeps by session, sweep and plane: sweeps
// are immutable, so a plane always gives the same result. It holds at most
// maxCorrections entries and limit bytes of numbers (maxCorrectionBytes
// when zero); when a new one would not fit it starts again empty.
type corrections struct {
	mu    sync.Mutex
	m     map[string]corrected
	bytes int64
	limit int64
}

type corrected struct {
	s   *rfmath.Sweep
	err error
}

const (
	maxCorrections     = 128
	maxCorrectionBytes = 64 << 20
)

// sweepBytes is the size of a sweep's numbers.
func sweepBytes(s *rfmath.Sweep) int64 {
	if s == nil {
		return 0
	}
	return int64(8*len(s.FreqHz) + 8*len(s.Z0) + 16*len(s.Data))
}

// corrected returns sweep ref of session sid with its reference plane
// applied: the fixture removed at the analyser side, then the port
// extension, then the change of reference.
func (s *Server) corrected(sid string, ref sessions.SweepRef, raw *rfmath.Sweep) (*rfmath.Sweep, error) {
	rp := ref.RefPlane
	if rp == nil {
		return raw, nil
	}
	kb, _ := json.Marshal(rp)
	key := sid + "/" + ref.ID + "/" + string(kb)
	s.corr.mu.Lock()
	if c, ok := s.corr.m[key]; ok {
		s.corr.mu.Unlock()
		return c.s, c.err
	}
	s.corr.mu.Unlock()
	out, err := s.applyPlane(sid, rp, raw)
	n := sweepBytes(out)
	if out == raw {
		n = 0
	}
	s.corr.mu.Lock()
	limit := s.corr.limit
	if limit <= 0 {
		limit = maxCorrectionBytes
	}
	if s.corr.m == nil || len(s.corr.m) >= maxCorrections || s.corr.bytes+n > limit {
		s.corr.m, s.corr.bytes = map[string]corrected{}, 0
	}
	if n <= limit {
		s.corr.m[key] = corrected{out, err}
		s.corr.bytes += n
	}
	s.corr.mu.Unlock()
	return out, err
}

func (s *Server) applyPlane(sid string, rp *sessions.RefPlane, raw *rfmath.Sweep) (*rfmath.Sweep, error) {
	plane := deembed.Plane{RenormOhm: max(rp.RenormOhm, 0)}
	if rp.FixtureSweepID != "" {
		fx, err := s.store.Sweep(sid, rp.FixtureSweepID)
		if err != nil {
			return nil, fmt.Errorf("the fixture sweep: %w", err)
		}
		plane.Fixtures = make([]deembed.Fixture, raw.Ports)
		plane.Fixtures[0] = deembed.Fixture{S: fx, AnalyserPort: rp.FixturePortFacingAnalyser}
	}
	ext := deembed.Extension{DelayS: rp.DelayS, LossDB: rp.LossDB, LossRefHz: rp.LossRefHz, FlatLossDB: rp.FlatLossDB}
	plane.Extensions = slices.Repeat([]deembed.Extension{ext}, raw.Ports)
	return plane.Apply(raw)
}

// refPlaneChange turns the reference-plane and time-domain forms into
// changes. Times and frequencies take SI prefixes ("1.26n", "1G").
func (sc *scene) refPlaneChange(s *Server, form string, f map[string]string) (sessions.Change, error) {
	r := newFieldReader(form, f)
	var ch sessions.Change
	var err error
	switch form {
	case "refplane.set":
		ch = refPlaneSetForm(r)
	case "refplane.fit":
		ch, err = sc.refPlaneFitForm(s, r)
	case "tdr.set":
		ch = tdrSetForm(r)
	case "tdr.gate":
		ch, err = sc.tdrGateForm()
	default:
		return sessions.Change{}, fmt.Errorf("unknown form %q", form)
	}
	if err == nil {
		err = r.Err()
	}
	if err != nil {
		return sessions.Change{}, err
	}
	return ch, nil
}

// refPlaneSetForm reads the reference-plane form: the fixture and its port,
// the port extension as a delay (or a length and velocity factor) with its
// loss, and the reference to renormalise to.
func refPlaneSetForm(r *fieldReader) sessions.Change {
	rp := sessions.RefPlane{FixtureSweepID: r.f["fixture"]}
	rp.DelayS = r.Value("delay", "Delay", "s")
	if r.Text("length") != "" && rp.DelayS == 0 {
		lm := r.Value("length", "Length", "m")
		vf := r.Value("vf", "Velocity factor", "")
		if vf == 0 {
			vf = 1
		}
		rp.DelayS = deembed.FromLength(lm, vf).DelayS
	}
	rp.LossDB = r.Value("loss", "Loss", "dB")
	if t := r.Text("lossRef"); t != "" {
		rp.LossRefHz = r.Freq("lossRef", "Loss frequency")
	}
	rp.FlatLossDB = r.Value("flat", "Flat loss", "dB")
	rp.RenormOhm = r.Value("renorm", "Reference impedance", "Ω")
	if p := r.f["fixturePort"]; p != "" {
		rp.FixturePortFacingAnalyser, _ = strconv.Atoi(p)
	}
	return sessions.Change{Op: sessions.OpSweepRefPlane, SweepID: r.f["sweepId"], RefPlane: &rp}
}

// refPlaneFitForm fits an extension to a sweep of the open (or shorted) end
// of the cable or fixture, and sets it as the target sweep's extension,
// keeping its fixture and reference.
func (sc *scene) refPlaneFitForm(s *Server, r *fieldReader) (sessions.Change, error) {
	f := r.f
	from := sc.all[f["fromId"]]
	if from == nil {
		return sessions.Change{}, r.errAt("fromId", "Fit from", fmt.Errorf("choose the sweep of the open or shorted end"))
	}
	i := sc.st.SweepIndex(f["fromId"])
	if i >= 0 && sc.st.Sweeps[i].RefPlane != nil {
		raw, err := s.store.Sweep(sc.sid, f["fromId"])
		if err == nil {
			from = raw // fit the raw measurement
		}
	}
	std := deembed.Open
	if f["standard"] == "short" {
		std = deembed.Short
	}
	fit, err := deembed.FitExtension(from, std, nil)
	if err != nil {
		return sessions.Change{}, r.errAt("fromId", "Fit", err)
	}
	e := fit.Extension
	rp := sessions.RefPlane{DelayS: e.DelayS, LossDB: e.LossDB, LossRefHz: e.LossRefHz, FlatLossDB: e.FlatLossDB}
	if j := sc.st.SweepIndex(f["sweepId"]); j >= 0 && sc.st.Sweeps[j].RefPlane != nil {
		old := sc.st.Sweeps[j].RefPlane
		rp.FixtureSweepID, rp.FixturePortFacingAnalyser, rp.RenormOhm = old.FixtureSweepID, old.FixturePortFacingAnalyser, old.RenormOhm
	}
	return sessions.Change{Op: sessions.OpSweepRefPlane, SweepID: f["sweepId"], RefPlane: &rp}, nil
}

// tdrSetForm reads the time-domain form: sweep, mode, window and its
// Kaiser β, velocity factor and gate.
func tdrSetForm(r *fieldReader) sessions.Change {
	td := sessions.TimeDomain{SweepID: r.f["sweepId"], Mode: r.f["mode"], Window: r.f["window"]}
	td.Beta = r.Value("beta", "Kaiser β", "")
	td.VF = r.Value("vf", "Velocity factor", "")
	td.GateCentreS = r.Value("gateCentre", "Gate centre", "s")
	td.GateSpanS = r.Value("gateSpan", "Gate span", "s")
	return sessions.Change{Op: sessions.OpTDRSet, TimeDomain: &td}
}

// tdrGateForm makes the gated sweep a sweep of its own.
func (sc *scene) tdrGateForm() (sessions.Change, error) {
	td := sc.st.TimeDomain
	sw := sc.all[td.SweepID]
	if sw == nil || td.GateSpanS <= 0 {
		return sessions.Change{}, fmt.Errorf("set a gate (centre and span) on a sweep first")
	}
	w, _ := tdr.ParseWindow(windowSpec(td))
	g, err := tdr.GateSweep(sw, tdr.Gate{CentreS: td.GateCentreS, SpanS: td.GateSpanS, Shape: w}, &tdr.Settings{Window: w})
	if err != nil {
		return sessions.Change{}, err
	}
	var b bytes.Buffer
	name := sweepName(sc.st, td.SweepID) + " gated"
	if err := touchstone.Write(&b, g, touchstone.WriteOptions{Comments: touchstone.CommentLines([]string{
		fmt.Sprintf(" %s gated in time: centre %s, span %s (round trip), %s window", sweepName(sc.st, td.SweepID),
			units.Format(td.GateCentreS, "s", 4), units.Format(td.GateSpanS, "s", 4), td.Window)})}); err != nil {
		return sessions.Change{}, err
	}
	return sessions.Change{Op: sessions.OpSweepAdd, Name: name, FileName: safeName(name) + ".s1p", Raw: b.Bytes(), Sweep: g}, nil
}

func windowSpec(td sessions.TimeDomain) string {
	if td.Window == "kaiser" {
		return "kaiser:" + strconv.FormatFloat(td.Beta, 'g', -1, 64)
	}
	return td.Window
}

// tdrPlot draws the time-domain view: the impedance profile (step mode),
// the impulse response, or the band-pass impulse magnitude, against
// one-way distance, with the gate shaded.
func (sc *scene) tdrPlot() (*plot, string) {
	if !sc.tdrDone {
		sc.tdrP, sc.tdrNote = sc.computeTDR()
		sc.tdrDone = true
	}
	return sc.tdrP, sc.tdrNote
}

func (sc *scene) computeTDR() (*plot, string) {
	td := sc.st.TimeDomain
	sw := sc.all[td.SweepID]
	if sw == nil {
		return nil, ""
	}
	w, err := tdr.ParseWindow(windowSpec(td))
	if err != nil {
		return nil, err.Error()
	}
	mode := tdr.LowPass
	if td.Mode == "bandpass" {
		mode = tdr.BandPass
	}
	g := reflection(sw, 0)
	r, err := tdr.Transform(sw.FreqHz, g, &tdr.Settings{Mode: mode, Window: w, Pad: 4})
	if err != nil {
		return nil, err.Error()
	}
	vf := td.VF
	if vf == 0 {
		vf = 1
	}
	x := r.DistanceTo(nil, vf)
	var y []float64
	ylabel, yunit, title := "Impedance", "Ω", "Time domain: impedance along the feed"
	switch {
	case td.Mode == "step" && r.Step != nil:
		y = r.ImpedanceTo(nil, sw.Z0[0])
		for i, v := range y {
			if v > 1000 || v < 0 || math.IsInf(v, 0) {
				y[i] = math.NaN()
			}
		}
	default:
		y = r.Impulse
		ylabel, yunit, title = "Impulse response", "", "Time domain: reflections along the feed"
	}
	// Show from just before the plane to half again beyond the last
	// reflection above 2 % of the largest (at least ten resolution cells),
	// within the unambiguous range.
	peak := 0.0
	for _, v := range r.Impulse {
		peak = math.Max(peak, math.Abs(v))
	}
	last := 0.0
	for i, v := range r.Impulse {
		if math.Abs(v) > 0.02*peak && r.TimeS[i] < 0.875*r.RangeS() {
			last = r.TimeS[i]
		}
	}
	tmax := math.Min(0.875*r.RangeS(), math.Max(1.5*last, 10*r.ResolutionS()))
	var xs, ys []float64
	for i := range x {
		if r.TimeS[i] >= -0.05*tmax && r.TimeS[i] <= tmax {
			xs = append(xs, x[i])
			ys = append(ys, y[i])
		}
	}
	p := chartsvg.Plot{Width: plotWidth, Height: plotHeight, Title: title, XLabel: fmt.Sprintf("One-way distance at velocity factor %.3g", vf), XUnit: "m", YLabel: ylabel, YUnit: yunit, IDPrefix: "tdr-", NoLegend: true}
	series := []chartsvg.Series{{ID: "tdr", Name: sweepName(sc.st, td.SweepID), Color: "#1f5fa8", FreqHz: xs, Y: ys}}
	var bands []chartsvg.Band
	if td.GateSpanS > 0 {
		bands = append(bands, chartsvg.Band{Name: "gate", LoHz: tdr.Distance(td.GateCentreS-td.GateSpanS/2, vf), HiHz: tdr.Distance(td.GateCentreS+td.GateSpanS/2, vf)})
	}
	rp := p.Resolve(series, bands)
	note := fmt.Sprintf("%s mode, %s window; resolution %s (%s one way), range %s round trip",
		r.Mode, r.Window, units.Format(r.ResolutionS(), "s", 3), units.Format(tdr.Distance(r.ResolutionS(), vf), "m", 3), units.Format(r.RangeS(), "s", 3))
	if r.Resampled {
		note += "; the sweep was resampled onto the harmonic grid the transform needs"
	}
	if r.DCExtrapolated {
		note += "; the DC value was extrapolated"
	}
	return &plot{id: "tdr", title: "Time domain", p: rp, series: series, bands: bands}, note
}

// planeSteps says what a sweep's reference plane does, step by step, in
// the order they are applied: the panel, the report and the exported
// files' headers use these words.
func planeSteps(st *sessions.State, rp *sessions.RefPlane) []string {
	var steps []string
	if rp.FixtureSweepID != "" {
		steps = append(steps, fmt.Sprintf("fixture %s removed (its port %d at the analyser)", sweepName(st, rp.FixtureSweepID), rp.FixturePortFacingAnalyser))
	}
	if rp.DelayS != 0 {
		steps = append(steps, "port extension of "+units.Format(rp.DelayS, "s", 4)+" (one way)")
	}
	if rp.LossDB != 0 {
		steps = append(steps, fmt.Sprintf("port extension loss %.3g dB at %s (∝ √f)", rp.LossDB, fmtF(rp.LossRefHz)))
	}
	if rp.FlatLossDB != 0 {
		steps = append(steps, fmt.Sprintf("port extension flat loss %.3g dB", rp.FlatLossDB))
	}
	if rp.RenormOhm > 0 {
		steps = append(steps, "renormalised and shown in "+units.Format(rp.RenormOhm, "Ω", 4))
	}
	return steps
}

// planeSummary says what a sweep's reference plane does in one line (the
// steps of planeSteps), "" for none.
func (sc *scene) planeSummary(ref sessions.SweepRef) string {
	if ref.RefPlane == nil {
		return ""
	}
	return strings.Join(planeSteps(sc.st, ref.RefPlane), "; ")
}

// refPlaneView builds the reference-plane and time-domain panels.
func (sc *scene) refPlaneView() web.RefPlaneView {
	v := web.RefPlaneView{}
	for _, ref := range sc.st.Sweeps {
		o := web.RefPlaneRow{ID: ref.ID, Name: ref.Name, Ports: ref.Ports}
		if rp := ref.RefPlane; rp != nil {
			o.Summary = sc.planeSummary(ref)
			base := "sweeps/" + ref.ID + "/corrected."
			o.Exports = []web.Option{
				{Value: base + "s" + strconv.Itoa(ref.Ports) + "p", Label: "Touchstone 1.1 (.s" + strconv.Itoa(ref.Ports) + "p)"},
				{Value: base + "ts", Label: "Touchstone 2.1 (.ts)"},
				{Value: base + "csv", Label: "CSV"},
			}
			o.Delay = units.Format(rp.DelayS, "s", 5)
			o.Loss = strconv.FormatFloat(rp.LossDB, 'g', 5, 64)
			o.LossRef = fmtF(rp.LossRefHz)
			o.Flat = strconv.FormatFloat(rp.FlatLossDB, 'g', 5, 64)
			o.Fixture = rp.FixtureSweepID
			if rp.RenormOhm > 0 {
				o.Renorm = strconv.FormatFloat(rp.RenormOhm, 'g', 6, 64)
			}
			if sc.errs[ref.ID] != "" {
				o.Error = plainWords(sc.errs[ref.ID])
			}
		}
		v.Sweeps = append(v.Sweeps, o)
	}
	td := sc.st.TimeDomain
	if td.Mode == "" { // never set: show the defaults tdr.set would take
		td.Mode, td.Window, td.Beta, td.VF = "step", "kaiser", 6, 1
	}
	v.TDR = web.TDRView{SweepID: td.SweepID, Mode: td.Mode, Window: td.Window, Beta: strconv.FormatFloat(td.Beta, 'g', 4, 64),
		VF: strconv.FormatFloat(td.VF, 'g', 4, 64)}
	if _, note := sc.tdrPlot(); note != "" {
		v.TDR.Note = note
	}
	if td.GateSpanS > 0 {
		v.TDR.GateCentre = units.Format(td.GateCentreS, "s", 4)
		v.TDR.GateSpan = units.Format(td.GateSpanS, "s", 4)
		v.TDR.HasGate = true
	}
	return v
}
