package rfmath

import (
	"errors"
	"math"
	"testing"
)

func TestSweepValidate(t *testing.T) {
	t.Parallel()
	good := func() *Sweep {
		s := NewSweep(3, 2, 50)
		copy(s.FreqHz, []float64{1e6, 2e6, 3e6})
		return s
	}
	tests := []struct {
		name   string
		mutate func(*Sweep)
		ok     bool
		is     error
	}{
		{"good", func(*Sweep) {}, true, nil},
		{"no ports", func(s *Sweep) { s.Ports = 0 }, false, nil},
		{"empty", func(s *Sweep) { s.FreqHz = nil }, false, ErrEmptySweep},
		{"reference count", func(s *Sweep) { s.Z0 = s.Z0[:1] }, false, nil},
		{"zero reference", func(s *Sweep) { s.Z0[1] = 0 }, false, nil},
		{"infinite reference", func(s *Sweep) { s.Z0[0] = math.Inf(1) }, false, nil},
		{"data length", func(s *Sweep) { s.Data = s.Data[:5] }, false, nil},
		{"NaN frequency", func(s *Sweep) { s.FreqHz[1] = math.NaN() }, false, nil},
		{"negative frequency", func(s *Sweep) { s.FreqHz[0] = -1 }, false, nil},
		{"not increasing", func(s *Sweep) { s.FreqHz[2] = 2e6 }, false, nil},
		{"NaN data", func(s *Sweep) { s.Set(1, 0, 1, complex(0, math.NaN())) }, false, nil},
		{"Inf data", func(s *Sweep) { s.Set(2, 1, 1, complex(math.Inf(-1), 0)) }, false, nil},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s := good()
			tc.mutate(s)
			err := s.Validate()
			if (err == nil) != tc.ok {
				t.Fatalf("Validate = %v, want ok %v", err, tc.ok)
			}
			if tc.is != nil && !errors.Is(err, tc.is) {
				t.Errorf("err = %v, want %v", err, tc.is)
			}
		})
	}
}

func TestSweepAccess(t *testing.T) {
	t.Parallel()
	s := NewSweep(2, 2, 75)
	if s.Len() != 2 || s.Ports != 2 || s.Z0[0] != 75 || s.Z0[1] != 75 || len(s.Data) != 8 {
		t.Fatalf("NewSweep = %+v", s)
	}
	s.Set(1, 1, 0, 3+4i)
	if v := s.At(1, 1, 0); v != 3+4i {
		t.Errorf("At = %v", v)
	}
	// Data[k·P·P + i·P + j]: k = 1, i = 1, j = 0 is index 6.
	if s.Data[6] != 3+4i || s.Matrix(1)[2] != 3+4i {
		t.Errorf("layout: Data = %v", s.Data)
	}
	if p := s.Param(nil, 1, 0); p[0] != 0 || p[1] != 3+4i {
		t.Errorf("Param = %v", p)
	}
	c := s.Clone()
	c.Data[6], c.Z0[0], c.FreqHz[0] = 0, 50, 9
	if s.Data[6] != 3+4i || s.Z0[0] != 75 || s.FreqHz[0] != 0 {
		t.Error("Clone shares storage")
	}
}

func TestSweepLocateInterp(t *testing.T) {
	t.Parallel()
	s := NewSweep(3, 1, 50)
	copy(s.FreqHz, []float64{1, 2, 4})
	copy(s.Data, []complex128{0, 1i, 3 + 1i})
	tests := []struct {
		f    float64
		k    int
		t    float64
		want complex128
	}{
		{1, 0, 0, 0},
		{1.5, 0, 0.5, 0.5i},
		{2, 0, 1, 1i}, // the first index with FreqHz ≥ f, less one
		{3, 1, 0.5, 1.5 + 1i},
		{4, 1, 1, 3 + 1i},
	}
	for _, tc := range tests {
		k, w, err := s.Locate(tc.f)
		if err != nil || k != tc.k || math.Abs(w-tc.t) > 1e-15 {
			t.Errorf("Locate(%g) = %d, %g, %v; want %d, %g", tc.f, k, w, err, tc.k, tc.t)
		}
		v, err := s.InterpAt(nil, tc.f)
		if err != nil || v[0] != tc.want {
			t.Errorf("InterpAt(%g) = %v, %v; want %v", tc.f, v, err, tc.want)
		}
	}
	for _, f := range []float64{0.5, 4.5, math.NaN()} {
		if _, _, err := s.Locate(f); !errors.Is(err, ErrOutOfRange) {
			t.Errorf("Locate(%g): err = %v, want ErrOutOfRange", f, err)
		}
	}
	if _, _, err := (&Sweep{Ports: 1}).Locate(1); !errors.Is(err, ErrEmptySweep) {
		t.Errorf("empty Locate: %v", err)
	}
	r, err := s.Resample([]float64{1.5, 3})
	if err != nil || r.Data[0] != 0.5i || r.Data[1] != 1.5+1i || r.Z0[0] != 50 {
		t.Errorf("Resample = %+v, %v", r, err)
	}
	if _, err := s.Resample([]float64{3, 3}); err == nil {
		t.Error("Resample of a non-increasing grid succeeded")
	}
	if _, err := s.Resample([]float64{5}); !errors.Is(err, ErrOutOfRange) {
		t.Errorf("Resample outside: %v", err)
	}
}

func TestSweepPanics(t *testing.T) {
	t.Parallel()
	s := NewSweep(2, 2, 50)
	tests := []struct {
		name string
		f    func()
	}{
		{"NewSweep ports", func() { NewSweep(1, 0, 50) }},
		{"NewSweep n", func() { NewSweep(-1, 1, 50) }},
		{"At port", func() { s.At(0, 2, 0) }},
		{"Set port", func() { s.Set(0, 0, -1, 0) }},
		{"Param port", func() { s.Param(nil, 0, 2) }},
		{"Param dst", func() { s.Param(make([]complex128, 1), 0, 0) }},
		{"InterpAt dst", func() { _, _ = s.InterpAt(make([]complex128, 3), 0) }},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			if !panics(tc.f) {
				t.Error("did not panic")
			}
		})
	}
}

// TestLerpExactAtPoints checks that the interpolation returns the measured
// points themselves at t = 0 and t = 1, and the midpoint halfway, on values
// where a + (b − a) would round away from b.
func TestLerpExactAtPoints(t *testing.T) {
	t.Parallel()
	a, b := complex(0.3, 0.1), complex(0.9, 0.3) // 0.3 + (0.9 − 0.3) rounds to 0.9000000000000001
	if a+(b-a) == b {
		t.Fatal("pick values where a + (b − a) ≠ b")
	}
	if Lerp(a, b, 0) != a || Lerp(a, b, 1) != b {
		t.Errorf("Lerp at the ends: %v, %v; want %v, %v", Lerp(a, b, 0), Lerp(a, b, 1), a, b)
	}
	if m := Lerp(1, 3+2i, 0.5); m != 2+1i {
		t.Errorf("Lerp midpoint = %v, want 2+1i", m)
	}
	s := NewSweep(3, 1, 50)
	copy(s.FreqHz, []float64{1, 2, 3})
	copy(s.Data, []complex128{0.3, a, b})
	for k, f := range s.FreqHz {
		if g, _ := s.InterpAt(nil, f); g[0] != s.Data[k] {
			t.Errorf("InterpAt(%v) = %v, want the measured %v", f, g[0], s.Data[k])
		}
	}
}
