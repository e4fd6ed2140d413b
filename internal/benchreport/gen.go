package main

import (
	"bufio"
	"io"
	"math/rand/v2"
	"strconv"
)

// writeTouchstone writes the generated 2-port RI file of the read
// benchmarks: n points from 1 MHz in 10 kHz steps, eight numbers a point,
// uniform in [−1, 1) from PCG(7, 7) and written with 12 significant digits,
// as a typical export has them. It is byte for byte the file that
// benchTouchstone builds in rfmath/touchstone/scale_bench_test.go (and
// bench2Port for n = 100,001); BenchmarkReadGeneratedFile refuses a file
// that differs, so the Go and numpy figures always share one input.
func writeTouchstone(w io.Writer, n int) error {
	bw := bufio.NewWriterSize(w, 1<<16)
	rng := rand.New(rand.NewPCG(7, 7))
	bw.WriteString("! generated in memory for the benchmark\n# Hz S RI R 50\n")
	line := make([]byte, 0, 256)
	for k := range n {
		line = strconv.AppendFloat(line[:0], 1e6+float64(k)*1e4, 'f', -1, 64)
		for range 8 {
			line = append(line, ' ')
			line = strconv.AppendFloat(line, 2*rng.Float64()-1, 'g', 12, 64)
		}
		line = append(line, '\n')
		bw.Write(line)
	}
	return bw.Flush()
}
