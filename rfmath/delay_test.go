package rfmath

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"
)

// TestGroupDelay checks τ = −dφ/dω against closed forms: a matched line of
// one-way delay T has S21 = e^(−jωT), so τ = T, and shorted its reflection
// Γ = −e^(−j2ωT), τ = 2T (REFERENCE-CHECKS §10: a 1 ns delay is −360°/GHz in
// transmission, −720°/GHz in reflection); these are exact for the
// difference quotient on any grid, here an uneven one whose phase steps
// stay below 180°. A first-order low-pass H = 1/(1 + jωRC) has
// φ = −atan(ωRC), so τ = RC/(1 + (ωRC)²) (closed form); the central
// difference over neighbouring points is within O(Δω²) of it.
func TestGroupDelay(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(13, 1))
	const n = 301
	freq := make([]float64, n)
	f := 100e6
	for k := range freq {
		freq[k] = f
		f += 1e6 + 2e6*rng.Float64() // 1–3 MHz steps
	}
	const T = 10.5e-9 // 2T·Δf ≤ 0.063 of a turn per step
	line := make([]complex128, n)
	short := make([]complex128, n)
	for k, f := range freq {
		w := 2 * math.Pi * f
		line[k] = cmplx.Rect(0.9, -w*T) // a lossy line: the magnitude does not matter
		short[k] = -cmplx.Rect(1, -2*w*T)
	}
	for _, ap := range []int{1, 3} {
		for name, tc := range map[string]struct {
			s    []complex128
			want float64
		}{"line S21": {line, T}, "shorted line S11": {short, 2 * T}} {
			got := GroupDelayTo(nil, freq, tc.s, ap)
			for k, v := range got {
				if math.Abs(v-tc.want) > 1e-9*tc.want {
					t.Fatalf("%s, aperture %d: τ[%d] = %.9g s, want %.9g s", name, ap, k, v, tc.want)
				}
			}
		}
	}

	// The RC low-pass, R = 50 Ω, C = 10 pF: RC = 500 ps, corner 318 MHz.
	const rc = 50 * 10e-12
	uni := make([]float64, 201)
	h := make([]complex128, len(uni))
	for k := range uni {
		uni[k] = 10e6 * float64(k+1)
		h[k] = 1 / complex(1, 2*math.Pi*uni[k]*rc)
	}
	got := GroupDelayTo(make([]float64, len(uni)), uni, h, 1)
	for k := 1; k < len(uni)-1; k++ {
		w := 2 * math.Pi * uni[k]
		want := rc / (1 + w*rc*w*rc)
		if math.Abs(got[k]-want) > 2e-3*want {
			t.Errorf("RC low-pass at %g Hz: τ = %g s, want %g s", uni[k], got[k], want)
		}
	}
}

// TestGroupDelayGaps checks that a zero or NaN point makes the delay NaN in
// the windows that reach it, and only there.
func TestGroupDelayGaps(t *testing.T) {
	t.Parallel()
	freq := []float64{1, 2, 3, 4, 5, 6, 7}
	s := make([]complex128, len(freq))
	for k, f := range freq {
		s[k] = cmplx.Rect(1, -2*math.Pi*f*0.01)
	}
	s[3] = complex(math.NaN(), 0)
	got := GroupDelayTo(nil, freq, s, 1)
	for k, v := range got {
		near := k >= 2 && k <= 4
		if near != math.IsNaN(v) {
			t.Errorf("τ[%d] = %v; NaN expected: %v", k, v, near)
		}
		if !near && math.Abs(v-0.01) > 1e-12 {
			t.Errorf("τ[%d] = %v, want 0.01", k, v)
		}
	}
	if v := GroupDelayTo(nil, []float64{1}, []complex128{1}, 1); !math.IsNaN(v[0]) {
		t.Errorf("one point: %v, want NaN", v[0])
	}
	defer func() {
		if recover() == nil {
			t.Error("a dst of the wrong length did not panic")
		}
	}()
	GroupDelayTo(make([]float64, 2), freq, s, 1)
}

// TestResonanceSlopeQ checks the slope Q on the series RLC of
// REFERENCE-CHECKS §9 R-1 (Q = 20) and the parallel RLC of R-3 (Q = 10),
// sampled on uneven grids, and FractionalBandwidth on R-1's half-power band
// (7.957747 MHz about 159.1549 MHz is 5 %, to the difference between the
// arithmetic and the geometric centre).
func TestResonanceSlopeQ(t *testing.T) {
	t.Parallel()
	series := func(w float64) complex128 { return complex(5, w*100e-9-1/(w*10e-12)) }
	parallel := func(w float64) complex128 { return 1 / complex(1.0/1000, w*10e-12-1/(w*100e-9)) }
	for _, tc := range []struct {
		name   string
		z      func(w float64) complex128
		lo, hi float64
		rising bool
		want   float64
	}{
		{"series RLC R-1", series, 120e6, 200e6, true, 20},
		{"parallel RLC R-3", parallel, 120e6, 200e6, false, 10},
	} {
		rng := rand.New(rand.NewPCG(7, 3))
		var freq []float64
		for f := tc.lo; f < tc.hi; f += 0.2e6 + 0.4e6*rng.Float64() {
			freq = append(freq, f)
		}
		z := make([]complex128, len(freq))
		for k, f := range freq {
			z[k] = tc.z(2 * math.Pi * f)
		}
		cs := ReactanceZeroCrossings(freq, z)
		if len(cs) != 1 || cs[0].Rising != tc.rising {
			t.Fatalf("%s: crossings %+v", tc.name, cs)
		}
		if q := ResonanceSlopeQ(freq, z, cs[0]); math.Abs(q-tc.want) > 1e-3*tc.want {
			t.Errorf("%s: slope Q = %.6g, want %g", tc.name, q, tc.want)
		}
	}
	if fb := FractionalBandwidth(155.2258e6, 163.1835e6); math.Abs(fb-0.05) > 2e-4 {
		t.Errorf("fractional bandwidth of R-1's half-power band = %.6g, want 0.05", fb)
	}
	if fb := FractionalBandwidth(0, 1); !math.IsNaN(fb) {
		t.Errorf("FractionalBandwidth(0, 1) = %v, want NaN", fb)
	}
}

// TestBandCentreHz checks the design centre on the half-power edges of
// REFERENCE-CHECKS R-1 (series RLC, L = 100 nH, C = 10 pF, R = 5 Ω): the
// edges f0·(√(1 + 1/(4Q²)) ∓ 1/(2Q)) have the product f0² exactly (closed
// form), so their geometric centre is the resonance 159.1549431 MHz, while
// the arithmetic centre lies above it.
func TestBandCentreHz(t *testing.T) {
	t.Parallel()
	f0 := 1 / (2 * math.Pi * math.Sqrt(100e-9*10e-12))
	q := 2 * math.Pi * f0 * 100e-9 / 5
	k := math.Sqrt(1 + 1/(4*q*q))
	lo, hi := f0*(k-1/(2*q)), f0*(k+1/(2*q))
	if got := BandCentreHz(lo, hi); math.Abs(got-f0) > 1e-9*f0 || math.Abs(f0-159.1549431e6) > 1 {
		t.Errorf("BandCentreHz(%g, %g) = %.6f Hz, want the resonance %.6f Hz", lo, hi, got, f0)
	}
	if a := (lo + hi) / 2; !(a > f0) {
		t.Errorf("arithmetic centre %g not above f0 %g", a, f0)
	}
	for _, e := range [][2]float64{{0, 1e9}, {2e9, 1e9}, {-1, 1}, {1e9, math.Inf(1)}, {math.NaN(), 1e9}} {
		if got := BandCentreHz(e[0], e[1]); !math.IsNaN(got) {
			t.Errorf("BandCentreHz(%g, %g) = %g, want NaN", e[0], e[1], got)
		}
	}
}
