package server

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"strconv"
	"strings"
	"sync"
	"time"

	"matchbench/chartsvg"
	"matchbench/rfmath"
	"matchbench/rfmath/amp"
	"matchbench/rfmath/match"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/touchstone"
	"matchbench/rfmath/units"
	"matchbench/sessions"
	"matchbench/web"
)

// The amplifier panel: a 2-port sweep's stability, gain and noise on two
// reflection charts (the source plane and the load plane), with the
// terminations the user drags, and the transistor stage with its two
// networks. Every figure comes from rfmath/amp (and the stage's from
// amp.EvaluateStage); this file adapts and draws.

// stageZ0 is the resistance of a stage's terminations: the radio's 50 Ω on
// either side.
const stageZ0 = 50.0

// Sizes of the amplifier panel's drawings.
const (
	ampChartPx   = 420
	ampPlotW     = 560
	ampPlotH     = 260
	ampPrefixSrc = "amps-"
	ampPrefixLd  = "ampl-"
)

// Colours of the amplifier charts (ours): gain circles blue, noise
// circles green, the stability circles the regions' red.
const (
	colGainCircle  = "#1f5fa8"
	colNoiseCircle = "#2a8a4a"
	colConj        = "#1f5fa8"
	colTermination = "#222222"
)

// noiseCache holds the noise parameters read from each 2-port sweep's
// file (the stored sweep keeps only the S-parameters; the file is kept as
// uploaded and never changes).
type noiseCache struct {
	mu sync.Mutex
	m  map[string]noiseEntry
}

type noiseEntry struct {
	pts  []touchstone.NoisePoint
	note string
}

const maxNoiseEntries = 256

// noiseOf returns the noise parameters of sweep ref of session sid, or a
// note saying why there are none.
func (s *Server) noiseOf(sid string, ref sessions.SweepRef) ([]touchstone.NoisePoint, string) {
	if ref.RefPlane != nil {
		return nil, "the sweep's reference plane is moved, and noise parameters are not moved with it: clear the plane to see noise figures"
	}
	key := sid + "/" + ref.ID
	s.noise.mu.Lock()
	if e, ok := s.noise.m[key]; ok {
		s.noise.mu.Unlock()
		return e.pts, e.note
	}
	s.noise.mu.Unlock()
	e := noiseEntry{}
	raw, name, err := s.store.Raw(context.Background(), sid, ref.ID)
	switch {
	case err != nil:
		e.note = "the sweep's file cannot be read: " + err.Error()
	default:
		tf, err := touchstone.Read(bytes.NewReader(raw), name, s.cfg.FileLimits)
		if err != nil || len(tf.Noise) == 0 {
			e.note = "the file has no noise parameters"
		} else {
			e.pts = tf.Noise
		}
	}
	s.noise.mu.Lock()
	if s.noise.m == nil || len(s.noise.m) >= maxNoiseEntries {
		s.noise.m = map[string]noiseEntry{}
	}
	s.noise.m[key] = e
	s.noise.mu.Unlock()
	return e.pts, e.note
}

// ampEval is the amplifier view evaluated at its frequency. The
// terminations are not part of it: they are read from the state when the
// panel is drawn, so that a drag reuses the scene.
type ampEval struct {
	view      *sessions.AmpView
	ref       sessions.SweepRef
	sw        *rfmath.Sweep
	noise     []touchstone.NoisePoint
	noiseNote string
	s         [4]complex128
	stab      amp.Stability
	sweepStab []amp.Stability
	np        touchstone.NoisePoint
	npErr     error
	err       error
}

// stageEval is the transistor stage evaluated over its device's sweep.
type stageEval struct {
	stage     *sessions.Stage
	ref       sessions.SweepRef
	sw        *rfmath.Sweep
	noise     []touchstone.NoisePoint
	noiseNote string
	src, load *sessions.Network // nil where the network is gone (a through)
	srcNet    match.Network
	loadNet   match.Network
	st        *amp.Stage
	pts       []amp.StagePoint
	bands     []amp.StageBand
	bandIdx   []int // session band index of each
	m         amp.StageMetrics
	err       error
}

// evalAmp evaluates the amplifier view and the stage of the scene's
// state.
func (s *Server) evalAmp(sc *scene) {
	if a := sc.st.Amp; a != nil {
		sc.amp = s.ampOf(sc, a)
	}
	if st := sc.st.Stage; st != nil {
		sc.stage = s.stageOf(sc, st)
	}
}

func (s *Server) ampOf(sc *scene, a *sessions.AmpView) *ampEval {
	ae := &ampEval{view: a}
	i := sc.st.SweepIndex(a.SweepID)
	sw := sc.all[a.SweepID]
	if i < 0 || sw == nil {
		ae.err = errors.New("the sweep cannot be read")
		return ae
	}
	ae.ref, ae.sw = sc.st.Sweeps[i], sw
	if ae.s, ae.err = amp.SAt(sw, a.FreqHz); ae.err != nil {
		return ae
	}
	ae.stab = amp.StabilityOf(ae.s)
	ae.sweepStab = amp.StabilityTo(nil, sw)
	ae.noise, ae.noiseNote = s.noiseOf(sc.sid, ae.ref)
	if ae.noise != nil {
		ae.np, ae.npErr = amp.NoiseAt(ae.noise, a.FreqHz)
	} else {
		ae.npErr = errors.New(ae.noiseNote)
	}
	return ae
}

func (s *Server) stageOf(sc *scene, st *sessions.Stage) *stageEval {
	se := &stageEval{stage: st}
	i := sc.st.SweepIndex(st.SweepID)
	sw := sc.all[st.SweepID]
	if i < 0 || sw == nil {
		se.err = errors.New("the device's sweep cannot be read")
		return se
	}
	se.ref, se.sw = sc.st.Sweeps[i], sw
	se.noise, se.noiseNote = s.noiseOf(sc.sid, se.ref)
	var err error
	if se.src, se.srcNet, err = stageNetwork(sc.st, st.SourceNetworkID); err != nil {
		se.err = fmt.Errorf("source network: %w", err)
		return se
	}
	if se.load, se.loadNet, err = stageNetwork(sc.st, st.LoadNetworkID); err != nil {
		se.err = fmt.Errorf("load network: %w", err)
		return se
	}
	if se.st, se.err = match.StageOf(sw, se.noise, stageZ0, se.srcNet, se.loadNet); se.err != nil {
		return se
	}
	if se.pts, se.err = se.st.SweepTo(nil); se.err != nil {
		return se
	}
	f := sw.FreqHz
	for k, b := range sc.st.Bands {
		if b.LoHz < f[0] || b.HiHz > f[len(f)-1] {
			continue
		}
		sb := amp.StageBand{LoHz: b.LoHz, HiHz: b.HiHz}
		for _, q := range st.Reqs {
			if q.BandID == b.ID {
				sb.StageRequirement = amp.StageRequirement{MinGainDB: q.MinGainDB, MaxNFdB: q.MaxNFdB, MinInputRLdB: q.MinInputRLdB, MinOutputRLdB: q.MinOutputRLdB}
			}
		}
		se.bands = append(se.bands, sb)
		se.bandIdx = append(se.bandIdx, k)
	}
	se.m, se.err = amp.EvaluateStagePoints(se.st, se.pts, se.bands)
	return se
}

// stageNetwork returns network id of st adapted to rfmath/match, or nil
// for a through when the id names no network.
func stageNetwork(st *sessions.State, id string) (*sessions.Network, match.Network, error) {
	i := st.NetworkIndex(id)
	if i < 0 {
		return nil, nil, nil
	}
	n := &st.Networks[i]
	d, err := designOf(n)
	if err != nil {
		return n, nil, err
	}
	return n, d, nil
}

// adaptStage makes a stage network's load what it really sees: the
// device's input with the load network in place for the source network,
// its output with the source network in place for the load network
// (match.StageLoads), both against the terminations' 50 Ω. The workbench,
// its search and its figures then judge the network in the stage. Other
// networks are left alone.
func adaptStage(st *sessions.State, ne *netEval) {
	s := st.Stage
	if ne.err != nil || s == nil || ne.n.SweepID != s.SweepID || ne.sweep.Ports != 2 {
		return
	}
	var src, load match.Network
	var err error
	switch ne.n.ID {
	case s.SourceNetworkID:
		_, load, err = stageNetwork(st, s.LoadNetworkID)
	case s.LoadNetworkID:
		_, src, err = stageNetwork(st, s.SourceNetworkID)
	default:
		return
	}
	if err != nil {
		ne.err = fmt.Errorf("the stage's other network: %w", err)
		return
	}
	in, out, err := match.StageLoads(ne.sweep, nil, stageZ0, src, load)
	if err != nil {
		ne.err = err
		return
	}
	ne.load = in
	ne.stageSide = "source"
	if ne.n.ID == s.LoadNetworkID {
		ne.load, ne.stageSide = out, "load"
	}
	ne.gLoad, ne.z0 = ne.load.Gamma, stageZ0
}

// stageNote says in words what a stage network's load is.
func stageNote(ne *netEval) string {
	switch ne.stageSide {
	case "source":
		return "Stage source network, from the 50 Ω source (far end) to the device's input: its load is the device's input with the load network in place, so the power shown is the power into the device and the return loss the stage's input return loss."
	case "load":
		return "Stage load network, from the device's output to the 50 Ω load (far end): its load is the device's output with the source network in place; its parts are reciprocal, so the power shown is the share of the power available from the device that reaches the load, and the return loss the stage's output return loss."
	}
	return ""
}

// terminations returns the source and load terminations of the view:
// those placed, else Γopt (or the conjugate match, or 0) for the source and
// Γout(Γs)* for the load (0 where |Γout| ≥ 1).
func (ae *ampEval) terminations(v *sessions.AmpView) (gs, gl complex128, placedS, placedL bool) {
	if v.GammaS != nil {
		gs, placedS = complex(v.GammaS.Re, v.GammaS.Im), true
	} else if ae.npErr == nil {
		gs = amp.GammaOpt(ae.np)
	} else if g, _, err := amp.ConjugateMatch(ae.s); err == nil {
		gs = g
	}
	if v.GammaL != nil {
		gl, placedL = complex(v.GammaL.Re, v.GammaL.Im), true
	} else if o := amp.GammaOut(ae.s, gs); cmplx.Abs(o) < 1 {
		gl = cmplx.Conj(o)
	}
	return gs, gl, placedS, placedL
}

// fmtGammaPolar writes a reflection as |Γ|∠deg.
func fmtGammaPolar(g complex128) string {
	if cmplx.IsInf(g) || cmplx.IsNaN(g) {
		return "∞"
	}
	d := rfmath.AngleDeg(g)
	s := strconv.FormatFloat(math.Abs(d), 'f', 1, 64)
	if d < 0 && s != "0.0" {
		s = "−" + s
	}
	return strconv.FormatFloat(cmplx.Abs(g), 'f', 3, 64) + "∠" + s + "°"
}

// fmtRatio writes a plain number such as K or μ; ∞ where infinite.
func fmtRatio(v float64) string {
	switch {
	case math.IsInf(v, 1):
		return "∞"
	case math.IsInf(v, -1):
		return "−∞"
	case math.IsNaN(v):
		return "n/a"
	}
	s := strconv.FormatFloat(v, 'f', 4, 64)
	if strings.HasPrefix(s, "-") && strings.Trim(s[1:], "0.") == "" {
		s = s[1:]
	}
	return strings.Replace(s, "-", "−", 1)
}

// fmtImpedance writes Γ against z0 as an impedance.
func fmtImpedance(g complex128, z0 float64) string {
	z := rfmath.ZFromGamma(g, complex(z0, 0))
	if cmplx.IsInf(z) || cmplx.IsNaN(z) {
		return "open"
	}
	return fmtZ(z, 'f', 2)
}

func stepsText(v []float64) string {
	s := make([]string, len(v))
	for i, x := range v {
		s[i] = strconv.FormatFloat(x, 'g', 4, 64)
	}
	return strings.Join(s, ", ")
}

// ampCharts returns the source-plane and load-plane charts of the view
// (regions and spots set) and their traces.
func (sc *scene) ampCharts() (src, load chartsvg.Chart, srcTr, loadTr []chartsvg.Trace) {
	base := chartsvg.Chart{SizePx: ampChartPx, ImpedanceGrid: true, NoLegend: true, Z0Ohm: 50, Regions: []chartsvg.Region{}, Spots: []chartsvg.Spot{}}
	src, load = base, base
	src.IDPrefix, src.Title = ampPrefixSrc, "Source plane: reflection Γs the device sees at its input"
	load.IDPrefix, load.Title = ampPrefixLd, "Load plane: reflection ΓL the device sees at its output"
	ae := sc.amp
	if ae == nil || ae.err != nil {
		return
	}
	src.Z0Ohm, load.Z0Ohm = ae.sw.Z0[0], ae.sw.Z0[1]
	src.Regions = append(src.Regions, stabilityRegion("instab", "input stability", amp.InputStabilityCircle(ae.s)))
	load.Regions = append(load.Regions, stabilityRegion("outstab", "output stability", amp.OutputStabilityCircle(ae.s)))
	maxG, _ := amp.MaxGain(ae.s)
	for i, step := range ae.view.GainStepsDB {
		g := amp.DB(maxG) - step
		if c, err := amp.AvailableGainCircle(ae.s, g); err == nil {
			src.Regions = append(src.Regions, circleRegion("ga"+strconv.Itoa(i), "G_A "+units.FormatDB(g), colGainCircle, c))
		}
		if c, err := amp.OperatingGainCircle(ae.s, g); err == nil {
			load.Regions = append(load.Regions, circleRegion("gp"+strconv.Itoa(i), "G_P "+units.FormatDB(g), colGainCircle, c))
		}
	}
	if ae.npErr == nil {
		for i, step := range ae.view.NFStepsDB {
			nf := ae.np.NFminDB + step
			if c, err := amp.NoiseCircle(ae.np, ae.sw.Z0[0], nf); err == nil {
				src.Regions = append(src.Regions, circleRegion("nf"+strconv.Itoa(i), "NF "+units.FormatDB(nf), colNoiseCircle, c))
			}
		}
		src.Spots = append(src.Spots, chartsvg.Spot{ID: "opt", Gamma: amp.GammaOpt(ae.np), Label: "Γopt", Color: colNoiseCircle})
	}
	if gs, gl, err := amp.ConjugateMatch(ae.s); err == nil {
		src.Spots = append(src.Spots, chartsvg.Spot{ID: "conj", Gamma: gs, Label: "Γs conj", Color: colConj})
		load.Spots = append(load.Spots, chartsvg.Spot{ID: "conj", Gamma: gl, Label: "ΓL conj", Color: colConj})
	}
	gs, gl, _, _ := ae.terminations(sc.st.Amp)
	src.Spots = append(src.Spots, chartsvg.Spot{ID: "gs", Gamma: gs, Label: "Γs", Color: colTermination, Handle: true})
	load.Spots = append(load.Spots, chartsvg.Spot{ID: "gl", Gamma: gl, Label: "ΓL", Color: colTermination, Handle: true})
	if se := sc.stage; se != nil && se.err == nil && se.stage.SweepID == ae.ref.ID {
		gS := make([]complex128, len(se.pts))
		gL := make([]complex128, len(se.pts))
		for k, p := range se.pts {
			gS[k], gL[k] = p.GammaS, p.GammaL
		}
		srcTr = []chartsvg.Trace{{ID: "stage-gs", Name: "Γs of the source network", Color: "#7a3e9d", FreqHz: se.sw.FreqHz, Gamma: gS}}
		loadTr = []chartsvg.Trace{{ID: "stage-gl", Name: "ΓL of the load network", Color: "#7a3e9d", FreqHz: se.sw.FreqHz, Gamma: gL}}
	}
	return
}

// stabilityRegion draws a stability circle with its unstable side shaded.
func stabilityRegion(id, label string, c amp.StabilityCircle) chartsvg.Region {
	r := chartsvg.Region{ID: id, Center: c.Center, Radius: c.Radius, Line: c.Line, Normal: c.Normal, Label: label}
	switch c.Stable {
	case amp.Outside:
		r.Shade = chartsvg.ShadeInside
	case amp.Inside:
		r.Shade = chartsvg.ShadeOutside
	case amp.NormalSide:
		r.Shade = chartsvg.ShadeAgainst
	case amp.Nowhere:
		r.Shade = chartsvg.ShadeAll
	}
	return r
}

func circleRegion(id, label, col string, c amp.Circle) chartsvg.Region {
	return chartsvg.Region{ID: id, Center: c.Center, Radius: c.Radius, Line: c.Line, Normal: c.Normal, Color: col, Label: label, Dashed: true}
}

// ampView builds the amplifier panel's view model.
func (sc *scene) ampView() web.AmpPanelView {
	v := web.AmpPanelView{}
	for _, r := range sc.st.Sweeps {
		if r.Ports == 2 {
			sel := sc.st.Amp != nil && sc.st.Amp.SweepID == r.ID
			v.TwoPorts = append(v.TwoPorts, web.Option{Value: r.ID, Label: r.Name, Selected: sel})
		}
	}
	v.Stage = sc.stageView()
	ae := sc.amp
	if ae == nil {
		return v
	}
	v.Open = true
	v.Freq = fmtF(ae.view.FreqHz)
	v.GainSteps, v.NFSteps = stepsText(ae.view.GainStepsDB), stepsText(ae.view.NFStepsDB)
	if ae.err != nil {
		v.Error = ae.err.Error()
		return v
	}
	v.Device = ae.ref.Name
	src, load, srcTr, loadTr := sc.ampCharts()
	var b bytes.Buffer
	src.Render(&b, srcTr, nil, nil)
	v.SourceSVG = b.String()
	b.Reset()
	load.Render(&b, loadTr, nil, nil)
	v.LoadSVG = b.String()
	v.StabilitySVG = sc.stabilityPlot()

	st := ae.stab
	v.K, v.Delta, v.Mu, v.MuPrime = fmtRatio(st.K), fmtRatio(st.DeltaMag), fmtRatio(st.Mu), fmtRatio(st.MuPrime)
	v.Unconditional = st.Unconditional
	var rs []string
	for _, r := range amp.UnconditionalRanges(ae.sw.FreqHz, ae.sweepStab) {
		rs = append(rs, fmtF4(r[0])+" – "+fmtF4(r[1]))
	}
	v.StableRanges = "nowhere in the sweep"
	if len(rs) > 0 {
		v.StableRanges = strings.Join(rs, ", ")
	}
	inC, outC := amp.InputStabilityCircle(ae.s), amp.OutputStabilityCircle(ae.s)
	v.InCircle, v.OutCircle = circleText(inC), circleText(outC)
	g, isMAG := amp.MaxGain(ae.s)
	v.MaxGain = "MSG " + units.FormatDB(amp.DB(g))
	if isMAG {
		v.MaxGain = "MAG " + units.FormatDB(amp.DB(g)) + " (MSG " + units.FormatDB(amp.DB(amp.MSG(ae.s))) + ")"
	}
	u := amp.UnilateralFigure(ae.s)
	lo, hi := amp.UnilateralBounds(u)
	v.Unilateral = fmt.Sprintf("U = %s: G_T/G_TU between %s and %s", fmtRatio(u), units.FormatDB(amp.DB(lo)), units.FormatDB(amp.DB(hi)))
	if gs, gl, err := amp.ConjugateMatch(ae.s); err == nil {
		v.Conj = fmt.Sprintf("Γs = %s (%s), ΓL = %s (%s)", fmtGammaPolar(gs), fmtImpedance(gs, ae.sw.Z0[0]), fmtGammaPolar(gl), fmtImpedance(gl, ae.sw.Z0[1]))
	} else {
		var se *amp.StabilityError
		if errors.As(err, &se) {
			v.ConjNote = fmt.Sprintf("No simultaneous conjugate match at %s: the device is only conditionally stable here (%s), so some passive source or load makes it oscillate. Choose terminations on the stable sides of the stability circles.", fmtF4(ae.view.FreqHz), se.Reason())
		} else {
			v.ConjNote = err.Error()
		}
	}
	for _, step := range ae.view.GainStepsDB {
		gdb := amp.DB(g) - step
		row := "G = " + units.FormatDB(gdb) + ": "
		ca, errA := amp.AvailableGainCircle(ae.s, gdb)
		cp, errP := amp.OperatingGainCircle(ae.s, gdb)
		if errA != nil || errP != nil {
			row += "no circle (" + errors.Join(errA, errP).Error() + ")"
		} else {
			row += "source plane " + circleText(amp.StabilityCircle{Circle: ca}) + "; load plane " + circleText(amp.StabilityCircle{Circle: cp})
		}
		v.GainCircles = append(v.GainCircles, row)
	}
	if ae.npErr != nil {
		v.NoiseNote = "No noise figures at " + fmtF4(ae.view.FreqHz) + ": " + ae.npErr.Error() + "."
	} else {
		v.Noise = fmt.Sprintf("NFmin %s at Γopt = %s (%s), Rn = %s Ω", units.FormatDB(ae.np.NFminDB), fmtGammaPolar(amp.GammaOpt(ae.np)), fmtImpedance(amp.GammaOpt(ae.np), ae.sw.Z0[0]), strconv.FormatFloat(ae.np.RnOhm, 'f', 2, 64))
		for _, step := range ae.view.NFStepsDB {
			nf := ae.np.NFminDB + step
			row := "NF = " + units.FormatDB(nf) + ": "
			if c, err := amp.NoiseCircle(ae.np, ae.sw.Z0[0], nf); err != nil {
				row += err.Error()
			} else {
				row += circleText(amp.StabilityCircle{Circle: c})
			}
			v.NFCircles = append(v.NFCircles, row)
		}
	}
	v.Readout = sc.ampReadout()
	return v
}

// circleText writes a circle's centre and radius in Γ.
func circleText(c amp.StabilityCircle) string {
	if c.Line {
		return "a line through " + fmtGammaPolar(c.Center)
	}
	s := "centre " + fmtGammaPolar(c.Center) + ", radius " + strconv.FormatFloat(c.Radius, 'f', 4, 64)
	if c.Stable != 0 {
		s += ", stable " + c.Stable.String()
		if c.DiscStable() {
			s += " (every passive termination is stable)"
		}
	}
	return s
}

// ampReadout is the figures at the placed terminations.
func (sc *scene) ampReadout() web.AmpReadout {
	ae := sc.amp
	r := web.AmpReadout{Freq: fmtF(ae.view.FreqHz)}
	gs, gl, ps, pl := ae.terminations(sc.st.Amp)
	s := ae.s
	z1, z2 := ae.sw.Z0[0], ae.sw.Z0[1]
	r.GammaS, r.ZS = fmtGammaPolar(gs), fmtImpedance(gs, z1)
	r.GammaL, r.ZL = fmtGammaPolar(gl), fmtImpedance(gl, z2)
	if !ps {
		r.GammaS += " (not placed: drag the Γs handle)"
	}
	if !pl {
		r.GammaL += " (not placed: Γout* shown)"
	}
	gout, gin := amp.GammaOut(s, gs), amp.GammaIn(s, gl)
	r.GammaOut, r.GammaIn = fmtGammaPolar(gout), fmtGammaPolar(gin)
	r.SourceStable = amp.InputStabilityCircle(s).IsStable(gs)
	r.LoadStable = amp.OutputStabilityCircle(s).IsStable(gl)
	r.GA = units.FormatDB(amp.DB(amp.AvailableGain(s, gs)))
	r.GP = units.FormatDB(amp.DB(amp.OperatingGain(s, gl)))
	r.GT = units.FormatDB(amp.DB(amp.TransducerGain(s, gs, gl)))
	if !r.SourceStable || !r.LoadStable {
		r.Warning = "These terminations make the device unstable (|Γin| or |Γout| ≥ 1): the gains shown do not apply; it would oscillate."
	}
	// Through lossless networks that present Γs and ΓL from 50 Ω, the
	// return loss at each termination is that of the mismatch at the port.
	mis := func(gp, gt complex128) float64 {
		return -20 * math.Log10(cmplx.Abs((gp-cmplx.Conj(gt))/(1-gp*gt)))
	}
	r.InRL, r.OutRL = units.FormatDB(mis(gin, gs)), units.FormatDB(mis(gout, gl))
	if ae.npErr == nil {
		r.NF = units.FormatDB(amp.NoiseFigureDB(ae.np, z1, gs))
	} else {
		r.NF = "n/a (no noise data here)"
	}
	return r
}

// stabilityPlot draws K, μ and μ′ across the sweep with the line at 1.
func (sc *scene) stabilityPlot() string {
	ae := sc.amp
	n := len(ae.sweepStab)
	k, mu, mup, one := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	for i, st := range ae.sweepStab {
		k[i], mu[i], mup[i], one[i] = st.K, st.Mu, st.MuPrime, 1
	}
	f := ae.sw.FreqHz
	series := []chartsvg.Series{
		{ID: "k", Name: "Rollett K", Color: "#1f5fa8", FreqHz: f, Y: k},
		{ID: "mu", Name: "μ (load plane)", Color: "#c8501e", FreqHz: f, Y: mu},
		{ID: "mup", Name: "μ′ (source plane)", Color: "#2a8a4a", FreqHz: f, Y: mup, Dashed: true},
		{ID: "one", Name: "1: unconditionally stable above", Color: "#8a8a8a", FreqHz: f, Y: one, Dashed: true},
	}
	var bands []chartsvg.Band
	for _, b := range sc.st.Bands {
		bands = append(bands, chartsvg.Band{Name: b.Name, LoHz: b.LoHz, HiHz: b.HiHz})
	}
	p := chartsvg.Plot{Width: ampPlotW, Height: ampPlotH, Title: "Stability of " + ae.ref.Name, YLabel: "K, μ", IDPrefix: "ampk-", XMin: f[0], XMax: f[len(f)-1]}
	var b bytes.Buffer
	p.Render(&b, series, bands, nil)
	return b.String()
}

// stageView builds the stage section of the panel.
func (sc *scene) stageView() web.StageView {
	v := web.StageView{}
	for _, r := range sc.st.Sweeps {
		if r.Ports == 2 {
			sel := (sc.st.Stage != nil && sc.st.Stage.SweepID == r.ID) || (sc.st.Stage == nil && sc.st.Amp != nil && sc.st.Amp.SweepID == r.ID)
			v.TwoPorts = append(v.TwoPorts, web.Option{Value: r.ID, Label: r.Name, Selected: sel})
		}
	}
	se := sc.stage
	if se == nil {
		return v
	}
	v.Has = true
	for _, b := range sc.st.Bands {
		row := web.StageReqRow{BandID: b.ID, Band: b.Name}
		for _, q := range se.stage.Reqs {
			if q.BandID == b.ID {
				row.Gain, row.NF, row.InRL, row.OutRL = reqText(q.MinGainDB), reqText(q.MaxNFdB), reqText(q.MinInputRLdB), reqText(q.MinOutputRLdB)
			}
		}
		v.Reqs = append(v.Reqs, row)
	}
	if se.err != nil {
		v.Error = se.err.Error()
		return v
	}
	v.Device = se.ref.Name
	v.NoiseNote = se.noiseNote
	side := func(n *sessions.Network) (string, string) {
		if n == nil {
			return "", "none (a through connection)"
		}
		var ps []string
		for i, p := range n.Parts {
			ps = append(ps, designator(n.Parts, i)+" "+kindLabels[p.Kind]+" "+units.Format(p.Value, p.Kind.Unit(), 3))
		}
		if len(ps) == 0 {
			ps = []string{"no parts yet (a through connection)"}
		}
		return n.ID, n.Name + ": " + strings.Join(ps, ", ")
	}
	var id string
	id, v.Source = side(se.src)
	if id != "" {
		v.Networks = append(v.Networks, web.Option{Value: id, Label: "source network", Selected: sc.st.ActiveNetwork == id})
	}
	id, v.Load = side(se.load)
	if id != "" {
		v.Networks = append(v.Networks, web.Option{Value: id, Label: "load network", Selected: sc.st.ActiveNetwork == id})
	}
	for _, n := range sc.st.Networks {
		if n.SweepID != se.ref.ID {
			continue
		}
		switch max(n.Port, 1) {
		case 1:
			v.SourceChoices = append(v.SourceChoices, web.Option{Value: n.ID, Label: n.Name, Selected: n.ID == se.stage.SourceNetworkID})
		case 2:
			v.LoadChoices = append(v.LoadChoices, web.Option{Value: n.ID, Label: n.Name, Selected: n.ID == se.stage.LoadNetworkID})
		}
	}
	for i, r := range se.m.Bands {
		b := sc.st.Bands[se.bandIdx[i]]
		row := web.StageBandRow{
			Band: b.Name, Gain: units.FormatDB(r.MinGainDB) + " – " + units.FormatDB(r.MaxGainDB),
			NF: units.FormatDB(r.WorstNFdB), InRL: units.FormatDB(r.WorstInputRLdB), OutRL: units.FormatDB(r.WorstOutputRLdB),
			Loss: units.FormatDB(r.WorstSourceLossDB), Req: stageReqText(r.Band.StageRequirement), Has: r.Band.StageRequirement.Any(),
		}
		if r.NoNoise > 0 {
			row.NF = fmt.Sprintf("n/a at %d of %d points (no noise data)", r.NoNoise, r.Points)
		}
		if row.Has {
			row.Margin, row.Pass = signedDB(r.MarginDB), r.MarginDB >= 0 && r.Unstable == 0
		}
		if r.Unstable > 0 {
			row.Margin += fmt.Sprintf(" · unstable at %d points", r.Unstable)
		}
		v.Bands = append(v.Bands, row)
	}
	v.Stable = len(se.m.UnstableHz) == 0
	f := se.sw.FreqHz
	if v.Stable {
		v.Stability = fmt.Sprintf("The terminations keep the device stable at every frequency of the sweep (%s – %s, %d points).", fmtF4(f[0]), fmtF4(f[len(f)-1]), len(f))
	} else {
		v.Stability = fmt.Sprintf("UNSTABLE: at %d of the sweep's %d frequencies (%s) the networks present terminations on the unstable side of the device's stability circles; the stage would oscillate there.", len(se.m.UnstableHz), len(f), hzRanges(f, se.m.UnstableHz))
	}
	v.Stability += " Least μ of the whole stage over the sweep: " + fmtRatio(se.m.MinMu)
	if se.m.MinMu > 1 {
		v.Stability += " (stable with any passive source and load)."
	} else {
		v.Stability += " (the stage itself is only conditionally stable: check it with the antenna and the radio it will really see)."
	}
	v.GainSVG, v.RLSVG = sc.stagePlots()
	if r := se.stage.Search; r != nil {
		v.Search = web.StageSearchView{Has: true, Settings: r.Settings, Note: r.Note, SidesExact: r.SidesExact}
		for i, d := range r.Designs {
			v.Search.Designs = append(v.Search.Designs, sc.stageDesignRow(i, d))
		}
	}
	return v
}

func reqText(v float64) string {
	if v == 0 {
		return ""
	}
	return strconv.FormatFloat(v, 'g', 4, 64)
}

// stageReqText writes what a band asks of the stage.
func stageReqText(q amp.StageRequirement) string {
	var s []string
	if q.MinGainDB != 0 {
		s = append(s, "gain ≥ "+strconv.FormatFloat(q.MinGainDB, 'g', 4, 64)+" dB")
	}
	if q.MaxNFdB != 0 {
		s = append(s, "NF ≤ "+strconv.FormatFloat(q.MaxNFdB, 'g', 4, 64)+" dB")
	}
	if q.MinInputRLdB != 0 {
		s = append(s, "input RL ≥ "+strconv.FormatFloat(q.MinInputRLdB, 'g', 4, 64)+" dB")
	}
	if q.MinOutputRLdB != 0 {
		s = append(s, "output RL ≥ "+strconv.FormatFloat(q.MinOutputRLdB, 'g', 4, 64)+" dB")
	}
	return strings.Join(s, ", ")
}

// hzRanges writes the frequencies fs (a subset of the grid f) as runs of
// neighbouring grid points: "0.5–1.2 GHz, 5.5 GHz".
func hzRanges(f, fs []float64) string {
	idx := map[float64]int{}
	for i, v := range f {
		idx[v] = i
	}
	var out []string
	for i := 0; i < len(fs); {
		j := i
		for j+1 < len(fs) && idx[fs[j+1]] == idx[fs[j]]+1 {
			j++
		}
		if i == j {
			out = append(out, fmtF4(fs[i]))
		} else {
			out = append(out, fmtF4(fs[i])+" – "+fmtF4(fs[j]))
		}
		i = j + 1
	}
	return strings.Join(out, ", ")
}

// stagePlots draws the stage's gain and noise figure, and its return
// losses, across the sweep.
func (sc *scene) stagePlots() (gain, rl string) {
	se := sc.stage
	n := len(se.pts)
	g, nf, in, out := make([]float64, n), make([]float64, n), make([]float64, n), make([]float64, n)
	for k, p := range se.pts {
		g[k], nf[k], in[k], out[k] = p.GainDB, p.NFdB, p.InputRLdB, p.OutputRLdB
		if !p.Stable {
			g[k] = math.NaN() // no gain to speak of where it oscillates
		}
	}
	f := se.sw.FreqHz
	var gb, rb []chartsvg.Band
	for i, r := range se.m.Bands {
		b := sc.st.Bands[se.bandIdx[i]]
		q := r.Band.StageRequirement
		gb = append(gb, chartsvg.Band{Name: b.Name, LoHz: b.LoHz, HiHz: b.HiHz, Limit: q.MinGainDB, HasLimit: q.MinGainDB != 0})
		rb = append(rb, chartsvg.Band{Name: b.Name, LoHz: b.LoHz, HiHz: b.HiHz, Limit: q.MinInputRLdB, HasLimit: q.MinInputRLdB != 0})
	}
	mk := func(id, title, ylabel string, series []chartsvg.Series, bands []chartsvg.Band) string {
		p := chartsvg.Plot{Width: ampPlotW, Height: ampPlotH, Title: title, YLabel: ylabel, YUnit: "dB", IDPrefix: id + "-", XMin: f[0], XMax: f[len(f)-1]}
		var b bytes.Buffer
		p.Render(&b, series, bands, nil)
		return b.String()
	}
	gain = mk("stg", "Stage gain and noise figure", "G_T, NF", []chartsvg.Series{
		{ID: "gt", Name: "gain G_T", Color: "#1f5fa8", FreqHz: f, Y: g},
		{ID: "nf", Name: "noise figure", Color: "#2a8a4a", FreqHz: f, Y: nf},
	}, gb)
	rl = mk("str", "Stage return loss", "RL", []chartsvg.Series{
		{ID: "in", Name: "input", Color: "#c8501e", FreqHz: f, Y: in},
		{ID: "out", Name: "output", Color: "#8e3b8f", FreqHz: f, Y: out, Dashed: true},
	}, rb)
	return gain, rl
}

// stageDesignRow shows design i of the stored stage search, judged again
// by amp.EvaluateStage on the device and bands as they are now.
func (sc *scene) stageDesignRow(i int, d sessions.StageDesign) web.StageDesignRow {
	row := web.StageDesignRow{Index: i}
	text := func(ps []sessions.Part) string {
		if len(ps) == 0 {
			return "through"
		}
		var s []string
		for _, p := range ps {
			s = append(s, kindLabels[p.Kind]+" "+units.Format(p.Value, p.Kind.Unit(), 3))
		}
		return strings.Join(s, " → ")
	}
	row.Source, row.Load = text(d.Source), text(d.Load)
	se := sc.stage
	if se == nil || se.err != nil {
		return row
	}
	src, err1 := designOf(&sessions.Network{Parts: d.Source})
	load, err2 := designOf(&sessions.Network{Parts: d.Load})
	if err := errors.Join(err1, err2); err != nil {
		row.Figures = err.Error()
		return row
	}
	st, err := match.StageOf(se.sw, se.noise, stageZ0, src, load)
	if err != nil {
		row.Figures = err.Error()
		return row
	}
	m, err := amp.EvaluateStage(st, se.bands)
	if err != nil {
		row.Figures = err.Error()
		return row
	}
	var fs []string
	for _, b := range m.Bands {
		fs = append(fs, fmt.Sprintf("%s: gain ≥ %s, NF ≤ %s, RL in %s, out %s", bandLabel(match.Band{LoHz: b.Band.LoHz, HiHz: b.Band.HiHz}),
			units.FormatDB(b.MinGainDB), units.FormatDB(b.WorstNFdB), units.FormatDB(b.WorstInputRLdB), units.FormatDB(b.WorstOutputRLdB)))
	}
	if len(m.UnstableHz) > 0 {
		fs = append(fs, fmt.Sprintf("unstable at %d frequencies", len(m.UnstableHz)))
	}
	row.Figures = strings.Join(fs, "; ")
	row.Margin, row.Pass = signedDB(m.MarginDB), m.Meets()
	return row
}

// ampForms are the amplifier panel's forms.
var ampForms = map[string]bool{"amp.set": true, "amp.clear": true, "stage.set": true, "stage.remove": true, "stage.use": true}

// ampChange turns the amplifier panel's forms into changes; fields as
// typed ("2.44G", "1, 2, 3").
func (sc *scene) ampChange(form string, f map[string]string) (sessions.Change, error) {
	fe := func(field, label string, err error) error { return &FieldError{form, field, label, err} }
	list := func(field, label string) (*[]float64, error) {
		t, ok := f[field]
		if !ok {
			return nil, nil
		}
		out := []float64{}
		for _, p := range strings.FieldsFunc(t, func(r rune) bool { return r == ',' || r == ';' || r == ' ' }) {
			v, err := strconv.ParseFloat(strings.TrimSuffix(strings.TrimSpace(p), "dB"), 64)
			if err != nil || !(v > 0) || math.IsInf(v, 0) {
				return nil, fe(field, label, fmt.Errorf("%q is not a positive number of dB", p))
			}
			out = append(out, v)
		}
		return &out, nil
	}
	switch form {
	case "amp.clear":
		return sessions.Change{Op: sessions.OpAmpClear}, nil
	case "amp.set":
		ch := sessions.Change{Op: sessions.OpAmpSet, SweepID: f["sweepId"]}
		if t := strings.TrimSpace(f["freq"]); t != "" {
			v, err := units.ParseFrequency(t)
			if err != nil {
				return ch, fe("freq", "Frequency", err)
			}
			ch.FreqHz = v
		}
		var err error
		if ch.GainStepsDB, err = list("gainSteps", "Gain circles"); err != nil {
			return ch, err
		}
		if ch.NFStepsDB, err = list("nfSteps", "Noise circles"); err != nil {
			return ch, err
		}
		if sc.st.Amp == nil {
			// A view opened fresh draws a few circles unless told otherwise.
			if ch.GainStepsDB == nil {
				ch.GainStepsDB = &[]float64{1, 2, 3}
			}
			if ch.NFStepsDB == nil {
				ch.NFStepsDB = &[]float64{0.25, 0.5, 1}
			}
		}
		return ch, nil
	case "stage.remove":
		return sessions.Change{Op: sessions.OpStageRemove}, nil
	case "stage.use":
		i, err := strconv.Atoi(f["index"])
		if err != nil || i < 0 {
			return sessions.Change{}, fmt.Errorf("which design?")
		}
		return sessions.Change{Op: sessions.OpStageUse, Index: &i}, nil
	case "stage.set":
		ch := sessions.Change{Op: sessions.OpStageSet, SweepID: f["sweepId"]}
		ch.SourceNetworkID, ch.LoadNetworkID = f["sourceNetworkId"], f["loadNetworkId"]
		reqs := []sessions.StageReq{}
		given := false
		for _, b := range sc.st.Bands {
			q := sessions.StageReq{BandID: b.ID}
			has := false
			for _, fd := range []struct {
				field, label string
				v            *float64
			}{{"gain.", "Gain ≥", &q.MinGainDB}, {"nf.", "NF ≤", &q.MaxNFdB}, {"inrl.", "Input RL ≥", &q.MinInputRLdB}, {"outrl.", "Output RL ≥", &q.MinOutputRLdB}} {
				t, ok := f[fd.field+b.ID]
				if !ok {
					continue
				}
				given = true
				t = strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(t), "dB"))
				if t == "" {
					continue
				}
				x, err := strconv.ParseFloat(t, 64)
				if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
					return ch, fe(fd.field+b.ID, fd.label+" ("+b.Name+")", fmt.Errorf("%q is not a number of dB", t))
				}
				*fd.v, has = x, true
			}
			if has {
				reqs = append(reqs, q)
			}
		}
		if given {
			ch.StageReqs = reqs
		}
		return ch, nil
	}
	return sessions.Change{}, fmt.Errorf("unknown form %q", form)
}

// startStageSearch runs the stage search on the session's stage with the
// settings of the form, reporting progress like the network search and
// storing the designs in the stage when done.
func (s *Server) startStageSearch(sc *scene, f map[string]string) error {
	se := sc.stage
	if se == nil {
		return errors.New("set up a stage on a 2-port sweep first")
	}
	if se.err != nil {
		return se.err
	}
	var bands []amp.StageBand
	for _, b := range se.bands {
		if b.StageRequirement.Any() {
			bands = append(bands, b)
		}
	}
	if len(bands) == 0 {
		return errors.New("give the stage a requirement (gain, noise figure or return loss) in at least one band inside the device's sweep first: the search is judged on them")
	}
	n, err := strconv.Atoi(f["parts"])
	if err != nil || n < 1 || n > 4 {
		return &FieldError{"stage.search", "parts", "Parts per side", fmt.Errorf("choose 1 to 4 parts")}
	}
	set := &match.StageSettings{Settings: match.Settings{LSeries: f["lseries"], CSeries: f["cseries"], MaxParts: n}}
	for _, name := range []string{set.LSeries, set.CSeries} {
		if name == "" {
			continue
		}
		if _, err := parts.Lookup(name); err != nil {
			return &FieldError{"stage.search", "series", "Series", err}
		}
	}
	model := strings.TrimSpace(f["model"])
	switch model {
	case "", "ideal":
		model = ""
	default:
		fam, err := parts.LookupFamily(model)
		if err != nil {
			return &FieldError{"stage.search", "model", "Model", err}
		}
		set.Model = fam
	}
	ser := func(v string) string {
		if v == "" {
			return "E24"
		}
		return v
	}
	desc := fmt.Sprintf("up to %d parts a side, L from %s, C from %s, %s parts", n, ser(set.LSeries), ser(set.CSeries), searchModelText(model, 0, 0))

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

	sid, dev, noise := sc.sid, se.sw, se.noise
	go func() {
		defer close(job.done)
		defer cancel()
		defer func() {
			s.search.mu.Lock()
			delete(s.search.jobs, sid)
			s.search.mu.Unlock()
		}()
		set.Progress = func(done, total int) {
			s.toSend(sid, progressMsg{Type: "progress", Done: done, Total: total, Running: true, Msg: fmt.Sprintf("stage search: %d of at most %d one-side searches", done, total)})
		}
		s.toSend(sid, progressMsg{Type: "progress", Running: true, Msg: "searching both sides of the stage, " + desc})
		res, err := match.SearchStage(ctx, dev, noise, stageZ0, bands, set)
		if err != nil {
			msg := "the stage search failed: " + err.Error()
			if errors.Is(err, context.Canceled) {
				msg = "the stage search was cancelled"
			} else if errors.Is(err, context.DeadlineExceeded) {
				msg = "the stage search took more than 10 minutes and was stopped; try fewer parts"
			}
			s.toSend(sid, progressMsg{Type: "progress", Running: false, Msg: msg})
			return
		}
		out := stageResult(res, desc, model)
		if _, err := s.store.ApplyAs(context.Background(), sessions.Edit, sid, sessions.Change{Op: sessions.OpStageStore, AmpChange: sessions.AmpChange{StageSearch: out}}); err != nil {
			s.log.Error("store stage search", "err", err)
			s.toSend(sid, progressMsg{Type: "progress", Running: false, Msg: "the result could not be stored: " + err.Error()})
			return
		}
		s.toSend(sid, progressMsg{Type: "progress", Running: false, Msg: fmt.Sprintf("stage search done (best found): %d designs from %d one-side searches and %d stages judged", len(out.Designs), res.Searches, res.Stages)})
	}()
	return nil
}

// stageResult turns a stage search's result into what the session keeps;
// model names the part model of every part ("" for ideal).
func stageResult(res *match.StageResult, desc, model string) *sessions.StageSearchResult {
	out := &sessions.StageSearchResult{Settings: desc + ", best found", SidesExact: res.SidesExact}
	conv := func(n match.Network) []sessions.Part {
		ps := []sessions.Part{}
		for _, p := range n {
			ps = append(ps, sessions.Part{Kind: p.Kind, Value: p.Value, ESeries: p.Series, Model: model})
		}
		return ps
	}
	for _, d := range res.Designs {
		out.Designs = append(out.Designs, sessions.StageDesign{Source: conv(d.Source), Load: conv(d.Load), MarginDB: storable(d.MarginDB)})
	}
	if len(res.Designs) == 0 || !res.Designs[0].Meets() {
		out.Note = "No stage found meets every requirement and stays stable across the sweep; the best found is listed first."
	}
	return out
}

// ampPointFrags are the fragments a termination drag changes: the two
// handles (the load's follows Γout* until it is placed) and the readout.
func (s *Server) ampPointFrags(sc *scene) []frag {
	if sc.amp == nil || sc.amp.err != nil {
		return nil
	}
	src, load, _, _ := sc.ampCharts()
	var out []frag
	for _, c := range []chartsvg.Chart{src, load} {
		for _, sp := range c.Spots {
			if !sp.Handle {
				continue
			}
			var b bytes.Buffer
			c.RenderSpot(&b, sp)
			out = append(out, frag{ID: c.IDPrefix + "spot-" + sp.ID, HTML: b.String(), SVG: true})
		}
	}
	return append(out, frag{ID: "amp-readout", HTML: renderString(web.AmpReadoutTable(sc.ampReadout()))})
}

// onlyAmpPoints reports whether every event of a batch only moved a
// termination of the amplifier view.
func onlyAmpPoints(batch []sessions.Event) bool {
	for _, e := range batch {
		if e.Op != sessions.OpAmpPoint {
			return false
		}
	}
	return len(batch) > 0
}

// stageNetworkID returns the id of the stage network a network search r
// was made for ("" when r was not made for a side of the session's stage
// on its sweep).
func stageNetworkID(st *sessions.State, r *sessions.SearchResult) string {
	s := st.Stage
	if s == nil || r.StageSide == "" || s.SweepID != r.SweepID {
		return ""
	}
	if r.StageSide == "load" {
		return s.LoadNetworkID
	}
	return s.SourceNetworkID
}

// stagePartsChange returns the change that puts design idx of the search r
// into the stage network it was made for, when there is one.
func stagePartsChange(st *sessions.State, r *sessions.SearchResult, idx int) (sessions.Change, bool) {
	id := stageNetworkID(st, r)
	if id == "" || st.NetworkIndex(id) < 0 {
		return sessions.Change{}, false
	}
	return sessions.Change{Op: sessions.OpStageParts, AmpChange: sessions.AmpChange{Plane: r.StageSide}, Parts: r.Designs[idx].Parts}, true
}
