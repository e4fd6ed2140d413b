package cli

import (
	"encoding/json"
	"errors"
	"math"
	"math/cmplx"
	"strings"
	"testing"

	"matchbench/rfmath"
)

func TestParseImpedance(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		in   string
		want complex128
	}{
		{"60-80j", complex(60, -80)},
		{"60-j80", complex(60, -80)},
		{"60 - 80j", complex(60, -80)},
		{"60 -j 80", complex(60, -80)},
		{"60+80j", complex(60, 80)},
		{"60+j80", complex(60, 80)},
		{"75", 75},
		{"75Ω", 75},
		{"75 ohm", 75},
		{"-j50", complex(0, -50)},
		{"j50", complex(0, 50)},
		{"+j", complex(0, 1)},
		{"60+j0", 60},
		{"60−80j", complex(60, -80)}, // Unicode minus
		{"60-80i", complex(60, -80)},
		{"1e2-3.5e1j", complex(100, -35)},
		{"1e-3+1e-3j", complex(1e-3, 1e-3)},
		{"1k-j200", complex(1000, -200)},
		{"2.2k+j1k", complex(2200, 1000)},
	} {
		t.Run(tc.in, func(t *testing.T) {
			t.Parallel()
			got, err := parseImpedance(tc.in)
			if err != nil || cmplx.Abs(got-tc.want) > 1e-12*cmplx.Abs(tc.want) {
				t.Errorf("parseImpedance(%q) = %v, %v; want %v", tc.in, got, err, tc.want)
			}
		})
	}
	for _, in := range []string{"", "60-80", "60-80jj", "j60+80", "abc", "60-8x0j", "60-8j0", "NaN", "Inf-j1", "--5j"} {
		if z, err := parseImpedance(in); err == nil || !errors.Is(err, errImpedance) {
			t.Errorf("parseImpedance(%q) = %v, %v; want an error", in, z, err)
		}
	}
}

// TestSynthJSON checks `synth --json` on Pozar Example 5.2 (REFERENCE-
// CHECKS §8a: ZL = 60 − j80 Ω, Z0 = 50 Ω, 2 GHz; d = 0.110423 λ and
// 0.259445 λ, short stubs 0.094975 λ and 0.405025 λ), and that every
// L-network it prints matches when rebuilt as an rfmath ladder here.
func TestSynthJSON(t *testing.T) {
	t.Parallel()
	code, out, errOut := runCLI(t, "synth", "--z", "60-80j", "--z0", "50", "--f", "2G", "--json")
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var r struct {
		LNetworks []struct {
			Orientation string `json:"orientation"`
			Parts       []struct {
				Kind  string  `json:"kind"`
				Value float64 `json:"value"`
			} `json:"parts"`
		} `json:"l_networks"`
		NoSolution []struct {
			Orientation string `json:"orientation"`
			Reason      string `json:"reason"`
		} `json:"no_solution"`
		Stubs []struct {
			Type string  `json:"type"`
			D    float64 `json:"d_wavelengths"`
			L    float64 `json:"l_wavelengths"`
		} `json:"stubs"`
		QuarterWave []struct {
			D  float64 `json:"d_wavelengths"`
			Z1 float64 `json:"z1_ohm"`
		} `json:"quarter_wave"`
	}
	if err := json.Unmarshal([]byte(out), &r); err != nil {
		t.Fatal(err)
	}
	if len(r.LNetworks) != 2 || len(r.NoSolution) != 1 || r.NoSolution[0].Orientation != "series_next_to_load" {
		t.Fatalf("l_networks %+v, no_solution %+v", r.LNetworks, r.NoSolution)
	}
	zl := complex(60, -80)
	for _, l := range r.LNetworks {
		var lad rfmath.Ladder
		for _, p := range l.Parts {
			switch p.Kind {
			case "series_L":
				lad = append(lad, rfmath.SeriesL{LH: p.Value})
			case "series_C":
				lad = append(lad, rfmath.SeriesC{CF: p.Value})
			case "shunt_L":
				lad = append(lad, rfmath.ShuntL{LH: p.Value})
			case "shunt_C":
				lad = append(lad, rfmath.ShuntC{CF: p.Value})
			default:
				t.Fatalf("kind %q", p.Kind)
			}
		}
		if z := lad.InputZ(2e9, zl); cmplx.Abs(z-50) > 1e-9*50 {
			t.Errorf("%+v: Zin = %v", l, z)
		}
	}
	want := []struct {
		typ  string
		d, l float64
	}{
		{"open", 0.110423, 0.344975}, {"short", 0.110423, 0.094975},
		{"open", 0.259445, 0.155025}, {"short", 0.259445, 0.405025},
	}
	if len(r.Stubs) != len(want) {
		t.Fatalf("stubs %+v", r.Stubs)
	}
	for i, w := range want {
		s := r.Stubs[i]
		if s.Type != w.typ || math.Abs(s.D-w.d) > 1e-6 || math.Abs(s.L-w.l) > 1e-6 {
			t.Errorf("stub %d = %+v, want %+v", i, s, w)
		}
	}
	if len(r.QuarterWave) != 2 {
		t.Errorf("quarter_wave %+v", r.QuarterWave)
	}
	// A complex source: no stubs, no quarter_wave key.
	code, out, _ = runCLI(t, "synth", "--z", "60-80j", "--z0", "50+10j", "--f", "2G", "--json")
	if code != 0 || strings.Contains(out, "quarter_wave") || !strings.Contains(out, `"stubs": []`) {
		t.Errorf("complex source: exit %d\n%s", code, out)
	}
}

func TestSynthText(t *testing.T) {
	t.Parallel()
	code, out, _ := runCLI(t, "synth", "--z", "25", "--f", "100M")
	// REFERENCE-CHECKS §6c L-4: 25 Ω to 50 Ω, X = ±25 Ω, B = ±20 mS.
	for _, s := range []string{"series next to load:", "series X +25 Ω, shunt B +20 mS", "series X -25 Ω, shunt B -20 mS",
		"shunt next to load:", "none: the load's parallel resistance", "Quarter-wave transformer", "35.355 Ω"} {
		if !strings.Contains(out, s) {
			t.Errorf("output lacks %q:\n%s", s, out)
		}
	}
	if code != 0 {
		t.Errorf("exit %d", code)
	}
	for _, args := range [][]string{
		{"synth", "--f", "1G"},
		{"synth", "--z", "50"},
		{"synth", "--z", "60-80", "--f", "1G"},
		{"synth", "--z", "50", "--z0", "-50", "--f", "1G"},
		{"synth", "--z", "50", "--f", "1G", "extra.s1p"},
	} {
		if code, _, errOut := runCLI(t, args...); code != exitUsage || errOut == "" {
			t.Errorf("%v: exit %d, %q", args, code, errOut)
		}
	}
	// A pure reactance: no L-network, no stub, a note.
	code, out, _ = runCLI(t, "synth", "--z", "-j50", "--f", "1G")
	if code != 0 || !strings.Contains(out, "pure reactance") || !strings.Contains(out, "Note:") {
		t.Errorf("reactive load: exit %d\n%s", code, out)
	}
}
