package demo

import (
	"math"
	"math/cmplx"
	"testing"

	"matchbench/rfmath"
)

// worstRL returns the least return loss of s over 902–928 MHz at its
// points.
func worstRL(s *rfmath.Sweep) float64 {
	w := math.Inf(1)
	for k, f := range s.FreqHz {
		if f < 902e6 || f > 928e6 {
			continue
		}
		w = math.Min(w, rfmath.ReturnLossDB(cmplx.Abs(s.Data[k])))
	}
	return w
}

func TestLotRepeatable(t *testing.T) {
	t.Parallel()
	a, b := Lot(5, 42), Lot(5, 42)
	c := Lot(5, 43)
	for i := range a {
		if a[i].Name != b[i].Name || a[i].Sweep.Len() != 201 || a[i].Sweep.FreqHz[0] != 800e6 || a[i].Sweep.FreqHz[200] != 1000e6 {
			t.Fatalf("board %d: %s, %d points", i, a[i].Name, a[i].Sweep.Len())
		}
		for k := range a[i].Sweep.Data {
			if a[i].Sweep.Data[k] != b[i].Sweep.Data[k] {
				t.Fatalf("board %d differs between two calls with one seed", i)
			}
		}
		if a[i].Sweep.Data[100] == c[i].Sweep.Data[100] {
			t.Errorf("board %d is the same with another seed", i)
		}
		if err := a[i].Sweep.Validate(); err != nil {
			t.Error(err)
		}
	}
	if a[0].Name != "board-001.s1p" || a[4].Name != "board-005.s1p" {
		t.Errorf("names %s, %s", a[0].Name, a[4].Name)
	}
}

// TestNominalBoard checks the nominal board against its design: the
// L-network's input impedance computed here by hand from the antenna model
// (series jωL, then the shunt capacitor's admittance jωC), and the worst
// return loss in the US band, 11.15 dB (stated in the doc of the lot).
func TestNominalBoard(t *testing.T) {
	t.Parallel()
	nb := NominalBoard().Sweep
	for _, k := range []int{0, 115, 200} {
		f := nb.FreqHz[k]
		w := 2 * math.Pi * f
		zl := fieldnode.z(f) + complex(0, w*3.3e-9)
		zin := 1 / (1/zl + complex(0, w*6.8e-12))
		if g := (zin - 50) / (zin + 50); cmplx.Abs(g-nb.Data[k]) > 1e-12 {
			t.Errorf("at %g Hz: %v, want %v", f, nb.Data[k], g)
		}
	}
	if w := worstRL(nb); math.Abs(w-11.15) > 0.01 {
		t.Errorf("nominal worst RL %.3f dB, want 11.15", w)
	}
}

func TestLotYield(t *testing.T) {
	t.Parallel()
	if testing.Short() {
		t.Skip("a lot of 1,000 boards")
	}
	pass := 0
	for _, f := range Lot(1000, 1) {
		if worstRL(f.Sweep) >= LotBands[0].MinReturnLossDB {
			pass++
		}
	}
	// The doc states 75 % for seed 1.
	if pass < 700 || pass > 800 {
		t.Errorf("yield %d of 1000", pass)
	}
}
