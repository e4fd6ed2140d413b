package main

import (
	"bufio"
	"io"
	"sort"
	"strconv"
	"strings"
)

// Results holds every sample of every benchmark in go test's benchmark
// format: samples[pkg][name][unit] lists the values of one metric, one per
// run (-count). Names are kept without the -GOMAXPROCS suffix.
type Results struct {
	samples map[string]map[string]map[string][]float64
}

// Parse reads benchmark output in the format of go test -bench (the
// golang.org/x/perf benchfmt format): "pkg: P" lines name the package of the
// benchmark lines that follow, and each "BenchmarkName-N  iters  v unit …"
// line adds one sample of each metric. Other lines are ignored, so the
// output of several go test runs and of the numpy scripts (which print the
// same format under "pkg: numpy") can be concatenated.
func Parse(r io.Reader) (*Results, error) {
	res := &Results{samples: map[string]map[string]map[string][]float64{}}
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 64<<10), 1<<20)
	pkg := ""
	for sc.Scan() {
		line := sc.Text()
		if p, ok := strings.CutPrefix(line, "pkg:"); ok {
			pkg = strings.TrimSpace(p)
			continue
		}
		if !strings.HasPrefix(line, "Benchmark") {
			continue
		}
		f := strings.Fields(line)
		// name, iterations, then value–unit pairs.
		if len(f) < 4 || len(f)%2 != 0 {
			continue
		}
		if _, err := strconv.ParseInt(f[1], 10, 64); err != nil {
			continue
		}
		name := trimProcs(f[0])
		for i := 2; i+1 < len(f); i += 2 {
			v, err := strconv.ParseFloat(f[i], 64)
			if err != nil {
				continue
			}
			res.add(pkg, name, f[i+1], v)
		}
	}
	return res, sc.Err()
}

func (r *Results) add(pkg, name, unit string, v float64) {
	byName := r.samples[pkg]
	if byName == nil {
		byName = map[string]map[string][]float64{}
		r.samples[pkg] = byName
	}
	byUnit := byName[name]
	if byUnit == nil {
		byUnit = map[string][]float64{}
		byName[name] = byUnit
	}
	byUnit[unit] = append(byUnit[unit], v)
}

// trimProcs removes the "-N" that go test appends to a benchmark's name
// when GOMAXPROCS is not 1.
func trimProcs(name string) string {
	i := strings.LastIndexByte(name, '-')
	if i < 0 || i == len(name)-1 {
		return name
	}
	for _, c := range name[i+1:] {
		if c < '0' || c > '9' {
			return name
		}
	}
	return name[:i]
}

// Median returns the median of the metric unit of benchmark name in package
// pkg over all its runs, and false when there is no sample.
func (r *Results) Median(pkg, name, unit string) (float64, bool) {
	s := r.samples[pkg][name][unit]
	if len(s) == 0 {
		return 0, false
	}
	return median(s), true
}

// Count returns the number of samples of the metric.
func (r *Results) Count(pkg, name, unit string) int {
	return len(r.samples[pkg][name][unit])
}

// Names returns the benchmark names of package pkg, sorted.
func (r *Results) Names(pkg string) []string {
	var out []string
	for n := range r.samples[pkg] {
		out = append(out, n)
	}
	sort.Strings(out)
	return out
}

// median returns the median of s (the mean of the middle two for an even
// count) without changing s.
func median(s []float64) float64 {
	c := append([]float64(nil), s...)
	sort.Float64s(c)
	n := len(c)
	if n%2 == 1 {
		return c[n/2]
	}
	return (c[n/2-1] + c[n/2]) / 2
}
