package touchstone

import (
	"bytes"
	"math/rand/v2"
	"strconv"
	"strings"
	"testing"
)

// bench2Port returns a 100,001-point 2-port RI file in Hz, numbers written
// with 12 significant digits as a typical export has them.
func bench2Port() []byte {
	rng := rand.New(rand.NewPCG(7, 7))
	var b bytes.Buffer
	b.WriteString("! generated in memory for the benchmark\n# Hz S RI R 50\n")
	line := make([]byte, 0, 256)
	for k := range 100_001 {
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

// BenchmarkRead2Port100k reads the whole file; compare its MB/s with
// BenchmarkParseFloatFloor.
func BenchmarkRead2Port100k(b *testing.B) {
	data := bench2Port()
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	b.ResetTimer()
	for b.Loop() {
		f, err := Read(bytes.NewReader(data), "bench.s2p", Limits{})
		if err != nil || f.Sweep.Len() != 100_001 {
			b.Fatal(err)
		}
	}
}

// BenchmarkParseFloatFloor runs only strconv.ParseFloat over the same
// numbers, split beforehand: the floor no text reader can beat by much.
func BenchmarkParseFloatFloor(b *testing.B) {
	data := bench2Port()
	var toks []string
	for _, line := range strings.Split(string(data), "\n") {
		if line == "" || line[0] == '!' || line[0] == '#' {
			continue
		}
		toks = append(toks, strings.Fields(line)...)
	}
	b.SetBytes(int64(len(data)))
	b.ReportAllocs()
	b.ResetTimer()
	var sum float64
	for b.Loop() {
		for _, t := range toks {
			v, err := strconv.ParseFloat(t, 64)
			if err != nil {
				b.Fatal(err)
			}
			sum += v
		}
	}
	if sum == 0.5 {
		b.Log(sum)
	}
}
