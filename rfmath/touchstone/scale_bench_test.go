package touchstone

import (
	"bytes"
	"fmt"
	"math/rand/v2"
	"os"
	"strconv"
	"testing"
)

// benchTouchstone returns the generated 2-port RI file of n points that the
// read benchmarks share: from 1 MHz in 10 kHz steps, eight numbers a point,
// uniform in [−1, 1) from PCG(7, 7), written with 12 significant digits.
// For n = 100,001 it is bench2Port's file, and the file that
// `go run ./internal/benchreport gen` writes for numpy (the same code).
func benchTouchstone(n int) []byte {
	rng := rand.New(rand.NewPCG(7, 7))
	var b bytes.Buffer
	b.Grow(n * 140)
	b.WriteString("! generated in memory for the benchmark\n# Hz S RI R 50\n")
	line := make([]byte, 0, 256)
	for k := range n {
		line = strconv.AppendFloat(line[:0], 1e6+float64(k)*1e4, 'f', -1, 64)
		for range 8 {
			line = append(line, ' ')
			line = strconv.AppendFloat(line, 2*rng.Float64()-1, 'g', 12, 64)
		}
		line = append(line, '\n')
		b.Write(line)
	}
	return b.Bytes()
}

// TestBenchTouchstoneIsBench2Port keeps the two generators of the read
// benchmarks equal, so that the reader, the ParseFloat floor and numpy
// (scripts/bench) all see one input.
func TestBenchTouchstoneIsBench2Port(t *testing.T) {
	if testing.Short() {
		t.Skip("generates two 13 MB files")
	}
	if !bytes.Equal(benchTouchstone(100_001), bench2Port()) {
		t.Error("benchTouchstone(100001) differs from bench2Port()")
	}
}

// BenchmarkReadScale reads the generated file at 1k, 10k and 100k points;
// scripts/bench compares the cost per point (ns/point) of the three.
func BenchmarkReadScale(b *testing.B) {
	for _, n := range []int{1001, 10001, 100001} {
		b.Run(fmt.Sprintf("points=%d", n), func(b *testing.B) {
			readBench(b, benchTouchstone(n), n)
		})
	}
}

// BenchmarkReadGeneratedFile reads the file named by MATCHBENCH_BENCH_S2P
// from disk with ReadFile on every iteration, as numpy's loaders read it in
// scripts/bench; without the variable it reads the same bytes built in
// memory. The file must be the generator's 100,001 points.
func BenchmarkReadGeneratedFile(b *testing.B) {
	want := benchTouchstone(100_001)
	path := os.Getenv("MATCHBENCH_BENCH_S2P")
	if path == "" {
		readBench(b, want, 100_001)
		return
	}
	data, err := os.ReadFile(path)
	if err != nil {
		b.Fatal(err)
	}
	if !bytes.Equal(data, want) {
		b.Fatalf("%s is not the generated 100,001-point file (go run ./internal/benchreport gen FILE writes it)", path)
	}
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		f, err := ReadFile(path, Limits{})
		if err != nil || f.Sweep.Len() != 100_001 {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/100_001, "ns/point")
}

func readBench(b *testing.B, data []byte, n int) {
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		f, err := Read(bytes.NewReader(data), "bench.s2p", Limits{})
		if err != nil || f.Sweep.Len() != n {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(n), "ns/point")
}
