package match_test

import (
	"bufio"
	"fmt"
	"math"
	"os"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/match"
	"matchbench/rfmath/parts"
)

// The network of the evaluation benchmark, the same as ladder4 in
// rfmath/scale_bench_test.go and in scripts/bench-numpy/ladder.py: four
// chip parts with losses and self-resonances, from the load toward the
// source. scripts/bench checks all three against each other through Γ.
var benchParts = []struct {
	kind match.Kind
	part rfmath.Part
}{
	{match.ShuntC, parts.Capacitor{CF: 1.2e-12, Q: 500, QRefHz: 1e9, SRFHz: 12e9}},
	{match.SeriesL, parts.Inductor{LH: 3.3e-9, Q: 30, QRefHz: 500e6, SRFHz: 6e9}},
	{match.ShuntL, parts.Inductor{LH: 8.2e-9, Q: 35, QRefHz: 500e6, SRFHz: 4.5e9}},
	{match.SeriesC, parts.Capacitor{CF: 2.7e-12, Q: 400, QRefHz: 1e9, SRFHz: 9e9}},
}

// fixedModel makes the benchmark's parts from their nominal values.
type fixedModel map[float64]rfmath.Part

func (m fixedModel) Part(_ parts.Kind, v float64) rfmath.Part { return m[v] }

// benchCircuit returns the network compiled as the search compiles it
// (rfmath.Circuit), and the same parts as an rfmath ladder.
func benchCircuit() (rfmath.Circuit, rfmath.Ladder) {
	m := fixedModel{}
	var n match.Network
	var l rfmath.Ladder
	for _, p := range benchParts {
		v := 0.0
		switch q := p.part.(type) {
		case parts.Inductor:
			v = q.LH
		case parts.Capacitor:
			v = q.CF
		}
		m[v] = p.part
		n = append(n, match.Part{Kind: p.kind, Value: v, Model: m})
		if p.kind.Shunt() {
			l = append(l, rfmath.Shunt{Part: p.part})
		} else {
			l = append(l, rfmath.Series{Part: p.part})
		}
	}
	c, err := n.Circuit()
	if err != nil {
		panic(err)
	}
	return c, l
}

// benchSweep returns n frequencies from 1.5 to 3.5 GHz and the load's Γ in
// 50 Ω at each: 15 Ω in series with 2.2 nH and 1.8 pF.
func benchSweep(n int) ([]float64, []complex128) {
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

// TestCircuitAgreesWithLadder checks the compiled circuit (voltage and
// current carried from the load, shunt parts as admittances) against the
// rfmath ladder of the same parts (ABCD cascade): two computations of one
// Γin that must agree to rounding. Not parallel: it counts allocations.
func TestCircuitAgreesWithLadder(t *testing.T) {
	c, l := benchCircuit()
	freq, load := benchSweep(1001)
	got := c.GammaTo(nil, freq, load, 50)
	want := l.InputGammaTo(nil, freq, load, 50)
	for k := range got {
		if d := got[k] - want[k]; math.Hypot(real(d), imag(d)) > 1e-12 {
			t.Fatalf("at %g Hz: circuit %v, ladder %v", freq[k], got[k], want[k])
		}
	}
	if a := testing.AllocsPerRun(10, func() { c.GammaTo(got, freq, load, 50) }); a != 0 {
		t.Errorf("%v allocations per evaluation, want 0", a)
	}
}

// BenchmarkCircuit4Models evaluates the network compiled as the search
// compiles it at n frequencies; scripts/bench compares the 10,001-point
// case with numpy. With MATCHBENCH_CIRCUIT_GAMMA set to a file name it
// writes Γin at every 1000th frequency of that case there, for the numpy
// script to check its own against.
func BenchmarkCircuit4Models(b *testing.B) {
	c, _ := benchCircuit()
	for _, n := range []int{1001, 10001, 100001} {
		b.Run(fmt.Sprintf("points=%d", n), func(b *testing.B) {
			freq, load := benchSweep(n)
			dst := make([]complex128, n)
			b.ReportAllocs()
			for b.Loop() {
				c.GammaTo(dst, freq, load, 50)
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(len(benchParts)*n), "ns/part-freq")
			if path := os.Getenv("MATCHBENCH_CIRCUIT_GAMMA"); path != "" && n == 10001 {
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
