package cli

import (
	"bytes"
	"context"
	"encoding/json"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/touchstone"
)

// TestMain runs the command tests from the module's root, where a user runs
// matchbench: the tests name the shipped files as the README does
// (testdata/demo/…, README.md) and the crash tests build the binary from
// there.
func TestMain(m *testing.M) {
	if err := os.Chdir(filepath.Join("..", "..")); err != nil {
		panic(err)
	}
	os.Exit(m.Run())
}

func runCLI(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var o, e bytes.Buffer
	code = Run(context.Background(), args, &o, &e)
	return code, o.String(), e.String()
}

// writeRLC writes the series RLC of REFERENCE-CHECKS R-1 (R = 5 Ω,
// L = 100 nH, C = 10 pF) as a 1-port S file, swept 100–250 MHz.
func writeRLC(t *testing.T) string {
	t.Helper()
	// 0.5 MHz steps with f0 = 1/(2π√(LC)) = 159.1549431 MHz inserted, so
	// the readout at f0 needs no interpolation.
	const n = 302
	f0 := 1 / (2 * math.Pi * math.Sqrt(100e-9*10e-12))
	s := rfmath.NewSweep(n, 1, 50)
	for k := range n {
		f := 100e6 + 0.5e6*float64(k)
		switch {
		case k > 119:
			f = 100e6 + 0.5e6*float64(k-1)
		case k == 119:
			f = f0
		}
		w := 2 * math.Pi * f
		z := complex(5, w*100e-9-1/(w*10e-12))
		s.FreqHz[k] = f
		s.Data[k] = (z - 50) / (z + 50)
	}
	path := filepath.Join(t.TempDir(), "rlc.s1p")
	var b bytes.Buffer
	if err := touchstone.Write(&b, s, touchstone.WriteOptions{}); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(path, b.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

func TestInspectJSONSeriesRLC(t *testing.T) {
	t.Parallel()
	path := writeRLC(t)
	code, out, errOut := runCLI(t, "inspect", path, "--at", "159.1549431MHz", "--at", "100M", "--json")
	if code != exitOK {
		t.Fatalf("exit %d, stderr %s", code, errOut)
	}
	var rep map[string]any
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("output is not JSON: %v\n%s", err, out)
	}
	for _, key := range []string{"points", "fmin_hz", "fmax_hz", "z0_ohm", "readouts", "dips", "zero_crossings_hz"} {
		if _, ok := rep[key]; !ok {
			t.Errorf("JSON has no key %q", key)
		}
	}
	if rep["points"].(float64) != 302 || rep["z0_ohm"].(float64) != 50 {
		t.Errorf("points %v, z0 %v", rep["points"], rep["z0_ohm"])
	}
	// X crosses zero from − to + at f0 = 1/(2π√(LC)) = 159.155 MHz (C).
	zc := rep["zero_crossings_hz"].([]any)
	if len(zc) != 1 || math.Abs(zc[0].(float64)-159.1549e6) > 0.05e6 {
		t.Errorf("zero crossings %v, want one at 159.155 MHz", zc)
	}
	ro := rep["readouts"].([]any)
	if len(ro) != 2 {
		t.Fatalf("%d readouts, want 2", len(ro))
	}
	r0 := ro[0].(map[string]any)
	// at f0 the RLC is 5 Ω: Γ = −0.818182, VSWR 10.000, RL 1.7430 dB,
	// Q of the point 0 (X = 0); values computed (C) in REFERENCE-CHECKS.
	checks := []struct {
		key  string
		want float64
		tol  float64
	}{
		{"port", 1, 0},
		{"r_ohm", 5, 0.01},
		{"x_ohm", 0, 0.05},
		{"gamma_mag", 0.818182, 1e-4},
		{"return_loss_db", 1.7430, 1e-3},
		{"vswr", 10.000, 5e-3},
		{"mismatch_loss_db", 4.8073, 1e-3},
	}
	for _, c := range checks {
		got, ok := r0[c.key].(float64)
		if !ok || math.Abs(got-c.want) > c.tol {
			t.Errorf("readout %s = %v, want %g ± %g", c.key, r0[c.key], c.want, c.tol)
		}
	}
	// At 100 MHz: X = ωL − 1/(ωC) = 62.832 − 159.155 = −96.323 Ω, which is
	// a capacitor of 1/(ωX) = 16.523 pF (R-4's rule, C).
	r1 := ro[1].(map[string]any)
	if r1["equiv_kind"] != "C" || math.Abs(r1["equiv_value"].(float64)-16.523e-12) > 0.01e-12 {
		t.Errorf("equivalent at 100 MHz = %v %v, want C 16.523 pF", r1["equiv_kind"], r1["equiv_value"])
	}
	if math.Abs(r1["x_ohm"].(float64)+96.323) > 0.01 {
		t.Errorf("X at 100 MHz = %v, want −96.323 Ω", r1["x_ohm"])
	}
}

func TestInspectDemoTable(t *testing.T) {
	t.Parallel()
	code, out, errOut := runCLI(t, "inspect", "testdata/demo/wristtag-antenna.s1p", "--at", "2.44GHz")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	for _, want := range []string{"401 points", "deepest dip", "Reactance crosses zero", "2.44 GHz"} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
}

// Renormalising to 75 Ω: a sweep of a 75 Ω load in 50 Ω (Γ = 0.2) reads
// Γ = 0 in 75 Ω (REFERENCE-CHECKS §11, C).
func TestInspectZ0(t *testing.T) {
	t.Parallel()
	s := rfmath.NewSweep(3, 1, 50)
	copy(s.FreqHz, []float64{1e9, 2e9, 3e9})
	for k := range 3 {
		s.Data[k] = 0.2
	}
	path := filepath.Join(t.TempDir(), "r75.s1p")
	var b bytes.Buffer
	if err := touchstone.Write(&b, s, touchstone.WriteOptions{}); err != nil {
		t.Fatal(err)
	}
	os.WriteFile(path, b.Bytes(), 0o644)
	code, out, errOut := runCLI(t, "inspect", "--z0", "75", path, "--at", "2G", "--json")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var rep inspectReport
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	if rep.Z0Ohm != 75 || rep.Readouts[0].GammaMag > 1e-12 || math.Abs(float64(rep.Readouts[0].ROhm)-75) > 1e-9 {
		t.Errorf("z0 %g, |Γ| %g, R %g; want 75, 0, 75", rep.Z0Ohm, rep.Readouts[0].GammaMag, rep.Readouts[0].ROhm)
	}
}

func TestExitCodes(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	bad := filepath.Join(dir, "bad.s1p")
	os.WriteFile(bad, []byte("# GHz S RI R 50\n1 0.1\n"), 0o644)
	tests := []struct {
		name string
		args []string
		code int
		msg  string
	}{
		{"unknown command", []string{"frobnicate"}, exitUsage, "unknown command"},
		{"no file", []string{"inspect"}, exitUsage, "want one sweep file"},
		{"bad frequency", []string{"inspect", "testdata/demo/wristtag-antenna.s1p", "--at", "2.4 xHz"}, exitUsage, "2.4 xHz"},
		{"outside sweep", []string{"inspect", "testdata/demo/wristtag-antenna.s1p", "--at", "5G"}, exitUsage, "outside the sweep"},
		{"bad flag", []string{"inspect", "--nope", "x.s1p"}, exitUsage, "nope"},
		{"missing file", []string{"inspect", filepath.Join(dir, "none.s1p")}, exitInput, "none.s1p"},
		{"bad data", []string{"inspect", bad}, exitInput, "bad.s1p:2"},
		{"convert bad ending", []string{"convert", "testdata/demo/wristtag-antenna.s1p", filepath.Join(dir, "x.txt")}, exitUsage, "ending"},
		{"convert port mismatch", []string{"convert", "testdata/demo/wristtag-antenna.s1p", filepath.Join(dir, "x.s2p")}, exitUsage, "2-port"},
		{"help", []string{"help"}, exitOK, ""},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			code, out, errOut := runCLI(t, tc.args...)
			if code != tc.code {
				t.Errorf("exit %d, want %d (stderr %q)", code, tc.code, errOut)
			}
			if !strings.Contains(errOut+out, tc.msg) {
				t.Errorf("output %q lacks %q", errOut+out, tc.msg)
			}
		})
	}
}

// convert: Touchstone 1 → 2 → CSV → Touchstone 1 keeps the numbers to the
// written precision (12 significant digits by default).
func TestConvertRoundTrip(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	src := "testdata/demo/fieldnode-antenna.s1p"
	steps := []string{filepath.Join(dir, "a.ts"), filepath.Join(dir, "b.csv"), filepath.Join(dir, "c.s1p")}
	prev := src
	for _, next := range steps {
		if code, _, errOut := runCLI(t, "convert", prev, next); code != exitOK {
			t.Fatalf("convert %s %s: exit %d: %s", prev, next, code, errOut)
		}
		prev = next
	}
	a, err := loadSweep(src)
	if err != nil {
		t.Fatal(err)
	}
	c, err := loadSweep(prev)
	if err != nil {
		t.Fatal(err)
	}
	if a.Sweep.Len() != c.Sweep.Len() {
		t.Fatalf("%d points became %d", a.Sweep.Len(), c.Sweep.Len())
	}
	for k := range a.Sweep.Data {
		if cmplx.Abs(a.Sweep.Data[k]-c.Sweep.Data[k]) > 1e-9 || math.Abs(a.Sweep.FreqHz[k]-c.Sweep.FreqHz[k]) > 1e-3 {
			t.Fatalf("point %d changed: %v at %g → %v at %g", k, a.Sweep.Data[k], a.Sweep.FreqHz[k], c.Sweep.Data[k], c.Sweep.FreqHz[k])
		}
	}
	b, _ := os.ReadFile(steps[0])
	if !strings.Contains(string(b), "[Version] 2.1") {
		t.Errorf(".ts output is not version 2.1:\n%.200s", b)
	}
}

// chart writes the demo sweeps' chart and plots as SVG documents.
func TestChartCommand(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	code, out, errOut := runCLI(t, "chart", "testdata/demo/fieldnode-antenna.s1p", "testdata/demo/wristtag-antenna.s1p", "--out", dir, "--band", "863M:870M:10")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	for _, f := range []string{"chart.svg", "reflection.svg", "impedance.svg", "vswr.svg"} {
		b, err := os.ReadFile(filepath.Join(dir, f))
		if err != nil || !strings.HasPrefix(string(b), "<svg") || !strings.Contains(out, f) {
			t.Errorf("%s: %v, %.40q", f, err, b)
		}
	}
	if code, _, _ := runCLI(t, "chart", "testdata/demo/fieldnode-antenna.s1p"); code != exitUsage {
		t.Errorf("chart without --out: exit %d", code)
	}
}
