package cli

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/touchstone"
)

// The values at the edges of the reflection chart: an open (Γ = +1), a
// short (−1), a perfect match (0), pure reactances (±j), and points a
// hair inside and outside the unit circle (a near-lossless load, and a
// noisy total reflection that reads |Γ| > 1).
var edgeGammas = []complex128{
	1, -1, 0, 1i, -1i,
	cmplx.Rect(1-1e-9, math.Pi/4),
	cmplx.Rect(1+1e-9, -3*math.Pi/4),
	cmplx.Rect(1e-12, 1),
	0.3 - 0.4i, // an ordinary point
}

// badText finds what an engineer would not write: Go's spellings of
// infinity and not-a-number, a zero that formatting left with a minus sign
// ("-0.00", "-0 Ω") and a sum with a negative term ("+ -0.0000"). A
// margin written "−0.00" (U+2212, a failing margin that rounds to zero) is
// deliberate and allowed.
var badText = regexp.MustCompile(`NaN|[Ii]nf\b|(^|[^0-9.eE])-0(\.0*)?([^0-9.eE]|$)|\+ -`)

// checkText fails t if s holds bad text.
func checkText(t *testing.T, what, s string) {
	t.Helper()
	if loc := badText.FindStringIndex(s); loc != nil {
		a, b := max(loc[0]-60, 0), min(loc[1]+60, len(s))
		t.Errorf("%s: %q in …%s…", what, s[loc[0]:loc[1]], s[a:b])
	}
}

// checkJSON fails t unless s is one JSON value.
func checkJSON(t *testing.T, what, s string) {
	t.Helper()
	if !json.Valid([]byte(s)) {
		t.Errorf("%s: not valid JSON:\n%.400s", what, s)
	}
}

// writeEdgeSweep writes a 1-port sweep of gamma at freq (Hz) as a
// Touchstone file with every digit, and returns its path.
func writeEdgeSweep(t *testing.T, dir, name string, freq []float64, gamma []complex128) string {
	t.Helper()
	var b strings.Builder
	b.WriteString("# Hz S RI R 50\n")
	for k, f := range freq {
		fmt.Fprintf(&b, "%s %s %s\n", strconv.FormatFloat(f, 'f', -1, 64),
			strconv.FormatFloat(real(gamma[k]), 'g', -1, 64), strconv.FormatFloat(imag(gamma[k]), 'g', -1, 64))
	}
	path := filepath.Join(dir, name)
	if err := os.WriteFile(path, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	return path
}

// edgeSweeps returns the sweeps every command is fed: each edge value over
// a whole sweep, every edge value in turn, and seeded random mixtures of
// them, on a grid from 900 MHz up (for the reflection commands) or on a
// harmonic grid from DC (for tdr).
func edgeSweeps(t *testing.T, dir string, harmonic bool) []string {
	t.Helper()
	grid := func(n int) []float64 {
		f := make([]float64, n)
		for k := range f {
			if harmonic {
				f[k] = 10e6 * float64(k)
			} else {
				f[k] = 900e6 + 50e6*float64(k)
			}
		}
		return f
	}
	var paths []string
	for i, g := range edgeGammas[:5] {
		n := 9
		gs := make([]complex128, n)
		for k := range gs {
			gs[k] = g
		}
		paths = append(paths, writeEdgeSweep(t, dir, fmt.Sprintf("const%d.s1p", i), grid(n), gs))
	}
	paths = append(paths, writeEdgeSweep(t, dir, "each.s1p", grid(len(edgeGammas)), edgeGammas))
	// A lossless trace round the edge of the chart.
	lossless := make([]complex128, 33)
	for k := range lossless {
		lossless[k] = cmplx.Rect(1, -0.4*float64(k))
	}
	paths = append(paths, writeEdgeSweep(t, dir, "lossless.s1p", grid(len(lossless)), lossless))
	rng := rand.New(rand.NewPCG(19, 19))
	for i := range 3 {
		n := 17
		gs := make([]complex128, n)
		for k := range gs {
			gs[k] = edgeGammas[rng.IntN(len(edgeGammas))]
		}
		paths = append(paths, writeEdgeSweep(t, dir, fmt.Sprintf("mix%d.s1p", i), grid(n), gs))
	}
	return paths
}

// runEdge runs a command and checks its text, its JSON (if json), its exit
// code (one of codes) and returns the exit code.
func runEdge(t *testing.T, asJSON bool, codes []int, args ...string) int {
	t.Helper()
	var o, e bytes.Buffer
	code := Run(t.Context(), args, &o, &e)
	what := strings.Join(args, " ")
	okCode := false
	for _, c := range codes {
		okCode = okCode || c == code
	}
	if !okCode {
		t.Errorf("%s: exit %d, want one of %v; stderr %q", what, code, codes, e.String())
	}
	if code == exitInput && e.Len() == 0 && !strings.Contains(o.String(), "FAIL") && !strings.Contains(o.String(), `"pass": false`) {
		t.Errorf("%s: exit %d says nothing", what, code)
	}
	checkText(t, what+" (stdout)", o.String())
	checkText(t, what+" (stderr)", e.String())
	if asJSON && code != exitUsage && o.Len() > 0 {
		checkJSON(t, what, o.String())
	}
	return code
}

// checkOutFile fails t if the file holds NaN or an infinity.
func checkOutFile(t *testing.T, path string) {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Errorf("%s: %v", path, err)
		return
	}
	if m := regexp.MustCompile(`(?i)nan|inf`).Find(b); m != nil {
		t.Errorf("%s holds %q", path, m)
	}
}

// TestCommandsAtChartEdges feeds an open, a short, a perfect match, pure
// reactances and points at |Γ| ≈ 1 to every command, in text and JSON: no
// output may hold NaN, Inf or a minus zero, every JSON output must parse
// (with null for the infinities, as the README says), and the exit codes
// must be those the README gives (0, or 1 for a failed check).
func TestCommandsAtChartEdges(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	sweeps := edgeSweeps(t, dir, false)
	ok := []int{exitOK}
	for _, p := range sweeps {
		t.Run(filepath.Base(p), func(t *testing.T) {
			t.Parallel()
			s, err := loadSweep(p)
			if err != nil {
				t.Fatal(err)
			}
			var at []string
			for k, f := range s.Sweep.FreqHz {
				at = append(at, "--at", strconv.FormatFloat(f, 'g', -1, 64))
				if k > 0 {
					at = append(at, "--at", strconv.FormatFloat((f+s.Sweep.FreqHz[k-1])/2, 'g', -1, 64))
				}
			}
			lo, hi := s.Sweep.FreqHz[0], s.Sweep.FreqHz[s.Sweep.Len()-1]
			band := fmt.Sprintf("%g:%g", lo+0.1*(hi-lo), lo+0.6*(hi-lo))
			band2 := fmt.Sprintf("%g:%g", lo+0.7*(hi-lo), hi)
			for _, extra := range [][]string{nil, {"--z0", "75"}, {"--rl", "3", "--hysteresis", "0"}} {
				args := append(append([]string{"inspect", p}, at...), extra...)
				runEdge(t, false, ok, args...)
				runEdge(t, true, ok, append(args, "--json")...)
			}
			for _, extra := range [][]string{nil, {"--json"}} {
				code := runEdge(t, len(extra) > 0, []int{exitOK, exitInput}, append([]string{"check", p, p, "--band", band, "--rl", "10", "--band", band2, "--vswr", "2"}, extra...)...)
				_ = code
				runEdge(t, len(extra) > 0, []int{exitOK, exitInput}, append([]string{"match", p, "--band", band + ":6", "--band", band2, "--parts", "2", "--builds", "20", "--power", "1", "--radius", "8mm"}, extra...)...)
				runEdge(t, len(extra) > 0, []int{exitOK, exitInput}, append([]string{"match", p, "--band", band, "--parts", "2", "--builds", "0", "--ideal"}, extra...)...)
			}
			out := filepath.Join(t.TempDir(), "charts")
			runEdge(t, false, ok, "chart", p, "--out", out, "--band", band+":10")
			for _, f := range []string{"chart.svg", "reflection.svg", "impedance.svg", "vswr.svg"} {
				checkOutFile(t, filepath.Join(out, f))
			}
			for i, o := range []string{"a.s1p", "b.ts", "c.csv"} {
				dst := filepath.Join(t.TempDir(), o)
				runEdge(t, false, ok, "deembed", p, dst, "--delay", "1ns", "--loss", "0.5", "--z0", "75")
				checkOutFile(t, dst)
				dst = filepath.Join(t.TempDir(), o)
				runEdge(t, false, ok, "convert", p, dst, "--format", []string{"RI", "MA", "DB"}[i])
				checkOutFile(t, dst)
			}
			for _, std := range []string{"--auto-open", "--auto-short"} {
				dst := filepath.Join(t.TempDir(), "fit.s1p")
				if runEdge(t, false, []int{exitOK, exitInput}, "deembed", sweeps[len(sweeps)-4], dst, std, p) == exitOK {
					checkOutFile(t, dst)
				}
			}
			// synth takes the impedance of each point (an open has none
			// that can be typed).
			for _, g := range s.Sweep.Data {
				z := rfmath.ZFromGamma(g, 50)
				if cmplx.IsInf(z) {
					continue
				}
				zs := strconv.FormatFloat(real(z), 'g', -1, 64) + "+" + strconv.FormatFloat(imag(z), 'g', -1, 64) + "j"
				zs = strings.ReplaceAll(zs, "+-", "-")
				runEdge(t, false, ok, "synth", "--z", zs, "--f", "1G")
				runEdge(t, true, ok, "synth", "--z", zs, "--f", "1G", "--json")
			}
		})
	}
	for _, p := range edgeSweeps(t, t.TempDir(), true) {
		t.Run("tdr/"+filepath.Base(p), func(t *testing.T) {
			t.Parallel()
			runEdge(t, false, ok, "tdr", p, "--vf", "0.66")
			runEdge(t, true, ok, "tdr", p, "--json")
			runEdge(t, true, ok, "tdr", p, "--json", "--mode", "bandpass", "--window", "rect")
			dst := filepath.Join(t.TempDir(), "gated.s1p")
			runEdge(t, false, ok, "tdr", p, "--gate", "0:2ns", "--out", dst)
			checkOutFile(t, dst)
		})
	}
}

// TestInspectOpenJSON is the open of the report: a point at Γ = 1 read with
// --at. The command exits 0, R and X are null in JSON (the README's rule for
// infinite values) and ∞ in text, and the return loss is 0 dB, written
// 0.00 (−20·log10 1 = 0; REFERENCE-CHECKS §3, Γ(∞) = +1).
func TestInspectOpenJSON(t *testing.T) {
	t.Parallel()
	p := writeEdgeSweep(t, t.TempDir(), "open.s1p", []float64{1e9, 1.1e9, 1.2e9}, []complex128{1, 0.5, 0.2i})
	code, out, errOut := runCLI(t, "inspect", p, "--at", "1G", "--json")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var rep struct {
		Readouts []map[string]any `json:"readouts"`
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil || len(rep.Readouts) != 1 {
		t.Fatalf("JSON %v:\n%s", err, out)
	}
	r := rep.Readouts[0]
	for _, k := range []string{"r_ohm", "x_ohm", "vswr", "mismatch_loss_db", "q", "equiv_value"} {
		if v, ok := r[k]; !ok || v != nil {
			t.Errorf("%s = %v (present %v), want null", k, v, ok)
		}
	}
	if r["return_loss_db"] != 0.0 || r["gamma_mag"] != 1.0 || r["equiv_kind"] != "none" {
		t.Errorf("return loss %v, |Γ| %v, equivalent %v; want 0, 1, none", r["return_loss_db"], r["gamma_mag"], r["equiv_kind"])
	}
	code, out, _ = runCLI(t, "inspect", p, "--at", "1G")
	if code != exitOK || !strings.Contains(out, "∞ (open)") || !regexp.MustCompile(`1\.0000 ∠ 0\.0\s+0\.00\s+∞\s+∞\s+∞`).MatchString(out) {
		t.Errorf("exit %d, text:\n%s", code, out)
	}
}

// Touchstone round trip of the edge values: writing and reading keeps them
// (a guard for the sweeps the property test writes).
func TestEdgeSweepRoundTrip(t *testing.T) {
	t.Parallel()
	freq := make([]float64, len(edgeGammas))
	for k := range freq {
		freq[k] = 1e9 + 1e6*float64(k)
	}
	p := writeEdgeSweep(t, t.TempDir(), "x.s1p", freq, edgeGammas)
	f, err := touchstone.ReadFile(p, touchstone.Limits{})
	if err != nil {
		t.Fatal(err)
	}
	for k, g := range edgeGammas {
		if f.Sweep.Data[k] != g {
			t.Errorf("point %d: %v, want %v", k, f.Sweep.Data[k], g)
		}
	}
}
