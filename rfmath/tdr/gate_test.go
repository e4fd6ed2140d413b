package tdr

import (
	"errors"
	"math"
	"math/cmplx"
	"testing"

	"matchbench/rfmath"
)

// twoReflections returns Γ1·e^(−j2πf·t1) + Γ2·e^(−j2πf·t2) on f and each
// term alone.
func twoReflections(f []float64, g1 complex128, t1 float64, g2 complex128, t2 float64) (sum, near, far []complex128) {
	sum = make([]complex128, len(f))
	near = make([]complex128, len(f))
	far = make([]complex128, len(f))
	for k, fk := range f {
		near[k] = g1 * cmplx.Exp(complex(0, -2*math.Pi*fk*t1))
		far[k] = g2 * cmplx.Exp(complex(0, -2*math.Pi*fk*t2))
		sum[k] = near[k] + far[k]
	}
	return sum, near, far
}

// TestGateTwoReflections gates a sweep holding a near reflection (0.3 at
// 2.1 ns) and a far one (0.5 at 12.3 ns), 1–3 GHz in 5 MHz steps (resolution
// 1/span = 0.5 ns). A gate of 5 ns around 2 ns must leave the near one and
// remove the far one; the notch the opposite.
//
// Tolerances (stated, measured when the test was written, with margin):
// with a Kaiser β = 6 spectrum window the error is below 0.002 (0.7 % of
// the near reflection) over the middle 80 % of the band and below 0.05
// within 10 % of the band edges, where the compensation divides by the
// window's small edge values. The far reflection alone is 0.5, so a gate
// that failed would miss by about that much.
func TestGateTwoReflections(t *testing.T) {
	t.Parallel()
	n := 401
	f := make([]float64, n)
	for k := range f {
		f[k] = 1e9 + 5e6*float64(k)
	}
	g, near, far := twoReflections(f, cmplx.Rect(0.3, 0.7), 2.1e-9, 0.5, 12.3e-9)
	k6 := Window{Kind: Kaiser, Beta: 6}
	tests := []struct {
		name string
		gate Gate
		want []complex128
	}{
		{"hann gate keeps the near", Gate{CentreS: 2e-9, SpanS: 5e-9, Shape: Window{Kind: Hann}}, near},
		{"kaiser gate keeps the near", Gate{CentreS: 2e-9, SpanS: 5e-9, Shape: k6}, near},
		{"rectangular gate keeps the near", Gate{CentreS: 2e-9, SpanS: 5e-9}, near},
		{"gate on the far", Gate{CentreS: 12e-9, SpanS: 6e-9, Shape: Window{Kind: Hann}}, far},
		{"notch removes the near", Gate{CentreS: 2e-9, SpanS: 5e-9, Shape: Window{Kind: Hann}, Notch: true}, far},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			out, err := GateTo(nil, f, g, tc.gate, &Settings{Window: k6, Pad: 4})
			if err != nil {
				t.Fatal(err)
			}
			var mid, edge float64
			for k := range f {
				e := cmplx.Abs(out[k] - tc.want[k])
				if k >= n/10 && k < n-n/10 {
					mid = math.Max(mid, e)
				} else {
					edge = math.Max(edge, e)
				}
			}
			t.Logf("error %.3g mid-band, %.3g at the edges", mid, edge)
			if mid > 0.002 || edge > 0.05 {
				t.Errorf("error %.3g mid-band, %.3g at the edges; want ≤ 0.002 and ≤ 0.05", mid, edge)
			}
		})
	}
}

// TestGateConnector gates a physical case: a 0.5 pF shunt capacitance at a
// connector, 50 cm of 50 Ω PTFE coax (VF 0.695, §15; 2.4 ns one way), then
// a 25 Ω load, 0.5–2.5 GHz in 5 MHz steps. A notch gate of 4 ns around
// t = 0 must take away the connector's own reflection S11c and leave what
// comes back through it from the load. The oracle is rfmath's ABCD model:
// Γ − S11c, with S11c = −jωC·Z0/(2 + jωC·Z0) of the capacitance alone (its
// time response lasts CZ0/2 = 12.5 ps, so it lies wholly inside the gate,
// and everything else returns after 4.8 ns). Against a connector
// reflection of up to 0.37, the error allowed is 0.004 in the middle 80 %
// of the band (0.002 was measured: the Kaiser side lobes of the load's
// reflection, about 44 dB below its 0.33, reach into the gate) and 0.05
// at the edges, as in TestGateTwoReflections.
func TestGateConnector(t *testing.T) {
	t.Parallel()
	line := rfmath.Line{Z0Ohm: 50, LengthM: 0.5, VelocityFactor: 0.695}
	gl := rfmath.GammaFromZ(25, 50)
	n := 401
	var f []float64
	var g, want []complex128
	for k := range n {
		fk := 0.5e9 + 5e6*float64(k)
		y := rfmath.ShuntY(complex(0, 2*math.Pi*fk*0.5e-12))
		f = append(f, fk)
		g = append(g, y.Mul(line.ABCD(fk)).InputGamma(gl, 50))
		want = append(want, g[k]-rfmath.ABCDToS(y, 50, 50)[0])
	}
	s := rfmath.NewSweep(len(f), 1, 50)
	copy(s.FreqHz, f)
	copy(s.Data, g)
	out, err := GateSweep(s, Gate{CentreS: 0, SpanS: 4e-9, Shape: Window{Kind: Hann}, Notch: true}, &Settings{Window: Window{Kind: Kaiser, Beta: 6}, Pad: 4})
	if err != nil {
		t.Fatal(err)
	}
	var mid, edge float64
	for k := range f {
		e := cmplx.Abs(out.Data[k] - want[k])
		if k >= n/10 && k < n-n/10 {
			mid = math.Max(mid, e)
		} else {
			edge = math.Max(edge, e)
		}
	}
	t.Logf("error %.3g mid-band, %.3g at the edges", mid, edge)
	if mid > 0.004 || edge > 0.05 {
		t.Errorf("error %.3g mid-band, %.3g at the edges; want ≤ 0.004 and ≤ 0.05", mid, edge)
	}
	if s.Data[0] != g[0] {
		t.Error("GateSweep modified its input")
	}
}

func TestGateErrors(t *testing.T) {
	t.Parallel()
	f := []float64{1e9, 1.1e9, 1.3e9}
	g := []complex128{1, 1, 1}
	if _, err := GateTo(nil, f, g, Gate{SpanS: 1e-9}, nil); !errors.Is(err, ErrGrid) {
		t.Errorf("non-uniform: %v", err)
	}
	f = []float64{1e9, 1.1e9, 1.2e9}
	for _, gt := range []Gate{{}, {SpanS: -1}, {SpanS: math.Inf(1)}, {SpanS: 1e-9, CentreS: math.NaN()}, {SpanS: 1e-9, Shape: Window{Kind: Kaiser, Beta: 200}}} {
		if _, err := GateTo(nil, f, g, gt, nil); !errors.Is(err, ErrGate) {
			t.Errorf("gate %+v: %v", gt, err)
		}
	}
	// A gate far from every sample of the record leaves nothing to
	// compensate with.
	if _, err := GateTo(nil, f, g, Gate{CentreS: 50e-9, SpanS: 0.1e-9}, nil); !errors.Is(err, ErrGate) {
		t.Errorf("empty gate: %v", err)
	}
	if _, err := GateTo(nil, f, g, Gate{SpanS: 1e-9}, &Settings{Pad: -2}); err == nil {
		t.Error("negative padding accepted")
	}
	if !panicked(func() { GateTo(make([]complex128, 2), f, g, Gate{SpanS: 1e-9}, nil) }) {
		t.Error("short dst did not panic")
	}
	// The gate's own shape.
	gt := Gate{CentreS: 10e-9, SpanS: 4e-9, Shape: Window{Kind: Hann}}
	for _, c := range []struct{ t, want float64 }{{10e-9, 1}, {11e-9, 1}, {11.5e-9, 0.5}, {12e-9, 0}, {8.5e-9, 0.5}, {13e-9, 0}} {
		if got := gt.At(c.t); math.Abs(got-c.want) > 1e-12 {
			t.Errorf("gate at %v = %v, want %v", c.t, got, c.want)
		}
	}
}
