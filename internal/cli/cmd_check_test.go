package cli

import (
	"encoding/json"
	"io"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"matchbench/internal/demo"
	"matchbench/rfmath"
	"matchbench/rfmath/touchstone"
)

// writeDemoFiles writes files into dir and returns their paths.
func writeDemoFiles(t testing.TB, dir string, files []demo.File) []string {
	t.Helper()
	paths := make([]string, len(files))
	for i, f := range files {
		paths[i] = filepath.Join(dir, f.Name)
		if err := writeDemoFile(paths[i], f); err != nil {
			t.Fatal(err)
		}
	}
	return paths
}

// worstIn returns the least return loss of the file's S11 at its points
// from lo to hi, and where: an independent reading of the file for the
// tests (the lot's band edges fall on points).
func worstIn(t *testing.T, path string, lo, hi float64) (rl, at float64) {
	t.Helper()
	f, err := touchstone.ReadFile(path, touchstone.Limits{})
	if err != nil {
		t.Fatal(err)
	}
	rl = math.Inf(1)
	for k, fk := range f.Sweep.FreqHz {
		if fk >= lo && fk <= hi {
			if v := -20 * math.Log10(cmplx.Abs(f.Sweep.Data[k])); v < rl {
				rl, at = v, fk
			}
		}
	}
	return rl, at
}

func TestCheckPassAndFail(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	nominal := writeDemoFiles(t, dir, []demo.File{demo.NominalBoard()})[0]
	unmatched := filepath.Join("testdata", "demo", "fieldnode-antenna.s1p")

	// The nominal board passes 902–928 MHz at 10 dB with 1.15 dB to spare
	// (its least return loss there, read from the file here).
	rl, at := worstIn(t, nominal, 902e6, 928e6)
	code, out, errOut := runCLI(t, "check", nominal, "--band", "902M:928M", "--rl", "10")
	if code != exitOK || errOut != "" {
		t.Fatalf("exit %d, stderr %q", code, errOut)
	}
	want := "PASS   " + nominal + ": margin +" + strconv.FormatFloat(rl-10, 'f', 2, 64) + " dB at " + strconv.FormatFloat(at/1e6, 'g', -1, 64) + " MHz"
	if !strings.HasPrefix(out, want) || strings.Contains(out, "Lot:") {
		t.Errorf("output %q, want it to start %q and have no lot summary", out, want)
	}

	// The antenna without its match fails by several dB.
	rl, at = worstIn(t, unmatched, 902e6, 928e6)
	code, out, _ = runCLI(t, "check", "--rl", "-10", "--band", "902M:928MHz", unmatched)
	if code != exitInput {
		t.Fatalf("exit %d, want 1", code)
	}
	want = "FAIL   " + unmatched + ": margin −" + strconv.FormatFloat(10-rl, 'f', 2, 64) + " dB at " + strconv.FormatFloat(at/1e6, 'g', -1, 64) + " MHz (RL " + strconv.FormatFloat(rl, 'f', 2, 64) + " dB"
	if !strings.HasPrefix(out, want) {
		t.Errorf("output %q, want it to start %q", out, want)
	}

	// A limit file, with VSWR: VSWR 3 is RL 6.02 dB (REFERENCE-CHECKS §2a
	// rule), which the unmatched antenna misses at 902–928 MHz (3.5 dB)
	// and the nominal board meets.
	lim := filepath.Join(dir, "us.lim")
	if err := os.WriteFile(lim, []byte("# US variant\nband 902M 928M vswr 3 US ISM\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	code, out, _ = runCLI(t, "check", nominal, unmatched, "--limits", lim, "--json")
	if code != exitInput {
		t.Fatalf("exit %d", code)
	}
	var rep checkReport
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatalf("%v\n%s", err, out)
	}
	if len(rep.Bands) != 1 || math.Abs(rep.Bands[0].MinReturnLossDB-6.0206) > 1e-4 || rep.Bands[0].Kind != "vswr" || rep.Bands[0].Label != "US ISM" {
		t.Errorf("bands %+v", rep.Bands)
	}
	if !rep.Files[0].Pass || rep.Files[1].Pass || rep.Summary.Passed != 1 || rep.Summary.Yield != 0.5 || rep.Summary.WorstFile != unmatched {
		t.Errorf("files %+v, summary %+v", rep.Files, rep.Summary)
	}

	// A band outside the sweep fails and says so.
	code, out, _ = runCLI(t, "check", nominal, "--band", "2.4G:2.5G", "--rl", "10")
	if code != exitInput || !strings.Contains(out, "FAIL") || !strings.Contains(out, "does not cover 2.4 GHz–2.5 GHz") {
		t.Errorf("exit %d, output %q", code, out)
	}
}

// TestCheckLot checks a lot of 50 generated boards (internal/demo's Lot)
// and compares the summary with a count made here from the files.
func TestCheckLot(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	paths := writeDemoFiles(t, dir, demo.Lot(50, 2024))
	pass := 0
	worst, worstFile := math.Inf(1), ""
	var dips []float64
	for _, p := range paths {
		rl, _ := worstIn(t, p, 902e6, 928e6)
		if rl >= 10 {
			pass++
		}
		if rl-10 < worst {
			worst, worstFile = rl-10, p
		}
		f, _ := touchstone.ReadFile(p, touchstone.Limits{})
		dips = append(dips, rfmath.DeepestDip(f.Sweep.FreqHz, f.Sweep.Data).FreqHz)
	}
	if pass == 0 || pass == 50 {
		t.Fatalf("the lot has %d passing boards; the test wants both kinds", pass)
	}
	// Mean and sample standard deviation, written out (gonum's stat is the
	// command's).
	var mean, ss float64
	for _, d := range dips {
		mean += d
	}
	mean /= float64(len(dips))
	for _, d := range dips {
		ss += (d - mean) * (d - mean)
	}
	std := math.Sqrt(ss / float64(len(dips)-1))

	args := append([]string{"check", "--band", "902M:928M", "--rl", "10", "--json"}, paths...)
	code, out, _ := runCLI(t, args...)
	if code != exitInput {
		t.Fatalf("exit %d with failing boards, want 1", code)
	}
	var rep checkReport
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	s := rep.Summary
	if s.Files != 50 || s.Passed != pass || s.Failed != 50-pass || s.Unreadable != 0 || s.Yield != float64(pass)/50 {
		t.Errorf("summary %+v, want %d of 50 passing", s, pass)
	}
	if s.WorstFile != worstFile || math.Abs(float64(s.WorstMarginDB)-worst) > 1e-9 {
		t.Errorf("worst %s %v, want %s %v", s.WorstFile, s.WorstMarginDB, worstFile, worst)
	}
	if d := s.DipHz; d == nil || d.N != 50 || math.Abs(d.Mean-mean) > 1e-3 || math.Abs(d.Std-std) > 1e-3 || d.Min > d.Mean || d.Max < d.Mean {
		t.Errorf("dip spread %+v, want mean %v σ %v", s.DipHz, mean, std)
	}
	for i, f := range rep.Files {
		if f.File != paths[i] {
			t.Fatalf("file %d is %s, want %s (order kept)", i, f.File, paths[i])
		}
	}

	// The text form ends with the lot summary.
	code, out, _ = runCLI(t, append([]string{"check", "--band", "902M:928M", "--rl", "10"}, paths...)...)
	lines := strings.Split(strings.TrimSpace(out), "\n")
	if code != exitInput || len(lines) != 50+4 {
		t.Fatalf("exit %d, %d lines", code, len(lines))
	}
	wantLot := regexp.MustCompile(`^Lot: 50 files, (\d+) pass, (\d+) fail: yield ([0-9.]+) %$`)
	m := wantLot.FindStringSubmatch(lines[51])
	if m == nil || m[1] != strconv.Itoa(pass) || m[3] != strconv.FormatFloat(100*float64(pass)/50, 'f', 1, 64) {
		t.Errorf("lot line %q", lines[51])
	}
	if !strings.HasPrefix(lines[52], "Deepest dip: min ") || !strings.HasPrefix(lines[53], "Worst board: "+worstFile) {
		t.Errorf("summary lines %q", lines[52:])
	}

	// Only the passing boards: exit 0.
	var good []string
	for i, f := range rep.Files {
		if f.Pass {
			good = append(good, paths[i])
		}
	}
	if code, _, _ := runCLI(t, append([]string{"check", "--band", "902M:928M", "--rl", "10"}, good...)...); code != exitOK {
		t.Errorf("passing boards: exit %d", code)
	}
}

func TestCheckUnreadable(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	good := writeDemoFiles(t, dir, []demo.File{demo.NominalBoard()})[0]
	broken := filepath.Join(dir, "broken.s1p")
	if err := os.WriteFile(broken, []byte("# MHz S RI R 50\n900 0.1\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	missing := filepath.Join(dir, "missing.s1p")
	two := filepath.Join("testdata", "demo", "cable-fixture.s2p")
	code, out, _ := runCLI(t, "check", good, broken, missing, two, "--band", "902M:928M", "--rl", "10", "--port", "2")
	if code != exitInput {
		t.Fatalf("exit %d, want 1", code)
	}
	for _, want := range []string{
		"ERROR  " + good + ": has 1 port(s); --port 2 asks for S22",
		"ERROR  " + broken + ": cannot read: ",
		"ERROR  " + missing + ": cannot read: ",
		"PASS   " + two + ": margin +",
		"Lot: 4 files, 1 pass, 0 fail, 3 unreadable: yield 25.0 %",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("output does not say %q:\n%s", want, out)
		}
	}
}

func TestCheckUsage(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	bad := filepath.Join(dir, "bad.lim")
	if err := os.WriteFile(bad, []byte("band 1M 2M rl 10\nband 3M 4M db 10\n"), 0o644); err != nil {
		t.Fatal(err)
	}
	f := filepath.Join("testdata", "demo", "fieldnode-antenna.s1p")
	tests := []struct {
		name string
		args []string
		says string
	}{
		{"no files", []string{"--band", "1M:2M", "--rl", "10"}, "at least one sweep file"},
		{"no bands", []string{f}, "no band to check"},
		{"band without limit", []string{f, "--band", "1M:2M"}, "needs a limit"},
		{"limit without band", []string{f, "--rl", "10"}, "need a --band"},
		{"mismatched counts", []string{f, "--band", "1M:2M", "--band", "3M:4M", "--band", "5M:6M", "--rl", "10", "--rl", "6"}, "3 bands and 2 limits"},
		{"no colon", []string{f, "--band", "902M", "--rl", "10"}, "want LO:HI"},
		{"bad frequency", []string{f, "--band", "902x:928M", "--rl", "10"}, "unknown unit"},
		{"reversed band", []string{f, "--band", "928M:902M", "--rl", "10"}, "lower frequency first"},
		{"zero return loss", []string{f, "--band", "902M:928M", "--rl", "0"}, "return loss 0"},
		{"VSWR below 1", []string{f, "--band", "902M:928M", "--vswr", "0.5"}, "VSWR 0.5"},
		{"not a number", []string{f, "--band", "902M:928M", "--rl", "ten"}, "not a number"},
		{"bad limit file", []string{f, "--limits", bad}, bad + ":2:12"},
		{"missing limit file", []string{f, "--limits", filepath.Join(dir, "none.lim")}, "--limits"},
		{"bad port", []string{f, "--band", "1M:2M", "--rl", "3", "--port", "0"}, "ports count from 1"},
		{"unknown flag", []string{f, "--frobnicate"}, "frobnicate"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			code, _, errOut := runCLI(t, append([]string{"check"}, tc.args...)...)
			if code != exitUsage || !strings.Contains(errOut, tc.says) {
				t.Errorf("exit %d, stderr %q; want 2 saying %q", code, errOut, tc.says)
			}
		})
	}
	if code, _, errOut := runCLI(t, "check", "-h"); code != exitOK || !strings.Contains(errOut, "usage: matchbench check") {
		t.Errorf("-h: exit %d, %q", code, errOut)
	}
}

// BenchmarkCheck1000 checks a lot of 1,000 boards of 201 points (the
// brief's benchmark), files written once before the timer starts.
func BenchmarkCheck1000(b *testing.B) {
	dir := b.TempDir()
	paths := writeDemoFiles(b, dir, demo.Lot(1000, 1))
	args := append([]string{"check", "--band", "902M:928M", "--rl", "10"}, paths...)
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		if code := Run(b.Context(), args, io.Discard, io.Discard); code != exitInput {
			b.Fatalf("exit %d", code)
		}
	}
}

// TestCheckThroughNetwork judges the wrist tag's three invented
// conditions through the network the set search chose (match --json, a
// network file): all three fail 10 dB alone and pass through it, and each
// file's figures are those match prints for that member (one evaluator,
// match.Evaluate).
func TestCheckThroughNetwork(t *testing.T) {
	t.Parallel()
	files := []string{"testdata/demo/wristtag-antenna.s1p", "testdata/demo/wristtag-wrist.s1p", "testdata/demo/wristtag-enclosure.s1p"}
	code, out, errOut := runCLI(t, append(append([]string{"match"}, files...), "--band", "2.4G:2.4835G", "--parts", "3", "--builds", "0", "--top", "1", "--json")...)
	if code != 0 {
		t.Fatalf("match: %d %s", code, errOut)
	}
	net := filepath.Join(t.TempDir(), "net.json")
	if err := os.WriteFile(net, []byte(out), 0o644); err != nil {
		t.Fatal(err)
	}
	var ds []struct {
		Members []struct {
			Bands []struct {
				WorstRLdB        float64 `json:"worst_rl_db"`
				WorstPowerToLoad float64 `json:"worst_power_to_load"`
			} `json:"bands"`
		} `json:"members"`
	}
	if err := json.Unmarshal([]byte(out), &ds); err != nil {
		t.Fatal(err)
	}
	code, _, _ = runCLI(t, append(append([]string{"check"}, files...), "--band", "2.4G:2.4835G", "--rl", "10")...)
	if code != 1 {
		t.Errorf("alone: exit %d, want 1 (every file fails)", code)
	}
	code, out, errOut = runCLI(t, append(append([]string{"check"}, files...), "--band", "2.4G:2.4835G", "--rl", "10", "--network", net, "--json")...)
	if code != 0 {
		t.Fatalf("through the network: exit %d: %s %s", code, out, errOut)
	}
	var rep struct {
		Network string `json:"network"`
		Files   []struct {
			Pass  bool `json:"pass"`
			Worst struct {
				ReturnLossDB float64 `json:"worst_return_loss_db"`
				PowerToLoad  float64 `json:"worst_power_to_load"`
			} `json:"worst"`
		} `json:"files"`
	}
	if err := json.Unmarshal([]byte(out), &rep); err != nil {
		t.Fatal(err)
	}
	for i, f := range rep.Files {
		m := ds[0].Members[i].Bands[0]
		if !f.Pass || f.Worst.ReturnLossDB != m.WorstRLdB || f.Worst.PowerToLoad != m.WorstPowerToLoad || rep.Network != net {
			t.Errorf("file %d: %+v; match says %+v", i, f, m)
		}
	}
	if code, _, errOut := runCLI(t, "check", files[0], "--band", "2.4G:2.4835G", "--rl", "10", "--network", "nope.json"); code != exitUsage || !strings.Contains(errOut, "nope.json") {
		t.Errorf("missing network file: %d %q", code, errOut)
	}
}
