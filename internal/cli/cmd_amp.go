package cli

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"math/cmplx"
	"path/filepath"
	"strconv"
	"strings"

	"matchbench/rfmath"
	"matchbench/rfmath/amp"
	"matchbench/rfmath/touchstone"
	"matchbench/rfmath/units"
)

// ampReport is what `matchbench amp --json` prints. Keys are part of the
// command-line contract; add, never rename. Complex values are [re, im];
// infinities and missing values are null.
type ampReport struct {
	File   string    `json:"file"`
	FreqHz float64   `json:"f_hz"`
	Z0Ohm  []float64 `json:"z0_ohm"`
	S      struct {
		S11 cplxJSON `json:"s11"`
		S12 cplxJSON `json:"s12"`
		S21 cplxJSON `json:"s21"`
		S22 cplxJSON `json:"s22"`
	} `json:"s"`

	K                     jsonNum      `json:"k"`
	Delta                 cplxJSON     `json:"delta"`
	DeltaMag              jsonNum      `json:"delta_mag"`
	Mu                    jsonNum      `json:"mu"`
	MuPrime               jsonNum      `json:"mu_prime"`
	Unconditional         bool         `json:"unconditionally_stable"`
	UnconditionalRangesHz [][2]float64 `json:"unconditionally_stable_hz"`
	InputStability        stabJSON     `json:"input_stability_circle"`
	OutputStability       stabJSON     `json:"output_stability_circle"`

	MagDB            *jsonNum   `json:"mag_db"`
	MsgDB            jsonNum    `json:"msg_db"`
	MaxGainDB        jsonNum    `json:"max_gain_db"`
	MaxGainKind      string     `json:"max_gain_kind"`
	UnilateralFigure jsonNum    `json:"unilateral_figure"`
	UnilateralErrDB  [2]jsonNum `json:"unilateral_error_db"`
	GammaS           *cplxJSON  `json:"gamma_s"`
	GammaL           *cplxJSON  `json:"gamma_l"`
	NoMatch          string     `json:"no_conjugate_match,omitempty"`

	AvailableGainCircles []gainCircleJSON `json:"available_gain_circles"`
	OperatingGainCircles []gainCircleJSON `json:"operating_gain_circles"`

	NoiseNote       string          `json:"noise_note,omitempty"`
	NFminDB         *jsonNum        `json:"nf_min_db,omitempty"`
	GammaOpt        *cplxJSON       `json:"gamma_opt,omitempty"`
	RnOhm           *jsonNum        `json:"rn_ohm,omitempty"`
	NF50DB          *jsonNum        `json:"nf_50ohm_db,omitempty"`
	NFAtGammaSDB    *jsonNum        `json:"nf_at_gamma_s_db,omitempty"`
	GAAtGammaOptDB  *jsonNum        `json:"ga_at_gamma_opt_db,omitempty"`
	NoiseFreqRange  *[2]float64     `json:"noise_range_hz,omitempty"`
	NoiseFigCircles []noiseCircJSON `json:"nf_circles"`
}

// cplxJSON is a complex number as [re, im].
type cplxJSON [2]jsonNum

func cplxOf(c complex128) cplxJSON { return cplxJSON{jsonNum(real(c)), jsonNum(imag(c))} }

func (c cplxJSON) complex() complex128 { return complex(float64(c[0]), float64(c[1])) }

// circleJSON is a circle in a reflection plane. A straight line (a circle
// through ∞) has "line": true, its point nearest the chart's centre as
// "center", a null radius and a unit "normal".
type circleJSON struct {
	Center cplxJSON  `json:"center"`
	Radius jsonNum   `json:"radius"`
	Line   bool      `json:"line,omitempty"`
	Normal *cplxJSON `json:"normal,omitempty"`
}

func circleOf(c amp.Circle) circleJSON {
	j := circleJSON{Center: cplxOf(c.Center), Radius: jsonNum(c.Radius), Line: c.Line}
	if c.Line {
		n := cplxOf(c.Normal)
		j.Normal = &n
	}
	return j
}

// stabJSON is a stability circle: "stable_side" is "inside", "outside",
// "normal_side" (a line: the side its normal points to), "everywhere" or
// "nowhere"; "all_passive_stable" says whether every passive termination
// of that port is on the stable side.
type stabJSON struct {
	circleJSON
	StableSide       string `json:"stable_side"`
	AllPassiveStable bool   `json:"all_passive_stable"`
}

type gainCircleJSON struct {
	GainDB     float64 `json:"gain_db"`
	BelowMaxDB jsonNum `json:"below_max_db"`
	*circleJSON
	Note string `json:"note,omitempty"`
}

type noiseCircJSON struct {
	NFdB       float64 `json:"nf_db"`
	AboveMinDB float64 `json:"above_min_db"`
	*circleJSON
	Note string `json:"note,omitempty"`
}

const ampUsage = "FILE.s2p --f FREQ [--gain-circles 1,2,3] [--gain-db 12,14] [--nf-circles 0.5,1] [--nf-db 1.2] [--json]"

func runAmp(_ context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("amp", ampUsage, stderr)
	var f freqFlag
	fs.Var(&f, "f", "analysis `frequency` (SI prefixes: 2.4G, 2440MHz); S-parameters are interpolated there")
	var gainSteps, gainAbs, nfSteps, nfAbs listFlag
	fs.Var(&gainSteps, "gain-circles", "gain circles at these `dB` below the maximum gain (MAG, or MSG when potentially unstable), comma-separated or repeated")
	fs.Var(&gainAbs, "gain-db", "gain circles at these gains in `dB`")
	fs.Var(&nfSteps, "nf-circles", "noise-figure circles at these `dB` above NFmin")
	fs.Var(&nfAbs, "nf-db", "noise-figure circles at these noise figures in `dB`")
	asJSON := fs.Bool("json", false, "print one JSON object")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usagef("want one 2-port file, got %d arguments", len(pos))
	}
	if f.hz <= 0 {
		return usagef("--f is required, e.g. --f 2.4G")
	}
	req := ampRequest{freqHz: f.hz}
	for _, l := range []struct {
		name  string
		vals  listFlag
		dst   *[]float64
		steps bool
	}{
		{"--gain-circles", gainSteps, &req.gainSteps, true},
		{"--gain-db", gainAbs, &req.gainDB, false},
		{"--nf-circles", nfSteps, &req.nfSteps, true},
		{"--nf-db", nfAbs, &req.nfDB, false},
	} {
		v, err := parseDBList(l.name, l.vals, l.steps)
		if err != nil {
			return err
		}
		*l.dst = v
	}

	path := pos[0]
	if strings.EqualFold(filepath.Ext(path), ".csv") {
		return fmt.Errorf("%s: amp needs a 2-port Touchstone file (.s2p or .ts); CSV sweeps hold 1-ports", path)
	}
	tf, err := touchstone.ReadFile(path, touchstone.DefaultLimits)
	if err != nil {
		return err
	}
	rep, err := ampAnalyze(path, tf, req)
	if err != nil {
		return err
	}
	if *asJSON {
		return writeJSON(stdout, rep)
	}
	printAmp(stdout, rep)
	return nil
}

// parseDBList reads comma-separated dB values from each occurrence of a
// list flag. Steps (below the maximum, above the minimum) must not be
// negative.
func parseDBList(name string, vals listFlag, steps bool) ([]float64, error) {
	var out []float64
	for _, v := range vals {
		for _, s := range strings.Split(v, ",") {
			s = strings.TrimSpace(strings.TrimSuffix(strings.TrimSpace(s), "dB"))
			if s == "" {
				continue
			}
			x, err := strconv.ParseFloat(s, 64)
			if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
				return nil, usagef("%s: %q is not a number of dB", name, s)
			}
			if steps && x < 0 {
				return nil, usagef("%s %g: a step must not be negative (steps are dB from the best figure)", name, x)
			}
			out = append(out, x)
		}
	}
	return out, nil
}

type ampRequest struct {
	freqHz                           float64
	gainSteps, gainDB, nfSteps, nfDB []float64
}

// ampAnalyze computes the report with the functions of rfmath/amp. A
// frequency outside the sweep is a usage error; noise circles asked of a
// file whose noise data do not reach the frequency are an input error.
func ampAnalyze(path string, tf *touchstone.File, req ampRequest) (*ampReport, error) {
	sw := tf.Sweep
	if sw.Ports != 2 {
		return nil, fmt.Errorf("%s: %w: it is a %d-port", path, amp.ErrNotTwoPort, sw.Ports)
	}
	s, err := amp.SAt(sw, req.freqHz)
	if err != nil {
		if errors.Is(err, rfmath.ErrOutOfRange) {
			return nil, usagef("--f %s is outside the sweep (%s to %s)", units.FormatFrequency(req.freqHz, 6),
				units.FormatFrequency(sw.FreqHz[0], 6), units.FormatFrequency(sw.FreqHz[sw.Len()-1], 6))
		}
		return nil, err
	}
	rep := &ampReport{File: path, FreqHz: req.freqHz, Z0Ohm: append([]float64(nil), sw.Z0...)}
	rep.S.S11, rep.S.S12, rep.S.S21, rep.S.S22 = cplxOf(s[0]), cplxOf(s[1]), cplxOf(s[2]), cplxOf(s[3])

	st := amp.StabilityOf(s)
	rep.K, rep.Delta, rep.DeltaMag = jsonNum(st.K), cplxOf(st.Delta), jsonNum(st.DeltaMag)
	rep.Mu, rep.MuPrime, rep.Unconditional = jsonNum(st.Mu), jsonNum(st.MuPrime), st.Unconditional
	rep.UnconditionalRangesHz = amp.UnconditionalRanges(sw.FreqHz, amp.StabilityTo(nil, sw))
	if rep.UnconditionalRangesHz == nil {
		rep.UnconditionalRangesHz = [][2]float64{}
	}
	stab := func(c amp.StabilityCircle) stabJSON {
		return stabJSON{circleJSON: circleOf(c.Circle), StableSide: c.Stable.String(), AllPassiveStable: c.DiscStable()}
	}
	rep.InputStability = stab(amp.InputStabilityCircle(s))
	rep.OutputStability = stab(amp.OutputStabilityCircle(s))

	rep.MsgDB = jsonNum(amp.DB(amp.MSG(s)))
	maxG, isMAG := amp.MaxGain(s)
	rep.MaxGainDB, rep.MaxGainKind = jsonNum(amp.DB(maxG)), "MSG"
	if isMAG {
		m := jsonNum(amp.DB(maxG))
		rep.MagDB, rep.MaxGainKind = &m, "MAG"
	}
	u := amp.UnilateralFigure(s)
	lo, hi := amp.UnilateralBounds(u)
	rep.UnilateralFigure, rep.UnilateralErrDB = jsonNum(u), [2]jsonNum{jsonNum(amp.DB(lo)), jsonNum(amp.DB(hi))}
	gs, gl, err := amp.ConjugateMatch(s)
	if err != nil {
		var se *amp.StabilityError
		if !errors.As(err, &se) {
			return nil, err
		}
		rep.NoMatch = se.Reason() + ": the device is only conditionally stable"
	} else {
		a, b := cplxOf(gs), cplxOf(gl)
		rep.GammaS, rep.GammaL = &a, &b
	}

	maxDB := amp.DB(maxG)
	gains := make([]float64, 0, len(req.gainSteps)+len(req.gainDB))
	for _, d := range req.gainSteps {
		gains = append(gains, maxDB-d)
	}
	gains = append(gains, req.gainDB...)
	rep.AvailableGainCircles, rep.OperatingGainCircles = []gainCircleJSON{}, []gainCircleJSON{}
	for _, g := range gains {
		if math.IsInf(g, 0) || math.IsNaN(g) {
			return nil, fmt.Errorf("%s: --gain-circles: the device has no finite maximum gain at %s to step down from (%s %s dB); give gains with --gain-db", path, units.FormatFrequency(req.freqHz, 6), rep.MaxGainKind, fmtDB(maxDB))
		}
		for _, side := range []struct {
			dst *[]gainCircleJSON
			f   func([4]complex128, float64) (amp.Circle, error)
		}{{&rep.AvailableGainCircles, amp.AvailableGainCircle}, {&rep.OperatingGainCircles, amp.OperatingGainCircle}} {
			e := gainCircleJSON{GainDB: g, BelowMaxDB: jsonNum(maxDB - g)}
			if c, err := side.f(s, g); err != nil {
				e.Note = strings.TrimPrefix(err.Error(), "amp: ")
			} else {
				cj := circleOf(c)
				e.circleJSON = &cj
			}
			*side.dst = append(*side.dst, e)
		}
	}

	rep.NoiseFigCircles = []noiseCircJSON{}
	wantNoise := len(req.nfSteps)+len(req.nfDB) > 0
	np, err := amp.NoiseAt(tf.Noise, req.freqHz)
	switch {
	case errors.Is(err, amp.ErrNoNoise):
		rep.NoiseNote = "the file has no noise parameters"
	case err != nil:
		rep.NoiseNote = strings.TrimPrefix(err.Error(), "amp: ")
	}
	if len(tf.Noise) > 0 {
		rep.NoiseFreqRange = &[2]float64{tf.Noise[0].FreqHz, tf.Noise[len(tf.Noise)-1].FreqHz}
	}
	if err != nil {
		if wantNoise {
			return nil, fmt.Errorf("%s: no noise-figure circles at %s: %s", path, units.FormatFrequency(req.freqHz, 6), rep.NoiseNote)
		}
		return rep, nil
	}
	z0 := sw.Z0[0]
	num := func(v float64) *jsonNum { n := jsonNum(v); return &n }
	gopt := amp.GammaOpt(np)
	gOpt := cplxOf(gopt)
	rep.NFminDB, rep.GammaOpt, rep.RnOhm = num(np.NFminDB), &gOpt, num(np.RnOhm)
	rep.NF50DB = num(amp.NoiseFigureDB(np, z0, 0))
	rep.GAAtGammaOptDB = num(amp.DB(amp.AvailableGain(s, gopt)))
	if rep.GammaS != nil {
		rep.NFAtGammaSDB = num(amp.NoiseFigureDB(np, z0, gs))
	}
	nfs := make([][2]float64, 0, len(req.nfSteps)+len(req.nfDB))
	for _, d := range req.nfSteps {
		nfs = append(nfs, [2]float64{np.NFminDB + d, d})
	}
	for _, v := range req.nfDB {
		nfs = append(nfs, [2]float64{v, v - np.NFminDB})
	}
	for _, v := range nfs {
		e := noiseCircJSON{NFdB: v[0], AboveMinDB: v[1]}
		if c, err := amp.NoiseCircle(np, z0, v[0]); err != nil {
			e.Note = strings.TrimPrefix(err.Error(), "amp: ")
		} else {
			cj := circleOf(c)
			e.circleJSON = &cj
		}
		rep.NoiseFigCircles = append(rep.NoiseFigCircles, e)
	}
	return rep, nil
}

// fmtGamma writes a reflection as |Γ|∠deg.
func fmtGamma(g complex128) string {
	return fmt.Sprintf("%.4f∠%.1f°", cmplx.Abs(g), rfmath.AngleDeg(g))
}

func fmtCircle(c *circleJSON) string {
	if c.Line {
		return fmt.Sprintf("a straight line through %s, normal %s", fmtGamma(c.Center.complex()), fmtGamma(c.Normal.complex()))
	}
	return fmt.Sprintf("centre %s, radius %.4f", fmtGamma(c.Center.complex()), float64(c.Radius))
}

func printAmp(w io.Writer, rep *ampReport) {
	ff := func(f float64) string { return units.FormatFrequency(f, 6) }
	fmt.Fprintf(w, "%s at %s (references %s and %s)\n", rep.File, ff(rep.FreqHz), units.Format(rep.Z0Ohm[0], "Ω", 4), units.Format(rep.Z0Ohm[1], "Ω", 4))
	fmt.Fprintf(w, "  S11 %s   S21 %s   S12 %s   S22 %s\n", fmtGamma(rep.S.S11.complex()), fmtGamma(rep.S.S21.complex()), fmtGamma(rep.S.S12.complex()), fmtGamma(rep.S.S22.complex()))

	fmt.Fprintln(w, "\nStability")
	verdict := "unconditionally stable"
	if !rep.Unconditional {
		verdict = "potentially unstable"
	}
	fmt.Fprintf(w, "  K = %s, |Δ| = %.4f, μ = %s, μ′ = %s: %s\n", fmtNum(float64(rep.K), 4), float64(rep.DeltaMag), fmtNum(float64(rep.Mu), 4), fmtNum(float64(rep.MuPrime), 4), verdict)
	if len(rep.UnconditionalRangesHz) == 0 {
		fmt.Fprintln(w, "  across the sweep: nowhere unconditionally stable")
	} else {
		var rs []string
		for _, r := range rep.UnconditionalRangesHz {
			rs = append(rs, units.FormatFrequency(r[0], 4)+" to "+units.FormatFrequency(r[1], 4))
		}
		fmt.Fprintf(w, "  across the sweep: unconditionally stable from %s\n", strings.Join(rs, ", from "))
	}
	for _, c := range []struct {
		name string
		c    stabJSON
		what string
	}{{"input stability circle (source plane)", rep.InputStability, "source"}, {"output stability circle (load plane)", rep.OutputStability, "load"}} {
		side := map[string]string{"inside": "stable inside", "outside": "stable outside", "normal_side": "stable on the side of the normal", "everywhere": "every termination stable", "nowhere": "no termination stable"}[c.c.StableSide]
		all := "some passive " + c.what + "s are unstable"
		if c.c.AllPassiveStable {
			all = "every passive " + c.what + " is stable"
		}
		fmt.Fprintf(w, "  %s: %s; %s; %s\n", c.name, fmtCircle(&c.c.circleJSON), side, all)
	}
	if !rep.Unconditional {
		fmt.Fprintln(w, "  Caution: some passive sources or loads make this device oscillate. Keep both terminations on the")
		fmt.Fprintln(w, "  stable side at every frequency where it has gain, not only here; an oscillating stage can radiate")
		fmt.Fprintln(w, "  and damage itself or the analyser.")
	}

	fmt.Fprintln(w, "\nGain")
	if rep.MagDB != nil {
		fmt.Fprintf(w, "  MAG %.2f dB (MSG %s dB)\n", float64(*rep.MagDB), fmtDB(float64(rep.MsgDB)))
	} else {
		fmt.Fprintf(w, "  MSG %s dB (no MAG: the device is not unconditionally stable)\n", fmtDB(float64(rep.MsgDB)))
	}
	fmt.Fprintf(w, "  unilateral figure of merit U = %.4f: G_T/G_TU between %+.2f and %s dB\n", float64(rep.UnilateralFigure), float64(rep.UnilateralErrDB[0]), fmtSignedDB(float64(rep.UnilateralErrDB[1])))
	if rep.GammaS != nil {
		gs, gl := rep.GammaS.complex(), rep.GammaL.complex()
		fmt.Fprintf(w, "  simultaneous conjugate match: Γs = %s (%s), ΓL = %s (%s)\n",
			fmtGamma(gs), fmtZ(rfmath.ZFromGamma(gs, complex(rep.Z0Ohm[0], 0))), fmtGamma(gl), fmtZ(rfmath.ZFromGamma(gl, complex(rep.Z0Ohm[1], 0))))
	} else {
		fmt.Fprintf(w, "  no simultaneous conjugate match: %s\n", rep.NoMatch)
	}
	for _, g := range []struct {
		name string
		cs   []gainCircleJSON
	}{{"available-gain circles (source plane)", rep.AvailableGainCircles}, {"operating-gain circles (load plane)", rep.OperatingGainCircles}} {
		if len(g.cs) == 0 {
			continue
		}
		fmt.Fprintf(w, "  %s:\n", g.name)
		for _, c := range g.cs {
			label := fmt.Sprintf("%.2f dB (%s − %.2f dB)", c.GainDB, rep.MaxGainKind, float64(c.BelowMaxDB))
			if c.circleJSON == nil {
				fmt.Fprintf(w, "    %s: none: %s\n", label, c.Note)
				continue
			}
			fmt.Fprintf(w, "    %s: %s\n", label, fmtCircle(c.circleJSON))
		}
	}

	fmt.Fprintln(w, "\nNoise")
	if rep.NFminDB == nil {
		fmt.Fprintf(w, "  no noise figures: %s\n", rep.NoiseNote)
		return
	}
	gopt := rep.GammaOpt.complex()
	fmt.Fprintf(w, "  NFmin %.3f dB at Γopt = %s (%s), Rn = %s\n", float64(*rep.NFminDB), fmtGamma(gopt), fmtZ(rfmath.ZFromGamma(gopt, complex(rep.Z0Ohm[0], 0))), units.Format(float64(*rep.RnOhm), "Ω", 4))
	fmt.Fprintf(w, "  NF from a %s source: %s dB; available gain with Γs = Γopt: %s dB\n", units.Format(rep.Z0Ohm[0], "Ω", 4), fmtNum(float64(*rep.NF50DB), 3), fmtNum(float64(*rep.GAAtGammaOptDB), 2))
	if rep.NFAtGammaSDB != nil {
		fmt.Fprintf(w, "  NF at the conjugate match's Γs: %s dB\n", fmtNum(float64(*rep.NFAtGammaSDB), 3))
	}
	if len(rep.NoiseFigCircles) > 0 {
		fmt.Fprintln(w, "  noise-figure circles (source plane):")
		for _, c := range rep.NoiseFigCircles {
			label := fmt.Sprintf("%.2f dB (NFmin + %.2f dB)", c.NFdB, c.AboveMinDB)
			if c.circleJSON == nil {
				fmt.Fprintf(w, "    %s: none: %s\n", label, c.Note)
				continue
			}
			fmt.Fprintf(w, "    %s: %s\n", label, fmtCircle(c.circleJSON))
		}
	}
}

func fmtSignedDB(v float64) string {
	if math.IsInf(v, 1) {
		return "+∞"
	}
	return fmt.Sprintf("%+.2f", v)
}
