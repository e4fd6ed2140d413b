package cli

import (
	"math/cmplx"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"matchbench/rfmath/deembed"
	"matchbench/rfmath/touchstone"
)

func demoPath(name string) string { return filepath.Join("testdata", "demo", name) }

func readSweepFile(t *testing.T, path string) *touchstone.File {
	t.Helper()
	f, err := touchstone.ReadFile(path, touchstone.Limits{})
	if err != nil {
		t.Fatal(err)
	}
	return f
}

// TestDeembedFixture removes the demo cable from the antenna seen through
// it; the written file must hold what deembed.Remove gives (to the 12
// digits written) and say what was done in its header.
func TestDeembedFixture(t *testing.T) {
	t.Parallel()
	out := filepath.Join(t.TempDir(), "antenna.s1p")
	code, stdout, errOut := runCLI(t, "deembed", demoPath("fieldnode-via-cable.s1p"), out, "--fixture", demoPath("cable-fixture.s2p"))
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	if !strings.Contains(stdout, "removed fixture cable-fixture.s2p from port 1 (its port 1 at the analyser)") || !strings.Contains(stdout, "wrote "+out+" (500 points, 1-port)") {
		t.Errorf("stdout %q", stdout)
	}
	got := readSweepFile(t, out)
	want, err := deembed.Remove(readSweepFile(t, demoPath("fieldnode-via-cable.s1p")).Sweep,
		[]deembed.Fixture{{S: readSweepFile(t, demoPath("cable-fixture.s2p")).Sweep}})
	if err != nil {
		t.Fatal(err)
	}
	for k := range want.Data {
		if cmplx.Abs(got.Sweep.Data[k]-want.Data[k]) > 1e-11 {
			t.Fatalf("point %d: %v, want %v", k, got.Sweep.Data[k], want.Data[k])
		}
	}
	if len(got.Comments) < 2 || !strings.Contains(got.Comments[0], "de-embedded by matchbench from fieldnode-via-cable.s1p") {
		t.Errorf("comments %q", got.Comments)
	}
}

// TestDeembedAutoOpen fits the extension on the demo's open cable (the fit
// of rfmath/deembed's TestFitDemoOpen: 1.2668 ns, 0.2256 dB at 1 GHz) and
// removes it; then a given --delay and --loss of the same values give the
// same file, and --z0 75 renormalises.
func TestDeembedAutoOpen(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	a, b, c := filepath.Join(dir, "a.s1p"), filepath.Join(dir, "b.s1p"), filepath.Join(dir, "c.ts")
	code, stdout, errOut := runCLI(t, "deembed", demoPath("fieldnode-via-cable.s1p"), a, "--auto-open", demoPath("cable-open-end.s1p"))
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	if !strings.Contains(stdout, "fitted on the open end cable-open-end.s1p: delay 1.26684 ns") || !strings.Contains(stdout, "loss 0.2256 dB at 1 GHz") {
		t.Errorf("stdout %q", stdout)
	}
	fit, err := deembed.FitExtension(readSweepFile(t, demoPath("cable-open-end.s1p")).Sweep, deembed.Open, nil)
	if err != nil {
		t.Fatal(err)
	}
	e := fit.Extension
	code, _, errOut = runCLI(t, "deembed", demoPath("fieldnode-via-cable.s1p"), b,
		"--delay", formatG(e.DelayS)+"s", "--loss", formatG(e.LossDB), "--flat-loss", formatG(e.FlatLossDB), "--loss-ref", "1GHz")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	sa, sb := readSweepFile(t, a).Sweep, readSweepFile(t, b).Sweep
	for k := range sa.Data {
		if cmplx.Abs(sa.Data[k]-sb.Data[k]) > 1e-11 {
			t.Fatalf("point %d: fitted %v, given %v", k, sa.Data[k], sb.Data[k])
		}
	}
	// --z0 75 on a Touchstone 2 file: Γ' = (Γ − ρ)/(1 − ρΓ), ρ = 0.2 (§11).
	code, _, errOut = runCLI(t, "deembed", b, c, "--z0", "75")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	sc := readSweepFile(t, c).Sweep
	if sc.Z0[0] != 75 {
		t.Errorf("Z0 %v", sc.Z0)
	}
	for k := range sb.Data {
		g := sb.Data[k]
		if w := (g - 0.2) / (1 - 0.2*g); cmplx.Abs(sc.Data[k]-w) > 1e-11 {
			t.Fatalf("point %d: %v, want %v", k, sc.Data[k], w)
		}
	}
}

// formatG writes v so that strconv reads it back exactly.
func formatG(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

func TestDeembedErrors(t *testing.T) {
	t.Parallel()
	out := filepath.Join(t.TempDir(), "x.s1p")
	via, fix, open := demoPath("fieldnode-via-cable.s1p"), demoPath("cable-fixture.s2p"), demoPath("cable-open-end.s1p")
	tests := []struct {
		name string
		args []string
		code int
		says string
	}{
		{"nothing to do", []string{via, out}, exitUsage, "nothing to do"},
		{"one argument", []string{via, "--delay", "1ns"}, exitUsage, "want IN and OUT"},
		{"bad fixture port", []string{via, out, "--fixture", fix, "--fixture-port", "3"}, exitUsage, "1 or 2"},
		{"both standards", []string{via, out, "--auto-open", open, "--auto-short", open}, exitUsage, "not both"},
		{"fit and delay", []string{via, out, "--auto-open", open, "--delay", "1ns"}, exitUsage, "do not give --delay"},
		{"bad delay", []string{via, out, "--delay", "fast"}, exitUsage, "--delay"},
		{"fixture2 on a 1-port", []string{via, out, "--fixture2", fix}, exitUsage, "needs a 2-port sweep"},
		{"bad ending", []string{via, filepath.Join(t.TempDir(), "x.s2p"), "--delay", "1ns"}, exitUsage, ".s1p"},
		{"fixture too short", []string{demoPath("wristtag-antenna.s1p"), out, "--fixture", fix}, exitInput, "401 points above it (2 GHz, 2.0025 GHz"},
		{"missing fixture", []string{via, out, "--fixture", "none.s2p"}, exitInput, "none.s2p"},
		{"1-port fixture", []string{via, out, "--fixture", via}, exitInput, "has 1 ports, want 2"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			code, _, errOut := runCLI(t, append([]string{"deembed"}, tc.args...)...)
			if code != tc.code || !strings.Contains(errOut, tc.says) {
				t.Errorf("exit %d, stderr %q; want %d saying %q", code, errOut, tc.code, tc.says)
			}
		})
	}
}
