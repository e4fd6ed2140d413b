package cli

import (
	"encoding/json"
	"math"
	"math/cmplx"
	"path/filepath"
	"strings"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/tdr"
)

// TestTDROpenCable transforms the demo's open-ended cable: 250 mm of VF 0.66
// coax, 1.2635 ns one way (internal/demo), so one reflection at a round
// trip of 2.527 ns, an open beyond it. With Δf = 3 MHz to 1.5 GHz the
// resolution is 1/1.5 GHz = 667 ps round trip, 66 mm one way (common
// practice), and the range 1/Δf = 333 ns.
func TestTDROpenCable(t *testing.T) {
	t.Parallel()
	code, out, errOut := runCLI(t, "tdr", demoPath("cable-open-end.s1p"), "--vf", "0.66", "--json")
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var rep tdrReport
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	if rep.Mode != "low-pass" || rep.Window != "kaiser:6" || rep.DeltaFHz != 3e6 || !rep.DCExtrapolated || rep.Resampled {
		t.Errorf("header %+v", rep)
	}
	if math.Abs(rep.RangeS-333.333e-9) > 0.001e-9 || math.Abs(rep.ResolutionM-0.066) > 0.0005 {
		t.Errorf("range %v s, resolution %v m", rep.RangeS, rep.ResolutionM)
	}
	if len(rep.Peaks) != 1 {
		t.Fatalf("peaks %+v, want one", rep.Peaks)
	}
	p := rep.Peaks[0]
	if math.Abs(p.TimeS-2*1.2635e-9) > 1/1.5e9 || math.Abs(p.DistanceM-0.25) > rep.ResolutionM {
		t.Errorf("peak at %v s, %v m; want 2.527 ns, 0.25 m within one cell", p.TimeS, p.DistanceM)
	}
	// An open: Z beyond it is very large, infinite (JSON null) or, where
	// the step overshoots 1 by noise, negative.
	if z := p.ZAfterOhm; z != nil && float64(*z) < 1000 && float64(*z) > 0 {
		t.Errorf("impedance after the open: %v", p.ZAfterOhm)
	}
	n := len(rep.TimeS)
	if len(rep.DistanceM) != n || len(rep.Impulse) != n || len(rep.Step) != n || len(rep.ImpedanceOhm) != n {
		t.Errorf("array lengths %d %d %d %d %d", n, len(rep.DistanceM), len(rep.Impulse), len(rep.Step), len(rep.ImpedanceOhm))
	}

	// The text form lists the same reflection.
	code, out, _ = runCLI(t, "tdr", demoPath("cable-open-end.s1p"), "--vf", "0.66")
	if code != exitOK || !strings.Contains(out, "range 333.3 ns round trip (32.98 m one way), resolution 667 ps (66 mm)") || !strings.Contains(out, "open") {
		t.Errorf("exit %d, output:\n%s", code, out)
	}
}

// TestTDRGate writes a gated sweep of the demo's antenna seen through the
// cable, keeping the first 10 ns round trip, and compares it with
// rfmath/tdr.GateSweep called directly.
func TestTDRGate(t *testing.T) {
	t.Parallel()
	out := filepath.Join(t.TempDir(), "gated.s1p")
	code, stdout, errOut := runCLI(t, "tdr", demoPath("fieldnode-via-cable.s1p"), "--gate", "5ns:10ns", "--out", out)
	if code != exitOK || !strings.Contains(stdout, "reflections between 0 s and 10 ns round trip kept") {
		t.Fatalf("exit %d, stdout %q, stderr %q", code, stdout, errOut)
	}
	got := readSweepFile(t, out).Sweep
	in := readSweepFile(t, demoPath("fieldnode-via-cable.s1p")).Sweep
	want, err := tdr.GateSweep(in, tdr.Gate{CentreS: 5e-9, SpanS: 10e-9, Shape: tdr.Window{Kind: tdr.Hann}},
		&tdr.Settings{Window: tdr.Window{Kind: tdr.Kaiser, Beta: 6}, Pad: 4})
	if err != nil {
		t.Fatal(err)
	}
	var diff float64
	for k := range want.Data {
		diff = math.Max(diff, cmplx.Abs(got.Data[k]-want.Data[k]))
	}
	if diff > 1e-11 {
		t.Errorf("written sweep differs from GateSweep by %v", diff)
	}
}

func TestTDRErrors(t *testing.T) {
	t.Parallel()
	out := filepath.Join(t.TempDir(), "g.s1p")
	open := demoPath("cable-open-end.s1p")
	tests := []struct {
		name string
		args []string
		code int
		says string
	}{
		{"band far from DC", []string{demoPath("fieldnode-antenna.s1p")}, exitInput, "use band-pass mode"},
		{"bad window", []string{open, "--window", "hamming"}, exitUsage, "--window"},
		{"bad mode", []string{open, "--mode", "fast"}, exitUsage, "lowpass or bandpass"},
		{"bad vf", []string{open, "--vf", "1.5"}, exitUsage, "velocity factor"},
		{"gate without out", []string{open, "--gate", "0:1ns"}, exitUsage, "go together"},
		{"gate without colon", []string{open, "--gate", "1ns", "--out", out}, exitUsage, "CENTRE:SPAN"},
		{"zero span", []string{open, "--gate", "1ns:0", "--out", out}, exitUsage, "positive time"},
		{"port 2 of a 1-port", []string{open, "--port", "2"}, exitUsage, "has 1 port(s)"},
		{"two files", []string{open, open}, exitUsage, "one sweep file"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			code, _, errOut := runCLI(t, append([]string{"tdr"}, tc.args...)...)
			if code != tc.code || !strings.Contains(errOut, tc.says) {
				t.Errorf("exit %d, stderr %q; want %d saying %q", code, errOut, tc.code, tc.says)
			}
		})
	}
	// Band-pass mode takes the far band and finds the antenna's reflection
	// 9 mm of VF 0.54 microstrip from the pad (internal/demo), within the
	// 2.5 ns resolution of a 400 MHz band.
	code, out, _ := runCLI(t, "tdr", demoPath("fieldnode-antenna.s1p"), "--mode", "bandpass", "--json")
	var rep tdrReport
	if code != exitOK || json.Unmarshal([]byte(out), &rep) != nil || len(rep.Peaks) == 0 || rep.Step != nil {
		t.Fatalf("band-pass: exit %d", code)
	}
	feed := rfmath.Line{LengthM: 0.009, VelocityFactor: 0.54}
	if d := 2 * feed.DelayS(); math.Abs(rep.Peaks[0].TimeS-d) > rep.ResolutionS {
		t.Errorf("band-pass peak at %v s, want %v within %v", rep.Peaks[0].TimeS, d, rep.ResolutionS)
	}
}
