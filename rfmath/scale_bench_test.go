package rfmath_test

import (
	"bufio"
	"fmt"
	"math"
	"os"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/parts"
)

// ladder4 is the network of the evaluation benchmark: four chip parts with
// their losses and self-resonances, listed from the load toward the source.
// scripts/bench-numpy/ladder.py holds the same numbers and computes the
// same maths with numpy complex arrays; keep the two equal (scripts/bench
// checks that their Γ agree).
func ladder4() rfmath.Ladder {
	return rfmath.Ladder{
		rfmath.Shunt{Part: parts.Capacitor{CF: 1.2e-12, Q: 500, QRefHz: 1e9, SRFHz: 12e9}},
		rfmath.Series{Part: parts.Inductor{LH: 3.3e-9, Q: 30, QRefHz: 500e6, SRFHz: 6e9}},
		rfmath.Shunt{Part: parts.Inductor{LH: 8.2e-9, Q: 35, QRefHz: 500e6, SRFHz: 4.5e9}},
		rfmath.Series{Part: parts.Capacitor{CF: 2.7e-12, Q: 400, QRefHz: 1e9, SRFHz: 9e9}},
	}
}

// ladder4Sweep returns n frequencies from 1.5 to 3.5 GHz and the load's Γ
// in 50 Ω at each: 15 Ω in series with 2.2 nH and 1.8 pF.
func ladder4Sweep(n int) ([]float64, []complex128) {
	freq := make([]float64, n)
	load := make([]complex128, n)
	for k := range n {
		f := 1.5e9 + 2e9*float64(k)/float64(n-1)
		w := 2 * math.Pi * f
		freq[k] = f
		load[k] = rfmath.GammaFromZ(complex(15, w*2.2e-9-1/(w*1.8e-12)), 50)
	}
	return freq, load
}

// TestLadder4ZeroAllocs locks in that evaluating the ladder of part models
// allocates nothing per frequency (nor per call, given dst).
func TestLadder4ZeroAllocs(t *testing.T) {
	l := ladder4()
	freq, load := ladder4Sweep(101)
	dst := make([]complex128, len(freq))
	if a := testing.AllocsPerRun(10, func() { l.InputGammaTo(dst, freq, load, 50) }); a != 0 {
		t.Errorf("%v allocations per evaluation, want 0", a)
	}
}

// TestLadder4Reciprocal checks the benchmark's network, which is passive
// and lossy: |Γin| < 1 wherever |ΓL| < 1, and the ladder's ABCD matrix has
// AD − BC = 1 (reciprocity, Pozar, Microwave Engineering, Section 4.4,
// from memory) at every tenth frequency.
func TestLadder4Reciprocal(t *testing.T) {
	t.Parallel()
	l := ladder4()
	freq, load := ladder4Sweep(1001)
	g := l.InputGammaTo(nil, freq, load, 50)
	for k := 0; k < len(freq); k += 10 {
		if math.Abs(real(load[k])*real(load[k])+imag(load[k])*imag(load[k])) >= 1 {
			t.Fatalf("load at %g Hz is not passive", freq[k])
		}
		if a := math.Hypot(real(g[k]), imag(g[k])); !(a < 1) {
			t.Errorf("|Γin| = %v at %g Hz, want < 1", a, freq[k])
		}
		if d := l.ABCD(freq[k]).Det(); math.Hypot(real(d)-1, imag(d)) > 1e-9 {
			t.Errorf("AD − BC = %v at %g Hz, want 1", d, freq[k])
		}
	}
}

// BenchmarkLadder4Models evaluates Γin of the 4-part ladder of part models
// at n frequencies; scripts/bench compares the 10,001-point case with
// numpy and the three sizes with each other. With MATCHBENCH_LADDER_GAMMA
// set to a file name it writes Γin at every 1000th frequency of the
// 10,001-point case there, for the numpy script to check its own against.
func BenchmarkLadder4Models(b *testing.B) {
	l := ladder4()
	for _, n := range []int{1001, 10001, 100001} {
		b.Run(fmt.Sprintf("points=%d", n), func(b *testing.B) {
			freq, load := ladder4Sweep(n)
			dst := make([]complex128, n)
			b.ReportAllocs()
			for b.Loop() {
				l.InputGammaTo(dst, freq, load, 50)
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(len(l)*n), "ns/part-freq")
			if path := os.Getenv("MATCHBENCH_LADDER_GAMMA"); path != "" && n == 10001 {
				writeGamma(b, path, dst)
			}
		})
	}
}

func writeGamma(b *testing.B, path string, g []complex128) {
	f, err := os.Create(path)
	if err != nil {
		b.Fatal(err)
	}
	w := bufio.NewWriter(f)
	for k := 0; k < len(g); k += 1000 {
		fmt.Fprintf(w, "%d %.17g %.17g\n", k, real(g[k]), imag(g[k]))
	}
	if err := w.Flush(); err != nil {
		b.Fatal(err)
	}
	if err := f.Close(); err != nil {
		b.Fatal(err)
	}
}
