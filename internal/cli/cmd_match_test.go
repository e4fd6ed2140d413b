package cli

import (
	"encoding/json"
	"math"
	"math/cmplx"
	"strings"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/touchstone"
)

type matchOut struct {
	Parts []struct {
		Kind   string  `json:"kind"`
		Value  float64 `json:"value"`
		Series string  `json:"series"`
	} `json:"parts"`
	WorstRLdB float64 `json:"worst_rl_db"`
	MarginDB  float64 `json:"margin_db"`
	Meets     bool    `json:"meets"`
	Bands     []struct {
		LoHz      float64 `json:"lo_hz"`
		HiHz      float64 `json:"hi_hz"`
		Required  float64 `json:"required_rl_db"`
		WorstRLdB float64 `json:"worst_rl_db"`
		MeanRLdB  float64 `json:"mean_rl_db"`
	} `json:"bands"`
	Yield    *float64 `json:"yield"`
	BodeFano *struct {
		BestRLdB float64 `json:"best_rl_db"`
	} `json:"bode_fano"`
	Model string `json:"model"`
}

// ladderOf rebuilds a printed design as an rfmath ladder of the typical
// 0402 models (or ideal parts), independently of package match.
func ladderOf(t *testing.T, d matchOut, m parts.Model) rfmath.Ladder {
	t.Helper()
	var l rfmath.Ladder
	for _, p := range d.Parts {
		k := parts.KindL
		if strings.HasSuffix(p.Kind, "_C") {
			k = parts.KindC
		}
		part := m.Part(k, p.Value)
		if strings.HasPrefix(p.Kind, "shunt_") {
			l = append(l, rfmath.Shunt{Part: part})
		} else {
			l = append(l, rfmath.Series{Part: part})
		}
		if v := parts.Nearest(p.Value, p.Series); math.Abs(v-p.Value) > 1e-12*v {
			t.Errorf("%s %g is not an %s value", p.Kind, p.Value, p.Series)
		}
	}
	return l
}

// TestMatchDemoJSON runs `match --json` on the demo sweeps with the demo
// bands (internal/demo: 2400–2483.5 MHz; 863–870 and 902–928 MHz; 10 dB)
// and checks each design: standard values, requirement met, and the worst
// return loss over the measured points in each band recomputed here from
// the file with rfmath's ladder of the same part models.
func TestMatchDemoJSON(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		file  string
		bands []string
		lohi  [][2]float64
	}{
		{"testdata/demo/wristtag-antenna.s1p", []string{"2.40G:2.4835G"}, [][2]float64{{2.4e9, 2.4835e9}}},
		{"testdata/demo/fieldnode-antenna.s1p", []string{"863M:870M", "902M:928M"}, [][2]float64{{863e6, 870e6}, {902e6, 928e6}}},
	} {
		t.Run(tc.file, func(t *testing.T) {
			t.Parallel()
			args := []string{"match", tc.file, "--json", "--top", "3", "--builds", "50"}
			for _, b := range tc.bands {
				args = append(args, "--band", b)
			}
			code, out, errOut := runCLI(t, args...)
			if code != 0 {
				t.Fatalf("exit %d: %s", code, errOut)
			}
			var ds []matchOut
			if err := json.Unmarshal([]byte(out), &ds); err != nil {
				t.Fatal(err)
			}
			if len(ds) != 3 {
				t.Fatalf("%d designs", len(ds))
			}
			f, err := touchstone.ReadFile(tc.file, touchstone.DefaultLimits)
			if err != nil {
				t.Fatal(err)
			}
			s := f.Sweep
			for i, d := range ds {
				if i == 0 && (!d.Meets || d.MarginDB < 0 || d.WorstRLdB < 10) {
					t.Errorf("best design does not meet 10 dB: %+v", d)
				}
				if d.Model != "typical 0402" || d.Yield == nil || d.BodeFano == nil || len(d.Bands) != len(tc.bands) {
					t.Errorf("design %d: %+v", i, d)
				}
				if d.WorstRLdB > d.BodeFano.BestRLdB {
					t.Errorf("design %d beats the Bode–Fano figure", i)
				}
				lad := ladderOf(t, d, parts.Typical0402)
				for b, lh := range tc.lohi {
					worst := math.Inf(1)
					for k, fr := range s.FreqHz {
						if fr < lh[0] || fr > lh[1] {
							continue
						}
						g := lad.InputGamma(fr, s.Data[k], s.Z0[0])
						worst = math.Min(worst, -20*math.Log10(cmplx.Abs(g)))
					}
					// The command also judges the interpolated band edges, so
					// its worst is at most the measured points' worst.
					if got := d.Bands[b].WorstRLdB; got > worst+1e-9 || got < worst-1.5 {
						t.Errorf("design %d band %d: worst %v dB, measured points give %v", i, b, got, worst)
					}
					if d.Bands[b].LoHz != lh[0] || d.Bands[b].HiHz != lh[1] || d.Bands[b].Required != 10 {
						t.Errorf("band %d: %+v", b, d.Bands[b])
					}
				}
			}
		})
	}
}

func TestMatchText(t *testing.T) {
	t.Parallel()
	code, out, errOut := runCLI(t, "match", "testdata/demo/fieldnode-antenna.s1p", "--band", "863M:870M", "--band", "902M:928M",
		"--ideal", "--series", "L=E12,C=E24", "--top", "2", "--builds", "0", "--power", "1", "--radius", "0.04")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	for _, s := range []string{"inductors E12", "capacitors E24", "ideal models", "exact over every combination",
		"Bode–Fano:", "meets every band", "Chu limit", "CAUTION: high RF power can burn and can shock", "Part stress"} {
		if !strings.Contains(out, s) {
			t.Errorf("output lacks %q:\n%s", s, out)
		}
	}
	// An impossible requirement: said so, with the Bode–Fano figure.
	code, out, _ = runCLI(t, "match", "testdata/demo/fieldnode-antenna.s1p", "--band", "863M:870M:60", "--band", "902M:928M:60",
		"--parts", "2", "--builds", "0")
	if code != 0 || !strings.Contains(out, "No network found meets every band") || !strings.Contains(out, "beyond the Bode–Fano limit") {
		t.Errorf("impossible requirement: exit %d\n%s", code, out)
	}
	code, out, errOut = runCLI(t, "match", "testdata/demo/fieldnode-antenna.s1p", "--band", "863M:870M:60", "--parts", "2", "--builds", "0", "--json")
	if code != 0 || !strings.HasPrefix(strings.TrimSpace(out), "[") || !strings.Contains(errOut, "Bode–Fano") {
		t.Errorf("impossible requirement, JSON: exit %d, stderr %q", code, errOut)
	}
}

func TestMatchUsage(t *testing.T) {
	t.Parallel()
	demo := "testdata/demo/wristtag-antenna.s1p"
	for _, args := range [][]string{
		{"match", demo},
		{"match", "--band", "2.4G:2.5G"},
		{"match", demo, "--band", "2.4G"},
		{"match", demo, "--band", "2.5G:2.4G"},
		{"match", demo, "--band", "2.4G:2.5G:x"},
		{"match", demo, "--band", "1G:1.1G"},
		{"match", demo, "--band", "2.4G:2.5G", "--series", "E7"},
		{"match", demo, "--band", "2.4G:2.5G", "--series", "X=E12"},
		{"match", demo, "--band", "2.4G:2.5G", "--parts", "5"},
		{"match", demo, "--band", "2.4G:2.5G", "--size", "1206"},
		{"match", demo, "--band", "2.4G:2.5G", "--top", "0"},
	} {
		if code, _, errOut := runCLI(t, args...); code != exitUsage || errOut == "" {
			t.Errorf("%v: exit %d, stderr %q", args, code, errOut)
		}
	}
	if code, _, _ := runCLI(t, "match", "nonexistent.s1p", "--band", "2.4G:2.5G"); code != exitInput {
		t.Errorf("missing file: exit %d", code)
	}
}

func TestParseBand(t *testing.T) {
	t.Parallel()
	b, err := parseBand("863M:870M:12dB", 10)
	if err != nil || b.LoHz != 863e6 || b.HiHz != 870e6 || b.MinReturnLossDB != 12 {
		t.Errorf("%+v, %v", b, err)
	}
	b, err = parseBand("2.4GHz:2.4835GHz:-15", 10)
	if err != nil || b.MinReturnLossDB != 15 {
		t.Errorf("negative RL: %+v, %v", b, err)
	}
	if b, err = parseBand("2.4G:2.5G", 9); err != nil || b.MinReturnLossDB != 9 {
		t.Errorf("default RL: %+v, %v", b, err)
	}
}

// TestMatchSet runs the search across the wrist tag's three invented
// conditions (internal/demo): the design that is best in free space alone
// misses 10 dB on the wrist, the design for the set meets it in all three,
// and the JSON carries each member's figures. --set takes a folder.
func TestMatchSet(t *testing.T) {
	t.Parallel()
	free, wrist, encl := "testdata/demo/wristtag-antenna.s1p", "testdata/demo/wristtag-wrist.s1p", "testdata/demo/wristtag-enclosure.s1p"
	type member struct {
		File  string `json:"file"`
		Meets bool   `json:"meets"`
		Bands []struct {
			WorstRLdB        float64 `json:"worst_rl_db"`
			WorstPowerToLoad float64 `json:"worst_power_to_load"`
		} `json:"bands"`
	}
	type design struct {
		Parts       []json.RawMessage `json:"parts"`
		Meets       bool              `json:"meets"`
		WorstMember string            `json:"worst_member"`
		WorstBand   *int              `json:"worst_band"`
		Members     []member          `json:"members"`
	}
	run := func(args ...string) []design {
		t.Helper()
		code, out, errOut := runCLI(t, append(append([]string{"match"}, args...), "--parts", "3", "--builds", "100", "--top", "1", "--json")...)
		if code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, errOut)
		}
		var ds []design
		if err := json.Unmarshal([]byte(out), &ds); err != nil {
			t.Fatal(err)
		}
		return ds
	}
	// The free-space design, judged on the other two without letting them
	// bind.
	single := run(free, wrist, encl, "--advisory", wrist, "--advisory", encl, "--band", "2.4G:2.4835G")[0]
	if single.Members[0].File != free || !single.Members[0].Meets || single.Members[1].Meets {
		t.Errorf("free-space optimum: %+v", single.Members)
	}
	set := run(free, wrist, encl, "--band", "2.4G:2.4835G")[0]
	if !set.Meets || len(set.Members) != 3 || set.WorstMember != wrist || set.WorstBand == nil || *set.WorstBand != 0 {
		t.Errorf("set design: %+v", set)
	}
	for _, m := range set.Members {
		if !m.Meets || m.Bands[0].WorstRLdB < 10 || !(m.Bands[0].WorstPowerToLoad > 0.8) {
			t.Errorf("set design on %s: %+v", m.File, m)
		}
	}
	lot := run("--set", "testdata/demo/fieldnode-lot", "--band", "902M:928M", "--lot")
	if len(lot[0].Members) != 5 || !strings.HasPrefix(lot[0].Members[0].File, "testdata/demo/fieldnode-lot/") {
		t.Errorf("--set: %+v", lot[0].Members)
	}
	if code, _, errOut := runCLI(t, "match", free, wrist, "--band", "2.4G:2.4835G", "--advisory", "nope.s1p"); code != exitUsage || !strings.Contains(errOut, "nope.s1p") {
		t.Errorf("--advisory of no file: %d %q", code, errOut)
	}
}
