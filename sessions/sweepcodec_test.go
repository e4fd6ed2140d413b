package sessions

import (
	"encoding/binary"
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"matchbench/rfmath"
)

func TestSweepCodecRoundTrip(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(1, 2))
	tests := []struct {
		name     string
		n, ports int
	}{
		{"one point", 1, 1},
		{"1-port", 201, 1},
		{"2-port", 101, 2},
		{"4-port", 7, 4},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			s := rfmath.NewSweep(tc.n, tc.ports, 50)
			for i := range s.Z0 {
				s.Z0[i] = 25 + 50*float64(i) + 0.1 // distinct per port
			}
			for k := range s.FreqHz {
				s.FreqHz[k] = 1e6 * (1 + float64(k) + rng.Float64()/2)
			}
			for i := range s.Data {
				s.Data[i] = complex(rng.NormFloat64(), rng.NormFloat64())
			}
			s.Data[0] = complex(math.SmallestNonzeroFloat64, -0.0)
			b := encodeSweep(s)
			if want := 9 + 8*(tc.ports+tc.n+2*tc.n*tc.ports*tc.ports); len(b) != want {
				t.Fatalf("encoded %d bytes, want %d", len(b), want)
			}
			if b[0] != sweepFormat1 || binary.LittleEndian.Uint32(b[1:]) != uint32(tc.ports) || binary.LittleEndian.Uint32(b[5:]) != uint32(tc.n) {
				t.Fatalf("header % x", b[:9])
			}
			// Little-endian float64: the first Z0 sits at offset 9.
			if z := math.Float64frombits(binary.LittleEndian.Uint64(b[9:])); z != s.Z0[0] {
				t.Fatalf("first Z0 decodes by hand as %g, want %g", z, s.Z0[0])
			}
			got, err := decodeSweep(b)
			if err != nil {
				t.Fatal(err)
			}
			if got.Ports != s.Ports || !equalBits(got.FreqHz, s.FreqHz) || !equalBits(got.Z0, s.Z0) || len(got.Data) != len(s.Data) {
				t.Fatalf("round trip changed the sweep")
			}
			for i := range s.Data {
				if math.Float64bits(real(got.Data[i])) != math.Float64bits(real(s.Data[i])) ||
					math.Float64bits(imag(got.Data[i])) != math.Float64bits(imag(s.Data[i])) {
					t.Fatalf("data %d: %v, want %v", i, got.Data[i], s.Data[i])
				}
			}
		})
	}
}

func equalBits(a, b []float64) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if math.Float64bits(a[i]) != math.Float64bits(b[i]) {
			return false
		}
	}
	return true
}

func TestSweepCodecCorrupt(t *testing.T) {
	t.Parallel()
	good := encodeSweep(testSweep(3, 1, 1, 3))
	mod := func(f func(b []byte) []byte) []byte { return f(append([]byte(nil), good...)) }
	nanData := mod(func(b []byte) []byte {
		binary.LittleEndian.PutUint64(b[len(b)-8:], math.Float64bits(math.NaN()))
		return b
	})
	tests := []struct {
		name string
		b    []byte
	}{
		{"empty", nil},
		{"header only", good[:9]},
		{"unknown format", mod(func(b []byte) []byte { b[0] = 2; return b })},
		{"truncated", good[:len(good)-1]},
		{"trailing byte", append(append([]byte(nil), good...), 0)},
		{"zero ports", mod(func(b []byte) []byte { binary.LittleEndian.PutUint32(b[1:], 0); return b })},
		{"huge ports", mod(func(b []byte) []byte { binary.LittleEndian.PutUint32(b[1:], math.MaxUint32); return b })},
		{"huge points", mod(func(b []byte) []byte { binary.LittleEndian.PutUint32(b[5:], math.MaxUint32); return b })},
		{"NaN data", nanData},
		{"zero points", mod(func(b []byte) []byte {
			binary.LittleEndian.PutUint32(b[5:], 0)
			return b[:9+8]
		})},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			if _, err := decodeSweep(tc.b); !errors.Is(err, ErrCorrupt) {
				t.Fatalf("decodeSweep = %v, want ErrCorrupt", err)
			}
		})
	}
}

// FuzzDecodeSweep: decoding any bytes never panics, and what decodes
// encodes back to the same bytes.
func FuzzDecodeSweep(f *testing.F) {
	f.Add(encodeSweep(testSweep(3, 1, 1, 3)))
	f.Add(encodeSweep(testSweep(2, 2, 1e9, 2e9)))
	f.Add([]byte{1, 1, 0, 0, 0, 1, 0, 0, 0})
	f.Fuzz(func(t *testing.T, b []byte) {
		s, err := decodeSweep(b)
		if err != nil {
			return
		}
		if again := encodeSweep(s); string(again) != string(b) {
			t.Fatalf("re-encoding differs")
		}
	})
}
