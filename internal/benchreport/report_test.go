package main

import (
	"bytes"
	"fmt"
	"math"
	"strings"
	"testing"

	"matchbench/rfmath/touchstone"
)

const sample = `goos: linux
goarch: amd64
pkg: matchbench/rfmath/touchstone
cpu: Some CPU
BenchmarkRead2Port100k-2     	      16	 100000000 ns/op	 134.00 MB/s	20604808 B/op	      37 allocs/op
BenchmarkRead2Port100k-2     	      16	 120000000 ns/op	 111.00 MB/s	20604808 B/op	      37 allocs/op
BenchmarkRead2Port100k-2     	      16	  90000000 ns/op	 148.00 MB/s	20604808 B/op	      37 allocs/op
BenchmarkParseFloatFloor-2   	      18	  60000000 ns/op	 223.00 MB/s	       0 B/op	       0 allocs/op
BenchmarkParseFloatFloor-2   	      18	  70000000 ns/op	 191.00 MB/s	       0 B/op	       0 allocs/op
BenchmarkSnap/window=all-2   	      18	  10 ns/op
--- BENCH: BenchmarkSomething-2
    bench_test.go:10: a log line
PASS
ok  	matchbench/rfmath/touchstone	3.048s
pkg: numpy
BenchmarkNumpyLoadtxt 	1	130000000 ns/op	103.00 MB/s
BenchmarkNumpyLoadtxt 	1	125000000 ns/op	107.00 MB/s
`

func TestParse(t *testing.T) {
	t.Parallel()
	r, err := Parse(strings.NewReader(sample))
	if err != nil {
		t.Fatal(err)
	}
	tests := []struct {
		name       string
		pkg, bench string
		unit       string
		want       float64 // NaN: no sample
		count      int
	}{
		{"odd count median", "matchbench/rfmath/touchstone", "BenchmarkRead2Port100k", "ns/op", 100e6, 3},
		{"even count median", "matchbench/rfmath/touchstone", "BenchmarkParseFloatFloor", "ns/op", 65e6, 2},
		{"throughput", "matchbench/rfmath/touchstone", "BenchmarkRead2Port100k", "MB/s", 134, 3},
		{"allocations", "matchbench/rfmath/touchstone", "BenchmarkRead2Port100k", "allocs/op", 37, 3},
		{"sub-benchmark keeps its name", "matchbench/rfmath/touchstone", "BenchmarkSnap/window=all", "ns/op", 10, 1},
		{"numpy lines have no suffix", "numpy", "BenchmarkNumpyLoadtxt", "ns/op", 127.5e6, 2},
		{"package matters", "numpy", "BenchmarkRead2Port100k", "ns/op", math.NaN(), 0},
		{"unit matters", "numpy", "BenchmarkNumpyLoadtxt", "B/op", math.NaN(), 0},
		{"log lines are not samples", "matchbench/rfmath/touchstone", "BenchmarkSomething", "ns/op", math.NaN(), 0},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			got, ok := r.Median(tc.pkg, tc.bench, tc.unit)
			if math.IsNaN(tc.want) {
				if ok {
					t.Errorf("Median = %v, want none", got)
				}
				return
			}
			if !ok || got != tc.want {
				t.Errorf("Median = %v, %v; want %v", got, ok, tc.want)
			}
			if n := r.Count(tc.pkg, tc.bench, tc.unit); n != tc.count {
				t.Errorf("Count = %d, want %d", n, tc.count)
			}
		})
	}
}

func TestTrimProcs(t *testing.T) {
	t.Parallel()
	tests := []struct{ in, want string }{
		{"BenchmarkX-2", "BenchmarkX"},
		{"BenchmarkX-16", "BenchmarkX"},
		{"BenchmarkX/points=1001-2", "BenchmarkX/points=1001"},
		{"BenchmarkX", "BenchmarkX"},
		{"BenchmarkX/a-b", "BenchmarkX/a-b"},
		{"BenchmarkX-", "BenchmarkX-"},
	}
	for _, tc := range tests {
		if got := trimProcs(tc.in); got != tc.want {
			t.Errorf("trimProcs(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
}

// find returns the row whose figure starts with prefix.
func find(t *testing.T, rows []row, prefix string) row {
	t.Helper()
	for _, r := range rows {
		if strings.HasPrefix(r.figure, prefix) {
			return r
		}
	}
	t.Fatalf("no row %q", prefix)
	return row{}
}

// TestBuildEmpty: with nothing measured every figure says so, numpy's say
// why they were skipped, and nothing passes or misses.
func TestBuildEmpty(t *testing.T) {
	t.Parallel()
	rows := Build(&Results{}, Options{NumpySkipped: "no numpy here"})
	if len(rows) < 15 {
		t.Fatalf("%d rows, want every figure of the issue", len(rows))
	}
	for _, r := range rows {
		if r.verdict == pass || r.verdict == miss {
			t.Errorf("%q: verdict %s without measurements", r.figure, r.verdict)
		}
	}
	if r := find(t, rows, "reader speed ÷ numpy.loadtxt"); r.verdict != "skipped: no numpy here" {
		t.Errorf("numpy row: %q", r.verdict)
	}
	if r := find(t, rows, "reader throughput ÷ ParseFloat"); r.verdict != notYet {
		t.Errorf("Go row: %q", r.verdict)
	}
	var b bytes.Buffer
	Print(&b, rows)
	if !strings.Contains(b.String(), "0 PASS, 0 MISS") {
		t.Errorf("summary line missing:\n%s", b.String())
	}
}

// TestBuildFull feeds one sample of every benchmark and checks each
// figure's arithmetic and verdict.
func TestBuildFull(t *testing.T) {
	t.Parallel()
	var in strings.Builder
	line := func(name string, kv ...any) {
		fmt.Fprintf(&in, "%s-2\t1", name)
		for i := 0; i < len(kv); i += 2 {
			fmt.Fprintf(&in, "\t%v %s", kv[i+1], kv[i])
		}
		in.WriteString("\n")
	}
	in.WriteString("pkg: matchbench/rfmath/touchstone\n")
	line("BenchmarkRead2Port100k", "ns/op", 100e6, "MB/s", 134)
	line("BenchmarkParseFloatFloor", "ns/op", 60e6, "MB/s", 223)
	line("BenchmarkReadGeneratedFile", "ns/op", 10e6)
	line("BenchmarkReadScale/points=1001", "ns/op", 1001*900)
	line("BenchmarkReadScale/points=10001", "ns/op", 10001*900)
	line("BenchmarkReadScale/points=100001", "ns/op", 100001*1800)
	in.WriteString("pkg: numpy\n")
	line("BenchmarkNumpyLoadtxt", "ns/op", 120e6)
	line("BenchmarkNumpyGenfromtxt", "ns/op", 90e6)
	line("BenchmarkNumpyLadder4Models", "ns/op", 2e6)
	in.WriteString("pkg: matchbench/rfmath\n")
	line("BenchmarkLadder4Models/points=1001", "ns/op", 1001*400, "allocs/op", 0)
	line("BenchmarkLadder4Models/points=10001", "ns/op", 10001*400, "allocs/op", 0)
	line("BenchmarkLadder4Models/points=100001", "ns/op", 100001*400, "allocs/op", 0)
	in.WriteString("pkg: matchbench/server\n")
	line("BenchmarkDrag/points=1001", "ns/op", 300e3)
	line("BenchmarkDrag/points=10001", "ns/op", 400e3)
	line("BenchmarkDrag/points=100001", "ns/op", 330e3)
	line("BenchmarkDragViewers/viewers=0", "ns/op", 0.5e6)
	line("BenchmarkDragViewers/viewers=20", "ns/op", 1e6)
	line("BenchmarkBrowser/drag", "ns/op", 1.6e9, "p50-ms", 10, "p99-ms", 15, "samples", 40)
	line("BenchmarkBrowser/viewer", "ns/op", 1.7e9, "p50-ms", 14, "p99-ms", 60, "samples", 40)
	line("BenchmarkBrowser/open", "ns/op", 7e8, "open-ms", 512, "page-bytes", 172990, "samples", 1)
	line("BenchmarkBrowser/animation", "ns/op", 1.2e9, "frame-p50-ms", 16.7, "frame-p99-ms", 20, "longest-task-ms", 40, "samples", 53)
	line("BenchmarkSessionMemory", "base-rss-bytes", 20e6, "extra-rss-bytes", 6.4e6, "raw-bytes", 3.2e6, "extra-heap-bytes", 5e6)
	in.WriteString("pkg: matchbench/chartsvg\n")
	line("BenchmarkChartFull", "ns/op", 2e6, "svg-bytes", 151_000, "allocs/op", 108, "B/op", 3500)
	line("BenchmarkMarkerLayer", "ns/op", 1e3, "svg-bytes", 1195)
	in.WriteString("pkg: matchbench/rfmath/match\n")
	line("BenchmarkCircuit4Models/points=1001", "ns/op", 1001*100, "allocs/op", 0)
	line("BenchmarkCircuit4Models/points=10001", "ns/op", 10001*100, "allocs/op", 1)
	line("BenchmarkCircuit4Models/points=100001", "ns/op", 100001*100, "allocs/op", 0)
	line("BenchmarkBroadband/parts=3", "ns/op", 1e6, "worst-rl-dB", 12.5)
	line("BenchmarkExhaustive/parts=3", "ns/op", 30e6, "worst-rl-dB", 12.5)
	line("BenchmarkBroadband/parts=2", "ns/op", 1e3)
	line("BenchmarkSearchFieldnode4", "ns/op", 380e6, "search-ms", 380)
	line("BenchmarkSearchSet/members=5/vs=1", "ns/op", 70e6, "one-ms", 18, "set-ms", 50, "set-ratio", 2.7)
	line("BenchmarkSearchSet/members=5/vs-exhaustive", "ns/op", 6e9, "search-ms", 15, "exhaustive-ms", 6000, "speedup", 400)

	r, err := Parse(strings.NewReader(in.String()))
	if err != nil {
		t.Fatal(err)
	}
	rows := Build(r, Options{})
	tests := []struct {
		prefix, value, verdict string
	}{
		{"reader throughput ÷ ParseFloat", "0.60", pass},
		{"reader speed ÷ numpy.loadtxt", "12.0×", pass},
		{"reader speed ÷ numpy.genfromtxt", "9.0×", miss},
		{"rfmath.Ladder (parts behind interfaces): speed ÷ numpy", "0.50×", miss},
		{"rfmath.Ladder (parts behind interfaces): allocations", "0", pass},
		{"rfmath.Circuit (compiled, as the search uses it): speed ÷ numpy", "2.00×", pass},
		{"rfmath.Circuit (compiled, as the search uses it): allocations", "0.0001", miss},
		{"decode, snap, commit", "2.4 %", pass},
		{"over websockets, no viewer", "3.0 %", pass},
		{"the same with 20 viewers", "6.0 %", miss},
		{"full chart SVG size", "151.0 kB", miss},
		{"full chart allocations", "108", info},
		{"marker layer SVG size", "1.2 kB", pass},
		{"exhaustive ÷ search", "30.0×", pass},
		{"same best design", "12.5 vs 12.5 dB", pass},
		{"time on this machine", "0.38 s", pass},
		{"drag, 4 × 10,001 points", "15 ms", pass},
		{"a viewer following", "60 ms", miss},
		{"opening 20 × 10,001 points", "512 ms", pass},
		{"the page's HTML", "173.0 kB", pass},
		{"adding a part", "20 ms", miss},
		{"the same: longest task", "40 ms", pass},
		{"5 members ÷ 1 member", "2.70×", pass},
		{"across the set: exhaustive ÷ search", "400.0×", pass},
		{"resident memory above", "2.00×", pass},
		{"reading a 2-port file", "2.00", miss},
		{"evaluating the 4-part ladder (rfmath.Ladder)", "1.00", pass},
		{"evaluating the 4-part ladder (rfmath.Circuit)", "1.00", pass},
		{"marker drag (whole cost)", "1.10", pass},
	}
	for _, tc := range tests {
		r := find(t, rows, tc.prefix)
		if r.value != tc.value || r.verdict != tc.verdict {
			t.Errorf("%q: %q %s, want %q %s", tc.prefix, r.value, r.verdict, tc.value, tc.verdict)
		}
	}
	for _, r := range rows {
		if r.verdict == notYet {
			t.Errorf("%q not measured with every benchmark present (%s)", r.figure, r.from)
		}
	}
}

// TestGen checks the generated file with the project's own reader: a valid
// 2-port Touchstone file of the asked size, frequencies from 1 MHz in
// 10 kHz steps, every number in [−1, 1).
func TestGen(t *testing.T) {
	t.Parallel()
	var b bytes.Buffer
	if err := writeTouchstone(&b, 101); err != nil {
		t.Fatal(err)
	}
	f, err := touchstone.Read(bytes.NewReader(b.Bytes()), "gen.s2p", touchstone.Limits{})
	if err != nil {
		t.Fatal(err)
	}
	sw := f.Sweep
	if sw.Ports != 2 || sw.Len() != 101 || sw.FreqHz[0] != 1e6 || sw.FreqHz[100] != 2e6 {
		t.Fatalf("ports %d, %d points, %g…%g Hz; want 2, 101, 1e6…2e6", sw.Ports, sw.Len(), sw.FreqHz[0], sw.FreqHz[sw.Len()-1])
	}
	for _, v := range sw.Data {
		if math.Abs(real(v)) > 1 || math.Abs(imag(v)) > 1 {
			t.Fatalf("value %v outside [−1, 1)", v)
		}
	}
}

func TestRunErrors(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		args []string
	}{
		{"no command", nil},
		{"unknown command", []string{"frobnicate"}},
		{"gen without file", []string{"gen"}},
		{"gen with bad size", []string{"gen", "-points", "0", "x"}},
		{"summary without file", []string{"summary"}},
		{"summary with missing file", []string{"summary", "/nonexistent/results.txt"}},
		{"summary with bad pattern", []string{"summary", "-search-fast", "(", "x"}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			var out bytes.Buffer
			if err := run(tc.args, &out); err == nil {
				t.Errorf("run(%q) succeeded", tc.args)
			}
		})
	}
}

// TestBuildCombinedSearch reads rfmath/match's BenchmarkSearchVsExhaustive,
// which times both searches itself: one row per 3-part variant, none for
// the 2-part ones, and the evaluator's figure beside the ladder's.
func TestBuildCombinedSearch(t *testing.T) {
	t.Parallel()
	in := `pkg: matchbench/rfmath/match
BenchmarkCircuit4Part/0402-2   	 100	 1500000 ns/op	 37.50 ns/part·freq	 0 B/op	 0 allocs/op
BenchmarkSearchVsExhaustive/parts=2/ideal-2 	 1	 5000 ns/op	 1.000 search-ms	 3.000 exhaustive-ms	 3.000 speedup
BenchmarkSearchVsExhaustive/parts=3/ideal-2 	 1	 5000 ns/op	 12.00 search-ms	 300.0 exhaustive-ms	 25.00 speedup
BenchmarkSearchVsExhaustive/parts=3/ideal-2 	 1	 5000 ns/op	 14.00 search-ms	 300.0 exhaustive-ms	 21.00 speedup
BenchmarkSearchVsExhaustive/parts=3/0402-2 	 1	 5000 ns/op	 20.00 search-ms	 300.0 exhaustive-ms	 15.00 speedup
`
	r, err := Parse(strings.NewReader(in))
	if err != nil {
		t.Fatal(err)
	}
	rows := Build(r, Options{})
	tests := []struct {
		prefix, value, verdict string
	}{
		{"exhaustive ÷ search, same run (parts=3/0402)", "15.0×", miss},
		{"exhaustive ÷ search, same run (parts=3/ideal)", "23.0×", pass},
		{"same best design (parts=3/ideal)", "same", pass},
		{"rfmath.Circuit, its own network (0402)", "37.5 ns", info},
	}
	for _, tc := range tests {
		r := find(t, rows, tc.prefix)
		if r.value != tc.value || r.verdict != tc.verdict {
			t.Errorf("%q: %q %s, want %q %s", tc.prefix, r.value, r.verdict, tc.value, tc.verdict)
		}
	}
	for _, r := range rows {
		if strings.Contains(r.figure, "parts=2") {
			t.Errorf("a 2-part search made a row: %q", r.figure)
		}
	}
}
