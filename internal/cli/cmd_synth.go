package cli

import (
	"context"
	"errors"
	"fmt"
	"io"
	"math"
	"math/cmplx"
	"strings"

	"matchbench/rfmath/match"
	"matchbench/rfmath/units"
)

// synthReport is what `matchbench synth --json` prints. Keys are part of
// the command-line contract; add, never rename.
type synthReport struct {
	FreqHz      float64          `json:"f_hz"`
	ZLoad       complexJSON      `json:"z_load"`
	ZSource     complexJSON      `json:"z_source"`
	LNetworks   []lNetworkJSON   `json:"l_networks"`
	NoSolution  []noSolutionJSON `json:"no_solution"`
	Stubs       []stubJSON       `json:"stubs"`
	QuarterWave []quarterJSON    `json:"quarter_wave,omitempty"`
	Notes       []string         `json:"notes,omitempty"`
}

type complexJSON struct {
	R float64 `json:"r_ohm"`
	X float64 `json:"x_ohm"`
}

type partJSON struct {
	Kind   string  `json:"kind"`
	Value  float64 `json:"value"`
	Series string  `json:"series,omitempty"`
}

type lNetworkJSON struct {
	Orientation string     `json:"orientation"`
	Parts       []partJSON `json:"parts"`
	XOhm        float64    `json:"x_ohm"`
	BS          float64    `json:"b_s"`
}

type noSolutionJSON struct {
	Orientation string `json:"orientation"`
	Reason      string `json:"reason"`
}

type stubJSON struct {
	Type         string  `json:"type"`
	DWavelengths float64 `json:"d_wavelengths"`
	LWavelengths float64 `json:"l_wavelengths"`
}

type quarterJSON struct {
	DWavelengths float64 `json:"d_wavelengths"`
	ROhm         float64 `json:"r_ohm"`
	Z1Ohm        float64 `json:"z1_ohm"`
	LWavelengths float64 `json:"l_wavelengths"`
}

func partsJSON(n match.Network) []partJSON {
	out := make([]partJSON, len(n))
	for i, p := range n {
		out[i] = partJSON{Kind: string(p.Kind), Value: p.Value, Series: p.Series}
	}
	return out
}

func runSynth(_ context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("synth", "--z R±jX --f FREQ [--z0 OHMS] [--json]", stderr)
	zs := fs.String("z", "", "load `impedance` in ohms: 60-80j, 60-j80, \"60 - 80j\", 75")
	z0s := fs.String("z0", "50", "source `impedance` in ohms; the lines of the stubs and transformers take it (real sources only)")
	var f freqFlag
	fs.Var(&f, "f", "design `frequency` (SI prefixes: 2G, 915MHz)")
	asJSON := fs.Bool("json", false, "print one JSON object")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 0 {
		return usagef("synth takes no file; got %q", pos[0])
	}
	if *zs == "" {
		return usagef("--z is required, e.g. --z 60-80j")
	}
	zl, err := parseImpedance(*zs)
	if err != nil {
		return usagef("--z: %v", err)
	}
	z0, err := parseImpedance(*z0s)
	if err != nil {
		return usagef("--z0: %v", err)
	}
	if !(real(z0) > 0) {
		return usagef("--z0 %s: the source needs a positive resistance", *z0s)
	}
	if f.hz <= 0 {
		return usagef("--f is required, e.g. --f 2G")
	}
	s, err := match.Synthesize(zl, z0, f.hz)
	if err != nil {
		return err
	}
	if *asJSON {
		return writeJSON(stdout, synthJSON(s))
	}
	printSynth(stdout, s)
	return nil
}

func synthJSON(s *match.Synthesis) synthReport {
	r := synthReport{
		FreqHz:     s.FreqHz,
		ZLoad:      complexJSON{real(s.ZLoad), imag(s.ZLoad)},
		ZSource:    complexJSON{real(s.ZSource), imag(s.ZSource)},
		LNetworks:  []lNetworkJSON{},
		NoSolution: []noSolutionJSON{},
		Stubs:      []stubJSON{},
		Notes:      s.Notes,
	}
	z := plusZero // no −0 in the output
	for _, l := range s.LNetworks {
		r.LNetworks = append(r.LNetworks, lNetworkJSON{string(l.Orientation), partsJSON(l.Parts), z(l.XOhm), z(l.BS)})
	}
	for _, n := range s.NoL {
		r.NoSolution = append(r.NoSolution, noSolutionJSON{string(n.Orientation), n.Reason})
	}
	for _, st := range s.Stubs {
		r.Stubs = append(r.Stubs, stubJSON{string(st.Type), z(st.DWavelengths), z(st.LWavelengths)})
	}
	for _, q := range s.QuarterWaves {
		r.QuarterWave = append(r.QuarterWave, quarterJSON{z(q.DWavelengths), z(q.ROhm), z(q.Z1Ohm), z(q.LWavelengths)})
	}
	return r
}

func fmtZ(z complex128) string {
	if imag(z) == 0 {
		return fmtSig(real(z), 4) + " Ω"
	}
	sign := "+"
	if imag(z) < 0 {
		sign = "−"
	}
	return fmt.Sprintf("%s %s j%s Ω", fmtSig(real(z), 4), sign, fmtSig(math.Abs(imag(z)), 4))
}

func printSynth(w io.Writer, s *match.Synthesis) {
	fmt.Fprintf(w, "Load %s, source %s, at %s\n", fmtZ(s.ZLoad), fmtZ(s.ZSource), units.FormatFrequency(s.FreqHz, 6))
	if imag(s.ZSource) != 0 {
		fmt.Fprintf(w, "(matched to the source's conjugate, %s)\n", fmtZ(cmplx.Conj(s.ZSource)))
	}
	fmt.Fprintln(w, "\nL-networks, parts from the load toward the source:")
	for _, o := range []match.Orientation{match.ShuntAtLoad, match.SeriesAtLoad} {
		fmt.Fprintf(w, "  %s:\n", strings.ReplaceAll(string(o), "_", " "))
		n := 0
		for _, l := range s.LNetworks {
			if l.Orientation != o {
				continue
			}
			n++
			desc := "nothing: the load is already matched"
			if len(l.Parts) > 0 {
				var ps []string
				for _, p := range l.Parts {
					ps = append(ps, fmt.Sprintf("%s %s", p.Kind, units.Format(p.Value, p.Kind.Unit(), 4)))
				}
				desc = strings.Join(ps, ", ")
			}
			fmt.Fprintf(w, "    %d. %s   (series X %s Ω, shunt B %s mS)\n", n, desc, fmtSigSigned(l.XOhm, 4), fmtSigSigned(l.BS*1e3, 4))
		}
		for _, no := range s.NoL {
			if no.Orientation == o {
				fmt.Fprintf(w, "    none: %s\n", no.Reason)
			}
		}
	}
	if len(s.Stubs) > 0 {
		fmt.Fprintf(w, "\nSingle shunt stub on %s line, lengths in wavelengths on the line:\n", units.Format(real(s.ZSource), "Ω", 4))
		for i := 0; i+1 < len(s.Stubs); i += 2 {
			o, sh := s.Stubs[i], s.Stubs[i+1]
			fmt.Fprintf(w, "  stub %s λ from the load: open stub %s λ, or shorted stub %s λ\n", fmtNum(o.DWavelengths, 4), fmtNum(o.LWavelengths, 4), fmtNum(sh.LWavelengths, 4))
		}
	}
	if len(s.QuarterWaves) > 0 {
		fmt.Fprintln(w, "\nQuarter-wave transformer (a λ/4 section where the load looks real):")
		for _, q := range s.QuarterWaves {
			fmt.Fprintf(w, "  %s λ of %s line from the load, where it is %s: a λ/4 section of %s\n",
				fmtNum(q.DWavelengths, 4), units.Format(real(s.ZSource), "Ω", 4), units.Format(q.ROhm, "Ω", 5), units.Format(q.Z1Ohm, "Ω", 5))
		}
	}
	for _, n := range s.Notes {
		fmt.Fprintf(w, "\nNote: %s\n", n)
	}
}

// errImpedance is wrapped by every impedance parse error.
var errImpedance = errors.New("want an impedance such as 60-80j, 60-j80, \"60 - 80j\" or 75")

// parseImpedance reads an impedance in ohms written as an engineer writes
// it: "60-80j", "60-j80", "60 - 80j", "60+j0", "75", "-j50", "j50", with j
// or i for the imaginary unit, an optional unit (Ω, ohm) at the end, a
// Unicode minus, and SI prefixes on either number ("1k-j200").
func parseImpedance(s string) (complex128, error) {
	in := s
	t := strings.ReplaceAll(s, " ", "")
	t = strings.ReplaceAll(t, "\u2212", "-") // minus sign
	for _, u := range []string{"ohms", "ohm", "Ω", "OHMS", "OHM", "Ohms", "Ohm"} {
		if strings.HasSuffix(t, u) {
			t = strings.TrimSuffix(t, u)
			break
		}
	}
	if t == "" {
		return 0, fmt.Errorf("%q: empty: %w", in, errImpedance)
	}
	// Split at the last + or − that is neither the first character nor
	// the sign of an exponent.
	cut := -1
	for i := len(t) - 1; i > 0; i-- {
		if (t[i] == '+' || t[i] == '-') && t[i-1] != 'e' && t[i-1] != 'E' {
			cut = i
			break
		}
	}
	re, im := t, ""
	if cut > 0 {
		re, im = t[:cut], t[cut:]
	} else if strings.ContainsAny(t, "jJiI") {
		re, im = "", t
	}
	var z complex128
	if re != "" {
		if strings.ContainsAny(re, "jJiI") {
			return 0, fmt.Errorf("%q: the imaginary part must come second: %w", in, errImpedance)
		}
		r, err := units.ParseValue(re, "Ω")
		if err != nil {
			return 0, fmt.Errorf("%q: the real part %q is not a number: %w", in, re, errImpedance)
		}
		z += complex(r, 0)
	}
	if im != "" {
		sign := 1.0
		switch im[0] {
		case '-':
			sign, im = -1, im[1:]
		case '+':
			im = im[1:]
		}
		n := strings.IndexAny(im, "jJiI")
		if n < 0 {
			return 0, fmt.Errorf("%q: the second part %q has no j: %w", in, im, errImpedance)
		}
		if strings.Count(strings.ToLower(im), "j")+strings.Count(strings.ToLower(im), "i") != 1 {
			return 0, fmt.Errorf("%q: more than one j: %w", in, errImpedance)
		}
		num := im[:n] + im[n+1:] // "j80" → "80", "80j" → "80"
		if n != 0 && n != len(im)-1 {
			return 0, fmt.Errorf("%q: j must stand before or after the number: %w", in, errImpedance)
		}
		x := 1.0
		if num != "" {
			v, err := units.ParseValue(num, "Ω")
			if err != nil {
				return 0, fmt.Errorf("%q: the imaginary part %q is not a number: %w", in, num, errImpedance)
			}
			x = v
		}
		z += complex(0, sign*x)
	}
	if cmplx.IsNaN(z) || cmplx.IsInf(z) {
		return 0, fmt.Errorf("%q: not finite: %w", in, errImpedance)
	}
	return z, nil
}
