package main

import (
	"fmt"
	"io"
	"math"
	"regexp"
	"strings"
	"unicode/utf8"
)

// Packages whose benchmarks the report reads. "numpy" is the package name
// the scripts in scripts/bench-numpy print.
const (
	pkgTouchstone = "matchbench/rfmath/touchstone"
	pkgRF         = "matchbench/rfmath"
	pkgServer     = "matchbench/server"
	pkgChart      = "matchbench/chartsvg"
	pkgMatch      = "matchbench/rfmath/match"
	pkgNumpy      = "numpy"
)

// Fixed sizes of the benchmarks, needed to turn ns/op into per-unit costs.
const (
	frameNs      = 1e9 / 60 // one frame at 60 Hz: 16.7 ms
	ladderParts  = 4
	ladderPoints = 10001
)

// Verdicts.
const (
	pass       = "PASS"
	miss       = "MISS"
	info       = "info"
	notYet     = "not yet measured"
	skippedFmt = "skipped: %s"
)

// row is one line of the table: a figure, its value, its target and the
// verdict, with the medians it came from.
type row struct {
	group   string // a heading printed before the first row of a group
	figure  string
	value   string
	target  string
	verdict string
	from    string // the medians behind the value
}

// Options changes what the report says about inputs that are missing on
// purpose.
type Options struct {
	// NumpySkipped, when not empty, says why the numpy scripts did not run;
	// rows that need them say so instead of "not yet measured".
	NumpySkipped string
	// SearchFast and SearchExhaustive pick the broadband-search benchmarks
	// of rfmath/match by name: the 3-part E24 search over 401 points and
	// the plain exhaustive search of the same problem.
	SearchFast, SearchExhaustive *regexp.Regexp
	// SearchCombined picks benchmarks that time both searches themselves,
	// stop on a different best design, and report the metrics speedup,
	// search-ms and exhaustive-ms: one row each. They are preferred to a
	// SearchFast and SearchExhaustive pair.
	SearchCombined *regexp.Regexp
}

// DefaultSearchFast and DefaultSearchExhaustive are the name patterns used
// for the broadband search when Options leaves them nil: a benchmark of
// rfmath/match whose name mentions the exhaustive search and the number 3
// is the plain search; otherwise one that mentions a broadband search (or
// search) and 3 is the fast one. For example BenchmarkBroadband/parts=3 and
// BenchmarkExhaustive/parts=3.
// DefaultSearchCombined matches rfmath/match's
// BenchmarkSearchVsExhaustive/parts=3/<model>.
var (
	DefaultSearchFast       = regexp.MustCompile(`(?i)^Benchmark.*(broadband|search).*3`)
	DefaultSearchExhaustive = regexp.MustCompile(`(?i)^Benchmark.*(exhaustive.*3|3.*exhaustive)`)
	DefaultSearchCombined   = regexp.MustCompile(`^BenchmarkSearchVsExhaustive/parts=3(/|$)`)
)

// report computes the rows from the results.
type report struct {
	r    *Results
	opt  Options
	rows []row
}

// med returns a median, or false.
func (rp *report) med(pkg, name, unit string) (float64, bool) { return rp.r.Median(pkg, name, unit) }

// add appends a row.
func (rp *report) add(r row) { rp.rows = append(rp.rows, r) }

// missing adds a row for a figure whose inputs were not measured.
func (rp *report) missing(group, figure, target string, numpy bool, what ...string) {
	v := notYet
	if numpy && rp.opt.NumpySkipped != "" {
		v = fmt.Sprintf(skippedFmt, rp.opt.NumpySkipped)
	}
	rp.add(row{group: group, figure: figure, value: "—", target: target, verdict: v, from: "needs " + strings.Join(what, ", ")})
}

// atLeast and atMost give the verdict of v against a bound.
func atLeast(v, bound float64) string {
	if v >= bound {
		return pass
	}
	return miss
}

func atMost(v, bound float64) string {
	if v <= bound {
		return pass
	}
	return miss
}

// Build returns the rows of the report in the order the issue lists the
// figures.
func Build(r *Results, opt Options) []row {
	if opt.SearchFast == nil {
		opt.SearchFast = DefaultSearchFast
	}
	if opt.SearchExhaustive == nil {
		opt.SearchExhaustive = DefaultSearchExhaustive
	}
	if opt.SearchCombined == nil {
		opt.SearchCombined = DefaultSearchCombined
	}
	rp := &report{r: r, opt: opt}
	rp.reading()
	rp.ladder()
	rp.drag()
	rp.browser()
	rp.chart()
	rp.search()
	rp.memory()
	rp.scale()
	return rp.rows
}

func (rp *report) reading() {
	const g = "Reading Touchstone (generated 100,001-point 2-port RI file)"
	read, ok1 := rp.med(pkgTouchstone, "BenchmarkRead2Port100k", "ns/op")
	floor, ok2 := rp.med(pkgTouchstone, "BenchmarkParseFloatFloor", "ns/op")
	fig := "reader throughput ÷ ParseFloat floor on the same tokens"
	if ok1 && ok2 {
		ratio := floor / read
		mbR, _ := rp.med(pkgTouchstone, "BenchmarkRead2Port100k", "MB/s")
		mbF, _ := rp.med(pkgTouchstone, "BenchmarkParseFloatFloor", "MB/s")
		rp.add(row{group: g, figure: fig, value: fmt.Sprintf("%.2f", ratio), target: "≥ 0.5", verdict: atLeast(ratio, 0.5),
			from: fmt.Sprintf("reader %s (%.0f MB/s), floor %s (%.0f MB/s)", ms(read), mbR, ms(floor), mbF)})
	} else {
		rp.missing(g, fig, "≥ 0.5", false, "BenchmarkRead2Port100k", "BenchmarkParseFloatFloor")
	}
	goFile, okGo := rp.med(pkgTouchstone, "BenchmarkReadGeneratedFile", "ns/op")
	for _, np := range []struct{ name, fn string }{
		{"BenchmarkNumpyLoadtxt", "numpy.loadtxt"},
		{"BenchmarkNumpyGenfromtxt", "numpy.genfromtxt"},
	} {
		fig := "reader speed ÷ " + np.fn + " on the same file"
		t, ok := rp.med(pkgNumpy, np.name, "ns/op")
		if !ok || !okGo {
			rp.missing("", fig, "≥ 10×", !ok, "BenchmarkReadGeneratedFile", np.name)
			continue
		}
		ratio := t / goFile
		rp.add(row{figure: fig, value: fmt.Sprintf("%.1f×", ratio), target: "≥ 10×", verdict: atLeast(ratio, 10),
			from: fmt.Sprintf("Go %s, %s %s", ms(goFile), np.fn, ms(t))})
	}
}

func (rp *report) ladder() {
	const g = "Evaluating a network (4-part ladder of part models, 10,001 frequencies; numpy: same parts, same maths)"
	perPF := float64(ladderParts * ladderPoints)
	npNs, okNp := rp.med(pkgNumpy, "BenchmarkNumpyLadder4Models", "ns/op")
	for _, ev := range []struct{ pkg, name, what string }{
		{pkgRF, "BenchmarkLadder4Models/points=10001", "rfmath.Ladder (parts behind interfaces)"},
		{pkgMatch, "BenchmarkCircuit4Models/points=10001", "rfmath.Circuit (compiled, as the search uses it)"},
	} {
		goNs, okGo := rp.med(ev.pkg, ev.name, "ns/op")
		fig := ev.what + ": speed ÷ numpy"
		switch {
		case okGo && okNp:
			ratio := npNs / goNs
			rp.add(row{group: g, figure: fig, value: fmt.Sprintf("%.2f×", ratio), target: "≥ 1×", verdict: atLeast(ratio, 1),
				from: fmt.Sprintf("Go %.1f ns, numpy %.1f ns per part × frequency", goNs/perPF, npNs/perPF)})
		case okGo:
			rp.missing(g, fig, "≥ 1×", true, "BenchmarkNumpyLadder4Models")
			rp.rows[len(rp.rows)-1].from = fmt.Sprintf("Go %.1f ns per part × frequency; needs BenchmarkNumpyLadder4Models", goNs/perPF)
		default:
			rp.missing(g, fig, "≥ 1×", !okNp, ev.name, "BenchmarkNumpyLadder4Models")
		}
		fig = ev.what + ": allocations per frequency"
		if a, ok := rp.med(ev.pkg, ev.name, "allocs/op"); ok {
			per := a / ladderPoints
			rp.add(row{group: g, figure: fig, value: fmt.Sprintf("%.3g", per), target: "0", verdict: atMost(per, 0),
				from: fmt.Sprintf("%.0f allocs per evaluation of %d frequencies", a, ladderPoints)})
		} else {
			rp.missing(g, fig, "0", false, ev.name)
		}
	}
	for _, n := range rp.r.Names(pkgMatch) {
		if !strings.HasPrefix(n, "BenchmarkCircuit4Part/") {
			continue
		}
		if v, ok := rp.med(pkgMatch, n, "ns/part·freq"); ok {
			ctx := "rfmath/match's own benchmark and network"
			if okNp {
				ctx += fmt.Sprintf("; numpy above: %.1f ns", npNs/perPF)
			}
			rp.add(row{group: g, figure: "rfmath.Circuit, its own network (" + strings.TrimPrefix(n, "BenchmarkCircuit4Part/") + "): ns per part × frequency", value: fmt.Sprintf("%.1f ns", v), verdict: info, from: ctx})
		}
	}
}

func (rp *report) drag() {
	const g = "Marker drag, server side, 10,001-point sweep (share of the 16.7 ms frame)"
	for _, d := range []struct{ fig, name, what string }{
		{"decode, snap, commit, render fragments, encode", "BenchmarkDrag/points=10001", "in-process, no socket"},
		{"over websockets, no viewer: send → ack", "BenchmarkDragViewers/viewers=0", "over loopback websockets, client in the same process"},
		{"the same with 20 viewers, send → ack + all 20 have the update", "BenchmarkDragViewers/viewers=20", "over loopback websockets, the 21 clients in the same process"},
	} {
		t, ok := rp.med(pkgServer, d.name, "ns/op")
		if !ok {
			rp.missing(g, d.fig, "≤ 5 %", false, d.name)
			continue
		}
		share := t / frameNs
		rp.add(row{group: g, figure: d.fig, value: fmt.Sprintf("%.1f %%", 100*share), target: "≤ 5 %", verdict: atMost(share, 0.05),
			from: fmt.Sprintf("%s per drag, %s", ms(t), d.what)})
	}
}

func (rp *report) chart() {
	const g = "Chart (both grids, 4 traces of 10,001 points)"
	if b, ok := rp.med(pkgChart, "BenchmarkChartFull", "svg-bytes"); ok {
		rp.add(row{group: g, figure: "full chart SVG size", value: kb(b), target: "≤ 150 kB", verdict: atMost(b, 150_000),
			from: "BenchmarkChartFull svg-bytes"})
	} else {
		rp.missing(g, "full chart SVG size", "≤ 150 kB", false, "BenchmarkChartFull")
	}
	if a, ok := rp.med(pkgChart, "BenchmarkChartFull", "allocs/op"); ok {
		t, _ := rp.med(pkgChart, "BenchmarkChartFull", "ns/op")
		by, _ := rp.med(pkgChart, "BenchmarkChartFull", "B/op")
		rp.add(row{figure: "full chart allocations", value: fmt.Sprintf("%.0f", a), target: "", verdict: info,
			from: fmt.Sprintf("%s B allocated, %s per chart", thousands(by), ms(t))})
	}
	if b, ok := rp.med(pkgChart, "BenchmarkMarkerLayer", "svg-bytes"); ok {
		rp.add(row{figure: "marker layer SVG size", value: kb(b), target: "≤ 2 kB", verdict: atMost(b, 2_000),
			from: "BenchmarkMarkerLayer svg-bytes (4 markers)"})
	} else {
		rp.missing("", "marker layer SVG size", "≤ 2 kB", false, "BenchmarkMarkerLayer")
	}
}

// search finds the broadband-search benchmarks by name, as their package
// may not have them yet.
func (rp *report) search() {
	const g = "Broadband search by power to the load (3-part E24, 401 points)"
	fig := "exhaustive ÷ search, same run"
	found := false
	for _, n := range rp.r.Names(pkgMatch) {
		if !rp.opt.SearchCombined.MatchString(n) {
			continue
		}
		sp, ok := rp.med(pkgMatch, n, "speedup")
		if !ok {
			continue
		}
		found = true
		ts, _ := rp.med(pkgMatch, n, "search-ms")
		te, _ := rp.med(pkgMatch, n, "exhaustive-ms")
		variant := strings.TrimPrefix(n, "BenchmarkSearchVsExhaustive/")
		rp.add(row{group: g, figure: fig + " (" + variant + ")", value: fmt.Sprintf("%.1f×", sp), target: "≥ 20×", verdict: atLeast(sp, 20),
			from: fmt.Sprintf("search %.4g ms, exhaustive %.4g ms (medians; speedup is the median of each run's ratio)", ts, te)})
		rp.add(row{group: g, figure: "same best design (" + variant + ")", value: "same", target: "equal", verdict: pass,
			from: "the benchmark stops with an error when the two searches' designs differ"})
	}
	const gs = "Search across a set of 5 loads (3-part E24, typical 0402)"
	if r, ok := rp.med(pkgMatch, "BenchmarkSearchSet/members=5/vs=1", "set-ratio"); ok {
		one, _ := rp.med(pkgMatch, "BenchmarkSearchSet/members=5/vs=1", "one-ms")
		five, _ := rp.med(pkgMatch, "BenchmarkSearchSet/members=5/vs=1", "set-ms")
		rp.add(row{group: gs, figure: "5 members ÷ 1 member, 401 points each, same run", value: fmt.Sprintf("%.2f×", r), target: "≤ 6×", verdict: atMost(r, 6),
			from: fmt.Sprintf("one member %.4g ms, five %.4g ms (medians)", one, five)})
	} else {
		rp.missing(gs, "5 members ÷ 1 member, 401 points each, same run", "≤ 6×", false, "BenchmarkSearchSet/members=5/vs=1")
	}
	if sp, ok := rp.med(pkgMatch, "BenchmarkSearchSet/members=5/vs-exhaustive", "speedup"); ok {
		rp.add(row{group: gs, figure: "across the set: exhaustive ÷ search, 41 points each, same run", value: fmt.Sprintf("%.1f×", sp), target: "≥ 20×, same design", verdict: atLeast(sp, 20),
			from: "BenchmarkSearchSet/members=5/vs-exhaustive (stops with an error when the designs differ)"})
	} else {
		rp.missing(gs, "across the set: exhaustive ÷ search, 41 points each, same run", "≥ 20×, same design", false, "BenchmarkSearchSet/members=5/vs-exhaustive")
	}
	if ms, ok := rp.med(pkgMatch, "BenchmarkSearchFieldnode4", "search-ms"); ok {
		rp.add(row{group: "Loss-aware search of the Fieldnode demo (2 bands, up to 4 parts, E24, typical 0402)", figure: "time on this machine",
			value: fmt.Sprintf("%.3g s", ms/1000), target: "< 2 s", verdict: atMost(ms/1000, 2), from: "BenchmarkSearchFieldnode4 search-ms (median)"})
	} else {
		rp.missing("Loss-aware search of the Fieldnode demo (2 bands, up to 4 parts, E24, typical 0402)", "time on this machine", "< 2 s", false, "BenchmarkSearchFieldnode4")
	}
	if found {
		return
	}
	var fast, slow string
	for _, n := range rp.r.Names(pkgMatch) {
		switch {
		case rp.opt.SearchExhaustive.MatchString(n):
			if slow == "" {
				slow = n
			}
		case rp.opt.SearchFast.MatchString(n):
			if fast == "" {
				fast = n
			}
		}
	}
	if fast == "" || slow == "" {
		rp.missing(g, fig, "≥ 20×", false, "rfmath/match benchmarks matching "+rp.opt.SearchCombined.String()+" (with a speedup metric), or "+rp.opt.SearchFast.String()+" and "+rp.opt.SearchExhaustive.String())
		return
	}
	tf, _ := rp.med(pkgMatch, fast, "ns/op")
	ts, _ := rp.med(pkgMatch, slow, "ns/op")
	ratio := ts / tf
	rp.add(row{group: g, figure: fig, value: fmt.Sprintf("%.1f×", ratio), target: "≥ 20×", verdict: atLeast(ratio, 20),
		from: fmt.Sprintf("%s %s, %s %s", strings.TrimPrefix(fast, "Benchmark"), ms(tf), strings.TrimPrefix(slow, "Benchmark"), ms(ts))})
	// The same best design: both benchmarks report the worst return loss
	// of their best design in dB.
	fig = "same best design (worst return loss in the band)"
	for _, unit := range []string{"worst-rl-dB", "worst-dB", "dB"} {
		a, ok1 := rp.med(pkgMatch, fast, unit)
		b, ok2 := rp.med(pkgMatch, slow, unit)
		if ok1 && ok2 {
			v := pass
			if math.Abs(a-b) > 1e-9*math.Max(1, math.Abs(b)) {
				v = miss
			}
			rp.add(row{figure: fig, value: fmt.Sprintf("%.4g vs %.4g dB", a, b), target: "equal", verdict: v, from: unit + " of both benchmarks"})
			return
		}
	}
	rp.add(row{figure: fig, value: "—", target: "equal", verdict: info, from: "the benchmarks report no worst-rl-dB; the package's tests compare the designs"})
}

func (rp *report) memory() {
	const g = "Memory (a running server holding a session with 20 sweeps of 10,001 points)"
	const name = "BenchmarkSessionMemory"
	base, ok1 := rp.med(pkgServer, name, "base-rss-bytes")
	extra, ok2 := rp.med(pkgServer, name, "extra-rss-bytes")
	raw, ok3 := rp.med(pkgServer, name, "raw-bytes")
	fig := "resident memory above the empty-store base ÷ raw complex data"
	if !ok1 || !ok2 || !ok3 || raw == 0 {
		rp.missing(g, fig, "≤ 3×", false, name)
		return
	}
	ratio := extra / raw
	heap, _ := rp.med(pkgServer, name, "extra-heap-bytes")
	rp.add(row{group: g, figure: fig, value: fmt.Sprintf("%.2f×", ratio), target: "≤ 3×", verdict: atMost(ratio, 3),
		from: fmt.Sprintf("RSS (/proc/self/statm) base %s, +%s with the session; raw %s; live Go heap +%s (runtime/metrics)", mb(base), mb(extra), mb(raw), mb(heap))})
}

func (rp *report) scale() {
	const g = "Scale (cost per point at 100k ÷ at 1k: linear ≈ 1; drag at 100k ÷ at 1k: flat ≈ 1)"
	perPoint := func(pkg, bench, fig string) {
		lo, ok1 := rp.med(pkg, bench+"/points=1001", "ns/op")
		mid, ok2 := rp.med(pkg, bench+"/points=10001", "ns/op")
		hi, ok3 := rp.med(pkg, bench+"/points=100001", "ns/op")
		if !ok1 || !ok2 || !ok3 {
			rp.missing(g, fig, "≤ 1.5", false, bench+"/points=1001…100001")
			return
		}
		pLo, pMid, pHi := lo/1001, mid/10001, hi/100001
		ratio := pHi / pLo
		rp.add(row{group: g, figure: fig, value: fmt.Sprintf("%.2f", ratio), target: "≤ 1.5", verdict: atMost(ratio, 1.5),
			from: fmt.Sprintf("per point: %s at 1k, %s at 10k, %s at 100k", nsf(pLo), nsf(pMid), nsf(pHi))})
	}
	perPoint(pkgTouchstone, "BenchmarkReadScale", "reading a 2-port file")
	perPoint(pkgRF, "BenchmarkLadder4Models", "evaluating the 4-part ladder (rfmath.Ladder)")
	perPoint(pkgMatch, "BenchmarkCircuit4Models", "evaluating the 4-part ladder (rfmath.Circuit)")
	lo, ok1 := rp.med(pkgServer, "BenchmarkDrag/points=1001", "ns/op")
	mid, ok2 := rp.med(pkgServer, "BenchmarkDrag/points=10001", "ns/op")
	hi, ok3 := rp.med(pkgServer, "BenchmarkDrag/points=100001", "ns/op")
	fig := "marker drag (whole cost)"
	if !ok1 || !ok2 || !ok3 {
		rp.missing(g, fig, "≤ 1.5", false, "BenchmarkDrag/points=1001…100001")
		return
	}
	ratio := hi / lo
	rp.add(row{figure: fig, value: fmt.Sprintf("%.2f", ratio), target: "≤ 1.5", verdict: atMost(ratio, 1.5),
		from: fmt.Sprintf("%s at 1k, %s at 10k, %s at 100k", ms(lo), ms(mid), ms(hi))})
}

// Print writes the rows as a table.
func Print(w io.Writer, rows []row) {
	cols := [4]int{len("figure"), len("measured"), len("target"), len("verdict")}
	for _, r := range rows {
		for i, s := range []string{r.figure, r.value, r.target, r.verdict} {
			cols[i] = max(cols[i], utf8.RuneCountInString(s))
		}
	}
	cell := func(s string, n int) string { return s + strings.Repeat(" ", n-utf8.RuneCountInString(s)) }
	line := func(a, b, c, d string) {
		fmt.Fprintf(w, "  %s  %s  %s  %s\n", cell(a, cols[0]), cell(b, cols[1]), cell(c, cols[2]), d)
	}
	line("figure", "measured", "target", "verdict")
	passed, missed, open := 0, 0, 0
	group := ""
	for _, r := range rows {
		if r.group != "" && r.group != group {
			fmt.Fprintf(w, "\n%s\n", r.group)
			group = r.group
		}
		line(r.figure, r.value, r.target, r.verdict)
		if r.from != "" {
			fmt.Fprintf(w, "      ↳ %s\n", r.from)
		}
		switch {
		case r.verdict == pass:
			passed++
		case r.verdict == miss:
			missed++
		case r.verdict != info:
			open++
		}
	}
	fmt.Fprintf(w, "\n%d PASS, %d MISS, %d not measured\n", passed, missed, open)
}

// Formatting helpers.

func ms(ns float64) string {
	switch {
	case ns >= 1e9:
		return fmt.Sprintf("%.2f s", ns/1e9)
	case ns >= 1e6:
		return fmt.Sprintf("%.3g ms", ns/1e6)
	case ns >= 1e3:
		return fmt.Sprintf("%.3g µs", ns/1e3)
	}
	return fmt.Sprintf("%.3g ns", ns)
}

func nsf(ns float64) string { return fmt.Sprintf("%.3g ns", ns) }

func kb(b float64) string { return fmt.Sprintf("%.1f kB", b/1e3) }

func mb(b float64) string { return fmt.Sprintf("%.1f MB", b/1e6) }

func thousands(v float64) string {
	s := fmt.Sprintf("%.0f", v)
	var out []byte
	for i := range s {
		if i > 0 && (len(s)-i)%3 == 0 && s[i-1] != '-' {
			out = append(out, ',')
		}
		out = append(out, s[i])
	}
	return string(out)
}

// browser reports the browser side measured in headless Chromium
// (server's BenchmarkBrowser).
func (rp *report) browser() {
	const g = "The browser side (headless Chromium, 1366×768)"
	type fig struct {
		name, metric, figure, target string
		bound                        float64
	}
	for _, f := range []fig{
		{"BenchmarkBrowser/drag", "p99-ms", "drag, 4 × 10,001 points: pointer event → frame showing the new frequency, p99", "≤ 16.7 ms", 16.7},
		{"BenchmarkBrowser/viewer", "p99-ms", "a viewer following: editor's pointer event → viewer's frame, p99", "≤ 50 ms", 50},
		{"BenchmarkBrowser/open", "open-ms", "opening 20 × 10,001 points with a network and a Monte Carlo: navigation → first painted chart", "≤ 1000 ms", 1000},
		{"BenchmarkBrowser/open", "page-bytes", "the page's HTML with its inline SVG", "< 1 MB", 1e6},
		{"BenchmarkBrowser/animation", "frame-p99-ms", "adding a part (24-frame step animation): frame interval p99", "≤ 16.7 ms", 16.7},
		{"BenchmarkBrowser/animation", "longest-task-ms", "the same: longest task (the Long Tasks API reports tasks over 50 ms only; 0 = none)", "≤ 50 ms", 50},
	} {
		v, ok := rp.med(pkgServer, f.name, f.metric)
		if !ok {
			rp.missing(g, f.figure, f.target, false, f.name+" "+f.metric+" (needs Chromium)")
			continue
		}
		n, _ := rp.med(pkgServer, f.name, "samples")
		val := fmt.Sprintf("%.3g ms", v)
		if f.metric == "page-bytes" {
			val = fmt.Sprintf("%.1f kB", v/1000)
		}
		from := fmt.Sprintf("%s %s (median over runs; %.0f samples a run)", strings.TrimPrefix(f.name, "Benchmark"), f.metric, n)
		if p50, ok := rp.med(pkgServer, f.name, "p50-ms"); ok {
			from += fmt.Sprintf("; p50 %.3g ms", p50)
		}
		rp.add(row{group: g, figure: f.figure, value: val, target: f.target, verdict: atMost(v, f.bound), from: from})
	}
}
