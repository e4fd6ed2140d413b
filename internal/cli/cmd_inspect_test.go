package cli

import (
	"encoding/json"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"matchbench/rfmath"
)

// inspectJSON runs inspect with --json and decodes the report.
func inspectJSON(t *testing.T, args ...string) *inspectReportIn {
	t.Helper()
	code, out, errOut := runCLI(t, append(append([]string{"inspect"}, args...), "--json")...)
	if code != exitOK {
		t.Fatalf("inspect %v: exit %d: %s", args, code, errOut)
	}
	var rep inspectReportIn
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("inspect %v: %v\n%s", args, err, out)
	}
	return &rep
}

// inspectReportIn reads back what inspect --json writes, with null as a
// nil pointer.
type inspectReportIn struct {
	Z0Ohm        float64 `json:"z0_ohm"`
	HysteresisDB float64 `json:"hysteresis_db"`
	Dips         []struct {
		FreqHz            float64  `json:"freq_hz"`
		ReturnLossDB      *float64 `json:"return_loss_db"`
		LoHz              float64  `json:"lo_hz"`
		HiHz              float64  `json:"hi_hz"`
		Merged            *bool    `json:"merged_by_hysteresis"`
		RidgeHz           *float64 `json:"ridge_hz"`
		RidgeReturnLossDB *float64 `json:"ridge_return_loss_db"`
	} `json:"dips"`
	ZeroCrossingsHz []float64 `json:"zero_crossings_hz"`
	Readouts        []struct {
		FreqHz       float64  `json:"freq_hz"`
		ROhm         *float64 `json:"r_ohm"`
		XOhm         *float64 `json:"x_ohm"`
		ReturnLossDB *float64 `json:"return_loss_db"`
		EquivKind    string   `json:"equiv_kind"`
		EquivValue   *float64 `json:"equiv_value"`
	} `json:"readouts"`
}

// TestInspectCoarseRLCEdges is the coarse series RLC (49.5 Ω, 30 nH, 1 pF
// in 50 Ω, 7 points 150 MHz apart centred on f0 = 918.88 MHz): the band at
// 10 dB runs 828.96–1020.64 MHz on the complex-linear interpolation that
// readouts use (brute force on the chords in rfmath's
// TestDipsCoarseSeriesRLC; the closed-form edges of the RLC are 835.12 and
// 1011.05 MHz), and inspect --at each edge reads 10.00 dB. Interpolating
// in dB gave 785.47–1055.96 MHz, where the readout reads 6.55 dB.
func TestInspectCoarseRLCEdges(t *testing.T) {
	t.Parallel()
	const r, l, c = 49.5, 30e-9, 1e-12
	f0 := 1 / (2 * math.Pi * math.Sqrt(l*c))
	freq := make([]float64, 7)
	g := make([]complex128, 7)
	for k := range freq {
		freq[k] = f0 + 150e6*float64(k-3)
		w := 2 * math.Pi * freq[k]
		z := complex(r, w*l-1/(w*c))
		g[k] = (z - 50) / (z + 50)
	}
	p := writeEdgeSweep(t, t.TempDir(), "rlc7.s1p", freq, g)
	rep := inspectJSON(t, p)
	if len(rep.Dips) != 1 {
		t.Fatalf("dips %+v, want one", rep.Dips)
	}
	d := rep.Dips[0]
	if math.Abs(d.LoHz-828.96e6) > 0.005e6 || math.Abs(d.HiHz-1020.64e6) > 0.005e6 {
		t.Errorf("band %v–%v Hz, want 828.96–1020.64 MHz", d.LoHz, d.HiHz)
	}
	rep = inspectJSON(t, p, "--at", formatG(d.LoHz), "--at", formatG(d.HiHz), "--at", formatG(d.FreqHz))
	for i, want := range []float64{10, 10, *d.ReturnLossDB} {
		if got := *rep.Readouts[i].ReturnLossDB; math.Abs(got-want) > 1e-9 {
			t.Errorf("readout %d at %v Hz: %v dB, want %v", i, rep.Readouts[i].FreqHz, got, want)
		}
	}
}

// TestInspectZ0Order is the order of interpolation and renormalisation:
// Z = 20 + j60 Ω at 1 GHz and 140 − j30 Ω at 1.2 GHz in a 50 Ω file, read
// at 1.07 GHz, is Z(Γ1 + 0.35·(Γ2 − Γ1)) with Γ in the file's 50 Ω,
// 52.65 + j61.80 Ω (arithmetic), whether shown in 50 or 75 Ω.
// Renormalising first gave 53.96 + j56.97 Ω in 75 Ω.
func TestInspectZ0Order(t *testing.T) {
	t.Parallel()
	g1, g2 := rfmath.GammaFromZ(20+60i, 50), rfmath.GammaFromZ(140-30i, 50)
	gi := g1 + 0.35*(g2-g1)
	want := 50 * (1 + gi) / (1 - gi)
	p := writeEdgeSweep(t, t.TempDir(), "two.s1p", []float64{1e9, 1.2e9}, []complex128{g1, g2})
	for _, z0 := range []string{"50", "75", "100"} {
		rep := inspectJSON(t, p, "--z0", z0, "--at", "1.07G")
		ro := rep.Readouts[0]
		got := complex(*ro.ROhm, *ro.XOhm)
		if cmplx.Abs(got-want) > 1e-9 || math.Abs(real(got)-52.65) > 0.005 || math.Abs(imag(got)-61.80) > 0.005 {
			t.Errorf("--z0 %s: Z = %v, want %v (52.65 + j61.80 Ω)", z0, got, want)
		}
		if zs, _ := strconv.ParseFloat(z0, 64); rep.Z0Ohm != zs {
			t.Errorf("--z0 %s: z0_ohm %v", z0, rep.Z0Ohm)
		}
	}
}

// TestInspectHysteresis checks --hysteresis and what it reports: two bands
// at or above 10 dB with one point between at 9.9 dB (real positive Γ, so
// the interpolation is linear in |Γ|) are one band with the default
// 0.25 dB, marked merged_by_hysteresis with the ridge at that point, and
// two with --hysteresis 0.
func TestInspectHysteresis(t *testing.T) {
	t.Parallel()
	freq := []float64{1e9, 1.1e9, 1.2e9, 1.3e9, 1.4e9, 1.5e9, 1.6e9}
	g := make([]complex128, len(freq))
	for k, rl := range []float64{3, 15, 20, 9.9, 18, 14, 3} {
		g[k] = complex(math.Pow(10, -rl/20), 0)
	}
	p := writeEdgeSweep(t, t.TempDir(), "ridge.s1p", freq, g)
	rep := inspectJSON(t, p)
	if rep.HysteresisDB != 0.25 || len(rep.Dips) != 1 {
		t.Fatalf("hysteresis %v, dips %+v; want 0.25 and one band", rep.HysteresisDB, rep.Dips)
	}
	d := rep.Dips[0]
	if d.Merged == nil || !*d.Merged || d.RidgeHz == nil || *d.RidgeHz != 1.3e9 || math.Abs(*d.RidgeReturnLossDB-9.9) > 1e-9 {
		t.Errorf("merged %v, ridge %v Hz at %v dB; want true, 1.3 GHz, 9.9 dB", d.Merged, d.RidgeHz, d.RidgeReturnLossDB)
	}
	rep = inspectJSON(t, p, "--hysteresis", "0")
	if len(rep.Dips) != 2 || *rep.Dips[0].Merged || *rep.Dips[1].Merged || rep.Dips[0].RidgeHz != nil {
		t.Errorf("--hysteresis 0: %+v, want two plain bands", rep.Dips)
	}
	code, out, _ := runCLI(t, "inspect", p)
	if code != exitOK || !strings.Contains(out, "one band across a ridge of 9.90 dB at 1.3 GHz, within the 0.25 dB hysteresis") {
		t.Errorf("text (exit %d):\n%s", code, out)
	}
	for _, bad := range []string{"-1", "NaN", "10", "x"} {
		if code, _, errOut := runCLI(t, "inspect", p, "--hysteresis", bad); code != exitUsage || !strings.Contains(errOut, "hysteresis") {
			t.Errorf("--hysteresis %s: exit %d, %q", bad, code, errOut)
		}
	}
}

// TestInspectEquivNone checks equiv_kind where no single L or C applies: a
// pure resistance (X = 0: "none", value 0) and an open ("none", null).
func TestInspectEquivNone(t *testing.T) {
	t.Parallel()
	p := writeEdgeSweep(t, t.TempDir(), "r.s1p", []float64{1e9, 2e9}, []complex128{0.2, 1})
	rep := inspectJSON(t, p, "--at", "1G", "--at", "2G")
	a, b := rep.Readouts[0], rep.Readouts[1]
	if a.EquivKind != "none" || a.EquivValue == nil || *a.EquivValue != 0 {
		t.Errorf("75 Ω: equiv %q %v, want none 0", a.EquivKind, a.EquivValue)
	}
	if b.EquivKind != "none" || b.EquivValue != nil {
		t.Errorf("open: equiv %q %v, want none null", b.EquivKind, b.EquivValue)
	}
}

// TestMatchLengthUnits checks that --radius takes a length as the command
// line takes frequencies (8mm, 0.8cm, 0.008) and --power a power (1W,
// 1000mW): the Chu and stress lines are the same for each spelling.
func TestMatchLengthUnits(t *testing.T) {
	t.Parallel()
	lines := func(args ...string) string {
		t.Helper()
		code, out, errOut := runCLI(t, append([]string{"match", "testdata/demo/wristtag-antenna.s1p", "--band", "2.40G:2.4835G",
			"--ideal", "--parts", "2", "--top", "1", "--builds", "0"}, args...)...)
		if code != exitOK {
			t.Fatalf("%v: exit %d: %s", args, code, errOut)
		}
		var keep []string
		for _, l := range strings.Split(out, "\n") {
			if strings.Contains(l, "sphere") || strings.Contains(l, "Part stress") || strings.Contains(l, " V ") {
				keep = append(keep, l)
			}
		}
		return strings.Join(keep, "\n")
	}
	want := lines("--radius", "0.008", "--power", "1")
	if !strings.Contains(want, "radius 8 mm") || !strings.Contains(want, "at 1 W in") {
		t.Fatalf("reference output:\n%s", want)
	}
	for _, args := range [][]string{{"--radius", "8mm", "--power", "1W"}, {"--radius", "0.8cm", "--power", "1000mW"}, {"--radius", "8 mm", "--power", "1 W"}} {
		if got := lines(args...); got != want {
			t.Errorf("%v:\n%s\nwant\n%s", args, got, want)
		}
	}
	if code, _, errOut := runCLI(t, "match", "testdata/demo/wristtag-antenna.s1p", "--band", "2.40G:2.4835G", "--radius", "8in"); code != exitUsage || !strings.Contains(errOut, `"8in"`) {
		t.Errorf("--radius 8in: exit %d, %q", code, errOut)
	}
}

// TestConvertPerPortReferences checks that a sweep whose ports' references
// differ (50 and 75 Ω) is written as Touchstone 2 under a .s2p name, since
// version 1 has one R for every port (TS-4, TS-21), and that asking for
// version 1 is refused, saying why.
func TestConvertPerPortReferences(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	in := filepath.Join(dir, "in.ts")
	text := "[Version] 2.1\n# GHz S RI R 50\n[Number of Ports] 2\n[Two-Port Data Order] 12_21\n[Number of Frequencies] 1\n[Reference] 50 75\n[Network Data]\n1 0.1 0 0.9 0 0.9 0 0.2 0\n[End]\n"
	if err := os.WriteFile(in, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(dir, "out.s2p")
	if code, _, errOut := runCLI(t, "convert", in, out); code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	f := readSweepFile(t, out)
	if f.Version != "2.1" || f.Sweep.Z0[0] != 50 || f.Sweep.Z0[1] != 75 {
		t.Errorf("version %s, references %v; want 2.1, [50 75]", f.Version, f.Sweep.Z0)
	}
	code, _, errOut := runCLI(t, "convert", in, filepath.Join(dir, "v1.s2p"), "--version", "1")
	if code != exitUsage || !strings.Contains(errOut, "one reference resistance for every port") || !strings.Contains(errOut, "50, 75 Ω") {
		t.Errorf("--version 1: exit %d, %q", code, errOut)
	}
}

// TestDeembedFitPrecision checks the fit line on an exact open: a line of
// 1 ns and 0.2 dB at 1 GHz (growing as √f) with no flat loss, 10 MHz to
// 2 GHz, Γ = 10^(−2·0.2·√(f/1 GHz)/20)·e^(−j·4π·f·1 ns) (REFERENCE-CHECKS
// §10's rule). The fit is exact, so the delay's standard error is below
// 1 fs and the flat loss is zero to the digits printed; then a fit that
// finds a negative flat loss writes it as a subtraction.
func TestDeembedFitPrecision(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	mk := func(name string, flatDB float64) string {
		freq := make([]float64, 200)
		g := make([]complex128, 200)
		for k := range freq {
			f := 10e6 * float64(k+1)
			freq[k] = f
			lossDB := 0.2*math.Sqrt(f/1e9) + flatDB
			g[k] = cmplx.Rect(math.Pow(10, -2*lossDB/20), -4*math.Pi*f*1e-9)
		}
		return writeEdgeSweep(t, dir, name, freq, g)
	}
	open := mk("open.s1p", 0)
	code, out, errOut := runCLI(t, "deembed", open, filepath.Join(dir, "a.s1p"), "--auto-open", open)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	if !strings.Contains(out, "delay 1 ns (+/- < 1 fs), loss 0.2000 dB at 1 GHz (sqrt f) + 0.0000 dB flat; residual 0.00 deg, 0.000 dB rms; offset 0.00 deg") {
		t.Errorf("fit line:\n%s", out)
	}
	gain := mk("gain.s1p", -0.01)
	_, out, _ = runCLI(t, "deembed", gain, filepath.Join(dir, "b.s1p"), "--auto-open", gain)
	if !strings.Contains(out, "(sqrt f) - 0.0100 dB flat") || regexp.MustCompile(`\+ -`).MatchString(out) {
		t.Errorf("negative flat loss:\n%s", out)
	}
}
