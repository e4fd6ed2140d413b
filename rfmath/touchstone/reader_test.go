package touchstone

import (
	"errors"
	"io"
	"math"
	"math/cmplx"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// fixtureDir holds the hand-written fixtures; each states in its header
// what it exercises.
const fixtureDir = "../../testdata/touchstone"

func readFixture(t *testing.T, name string, lim Limits) (*File, error) {
	t.Helper()
	return ReadFile(filepath.Join(fixtureDir, name), lim)
}

func mustRead(t *testing.T, name string) *File {
	t.Helper()
	f, err := readFixture(t, name, Limits{})
	if err != nil {
		t.Fatalf("%s: %v", name, err)
	}
	return f
}

func near(a, b complex128, tol float64) bool {
	return cmplx.Abs(a-b) <= tol*math.Max(1, cmplx.Abs(b))
}

func checkS(t *testing.T, f *File, k, i, j int, want complex128, tol float64) {
	t.Helper()
	if got := f.Sweep.At(k, i, j); !near(got, want, tol) {
		t.Errorf("S%d%d at point %d = %v, want %v (tol %g)", i+1, j+1, k+1, got, want, tol)
	}
}

func checkFreqs(t *testing.T, f *File, want ...float64) {
	t.Helper()
	if got := f.Sweep.FreqHz; len(got) != len(want) {
		t.Fatalf("frequencies %v, want %v", got, want)
	}
	for k, w := range want {
		if got := f.Sweep.FreqHz[k]; math.Abs(got-w) > 1e-12*w {
			t.Errorf("frequency %d = %g Hz, want %g Hz", k+1, got, w)
		}
	}
}

func checkZ0(t *testing.T, f *File, want ...float64) {
	t.Helper()
	if len(f.Sweep.Z0) != len(want) {
		t.Fatalf("Z0 %v, want %v", f.Sweep.Z0, want)
	}
	for i, w := range want {
		if f.Sweep.Z0[i] != w {
			t.Errorf("Z0 of port %d = %g, want %g", i+1, f.Sweep.Z0[i], w)
		}
	}
}

// zOf returns the impedance that Γ gives against a real z0, computed here
// independently of the package: Z = z0·(1 + Γ)/(1 − Γ).
func zOf(g complex128, z0 float64) complex128 {
	return complex(z0, 0) * (1 + g) / (1 - g)
}

func TestReadFixtures(t *testing.T) {
	t.Parallel()
	tests := []struct {
		file  string
		check func(t *testing.T, f *File)
	}{
		{"ts01_lower.s1p", func(t *testing.T, f *File) {
			// TS-1: same numbers as the upper-case file.
			g := mustRead(t, "ts01_upper.s1p")
			checkFreqs(t, f, 100e6, 200e6)
			for k := range 2 {
				checkS(t, f, k, 0, 0, g.Sweep.At(k, 0, 0), 0)
			}
			checkS(t, f, 0, 0, 0, 0.25-0.5i, 0)
			if f.FreqUnit != "MHz" || f.Format != "RI" || f.Param != 'S' || f.Version != "1.1" {
				t.Errorf("unit %q format %q param %c version %q", f.FreqUnit, f.Format, f.Param, f.Version)
			}
		}},
		{"ts02_comments.s1p", func(t *testing.T, f *File) {
			// TS-2: `1.0 0.5 0 ! note` is one point with Γ = 0.5.
			checkFreqs(t, f, 1e9, 2e9)
			checkS(t, f, 0, 0, 0, 0.5, 0)
			checkS(t, f, 1, 0, 0, 0.25, 0)
			want := []string{
				" Written by hand for the matchbench touchstone tests.",
				" Exercises TS-2: comments on their own lines, after the option line and after data.",
				" a second comment line", " trailing comment on the option line",
				" between option line and data", " note", " indented comment",
			}
			if strings.Join(f.Comments, "|") != strings.Join(want, "|") {
				t.Errorf("comments %q\nwant %q", f.Comments, want)
			}
		}},
		{"ts03_tabs_crlf.s2p", func(t *testing.T, f *File) {
			// TS-3 tabs and CR LF; TS-10 order.
			checkFreqs(t, f, 1e9, 2e9)
			checkS(t, f, 0, 0, 0, 0.11-0.11i, 0)
			checkS(t, f, 0, 1, 0, 0.21-0.21i, 0)
			checkS(t, f, 0, 0, 1, 0.12-0.12i, 0)
			checkS(t, f, 0, 1, 1, 0.22-0.22i, 0)
		}},
		{"ts03_cr_only.s1p", func(t *testing.T, f *File) {
			checkFreqs(t, f, 1e9, 2e9)
			checkS(t, f, 1, 0, 0, 0.25, 0)
		}},
		{"ts04_bare_option.s1p", func(t *testing.T, f *File) {
			// TS-4: a bare # gives 1 GHz, S11 = 0.2∠0°, Z = 75 Ω (C).
			checkFreqs(t, f, 1e9)
			checkS(t, f, 0, 0, 0, 0.2, 0)
			checkZ0(t, f, 50)
			if z := zOf(f.Sweep.At(0, 0, 0), 50); !near(z, 75, 1e-12) {
				t.Errorf("Z = %v, want 75 Ω", z)
			}
			if f.FreqUnit != "GHz" || f.Format != "MA" || f.Param != 'S' {
				t.Errorf("defaults: unit %q format %q param %c", f.FreqUnit, f.Format, f.Param)
			}
		}},
		{"ts04_second_option.s1p", func(t *testing.T, f *File) {
			// TS-4: the later "# MHz Z DB R 75" is ignored.
			checkFreqs(t, f, 1e9, 2e9)
			checkS(t, f, 1, 0, 0, 0.25, 0)
			checkZ0(t, f, 50)
		}},
		{"ts05_field_order.s1p", func(t *testing.T, f *File) {
			// TS-5: "# S RI GHz R 50" reads like "# GHz S RI R 50".
			checkFreqs(t, f, 1e9)
			checkS(t, f, 0, 0, 0, 0.5+0.25i, 0)
		}},
		{"ts06_khz.s1p", func(t *testing.T, f *File) { checkFreqs(t, f, 1e5) }},
		{"ts06_mhz.s1p", func(t *testing.T, f *File) {
			// TS-6: # MHz with 100 gives 1.0e8 Hz.
			checkFreqs(t, f, 1e8)
		}},
		{"ts08_db.s1p", func(t *testing.T, f *File) {
			// TS-8 (C): -6.0206 dB ∠90° is Γ = j0.5, Z = 30 + j40 Ω.
			checkS(t, f, 0, 0, 0, 0.5i, 1e-6)
			if z := zOf(f.Sweep.At(0, 0, 0), 50); !near(z, 30+40i, 1e-5) {
				t.Errorf("Z = %v, want 30+j40 Ω", z)
			}
			if real(f.Sweep.At(0, 0, 0)) != 0 {
				t.Errorf("90° should give an exactly imaginary value, got %v", f.Sweep.At(0, 0, 0))
			}
		}},
		{"ts08_ma.s1p", func(t *testing.T, f *File) {
			// TS-8 (C): 0.5∠−45° is 0.353553 − j0.353553, Z = 69.0744 − j65.1239 Ω.
			checkFreqs(t, f, 0.1e9)
			checkS(t, f, 0, 0, 0, complex(0.353553, -0.353553), 1e-6)
			if z := zOf(f.Sweep.At(0, 0, 0), 50); !near(z, complex(69.0744, -65.1239), 1e-6) {
				t.Errorf("Z = %v, want 69.0744 − j65.1239 Ω", z)
			}
		}},
		{"ts08_ri_75.s1p", func(t *testing.T, f *File) {
			// TS-8 (C): # Hz S RI R 75 with 1e9 0.2 0 gives Z = 112.5 Ω.
			checkFreqs(t, f, 1e9)
			checkZ0(t, f, 75)
			if z := zOf(f.Sweep.At(0, 0, 0), 75); !near(z, 112.5, 1e-12) {
				t.Errorf("Z = %v, want 112.5 Ω", z)
			}
		}},
		{"ts09_r1.s1p", func(t *testing.T, f *File) { checkZ0(t, f, 1) }},
		{"ts10_2port.s2p", func(t *testing.T, f *File) {
			// TS-10: a b c d e f g h → S11 (a,b), S21 (c,d), S12 (e,f), S22 (g,h).
			for i := range 2 {
				for j := range 2 {
					v := float64(10*(i+1)+j+1) / 100
					checkS(t, f, 0, i, j, complex(v, -v), 0)
				}
			}
		}},
		{"ts11_3port.s3p", checkNPort(3)},
		{"ts11_4port.s4p", checkNPort(4)},
		{"ts11_5port.s5p", checkNPort(5)},
		{"ts12_wrapped.s3p", func(t *testing.T, f *File) {
			// TS-12: 2 points, 3 ports, row order, GHz, R 50.
			checkFreqs(t, f, 1e9, 2e9)
			checkZ0(t, f, 50, 50, 50)
			for k := range 2 {
				for i := range 3 {
					for j := range 3 {
						v := float64(3*i + j + 1 + k)
						checkS(t, f, k, i, j, complex(v, v), 0)
					}
				}
			}
		}},
		{"ts14_z_v1.s1p", func(t *testing.T, f *File) {
			// TS-14: v1 Z data 2.0 with R 50 is 100 Ω: Γ = 50/150.
			checkS(t, f, 0, 0, 0, complex(50.0/150, 0), 1e-15)
		}},
		{"ts14_z_v2.ts", func(t *testing.T, f *File) {
			// TS-14: v2 Z data 100 is 100 Ω.
			checkS(t, f, 0, 0, 0, complex(50.0/150, 0), 1e-15)
			if f.Param != 'Z' || f.Version != "2.0" {
				t.Errorf("param %c version %q", f.Param, f.Version)
			}
		}},
		{"ts14_y_v1.s1p", func(t *testing.T, f *File) {
			// TS-14: v1 Y data 0.5 with R 50 is 10 mS, i.e. 100 Ω.
			checkS(t, f, 0, 0, 0, complex(50.0/150, 0), 1e-15)
		}},
		{"ts14_y_v2.ts", func(t *testing.T, f *File) {
			checkS(t, f, 0, 0, 0, complex(50.0/150, 0), 1e-15)
		}},
		{"ts14_y_series_v1.s2p", func(t *testing.T, f *File) {
			// REFERENCE-CHECKS §11: series 50 Ω in 50 Ω: S11 = S22 = 1/3, S21 = S12 = 2/3.
			// Independently: S11 = R/(R + 2·Z0), S21 = 2·Z0/(R + 2·Z0).
			checkS(t, f, 0, 0, 0, complex(50.0/150, 0), 1e-14)
			checkS(t, f, 0, 1, 1, complex(50.0/150, 0), 1e-14)
			checkS(t, f, 0, 1, 0, complex(100.0/150, 0), 1e-14)
			checkS(t, f, 0, 0, 1, complex(100.0/150, 0), 1e-14)
		}},
		{"ts14_z_shunt_v2.ts", func(t *testing.T, f *File) {
			// REFERENCE-CHECKS §11: shunt 50 Ω in 75 Ω: S11 = −0.428571, S21 = 0.571429.
			// Independently: S11 = −Z0/(2R + Z0) = −75/175, S21 = 2R/(2R + Z0) = 100/175.
			checkZ0(t, f, 75, 75)
			checkS(t, f, 0, 0, 0, complex(-75.0/175, 0), 1e-14)
			checkS(t, f, 0, 1, 0, complex(100.0/175, 0), 1e-14)
			checkS(t, f, 0, 0, 0, complex(-0.428571, 0), 1e-6)
			checkS(t, f, 0, 1, 0, complex(0.571429, 0), 1e-6)
		}},
		{"ts15_noise.s2p", func(t *testing.T, f *File) {
			// TS-15: network 1…100 GHz, then noise at 70, 75, 85 GHz.
			checkFreqs(t, f, 1e9, 10e9, 50e9, 100e9)
			want := []NoisePoint{
				{70e9, 1.2, 0.3, 45, 0.4 * 50},
				{75e9, 1.3, 0.25, 60, 0.5 * 50},
				{85e9, 1.5, 0.2, 90, 0.6 * 50},
			}
			checkNoise(t, f.Noise, want)
			// MA 3.0∠160° is S21 of the first point.
			checkS(t, f, 0, 1, 0, cmplx.Rect(3, 160*math.Pi/180), 1e-15)
		}},
		{"ts15_noise_equal.s2p", func(t *testing.T, f *File) {
			checkFreqs(t, f, 1e9, 2e9)
			checkNoise(t, f.Noise, []NoisePoint{{2e9, 1.0, 0.5, 30, 0.2 * 50}})
		}},
		{"ts16_v20_basic.ts", func(t *testing.T, f *File) {
			checkFreqs(t, f, 100e6, 200e6)
			checkS(t, f, 1, 0, 0, 0.5i, 0)
			if f.Version != "2.0" || f.Sweep.Ports != 1 {
				t.Errorf("version %q ports %d", f.Version, f.Sweep.Ports)
			}
		}},
		{"ts18_12_21.ts", func(t *testing.T, f *File) {
			// TS-18: 12_21 is N11 N12 N21 N22.
			checkS(t, f, 0, 0, 1, 0.5, 0)
			checkS(t, f, 0, 1, 0, 0.7, 0)
			g := mustRead(t, "ts18_21_12.ts")
			// 21_12 is N11 N21 N12 N22: the same numbers give S12 and S21 swapped.
			checkS(t, g, 0, 1, 0, 0.5, 0)
			checkS(t, g, 0, 0, 1, 0.7, 0)
		}},
		{"ts20_noise_v2.ts", func(t *testing.T, f *File) {
			// TS-15/TS-20: v2 Rn is in ohms (see noiseLine).
			checkFreqs(t, f, 1e9, 2e9)
			checkNoise(t, f.Noise, []NoisePoint{{0.5e9, 0.8, 0.4, 30, 12.5}, {3e9, 1.1, 0.35, 50, 15}})
		}},
		{"ts21_reference.ts", func(t *testing.T, f *File) {
			// TS-21: [Reference] 50 75 gives z0 = [50, 75].
			checkZ0(t, f, 50, 75)
			checkS(t, f, 0, 0, 1, 0.2, 0)
		}},
		{"ts21_reference_continued.ts", func(t *testing.T, f *File) { checkZ0(t, f, 50, 75) }},
		{"ts21_option_per_port.ts", func(t *testing.T, f *File) {
			checkZ0(t, f, 50, 75)
			if f.Version != "2.1" {
				t.Errorf("version %q", f.Version)
			}
		}},
		{"ts21_v11_per_port.s2p", func(t *testing.T, f *File) {
			checkZ0(t, f, 50, 75)
			checkS(t, f, 0, 1, 0, 0.2, 0) // v1 order: the second pair is S21
		}},
		{"ts22_lower.ts", func(t *testing.T, f *File) {
			// TS-22: a Lower triangle mirrored: S12 = S21 = 21 etc.
			for i := range 3 {
				for j := range 3 {
					r, c := max(i, j), min(i, j)
					checkS(t, f, 0, i, j, complex(float64(10*(r+1)+c+1), 1), 0)
				}
			}
		}},
		{"ts22_upper.ts", func(t *testing.T, f *File) {
			for i := range 3 {
				for j := range 3 {
					r, c := min(i, j), max(i, j)
					checkS(t, f, 0, i, j, complex(float64(10*(r+1)+c+1), 1), 0)
				}
			}
		}},
		{"ts23_information.ts", func(t *testing.T, f *File) {
			checkFreqs(t, f, 1e9)
			checkS(t, f, 0, 0, 0, 0.5, 0)
		}},
		{"ts24_v2_wrapped.ts", func(t *testing.T, f *File) {
			// TS-24: one 2-port point over 3 lines, order 12_21.
			for k := range 2 {
				checkS(t, f, k, 0, 0, 0.11, 0)
				checkS(t, f, k, 0, 1, 0.12, 0)
				checkS(t, f, k, 1, 0, 0.21, 0)
				checkS(t, f, k, 1, 1, 0.22, 0)
			}
		}},
	}
	for _, tc := range tests {
		t.Run(tc.file, func(t *testing.T) {
			t.Parallel()
			f := mustRead(t, tc.file)
			if err := f.Sweep.Validate(); err != nil {
				t.Fatal(err)
			}
			tc.check(t, f)
		})
	}
}

// checkNPort checks the TS-11 fixtures, where Sij at point k is (10i+j, k).
func checkNPort(n int) func(t *testing.T, f *File) {
	return func(t *testing.T, f *File) {
		if f.Sweep.Ports != n {
			t.Fatalf("ports = %d, want %d", f.Sweep.Ports, n)
		}
		checkFreqs(t, f, 1e9, 2e9)
		for k := range 2 {
			for i := range n {
				for j := range n {
					checkS(t, f, k, i, j, complex(float64(10*(i+1)+j+1), float64(k+1)), 0)
				}
			}
		}
	}
}

func checkNoise(t *testing.T, got, want []NoisePoint) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("noise %v, want %v", got, want)
	}
	for i := range want {
		g, w := got[i], want[i]
		if math.Abs(g.FreqHz-w.FreqHz) > 1e-12*w.FreqHz || g.NFminDB != w.NFminDB || g.GammaOptMag != w.GammaOptMag ||
			g.GammaOptDeg != w.GammaOptDeg || math.Abs(g.RnOhm-w.RnOhm) > 1e-12*w.RnOhm {
			t.Errorf("noise point %d = %+v, want %+v", i+1, g, w)
		}
	}
}

func TestReadErrors(t *testing.T) {
	t.Parallel()
	tests := []struct {
		file      string
		lim       Limits
		kind      error
		line, col int
		msg       string // a part of the message
	}{
		{file: "ts03_high_byte.s1p", kind: ErrSyntax, line: 4, col: 12, msg: "byte 0xC2"},
		{file: "ts07_h_param.s2p", kind: ErrUnsupported, line: 3, col: 7, msg: "H-parameters"},
		{file: "ts07_g_param.s2p", kind: ErrUnsupported, line: 3, col: 7, msg: "G-parameters"},
		{file: "ts09_r_zero.s1p", kind: ErrSyntax, line: 3, col: 14, msg: "positive"},
		{file: "ts12_missing_value.s3p", kind: ErrSyntax, line: 7, col: 1, msg: "still needs 1 of its 9 pairs"},
		{file: "ts12_two_points_one_line.s3p", kind: ErrSyntax, line: 6, col: 15, msg: "must start on a new line"},
		{file: "ts13_decreasing.s1p", kind: ErrSyntax, line: 6, col: 1, msg: "does not increase from the point on line 5"},
		{file: "ts13_decreasing.s3p", kind: ErrSyntax, line: 7, col: 1, msg: "does not increase"},
		{file: "ts15_noise_bad_count.s2p", kind: ErrSyntax, line: 6, col: 1, msg: "5 numbers"},
		{file: "ts_bad_number.s2p", kind: ErrSyntax, line: 4, col: 3, msg: `expected a number, found "0.5x"`},
		{file: "ts_no_option.s1p", kind: ErrSyntax, line: 3, col: 1, msg: "expected the option line"},
		{file: "ts_empty.s1p", kind: ErrSyntax, line: 2, col: 1, msg: "no data"},
		{file: "ts_unknown_field.s1p", kind: ErrSyntax, line: 3, col: 12, msg: `unknown option-line field "X"`},
		{file: "ts16_keyword_first.ts", kind: ErrSyntax, line: 3, col: 1, msg: "must start with [Version]"},
		{file: "ts17_no_ports.ts", kind: ErrSyntax, line: 5, col: 1, msg: "must follow [Number of Ports]"},
		{file: "ts18_missing_order.ts", kind: ErrSyntax, line: 7, col: 1, msg: "[Two-Port Data Order]"},
		{file: "ts18_order_1port.ts", kind: ErrSyntax, line: 6, col: 1, msg: "only in 2-port files"},
		{file: "ts19_count_short.ts", kind: ErrSyntax, line: 10, col: 1, msg: "gives 3 points, but the network data have 2"},
		{file: "ts19_count_long.ts", kind: ErrSyntax, line: 9, col: 1, msg: "more frequency points than the 1"},
		{file: "ts19_no_count.ts", kind: ErrSyntax, line: 6, col: 1, msg: "needs [Number of Frequencies]"},
		{file: "ts20_noise_no_count.ts", kind: ErrSyntax, line: 10, col: 1, msg: "needs [Number of Noise Frequencies]"},
		{file: "ts21_option_per_port_v20.ts", kind: ErrSyntax, line: 4, col: 1, msg: "need [Version] 2.1"},
		{file: "ts23_no_end.ts", kind: ErrSyntax, line: 8, col: 1, msg: "expected [End]"},
		{file: "ts23_mixed_mode.ts", kind: ErrUnsupported, line: 7, col: 1, msg: "mixed-mode"},
		// Limits: the message names the limit and its value.
		{file: "ts11_3port.s3p", lim: Limits{MaxPorts: 2}, kind: ErrLimit, line: 3, col: 1, msg: "MaxPorts limit of 2"},
		{file: "ts11_3port.s3p", lim: Limits{MaxPoints: 1}, kind: ErrLimit, line: 7, col: 1, msg: "MaxPoints limit of 1 "},
		{file: "ts14_z_shunt_v2.ts", lim: Limits{MaxPorts: 1}, kind: ErrLimit, line: 5, col: 19, msg: "MaxPorts limit of 1"},
		{file: "ts19_count_short.ts", lim: Limits{MaxPoints: 2}, kind: ErrLimit, line: 6, col: 25, msg: "MaxPoints limit of 2"},
		{file: "ts11_5port.s5p", lim: Limits{MaxBytes: 100}, kind: ErrLimit, line: 0, msg: "MaxBytes limit of 100 bytes"},
	}
	for _, tc := range tests {
		t.Run(tc.file+tc.msg, func(t *testing.T) {
			t.Parallel()
			f, err := readFixture(t, tc.file, tc.lim)
			if f != nil {
				t.Errorf("got a File with the error")
			}
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("error %v is not a *ParseError", err)
			}
			if !errors.Is(err, tc.kind) {
				t.Errorf("error %v is not %v", err, tc.kind)
			}
			if pe.File != filepath.Join(fixtureDir, tc.file) || pe.Line != tc.line || (tc.line != 0 && pe.Column != tc.col) {
				t.Errorf("position %s:%d:%d, want %s:%d:%d (%v)", pe.File, pe.Line, pe.Column, tc.file, tc.line, tc.col, err)
			}
			if !strings.Contains(err.Error(), tc.msg) {
				t.Errorf("message %q lacks %q", err, tc.msg)
			}
		})
	}
}

// TestReadInline covers cases that need no file of their own: ports from
// the name, the port-count error of a v1 file without an .sNp name, and
// messages of malformed lines.
func TestReadInline(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name, text string
		kind       error // nil for success
		msg        string
	}{
		{"a.S1P", "# GHz S RI R 50\n1 0.5 0\n", nil, ""},
		{"a.txt", "# GHz S RI R 50\n1 0.5 0\n", ErrSyntax, "expected a name ending in .s1p"},
		{"a.s1p", "# GHz S RI R 50 75\n1 0.5 0\n", ErrSyntax, "needs 1 or 1"},
		{"a.s1p", "# GHz S RI R\n1 0.5 0\n", ErrSyntax, "R must be followed"},
		{"a.s1p", "# GHz S RI R 0x32\n1 0.5 0\n", ErrSyntax, "R must be followed"},
		{"a.ts", "[Version] 2.0\n# GHz S RI\n[Number of Ports] 1\n[Reference] inf\n", ErrSyntax, `expected a number, found "inf"`},
		{"a.s1p", "# GHz MHz\n1 0.5 0\n", ErrSyntax, "frequency unit twice"},
		{"a.s1p", "# GHz S RI\n1 0.5\n", ErrSyntax, "odd count"},
		{"a.s1p", "# GHz S RI\n1 0.5 0 2 0.5 0\n", ErrSyntax, "this line has 6"},
		{"a.s1p", "# GHz S RI\n-1 0.5 0\n", ErrSyntax, "not negative"},
		{"a.s1p", "# GHz S RI\n1 inf 0\n", ErrSyntax, `expected a number, found "inf"`},
		{"a.s1p", "# GHz S RI\n1 0x10 0\n", ErrSyntax, `expected a number, found "0x10"`},
		{"a.s1p", "# GHz S RI\n1 1e400 0\n", ErrSyntax, "out of the range"},
		{"a.s1p", "# GHz S DB\n1 7000 0\n", ErrSyntax, "not a finite complex number"},
		{"a.s1p", "# GHz S RI\n1 0.5 0\x01\n", ErrSyntax, "byte 0x01"},
		{"a.s1p", "# GHz S RI\n1 0.5 0\n[Version] 2.0\n", ErrSyntax, "in a version 1 file"},
		{"a.s1p", "# GHz Z RI R 50\n1 -1 0\n", ErrSyntax, "cannot be converted"},
		{"a.s2p", "# GHz Z RI R 50 75\n1 1 0 0 0 0 0 1 0\n", ErrUnsupported, "per-port reference"},
		{"a.ts", "[Version] 3.0\n", ErrSyntax, "expected [Version] 2.0 or 2.1"},
		{"a.ts", "[Version] 2.0\n# GHz S RI\n[Number of Ports] 1\n[Number of Ports] 1\n", ErrSyntax, "appears twice"},
		{"a.ts", "[Version] 2.0\n# GHz S RI\n[Number of Ports] 1\n[Number of Frequencies] 1\n[Network Data]\n1 0.5 0\n[End]\n1 0.5 0\n", ErrSyntax, "after [End]"},
		{"a.ts", "[Version] 2.0\n# GHz S RI\n[Number of Ports] 1\n[Number of Frequencies] 1\n1 0.5 0\n", ErrSyntax, "outside a data block"},
		{"a.ts", "[Version] 2.0\n# GHz S RI\n[Number of Ports] 1\n[Number of Frequencies] 1\n[Bogus]\n", ErrSyntax, "unknown keyword [bogus]"},
		{"a.ts", "[Version] 2.0\n# GHz S RI\n[Number of Ports] 2\n[Reference] 50\n[Network Data]\n", ErrSyntax, "[Reference] on line 4 needs 2 values"},
		{"a.ts", "[Version] 2.0\n# GHz S RI\n[Number of Ports] 1\n[Number of Frequencies] 1\n[Begin Information]\n", ErrSyntax, "no [End Information]"},
		{"a.ts", "[Version] 2.0\n[Number of Ports] 1\n", ErrSyntax, "expected the option line"},
		{"a.ts", "[Version] 2.0\n# GHz S RI\n[Number of Ports] 1\n[Number of Frequencies] 1\n[Network Data]\n1 0.5 0\n[Number of Ports] 1\n", ErrSyntax, "appears twice"},
		{"a.ts", "[Version] 2.0\n# GHz S RI\n[Number of Ports] 1\n[Number of Frequencies] 1\n[Network Data]\n1 0.5 0\n[Matrix Format] Full\n", ErrSyntax, "must come before [Network Data]"},
		{"a.ts", "[Version] 2.0\n# GHz S RI\n[Number of Ports] 1\n[Number of Noise Frequencies] 1\n", ErrSyntax, "only for 2-port"},
	}
	for _, tc := range tests {
		t.Run(tc.name+"/"+tc.msg, func(t *testing.T) {
			t.Parallel()
			f, err := Read(strings.NewReader(tc.text), tc.name, Limits{})
			if tc.kind == nil {
				if err != nil {
					t.Fatal(err)
				}
				if f.Sweep.Ports != 1 {
					t.Errorf("ports %d", f.Sweep.Ports)
				}
				return
			}
			if f != nil || !errors.Is(err, tc.kind) || !strings.Contains(err.Error(), tc.msg) {
				t.Fatalf("got %v, %v; want %v containing %q", f, err, tc.kind, tc.msg)
			}
			var pe *ParseError
			if !errors.As(err, &pe) || pe.Line < 1 || pe.Column < 1 {
				t.Errorf("error %#v lacks a position", err)
			}
		})
	}
}

func TestPortsFromName(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		n    int
		ok   bool
	}{
		{"a.s1p", 1, true}, {"dir/B.S2P", 2, true}, {"x.s12p", 12, true}, {"x.s0p", 0, false},
		{"x.s02p", 0, false}, {"x.ts", 0, false}, {"x.sp", 0, false}, {"x.s2", 0, false},
		{"x.sxp", 0, false}, {"s2p", 0, false}, {"x.s2p.txt", 0, false},
	}
	for _, tc := range tests {
		n, ok := PortsFromName(tc.name)
		if n != tc.n || ok != tc.ok {
			t.Errorf("PortsFromName(%q) = %d, %v; want %d, %v", tc.name, n, ok, tc.n, tc.ok)
		}
	}
}

func TestParseErrorFormat(t *testing.T) {
	t.Parallel()
	e := &ParseError{File: "a.s2p", Line: 3, Column: 7, Err: syntaxf("expected x")}
	if got, want := e.Error(), "a.s2p:3:7: touchstone: expected x"; got != want {
		t.Errorf("Error() = %q, want %q", got, want)
	}
	e = &ParseError{File: "a.s2p", Err: limitf("too big")}
	if got, want := e.Error(), "a.s2p: touchstone: too big"; got != want {
		t.Errorf("Error() = %q, want %q", got, want)
	}
	if !errors.Is(e, ErrLimit) || errors.Is(e, ErrSyntax) {
		t.Errorf("Unwrap chain wrong for %v", e)
	}
}

func TestReadFileMissing(t *testing.T) {
	t.Parallel()
	_, err := ReadFile(filepath.Join(t.TempDir(), "none.s1p"), Limits{})
	if !errors.Is(err, os.ErrNotExist) {
		t.Errorf("err = %v, want not-exist", err)
	}
}

// TestReadNoSweepOnError makes sure a valid sweep is never half-returned:
// a file that fails on its last line gives no File at all.
func TestReadNoSweepOnError(t *testing.T) {
	t.Parallel()
	f, err := Read(strings.NewReader("# GHz S RI\n1 0.5 0\n2 0.5 0\n3 x 0\n"), "a.s1p", Limits{})
	if f != nil || err == nil {
		t.Fatalf("got %v, %v", f, err)
	}
}

// TestReadMaxBytes checks the byte limit on a reader that cannot tell its
// size, where it is found by reading one byte past the limit.
func TestReadMaxBytes(t *testing.T) {
	t.Parallel()
	const text = "# GHz S RI\n1 0.5 0\n" // 19 bytes
	for _, tc := range []struct {
		max int64
		ok  bool
	}{{19, true}, {18, false}} {
		for _, r := range []io.Reader{strings.NewReader(text), struct{ io.Reader }{strings.NewReader(text)}} {
			f, err := Read(r, "a.s1p", Limits{MaxBytes: tc.max})
			if tc.ok != (err == nil) || tc.ok != (f != nil) {
				t.Errorf("max %d, %T: %v", tc.max, r, err)
			}
			if !tc.ok && (!errors.Is(err, ErrLimit) || !strings.Contains(err.Error(), "MaxBytes limit of 18 bytes")) {
				t.Errorf("max %d: %v", tc.max, err)
			}
		}
	}
}
