package match

import (
	"context"
	"errors"
	"fmt"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"strings"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/parts"
)

// shapeKey names the shape of a network, e.g. "shunt_C series_L".
func shapeKey(n Network) string {
	s := make([]string, len(n))
	for i, p := range n {
		s[i] = string(p.Kind)
	}
	return strings.Join(s, " ")
}

type bruteBest struct {
	net Network
	m   Metrics
}

// objValue returns how good the metrics m are by the objective obj, as the
// test reads the objective's definition (Search's doc): larger is better.
// Under PowerToLoad a network that meets every requirement is worth
// 1 + its least share of power at the load (at least 1), one that misses
// 1 − Q (below 0; Q the worst power ratio, 10^(−margin/10)); under
// ReturnLoss a network is worth its margin. Ties are within 1e-9.
func objValue(m Metrics, obj Objective) float64 {
	if obj == PowerToLoad {
		if m.Meets() {
			return 1 + m.WorstPowerToLoad
		}
		return 1 - math.Pow(10, -m.MarginDB/10) // Q > 1 maps below 0
	}
	return m.MarginDB
}

// bruteForce is the test's own oracle for one load: bruteForceSet with
// the load as the only member.
func bruteForce(t *testing.T, l Load, bands []Band, set *Settings) map[string]bruteBest {
	return bruteForceSet(t, []Member{{Load: l}}, bands, set)
}

// bruteForceSet is the test's own oracle: every network of every shape of
// minP to maxP parts, built from the standard values of the two series
// within the ranges, judged on each member by Evaluate (rfmath's ABCD
// ladder, not the search's arithmetic), the worst over the members taken
// here. It returns the best of each shape by the settings' objective.
func bruteForceSet(t *testing.T, ms []Member, bands []Band, set *Settings) map[string]bruteBest {
	t.Helper()
	lv, cv := seriesValues(t, set.LSeries, set.LRange), seriesValues(t, set.CSeries, set.CRange)
	worstOf := func(n Network) Metrics {
		w := Metrics{WorstRLdB: math.Inf(1), WorstPowerToLoad: math.Inf(1), MarginDB: math.Inf(1)}
		for _, m := range ms {
			e, err := Evaluate(m.Load, bands, n)
			if err != nil {
				t.Fatal(err)
			}
			if len(ms) == 1 {
				return e
			}
			w.WorstRLdB = math.Min(w.WorstRLdB, e.WorstRLdB)
			w.WorstPowerToLoad = math.Min(w.WorstPowerToLoad, e.WorstPowerToLoad)
			w.MarginDB = math.Min(w.MarginDB, e.MarginDB)
		}
		return w
	}
	out := map[string]bruteBest{}
	for n := set.MinParts; n <= set.MaxParts; n++ {
		for _, top := range topologies(n, n) {
			net := make(Network, n)
			var rec func(p int)
			rec = func(p int) {
				if p == n {
					m := worstOf(net.WithModel(set.Model))
					k := shapeKey(net)
					if b, ok := out[k]; !ok || objValue(m, set.Objective) > objValue(b.m, set.Objective) {
						out[k] = bruteBest{append(Network(nil), net...), m}
					}
					return
				}
				vs, ser := lv, set.LSeries
				if top[p].Component() == parts.KindC {
					vs, ser = cv, set.CSeries
				}
				for _, v := range vs {
					net[p] = Part{Kind: top[p], Value: v, Series: strings.ToUpper(ser)}
					rec(p + 1)
				}
			}
			rec(0)
		}
	}
	return out
}

// TestSearchAgainstBruteForce checks that the search returns, for every
// shape, the same best network as the test's plain exhaustive search over
// the same standard values, judged by Evaluate and the objective as its
// doc defines it, with ideal and modelled parts, one band, two bands of
// different requirements, a power requirement, and both objectives.
func TestSearchAgainstBruteForce(t *testing.T) {
	t.Parallel()
	hi := loadOf(grid(2.3e9, 2.6e9, 61), 50, smallAntenna)
	lo := loadOf(grid(800e6, 1000e6, 101), 50, lowBandAntenna)
	for _, tc := range []struct {
		name  string
		l     Load
		bands []Band
		set   Settings
		long  bool
	}{
		{"one band, ideal, E12", hi, []Band{{2.4e9, 2.4835e9, 10, 0}},
			Settings{LSeries: "E12", CSeries: "E12", MinParts: 1, MaxParts: 3,
				LRange: [2]float64{0.5e-9, 15e-9}, CRange: [2]float64{0.3e-12, 12e-12}}, false},
		{"one band, 0402 models, E12", hi, []Band{{2.4e9, 2.4835e9, 10, 0}},
			Settings{LSeries: "E12", CSeries: "E12", MinParts: 1, MaxParts: 3, Model: parts.Typical0402,
				LRange: [2]float64{1e-9, 15e-9}, CRange: [2]float64{0.3e-12, 12e-12}}, false},
		{"two bands 12 and 10 dB, 0603 models, E12 L, E6 C", lo, []Band{{863e6, 870e6, 12, 0}, {902e6, 928e6, 10, 0}},
			Settings{LSeries: "E12", CSeries: "E6", MinParts: 2, MaxParts: 3, Model: parts.Typical0603,
				LRange: [2]float64{1e-9, 100e-9}, CRange: [2]float64{0.5e-12, 47e-12}}, false},
		{"two bands, power required, 0402 models, E12", lo, []Band{{863e6, 870e6, 6, 0.7}, {902e6, 928e6, 8, 0.6}},
			Settings{LSeries: "E12", CSeries: "E12", MinParts: 2, MaxParts: 3, Model: parts.Typical0402,
				LRange: [2]float64{1e-9, 100e-9}, CRange: [2]float64{0.5e-12, 47e-12}}, false},
		{"constant Q 20/200, E12", hi, []Band{{2.4e9, 2.4835e9, 10, 0}},
			Settings{LSeries: "E12", CSeries: "E12", MinParts: 1, MaxParts: 3, Model: parts.ConstantQ{QL: 20, QC: 200},
				LRange: [2]float64{0.5e-9, 15e-9}, CRange: [2]float64{0.3e-12, 12e-12}}, false},
		{"four parts, E6", hi, []Band{{2.4e9, 2.4835e9, 10, 0}},
			Settings{LSeries: "E6", CSeries: "E6", MinParts: 4, MaxParts: 4,
				LRange: [2]float64{0.68e-9, 10e-9}, CRange: [2]float64{0.47e-12, 10e-12}}, true},
	} {
		for _, obj := range []Objective{PowerToLoad, ReturnLoss} {
			t.Run(tc.name+"/"+obj.String(), func(t *testing.T) {
				t.Parallel()
				if tc.long && testing.Short() {
					t.Skip("long")
				}
				set := tc.set
				set.Objective = obj
				set.Top = 1000
				set.Window = -1
				res, err := Search(context.Background(), tc.l, tc.bands, &set)
				if err != nil {
					t.Fatal(err)
				}
				if !res.Exact {
					t.Errorf("not exact")
				}
				want := bruteForce(t, tc.l, tc.bands, &set)
				if len(res.Designs) != len(want) {
					t.Fatalf("%d designs, brute force has %d shapes", len(res.Designs), len(want))
				}
				prev := math.Inf(1)
				for _, d := range res.Designs {
					b, ok := want[shapeKey(d.Network)]
					if !ok {
						t.Fatalf("shape %s not in the brute force", shapeKey(d.Network))
					}
					got, exp := objValue(d.Metrics, obj), objValue(b.m, obj)
					if math.Abs(got-exp) > 1e-9 {
						t.Errorf("%s: search %v (%.12g), brute force %v (%.12g)", shapeKey(d.Network), d.Network, got, b.net, exp)
					}
					if got > prev+1e-9 {
						t.Errorf("designs not sorted: %v after %v", got, prev)
					}
					prev = got
				}
			})
		}
	}
}

// TestSearchAgainstExhaustive compares Search with the package's plain
// Exhaustive on a 41-point band with E24 values and the default ranges,
// with the default number of designs (so shapes that cannot reach the top
// five are cut off early), ideal and modelled.
func TestSearchAgainstExhaustive(t *testing.T) {
	if testing.Short() {
		t.Skip("long")
	}
	t.Parallel()
	l := loadOf(grid(2.4e9, 2.4835e9, 41), 50, smallAntenna)
	bands := []Band{{2.4e9, 2.4835e9, 10, 0}}
	for _, m := range []parts.Model{nil, parts.Typical0402} {
		set := &Settings{MaxParts: 3, Model: m}
		a, err := Search(context.Background(), l, bands, set)
		if err != nil {
			t.Fatal(err)
		}
		b, err := Exhaustive(context.Background(), l, bands, set)
		if err != nil {
			t.Fatal(err)
		}
		if len(a.Designs) != 5 || len(b.Designs) != 5 {
			t.Fatalf("%d and %d designs", len(a.Designs), len(b.Designs))
		}
		for i := range a.Designs {
			if a.Designs[i].Network.String() != b.Designs[i].Network.String() || a.Designs[i].MarginDB != b.Designs[i].MarginDB {
				t.Errorf("model %v, design %d: search %v (%v dB), exhaustive %v (%v dB)", m, i,
					a.Designs[i].Network, a.Designs[i].MarginDB, b.Designs[i].Network, b.Designs[i].MarginDB)
			}
		}
		if a.Checked >= b.Checked/10 {
			t.Errorf("search computed %d networks, exhaustive %d: the cuts do little", a.Checked, b.Checked)
		}
	}
}

// TestSearchBeatsSnappedL checks that the search is never worse than the
// best L-network at the band centre with its values snapped to the series.
func TestSearchBeatsSnappedL(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name  string
		l     Load
		bands []Band
		set   Settings
	}{
		{"2.4 GHz antenna, E12 ideal", loadOf(grid(2.3e9, 2.6e9, 121), 50, smallAntenna), []Band{{2.4e9, 2.4835e9, 10, 0}},
			Settings{LSeries: "E12", CSeries: "E12", MaxParts: 2}},
		{"2.4 GHz antenna, E24 0402", loadOf(grid(2.3e9, 2.6e9, 121), 50, smallAntenna), []Band{{2.4e9, 2.4835e9, 10, 0}},
			Settings{MaxParts: 3, Model: parts.Typical0402}},
		{"Pozar 5.1 load, 480–520 MHz", loadOf(grid(400e6, 600e6, 81), 100, func(float64) complex128 { return complex(200, -100) }),
			[]Band{{480e6, 520e6, 15, 0}}, Settings{MaxParts: 2}},
		{"two bands, E24 0603", loadOf(grid(800e6, 1000e6, 201), 50, lowBandAntenna), []Band{{863e6, 870e6, 10, 0}, {902e6, 928e6, 10, 0}},
			Settings{MaxParts: 3, Model: parts.Typical0603}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			res, err := Search(context.Background(), tc.l, tc.bands, &tc.set)
			if err != nil {
				t.Fatal(err)
			}
			lo, hi := tc.bands[0].LoHz, tc.bands[len(tc.bands)-1].HiHz
			fc := math.Sqrt(lo * hi)
			zl, _ := tc.l.ZAt(fc)
			sols, _, err := LNetworks(zl, complex(tc.l.Z0Ohm, 0), fc)
			if err != nil {
				t.Fatal(err)
			}
			set := tc.set.defaults()
			tried := 0
			for _, s := range sols {
				n := append(Network(nil), s.Parts...)
				inRange := len(n) > 0
				for i, p := range n {
					ser, r := set.LSeries, res.LRange
					if p.Kind.Component() == parts.KindC {
						ser, r = set.CSeries, res.CRange
					}
					n[i].Value = parts.Nearest(p.Value, ser)
					inRange = inRange && n[i].Value >= r[0] && n[i].Value <= r[1]
				}
				if !inRange {
					continue
				}
				tried++
				m, err := Evaluate(tc.l, tc.bands, n.WithModel(set.Model))
				if err != nil {
					t.Fatal(err)
				}
				if res.Designs[0].MarginDB < m.MarginDB-1e-12 {
					t.Errorf("search best %v (%.4g dB) worse than snapped L %v (%.4g dB)", res.Designs[0].Network, res.Designs[0].MarginDB, n, m.MarginDB)
				}
			}
			if tried == 0 {
				t.Fatalf("no snapped L-network within the ranges to compare with")
			}
		})
	}
}

// TestSearchWindow checks the window mode: never better than the whole
// search, equal to it when the windows cover the ranges, and marked as not
// exact otherwise.
func TestSearchWindow(t *testing.T) {
	t.Parallel()
	l := loadOf(grid(2.3e9, 2.6e9, 61), 50, smallAntenna)
	bands := []Band{{2.4e9, 2.4835e9, 10, 0}}
	base := Settings{LSeries: "E12", CSeries: "E12", MaxParts: 3, Top: 1}
	whole := base
	whole.Window = -1
	a, err := Search(context.Background(), l, bands, &whole)
	if err != nil {
		t.Fatal(err)
	}
	for _, w := range []int{1, 3, 1000} {
		s := base
		s.Window = w
		b, err := Search(context.Background(), l, bands, &s)
		if err != nil {
			t.Fatal(err)
		}
		if b.Exact || b.Window != w {
			t.Errorf("window %d: Exact %v, Window %d", w, b.Exact, b.Window)
		}
		if b.Designs[0].MarginDB > a.Designs[0].MarginDB+1e-12 {
			t.Errorf("window %d beats the whole search: %v > %v", w, b.Designs[0].MarginDB, a.Designs[0].MarginDB)
		}
		if w == 1000 && b.Designs[0].Network.String() != a.Designs[0].Network.String() {
			t.Errorf("window covering everything: %v, whole %v", b.Designs[0].Network, a.Designs[0].Network)
		}
	}
	// An automatic choice under a tiny budget uses windows.
	s := base
	s.Budget = 10
	b, err := Search(context.Background(), l, bands, &s)
	if err != nil || b.Exact || b.Window != defaultWindow {
		t.Errorf("tiny budget: exact %v, window %d, %v", b.Exact, b.Window, err)
	}
}

func TestSearchProgressCancel(t *testing.T) {
	t.Parallel()
	l := loadOf(grid(2.3e9, 2.6e9, 61), 50, smallAntenna)
	bands := []Band{{2.4e9, 2.4835e9, 10, 0}}
	var calls, last, total int
	set := &Settings{MaxParts: 3, Progress: func(done, tot int) {
		if done < last || tot != total && total != 0 {
			t.Errorf("progress went back: %d/%d after %d/%d", done, tot, last, total)
		}
		calls++
		last, total = done, tot
	}}
	if _, err := Search(context.Background(), l, bands, set); err != nil {
		t.Fatal(err)
	}
	if calls < 3 || last != total || total == 0 {
		t.Errorf("%d calls, last %d of %d", calls, last, total)
	}
	ctx, cancel := context.WithCancel(context.Background())
	set.Progress = func(done, total int) {
		if done > total/4 {
			cancel()
		}
	}
	if _, err := Search(ctx, l, bands, set); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled search: %v", err)
	}
	if _, err := Exhaustive(ctx, l, bands, set); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled exhaustive: %v", err)
	}
}

func TestSearchErrors(t *testing.T) {
	t.Parallel()
	l := loadOf(grid(2.3e9, 2.6e9, 61), 50, smallAntenna)
	ok := []Band{{2.4e9, 2.5e9, 10, 0}}
	for _, tc := range []struct {
		name  string
		l     Load
		bands []Band
		set   Settings
		want  error
	}{
		{"no band", l, nil, Settings{}, ErrBand},
		{"band outside", l, []Band{{2.5e9, 2.7e9, 10, 0}}, Settings{}, ErrBand},
		{"reversed band", l, []Band{{2.5e9, 2.4e9, 10, 0}}, Settings{}, ErrBand},
		{"empty load", Load{Z0Ohm: 50}, ok, Settings{}, ErrNoLoad},
		{"bad series", l, ok, Settings{LSeries: "E7"}, parts.ErrUnknownSeries},
		{"empty range", l, ok, Settings{LRange: [2]float64{1.3e-9, 1.4e-9}, LSeries: "E12"}, ErrRange},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			if _, err := Search(context.Background(), tc.l, tc.bands, &tc.set); !errors.Is(err, tc.want) {
				t.Errorf("error %v, want %v", err, tc.want)
			}
		})
	}
	if _, err := Search(context.Background(), l, ok, &Settings{MaxParts: 5}); err == nil {
		t.Errorf("5 parts accepted")
	}
}

// TestTopologies checks the shapes: 4, 8, 16 and 32 of one to four parts,
// series and shunt alternating, every one different.
func TestTopologies(t *testing.T) {
	t.Parallel()
	seen := map[string]bool{}
	for n, want := range map[int]int{1: 4, 2: 8, 3: 16, 4: 32} {
		tops := topologies(n, n)
		if len(tops) != want {
			t.Errorf("%d parts: %d shapes, want %d", n, len(tops), want)
		}
		for _, top := range tops {
			k := fmt.Sprint(top)
			if seen[k] {
				t.Errorf("shape %s twice", k)
			}
			seen[k] = true
			for p := 1; p < len(top); p++ {
				if top[p].Shunt() == top[p-1].Shunt() {
					t.Errorf("shape %s does not alternate", k)
				}
			}
		}
	}
}

// TestZeroAlloc locks in that evaluating a circuit and walking the search
// space allocate nothing per frequency.
func TestZeroAlloc(t *testing.T) {
	l := loadOf(grid(2.4e9, 2.5e9, 201), 50, smallAntenna)
	n := Network{{Kind: ShuntL, Value: 2.2e-9, Series: ""}, {Kind: SeriesC, Value: 1.5e-12, Series: ""}, {Kind: ShuntC, Value: 1e-12, Series: ""}, {Kind: SeriesL, Value: 3.3e-9, Series: ""}}
	c := compiled(t, n, parts.Typical0402)
	dst := make([]complex128, len(l.FreqHz))
	if a := testing.AllocsPerRun(10, func() { c.GammaTo(dst, l.FreqHz, l.Gamma, 50) }); a != 0 {
		t.Errorf("GammaTo allocates %v times", a)
	}
	set := (&Settings{MaxParts: 3}).defaults()
	e, err := newEngine([]Member{{Load: l}}, []Band{{2.4e9, 2.5e9, 10, 0}}, &set)
	if err != nil {
		t.Fatal(err)
	}
	w := newWalker(e, []Kind{ShuntL, SeriesC, ShuntC})
	w.setBox(boxAround(make([]int, 3), nil, -1))
	ctx := context.Background()
	_ = w.run(ctx, nil) // sizes bestIdx
	w.thr = math.Inf(1)
	if a := testing.AllocsPerRun(3, func() { _ = w.run(ctx, nil) }); a != 0 {
		t.Errorf("walker allocates %v times", a)
	}
}

// TestCircuitAgainstLadder checks the closed forms of Circuit against
// rfmath's ABCD ladder of the same parts (asked for their ImpedanceAt), for
// random networks of ideal and modelled parts, every law of inductor loss,
// and a part the circuit does not know (a generic rfmath.Part).
func TestCircuitAgainstLadder(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(9, 9))
	l := loadOf(grid(0.5e9, 4e9, 57), 50, smallAntenna)
	kinds := []Kind{SeriesL, SeriesC, ShuntL, ShuntC}
	models := []parts.Model{nil, parts.Typical0402, parts.Typical0603, lawModel{parts.Flat}, lawModel{parts.Linear}, genericModel{}}
	for trial := range 300 {
		n := make(Network, 1+rnd.IntN(4))
		for i := range n {
			k := kinds[rnd.IntN(4)]
			v := math.Pow(10, -9.5+2*rnd.Float64()) // 0.3 to 30 nH
			if k.Component() == parts.KindC {
				v = math.Pow(10, -12.5+2*rnd.Float64()) // 0.3 to 30 pF
			}
			n[i] = Part{Kind: k, Value: v}
		}
		m := models[trial%len(models)]
		c := compiled(t, n, m)
		lad := ladderOf(t, n, m)
		for k, f := range l.FreqHz {
			got := c.GammaAt(f, l.Gamma[k], 50)
			want := lad.InputGamma(f, l.Gamma[k], 50)
			if cmplx.Abs(got-want) > 1e-12 {
				t.Fatalf("model %T, %v at %g Hz: Γ %v, ladder %v", m, n, f, got, want)
			}
		}
	}
}

// lawModel makes inductors with a given loss law and capacitors with a Q.
type lawModel struct{ law parts.Law }

func (m lawModel) Part(k parts.Kind, v float64) rfmath.Part {
	if k == parts.KindL {
		return parts.Inductor{LH: v, Q: 30, QRefHz: 1e9, SRFHz: 8e9, RLaw: m.law}
	}
	return parts.Capacitor{CF: v, Q: 300, QRefHz: 1e9, SRFHz: 9e9}
}

// genericModel makes parts the circuit has no closed form for.
type genericModel struct{}

type lossyReactance struct{ z complex128 }

func (p lossyReactance) ImpedanceAt(f float64) complex128 {
	return complex(real(p.z), imag(p.z)*f/1e9)
}

func (genericModel) Part(k parts.Kind, v float64) rfmath.Part {
	if k == parts.KindL {
		return lossyReactance{complex(0.5, 2*math.Pi*1e9*v)}
	}
	return parts.Resistor{ROhm: 1 / (2 * math.Pi * 1e9 * v * 10), ESLH: 1e-9}
}

// TestObjectivesAgreeLossless: with lossless parts the power that reaches
// the load is 1 − |Γ|² (REFERENCE-CHECKS LS-1: P_load = P_in for a lossless
// network), a falling function of |Γ|, so with one return-loss requirement
// in every band the best network by power to the load is the best by
// return loss: both objectives give the same designs. With lossy parts
// they part: the return-loss objective's best delivers no more power than
// the power objective's best.
func TestObjectivesAgreeLossless(t *testing.T) {
	t.Parallel()
	l := loadOf(grid(800e6, 1000e6, 101), 50, lowBandAntenna)
	bands := []Band{{863e6, 870e6, 10, 0}, {902e6, 928e6, 10, 0}}
	run := func(m parts.Model, o Objective) *Result {
		res, err := Search(context.Background(), l, bands, &Settings{MaxParts: 3, Model: m, Objective: o, Top: 4})
		if err != nil {
			t.Fatal(err)
		}
		return res
	}
	p, r := run(nil, PowerToLoad), run(nil, ReturnLoss)
	for i := range p.Designs {
		if p.Designs[i].Network.String() != r.Designs[i].Network.String() {
			t.Errorf("lossless, design %d: by power %v, by return loss %v", i, p.Designs[i].Network, r.Designs[i].Network)
		}
	}
	p, r = run(parts.Typical0402, PowerToLoad), run(parts.Typical0402, ReturnLoss)
	if r.Designs[0].WorstPowerToLoad > p.Designs[0].WorstPowerToLoad {
		t.Errorf("0402: the return-loss best delivers %v, more than the power best's %v", r.Designs[0].WorstPowerToLoad, p.Designs[0].WorstPowerToLoad)
	}
	t.Logf("0402 parts: best by power %v delivers %.3f; best by return loss %v delivers %.3f", p.Designs[0].Network, p.Designs[0].WorstPowerToLoad, r.Designs[0].Network, r.Designs[0].WorstPowerToLoad)
}

// TestEvaluateBandPoints checks Evaluate's band figures against a
// computation written here from the definitions: the band's points are its
// edges, interpolated linearly in the complex plane between the measured
// points, and the measured points strictly inside (rfmath.BandFreqs); the
// power to the load is computed by a separate ABCD walk (rfmath.Ladder's
// StressTo voltages and currents, P = ½·Re(V·I*)) on a non-flat load with
// edges off the grid.
func TestEvaluateBandPoints(t *testing.T) {
	t.Parallel()
	l := loadOf(grid(800e6, 1000e6, 21), 50, lowBandAntenna) // 10 MHz steps
	bands := []Band{{863.3e6, 869.9e6, 10, 0}, {902.5e6, 927.3e6, 10, 0.5}}
	n := Network{{Kind: ShuntL, Value: 2.2e-9, Series: "E24"}, {Kind: SeriesL, Value: 1.8e-9, Series: "E24"}, {Kind: ShuntC, Value: 6.8e-12, Series: "E24"}}.WithModel(parts.Typical0402)
	m, err := Evaluate(l, bands, n)
	if err != nil {
		t.Fatal(err)
	}
	lad := ladderOf(t, n, parts.Typical0402)
	for b, bd := range bands {
		fs := []float64{bd.LoHz}
		for _, f := range l.FreqHz {
			if f > bd.LoHz && f < bd.HiHz {
				fs = append(fs, f)
			}
		}
		fs = append(fs, bd.HiHz)
		worstRL, worstP := math.Inf(1), math.Inf(1)
		for _, f := range fs {
			k := 0
			for k+1 < len(l.FreqHz) && l.FreqHz[k+1] < f {
				k++
			}
			tt := (f - l.FreqHz[k]) / (l.FreqHz[k+1] - l.FreqHz[k])
			gl := l.Gamma[k] + complex(tt, 0)*(l.Gamma[k+1]-l.Gamma[k])
			zl := rfmath.ZFromGamma(gl, 50)
			g := lad.InputGamma(f, gl, 50)
			worstRL = math.Min(worstRL, -20*math.Log10(cmplx.Abs(g)))
			// Power to the load from the voltage and current at the load
			// side of part 0 (a shunt part: its voltage is the load's).
			st := lad.StressTo(nil, f, zl, 50, 1)
			v := st[0].VPeakV
			worstP = math.Min(worstP, 0.5*v*v*real(1/zl))
		}
		r := m.Bands[b]
		if r.Points != len(fs) || math.Abs(r.WorstRLdB-worstRL) > 1e-9 || math.Abs(r.WorstPowerToLoad-worstP) > 1e-9 {
			t.Errorf("band %d: %d points, worst RL %v, power %v; want %d, %v, %v", b, r.Points, r.WorstRLdB, r.WorstPowerToLoad, len(fs), worstRL, worstP)
		}
		wantMargin := worstRL - 10
		if bd.MinPowerToLoad > 0 {
			wantMargin = math.Min(wantMargin, 10*math.Log10(worstP/bd.MinPowerToLoad))
		}
		if math.Abs(r.MarginDB-wantMargin) > 1e-9 {
			t.Errorf("band %d: margin %v, want %v", b, r.MarginDB, wantMargin)
		}
	}
}
