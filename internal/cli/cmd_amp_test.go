package cli

import (
	"bytes"
	"encoding/json"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/amp"
	"matchbench/rfmath/touchstone"
)

// ampJSON is the part of `amp --json` the tests read.
type ampJSON struct {
	K             *float64    `json:"k"`
	DeltaMag      float64     `json:"delta_mag"`
	Mu            float64     `json:"mu"`
	MuPrime       float64     `json:"mu_prime"`
	Unconditional bool        `json:"unconditionally_stable"`
	Ranges        [][]float64 `json:"unconditionally_stable_hz"`
	MagDB         *float64    `json:"mag_db"`
	MsgDB         *float64    `json:"msg_db"`
	GammaS        *[2]float64 `json:"gamma_s"`
	GammaL        *[2]float64 `json:"gamma_l"`
	NoMatch       string      `json:"no_conjugate_match"`
	In            stabCircle  `json:"input_stability_circle"`
	Out           stabCircle  `json:"output_stability_circle"`
	Avail         []gainCirc  `json:"available_gain_circles"`
	Oper          []gainCirc  `json:"operating_gain_circles"`
	NFminDB       *float64    `json:"nf_min_db"`
	GammaOpt      *[2]float64 `json:"gamma_opt"`
	RnOhm         *float64    `json:"rn_ohm"`
	NFCircles     []nfCirc    `json:"nf_circles"`
	NoiseNote     string      `json:"noise_note"`
}

type stabCircle struct {
	Center     [2]float64 `json:"center"`
	Radius     *float64   `json:"radius"`
	StableSide string     `json:"stable_side"`
	AllStable  bool       `json:"all_passive_stable"`
}

type gainCirc struct {
	GainDB     float64     `json:"gain_db"`
	BelowMaxDB float64     `json:"below_max_db"`
	Center     *[2]float64 `json:"center"`
	Radius     *float64    `json:"radius"`
	Note       string      `json:"note"`
}

type nfCirc struct {
	NFdB   float64     `json:"nf_db"`
	Center *[2]float64 `json:"center"`
	Radius *float64    `json:"radius"`
	Note   string      `json:"note"`
}

func cx(v [2]float64) complex128 { return complex(v[0], v[1]) }

// runAmpJSON runs `amp ... --json`, checks that it succeeded and that the
// output is one JSON object with the keys the README promises and no
// infinities or NaN, and decodes it.
func runAmpJSON(t *testing.T, args ...string) (ampJSON, map[string]any) {
	t.Helper()
	code, out, errOut := runCLI(t, append(append([]string{"amp"}, args...), "--json")...)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	for _, bad := range []string{"NaN", "Inf"} {
		if strings.Contains(out, bad) {
			t.Fatalf("output holds %s:\n%s", bad, out)
		}
	}
	var raw map[string]any
	if err := json.Unmarshal([]byte(out), &raw); err != nil {
		t.Fatalf("not JSON: %v\n%s", err, out)
	}
	for _, k := range []string{"k", "delta_mag", "mu", "mu_prime", "unconditionally_stable", "mag_db", "msg_db", "gamma_s", "gamma_l",
		"input_stability_circle", "output_stability_circle", "available_gain_circles", "operating_gain_circles", "nf_circles"} {
		if _, ok := raw[k]; !ok {
			t.Errorf("JSON has no key %q", k)
		}
	}
	var r ampJSON
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	return r, raw
}

// writeTwoPort writes a 2-port Touchstone file holding s at 3.9 and
// 4.1 GHz, so that at 4 GHz the interpolated value is s itself, with
// optional noise points.
func writeTwoPort(t *testing.T, s [4]complex128, noise []touchstone.NoisePoint) string {
	t.Helper()
	sw := rfmath.NewSweep(2, 2, 50)
	sw.FreqHz[0], sw.FreqHz[1] = 3.9e9, 4.1e9
	copy(sw.Matrix(0), s[:])
	copy(sw.Matrix(1), s[:])
	var b bytes.Buffer
	if err := touchstone.Write(&b, sw, touchstone.WriteOptions{Digits: 15, Noise: noise}); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "device.s2p")
	if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

func polarDeg(m, deg float64) complex128 { return cmplx.Rect(m, deg*math.Pi/180) }

// The demo transistor at 2.44 GHz: every figure in the JSON is the one
// rfmath/amp gives for the file's S-parameters interpolated there, the
// conjugate match satisfies its defining closed forms (Γin(ΓL) = Γs*,
// Γout(Γs) = ΓL*, G_T = MAG), points on each gain circle have its gain
// and points on each noise circle its noise figure, and the noise
// parameters are the linear interpolation between the file's 2 and 2.5 GHz
// noise points (t = 0.88).
func TestAmpDemoTransistor(t *testing.T) {
	t.Parallel()
	path := filepath.Join("testdata", "demo", "wristtag-lna-transistor.s2p")
	r, _ := runAmpJSON(t, path, "--f", "2.44G", "--gain-circles", "1,2", "--gain-circles", "3", "--nf-circles", "0.5,1", "--nf-db", "0.2")
	tf, err := touchstone.ReadFile(path, touchstone.DefaultLimits)
	if err != nil {
		t.Fatal(err)
	}
	s, err := amp.SAt(tf.Sweep, 2.44e9)
	if err != nil {
		t.Fatal(err)
	}
	st := amp.StabilityOf(s)
	if r.K == nil || !closeF(*r.K, st.K, 1e-12) || !closeF(r.DeltaMag, st.DeltaMag, 1e-12) || !closeF(r.Mu, st.Mu, 1e-12) || !closeF(r.MuPrime, st.MuPrime, 1e-12) || !r.Unconditional {
		t.Fatalf("stability %+v, want %+v", r, st)
	}
	if len(r.Ranges) != 1 || r.Ranges[0][1] != 6e9 || r.Ranges[0][0] > 2.4e9 {
		t.Errorf("stable ranges %v", r.Ranges)
	}
	if r.In.StableSide != "outside" || !r.In.AllStable || r.Out.StableSide != "outside" || !r.Out.AllStable {
		t.Errorf("stability circles %+v, %+v", r.In, r.Out)
	}
	if c := amp.InputStabilityCircle(s); cmplx.Abs(cx(r.In.Center)-c.Center) > 1e-12 || !closeF(*r.In.Radius, c.Radius, 1e-12) {
		t.Errorf("input circle %+v, want %+v", r.In, c)
	}
	if r.MagDB == nil || r.GammaS == nil || r.GammaL == nil {
		t.Fatalf("mag %v, Γs %v, ΓL %v: want all three", r.MagDB, r.GammaS, r.GammaL)
	}
	gs, gl := cx(*r.GammaS), cx(*r.GammaL)
	if cmplx.Abs(amp.GammaIn(s, gl)-cmplx.Conj(gs)) > 1e-9 || cmplx.Abs(amp.GammaOut(s, gs)-cmplx.Conj(gl)) > 1e-9 {
		t.Errorf("Γs %v, ΓL %v are not a simultaneous conjugate match", gs, gl)
	}
	if gt := amp.DB(amp.TransducerGain(s, gs, gl)); math.Abs(gt-*r.MagDB) > 1e-9 {
		t.Errorf("G_T at the match %g dB, mag_db %g", gt, *r.MagDB)
	}
	if len(r.Avail) != 3 || len(r.Oper) != 3 {
		t.Fatalf("%d available and %d operating circles, want 3 each", len(r.Avail), len(r.Oper))
	}
	for i, c := range r.Avail {
		if !closeF(c.GainDB, *r.MagDB-float64(i+1), 1e-12) || c.Center == nil {
			t.Fatalf("available circle %d: %+v", i, c)
		}
		for k := range 8 {
			g := cx(*c.Center) + cmplx.Rect(*c.Radius, float64(k))
			if got := amp.DB(amp.AvailableGain(s, g)); math.Abs(got-c.GainDB) > 1e-9 {
				t.Errorf("G_A on the %g dB circle: %g dB", c.GainDB, got)
			}
		}
		o := r.Oper[i]
		for k := range 8 {
			g := cx(*o.Center) + cmplx.Rect(*o.Radius, float64(k))
			if got := amp.DB(amp.OperatingGain(s, g)); math.Abs(got-o.GainDB) > 1e-9 {
				t.Errorf("G_P on the %g dB circle: %g dB", o.GainDB, got)
			}
		}
	}

	// Noise: linear interpolation between the points at 2 and 2.5 GHz.
	var a, b touchstone.NoisePoint
	for _, p := range tf.Noise {
		switch p.FreqHz {
		case 2e9:
			a = p
		case 2.5e9:
			b = p
		}
	}
	const w = 0.88
	if r.NFminDB == nil || r.RnOhm == nil || r.GammaOpt == nil {
		t.Fatalf("no noise figures: %q", r.NoiseNote)
	}
	wantOpt := (1-w)*amp.GammaOpt(a) + w*amp.GammaOpt(b)
	if !closeF(*r.NFminDB, (1-w)*a.NFminDB+w*b.NFminDB, 1e-12) || !closeF(*r.RnOhm, (1-w)*a.RnOhm+w*b.RnOhm, 1e-12) || cmplx.Abs(cx(*r.GammaOpt)-wantOpt) > 1e-12 {
		t.Errorf("noise at 2.44 GHz: NFmin %g, Rn %g, Γopt %v", *r.NFminDB, *r.RnOhm, *r.GammaOpt)
	}
	np := touchstone.NoisePoint{NFminDB: *r.NFminDB, GammaOptMag: cmplx.Abs(wantOpt), GammaOptDeg: rfmath.AngleDeg(wantOpt), RnOhm: *r.RnOhm}
	if len(r.NFCircles) != 3 {
		t.Fatalf("nf circles %+v", r.NFCircles)
	}
	for i, c := range r.NFCircles[:2] {
		if !closeF(c.NFdB, *r.NFminDB+[]float64{0.5, 1}[i], 1e-12) || c.Center == nil {
			t.Fatalf("nf circle %d: %+v", i, c)
		}
		for k := range 8 {
			g := cx(*c.Center) + cmplx.Rect(*c.Radius, float64(k))
			if got := amp.NoiseFigureDB(np, 50, g); math.Abs(got-c.NFdB) > 1e-9 {
				t.Errorf("NF on the %g dB circle: %g dB", c.NFdB, got)
			}
		}
	}
	if c := r.NFCircles[2]; c.Center != nil || !strings.Contains(c.Note, "below NFmin") {
		t.Errorf("0.2 dB circle: %+v, want none, below NFmin", c)
	}
}

// Pozar's conjugate-matched design example (REFERENCE values in
// rfmath/amp's tests, inputs from memory; C values from the closed forms
// and testdata/pozar_check.py): through the file and the command, the same
// Γs = −0.479978 + j0.727726, ΓL = 0.424484 + j0.766615 and MAG
// 16.710196 dB; the text output prints them too.
func TestAmpPozarConjugate(t *testing.T) {
	t.Parallel()
	s := [4]complex128{polarDeg(0.72, -116), polarDeg(0.03, 57), polarDeg(2.60, 76), polarDeg(0.73, -54)}
	path := writeTwoPort(t, s, nil)
	r, raw := runAmpJSON(t, path, "--f", "4G")
	if r.GammaS == nil || cmplx.Abs(cx(*r.GammaS)-complex(-0.479978126, 0.727726293)) > 1e-8 ||
		cmplx.Abs(cx(*r.GammaL)-complex(0.424484442, 0.766614955)) > 1e-8 || math.Abs(*r.MagDB-16.710196) > 1e-6 {
		t.Errorf("Γs %v, ΓL %v, MAG %v", r.GammaS, r.GammaL, r.MagDB)
	}
	if _, ok := raw["nf_min_db"]; ok || r.NoiseNote != "the file has no noise parameters" {
		t.Errorf("a file without noise: nf_min_db present %v, note %q", ok, r.NoiseNote)
	}
	code, out, errOut := runCLI(t, "amp", path, "--f", "4G")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	for _, want := range []string{"K = 1.1948, |Δ| = 0.4875", "unconditionally stable", "MAG 16.71 dB", "Γs = 0.8718∠123.4°", "ΓL = 0.8763∠61.0°", "no noise figures: the file has no noise parameters"} {
		if !strings.Contains(out, want) {
			t.Errorf("text output lacks %q:\n%s", want, out)
		}
	}
}

// Pozar's stability example (inputs from memory; C values in rfmath/amp's
// tests): potentially unstable, so mag_db and the conjugate match are null
// with the reason, the circles are those of the closed forms, and the text
// output carries the caution.
func TestAmpPotentiallyUnstable(t *testing.T) {
	t.Parallel()
	s := [4]complex128{polarDeg(0.894, -60.6), polarDeg(0.020, 62.4), polarDeg(3.122, 123.6), polarDeg(0.781, -27.6)}
	noise := []touchstone.NoisePoint{{FreqHz: 3e9, NFminDB: 1, GammaOptMag: 0.5, GammaOptDeg: 60, RnOhm: 10}, {FreqHz: 5e9, NFminDB: 2, GammaOptMag: 0.5, GammaOptDeg: 90, RnOhm: 20}}
	path := writeTwoPort(t, s, noise)
	r, raw := runAmpJSON(t, path, "--f", "4G", "--gain-circles", "3")
	if r.Unconditional || r.MagDB != nil || r.GammaS != nil || r.GammaL != nil || r.NoMatch != "K = 0.6071 ≤ 1: the device is only conditionally stable" {
		t.Errorf("unconditional %v, mag %v, Γs %v, ΓL %v, reason %q", r.Unconditional, r.MagDB, r.GammaS, r.GammaL, r.NoMatch)
	}
	if raw["mag_db"] != nil || raw["gamma_s"] != nil {
		t.Errorf("mag_db %v, gamma_s %v: want null", raw["mag_db"], raw["gamma_s"])
	}
	if cmplx.Abs(cx(r.Out.Center)-complex(0.934684505, 0.991422497)) > 1e-6 || math.Abs(*r.Out.Radius-0.499738637) > 1e-6 || r.Out.AllStable {
		t.Errorf("output circle %+v", r.Out)
	}
	if r.MsgDB == nil || math.Abs(*r.MsgDB-10*math.Log10(3.122/0.020)) > 1e-9 || math.Abs(r.Avail[0].GainDB-(*r.MsgDB-3)) > 1e-12 {
		t.Errorf("MSG %v, circle at %v", r.MsgDB, r.Avail[0].GainDB)
	}
	// 4 GHz is halfway between the noise points.
	if r.NFminDB == nil || math.Abs(*r.NFminDB-1.5) > 1e-12 || math.Abs(*r.RnOhm-15) > 1e-12 {
		t.Errorf("noise at 4 GHz: %v, %v", r.NFminDB, r.RnOhm)
	}
	_, out, _ := runCLI(t, "amp", path, "--f", "4G")
	for _, want := range []string{"potentially unstable", "Caution:", "no simultaneous conjugate match: K = 0.6071 ≤ 1", "MSG 21.93 dB"} {
		if !strings.Contains(out, want) {
			t.Errorf("text output lacks %q:\n%s", want, out)
		}
	}
}

// A unilateral device (S12 = 0) has K = +∞ and MSG = +∞, which JSON
// writes as null; MAG is the unilateral maximum (Pozar's unilateral
// example, 13.4872 dB, C).
func TestAmpUnilateral(t *testing.T) {
	t.Parallel()
	s := [4]complex128{polarDeg(0.75, -120), 0, polarDeg(2.5, 80), polarDeg(0.6, -70)}
	r, raw := runAmpJSON(t, writeTwoPort(t, s, nil), "--f", "4G", "--gain-db", "13")
	if raw["k"] != nil || raw["msg_db"] != nil || r.MagDB == nil || math.Abs(*r.MagDB-13.487219) > 1e-5 {
		t.Errorf("k %v, msg_db %v, mag_db %v", raw["k"], raw["msg_db"], r.MagDB)
	}
	if len(r.Avail) != 1 || r.Avail[0].Center == nil {
		t.Errorf("13 dB circle %+v", r.Avail)
	}
}

func TestAmpErrors(t *testing.T) {
	t.Parallel()
	demo := filepath.Join("testdata", "demo", "wristtag-lna-transistor.s2p")
	noNoise := writeTwoPort(t, [4]complex128{0.5, 0.05, 2, 0.5}, nil)
	csv := filepath.Join(t.TempDir(), "a.csv")
	if err := os.WriteFile(csv, []byte("f,re,im\n1e9,0,0\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	for _, tc := range []struct {
		name string
		args []string
		code int
		msg  string
	}{
		{"no frequency", []string{demo}, exitUsage, "--f is required"},
		{"no file", []string{"--f", "2G"}, exitUsage, "want one 2-port file"},
		{"outside the sweep", []string{demo, "--f", "7G"}, exitUsage, "--f 7 GHz is outside the sweep (500 MHz to 6 GHz)"},
		{"bad list", []string{demo, "--f", "2G", "--gain-circles", "1,x"}, exitUsage, `--gain-circles: "x" is not a number of dB`},
		{"negative step", []string{demo, "--f", "2G", "--nf-circles", "-1"}, exitUsage, "must not be negative"},
		{"1-port", []string{filepath.Join("testdata", "demo", "wristtag-antenna.s1p"), "--f", "2.4G"}, exitInput, "not a 2-port: it is a 1-port"},
		{"csv", []string{csv, "--f", "1G"}, exitInput, "needs a 2-port Touchstone file"},
		{"missing file", []string{filepath.Join(t.TempDir(), "none.s2p"), "--f", "1G"}, exitInput, "none.s2p"},
		{"no noise data", []string{noNoise, "--f", "4G", "--nf-circles", "1"}, exitInput, "no noise-figure circles at 4 GHz: the file has no noise parameters"},
		{"noise not extrapolated", []string{demo, "--f", "750M", "--nf-db", "1"}, exitInput, "750 MHz is outside the noise data (1 GHz to 6 GHz)"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			code, _, errOut := runCLI(t, append([]string{"amp"}, tc.args...)...)
			if code != tc.code || !strings.Contains(errOut, tc.msg) {
				t.Errorf("exit %d, stderr %q; want %d and %q", code, errOut, tc.code, tc.msg)
			}
		})
	}
	// Without noise circles asked for, a frequency outside the noise data
	// is a note, not a failure.
	r, _ := runAmpJSON(t, demo, "--f", "750M")
	if r.NFminDB != nil || !strings.Contains(r.NoiseNote, "not extrapolated") {
		t.Errorf("noise at 750 MHz: %v, %q", r.NFminDB, r.NoiseNote)
	}
}

// closeF reports whether a and b agree to tol, absolutely for |b| ≤ 1 and
// relatively above.
func closeF(a, b, tol float64) bool { return math.Abs(a-b) <= tol*math.Max(1, math.Abs(b)) }
