package touchstone

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"

	"matchbench/rfmath"
)

// randomSweep returns a sweep of pts points with entries of magnitude below
// maxMag, strictly increasing frequencies spread over several decades, and
// the given references (one per port).
func randomSweep(rng *rand.Rand, pts int, z0 []float64, maxMag float64) *rfmath.Sweep {
	n := len(z0)
	s := &rfmath.Sweep{Ports: n, Z0: append([]float64(nil), z0...), FreqHz: make([]float64, pts), Data: make([]complex128, pts*n*n)}
	f := 1e3 * (1 + rng.Float64())
	for k := range pts {
		s.FreqHz[k] = f
		f *= 1 + 3*rng.Float64() + 1e-9
	}
	for i := range s.Data {
		s.Data[i] = cmplx.Rect(maxMag*rng.Float64(), 2*math.Pi*rng.Float64()-math.Pi)
	}
	return s
}

func sweepsClose(t *testing.T, got, want *rfmath.Sweep, tol float64) {
	t.Helper()
	if got.Ports != want.Ports || got.Len() != want.Len() {
		t.Fatalf("shape %d ports × %d points, want %d × %d", got.Ports, got.Len(), want.Ports, want.Len())
	}
	for i := range want.Z0 {
		if got.Z0[i] != want.Z0[i] {
			t.Errorf("Z0[%d] = %g, want %g", i, got.Z0[i], want.Z0[i])
		}
	}
	for k, f := range want.FreqHz {
		// Frequencies are written exactly in the chosen unit; scaling back
		// may cost an ulp or two.
		if math.Abs(got.FreqHz[k]-f) > 4e-16*f {
			t.Errorf("frequency %d = %.17g, want %.17g", k, got.FreqHz[k], f)
		}
	}
	for i, v := range want.Data {
		if !near(got.Data[i], v, tol) {
			t.Fatalf("data[%d] = %v, want %v (tol %g)", i, got.Data[i], v, tol)
		}
	}
}

// TestWriteRoundTrip writes random sweeps of 1, 2, 3 and 5 ports in every
// format and both versions and reads them back: the numbers must agree to
// the written precision (12 significant digits by default, so 1e-10 relative
// with margin for MA and DB, whose angle and log carry the rounding into
// both parts).
func TestWriteRoundTrip(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(1, 1))
	refs := map[int][]float64{1: {50}, 2: {50, 75}, 3: {50, 50, 50}, 5: {25, 50, 75, 100, 1}}
	for _, n := range []int{1, 2, 3, 5} {
		for _, version := range []int{1, 2} {
			for _, format := range []string{"RI", "MA", "DB"} {
				for _, digits := range []int{0, 6, 17} {
					s := randomSweep(rng, 7, refs[n], 1.5)
					s.Data[0] = 0 // an exact zero: −400 dB in DB format
					name := fmt.Sprintf("n=%d/v%d/%s/digits=%d", n, version, format, digits)
					t.Run(name, func(t *testing.T) {
						t.Parallel()
						var buf bytes.Buffer
						opt := WriteOptions{Version: version, Format: format, Digits: digits, Comments: []string{" round trip", ""}}
						err := Write(&buf, s, opt)
						if version == 1 && refs[n][0] != refs[n][len(refs[n])-1] {
							// One R for every port in version 1 (TS-4).
							if !errors.Is(err, ErrUnsupported) {
								t.Fatalf("version 1 with per-port references: err %v, want ErrUnsupported", err)
							}
							return
						}
						if err != nil {
							t.Fatal(err)
						}
						fname := fmt.Sprintf("rt.s%dp", n)
						f, err := Read(&buf, fname, Limits{})
						if err != nil {
							t.Fatalf("%v\n%s", err, buf.String())
						}
						d := digits
						if d == 0 {
							d = 12
						}
						tol := 20 * math.Pow(10, float64(1-d))
						if d == 17 {
							tol = 1e-15
						}
						if format == "RI" && d == 17 {
							tol = 0 // shortest exact: bit-identical
						}
						sweepsClose(t, f.Sweep, s, tol)
						if f.Format != format || f.Param != 'S' || len(f.Comments) != 2 || f.Comments[0] != " round trip" {
							t.Errorf("format %q param %c comments %q", f.Format, f.Param, f.Comments)
						}
						if wantV := map[int]string{1: "1.1", 2: "2.1"}[version]; f.Version != wantV {
							t.Errorf("version %q, want %q", f.Version, wantV)
						}
					})
				}
			}
		}
	}
}

// TestWriteYZRoundTrip writes Y and Z data (through the rfmath conversions)
// and reads them back to S. The entries are kept small so that I ± S is well
// conditioned and the 12 written digits carry through the two conversions.
func TestWriteYZRoundTrip(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(2, 2))
	for _, n := range []int{1, 2, 3, 5} {
		for _, version := range []int{1, 2} {
			for _, param := range []byte{'Y', 'Z'} {
				z0 := make([]float64, n)
				for i := range z0 {
					z0[i] = 50
					if version == 2 {
						z0[i] = float64(25 * (i + 1))
					}
				}
				s := randomSweep(rng, 5, z0, 0.8/float64(n))
				t.Run(fmt.Sprintf("n=%d/v%d/%c", n, version, param), func(t *testing.T) {
					t.Parallel()
					var buf bytes.Buffer
					if err := Write(&buf, s, WriteOptions{Version: version, Param: param, Format: "MA"}); err != nil {
						t.Fatal(err)
					}
					f, err := Read(&buf, fmt.Sprintf("yz.s%dp", n), Limits{})
					if err != nil {
						t.Fatal(err)
					}
					if f.Param != param {
						t.Errorf("param %c", f.Param)
					}
					sweepsClose(t, f.Sweep, s, 1e-9)
				})
			}
		}
	}
}

// TestWriteZNormalisation checks TS-14 on the writer: a 100 Ω load (Γ = 1/3
// in 50 Ω) is written as Z data 2 in version 1 and 100 in version 2, and as
// Y data 0.5 and 0.01.
func TestWriteZNormalisation(t *testing.T) {
	t.Parallel()
	s := rfmath.NewSweep(1, 1, 50)
	s.FreqHz[0] = 1e9
	s.Data[0] = complex(1.0/3, 0)
	tests := []struct {
		version int
		param   byte
		want    string
	}{
		{1, 'Z', "1 2 0\n"}, {2, 'Z', "1 100 0\n"}, {1, 'Y', "1 0.5 0\n"}, {2, 'Y', "1 0.01 0\n"},
	}
	for _, tc := range tests {
		var buf bytes.Buffer
		if err := Write(&buf, s, WriteOptions{Version: tc.version, Param: tc.param, Digits: 9}); err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(buf.String(), "\n"+tc.want) {
			t.Errorf("v%d %c:\n%s\nwant a line %q", tc.version, tc.param, buf.String(), tc.want)
		}
	}
}

// TestWriteLayout checks the exact text of small files against layouts
// derived by hand from TS-10, TS-11 and the 2.x keyword rules.
func TestWriteLayout(t *testing.T) {
	t.Parallel()
	mk := func(n int, z0 ...float64) *rfmath.Sweep {
		s := &rfmath.Sweep{Ports: n, Z0: z0, FreqHz: []float64{1e9}, Data: make([]complex128, n*n)}
		for i := range n {
			for j := range n {
				s.Data[i*n+j] = complex(float64(10*(i+1)+j+1), 0.5)
			}
		}
		return s
	}
	tests := []struct {
		name string
		s    *rfmath.Sweep
		opt  WriteOptions
		want string
	}{
		{"2-port v1", mk(2, 50, 50), WriteOptions{Comments: []string{" hi"}},
			"! hi\n# GHz S RI R 50\n1 11 0.5 21 0.5 12 0.5 22 0.5\n"},
		{"2-port v2 per-port refs", mk(2, 50, 75), WriteOptions{Version: 2, FreqUnit: "mhz"},
			"[Version] 2.1\n# MHz S RI R 50\n[Number of Ports] 2\n[Two-Port Data Order] 12_21\n[Number of Frequencies] 1\n[Reference] 50 75\n[Network Data]\n1000 11 0.5 12 0.5 21 0.5 22 0.5\n[End]\n"},
		// Version 1 has one R for every port (TS-4), so a sweep whose
		// ports' references differ is written as version 2 by default.
		{"2-port per-port refs by default", mk(2, 50, 75), WriteOptions{},
			"[Version] 2.1\n# GHz S RI R 50\n[Number of Ports] 2\n[Two-Port Data Order] 12_21\n[Number of Frequencies] 1\n[Reference] 50 75\n[Network Data]\n1 11 0.5 12 0.5 21 0.5 22 0.5\n[End]\n"},
		{"3-port v1", mk(3, 50, 50, 50), WriteOptions{Format: "ma", Digits: 3},
			"# GHz S MA R 50\n1 11 2.6 12 2.39 13 2.2\n  21 1.36 22 1.3 23 1.25\n  31 0.924 32 0.895 33 0.868\n"},
		{"5-port v1", mk(5, 50, 50, 50, 50, 50), WriteOptions{FreqUnit: "Hz"},
			"# Hz S RI R 50\n1000000000 11 0.5 12 0.5 13 0.5 14 0.5\n  15 0.5\n  21 0.5 22 0.5 23 0.5 24 0.5\n  25 0.5\n  31 0.5 32 0.5 33 0.5 34 0.5\n  35 0.5\n  41 0.5 42 0.5 43 0.5 44 0.5\n  45 0.5\n  51 0.5 52 0.5 53 0.5 54 0.5\n  55 0.5\n"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			var buf bytes.Buffer
			if err := Write(&buf, tc.s, tc.opt); err != nil {
				t.Fatal(err)
			}
			if buf.String() != tc.want {
				t.Errorf("got\n%s\nwant\n%s", buf.String(), tc.want)
			}
		})
	}
}

func TestWriteNoise(t *testing.T) {
	t.Parallel()
	s := rfmath.NewSweep(3, 2, 50)
	copy(s.FreqHz, []float64{1e9, 2e9, 3e9})
	for i := range s.Data {
		s.Data[i] = 0.5
	}
	noise := []NoisePoint{{1.5e9, 0.9, 0.4, 35, 20}, {2.5e9, 1.1, 0.3, 50, 25}}
	for _, version := range []int{1, 2} {
		var buf bytes.Buffer
		if err := Write(&buf, s, WriteOptions{Version: version, Noise: noise}); err != nil {
			t.Fatal(err)
		}
		f, err := Read(&buf, "n.s2p", Limits{})
		if err != nil {
			t.Fatalf("v%d: %v", version, err)
		}
		checkNoise(t, f.Noise, noise)
		sweepsClose(t, f.Sweep, s, 0)
	}
	// Version 1 finds noise by the frequency going down: noise above the
	// last network frequency cannot be written.
	err := Write(&bytes.Buffer{}, s, WriteOptions{Noise: []NoisePoint{{4e9, 1, 0.3, 0, 20}}})
	if err == nil {
		t.Error("noise above the network data written in version 1")
	}
}

func TestWriteErrors(t *testing.T) {
	t.Parallel()
	s := rfmath.NewSweep(2, 2, 50)
	// Two adjacent float64 frequencies whose quotients by 1e9 round to the
	// same value cannot both be written in GHz.
	s.FreqHz[0] = 1e9
	for s.FreqHz[1] = math.Nextafter(1e9, 2e9); s.FreqHz[0]/1e9 != s.FreqHz[1]/1e9; {
		s.FreqHz[0], s.FreqHz[1] = s.FreqHz[1], math.Nextafter(s.FreqHz[1], 2e9)
	}
	s2 := s.Clone()
	s2.Z0[1] = 75
	open := rfmath.NewSweep(1, 1, 50)
	open.FreqHz[0], open.Data[0] = 1, 1
	tests := []struct {
		name string
		s    *rfmath.Sweep
		opt  WriteOptions
		msg  string
	}{
		{"version", s, WriteOptions{Version: 3}, "Version 3"},
		{"param", s, WriteOptions{Param: 'H'}, "Param"},
		{"format", s, WriteOptions{Format: "XY"}, "Format"},
		{"unit", s, WriteOptions{FreqUnit: "THz"}, "FreqUnit"},
		{"digits", s, WriteOptions{Digits: 18}, "Digits"},
		{"comment", s, WriteOptions{Comments: []string{"a\nb"}}, "comment 1"},
		{"frequencies merge", s, WriteOptions{FreqUnit: "GHz"}, "become equal"},
		{"v1 Z with unequal refs", s2, WriteOptions{Version: 1, Param: 'Z', FreqUnit: "Hz"}, "references differ"},
		{"v1 S with unequal refs", s2, WriteOptions{Version: 1}, "references differ (50, 75 ohm); write version 2"},
		{"open has no Z", open, WriteOptions{Param: 'Z'}, "no Z-parameters"},
		{"noise on 1-port", open, WriteOptions{Noise: []NoisePoint{{1, 1, 0, 0, 1}}}, "2-port"},
		{"invalid sweep", &rfmath.Sweep{Ports: 1, Z0: []float64{50}}, WriteOptions{}, "cannot write"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			var buf bytes.Buffer
			err := Write(&buf, tc.s, tc.opt)
			if err == nil || !strings.Contains(err.Error(), tc.msg) {
				t.Fatalf("err = %v, want one containing %q", err, tc.msg)
			}
			if buf.Len() != 0 {
				t.Errorf("wrote %d bytes before failing", buf.Len())
			}
		})
	}
	for _, p := range []byte{'S', 'Z'} {
		if err := Write(&bytes.Buffer{}, s2, WriteOptions{Version: 1, Param: p, FreqUnit: "Hz"}); !errors.Is(err, ErrUnsupported) {
			t.Errorf("v1 %c with unequal refs: %v is not ErrUnsupported", p, err)
		}
	}
}

// TestWriteDefaultUnit checks the unit chosen from the highest frequency.
func TestWriteDefaultUnit(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		top  float64
		want string
	}{{0, "Hz"}, {999, "Hz"}, {1e3, "kHz"}, {2.5e6, "MHz"}, {1e9, "GHz"}, {40e9, "GHz"}} {
		s := rfmath.NewSweep(1, 1, 50)
		s.FreqHz[0] = tc.top
		var buf bytes.Buffer
		if err := Write(&buf, s, WriteOptions{}); err != nil {
			t.Fatal(err)
		}
		if !strings.HasPrefix(buf.String(), "# "+tc.want+" ") {
			t.Errorf("top %g Hz: %q, want unit %s", tc.top, buf.String(), tc.want)
		}
	}
}
