package match

import (
	"bytes"
	"context"
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"os"
	"strings"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/amp"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/touchstone"
)

// demoTransistor reads the demo's invented LNA transistor (written by
// internal/demo; see testdata/demo).
func demoTransistor(t testing.TB) (*rfmath.Sweep, []touchstone.NoisePoint) {
	t.Helper()
	b, err := os.ReadFile("../../testdata/demo/wristtag-lna-transistor.s2p")
	if err != nil {
		t.Fatal(err)
	}
	tf, err := touchstone.Read(bytes.NewReader(b), "wristtag-lna-transistor.s2p", touchstone.Limits{})
	if err != nil {
		t.Fatal(err)
	}
	return tf.Sweep, tf.Noise
}

// unilateral returns a sweep of a unilateral device (S12 = 0, S21 = 3)
// whose S11 and S22 are the invented small antenna's reflection and a
// 20 Ω + 2 nH load's, from 2.3 to 2.6 GHz.
func unilateral() *rfmath.Sweep {
	fs := grid(2.3e9, 2.6e9, 7)
	sw := rfmath.NewSweep(len(fs), 2, 50)
	copy(sw.FreqHz, fs)
	for k, f := range fs {
		m := sw.Matrix(k)
		m[0] = rfmath.GammaFromZ(smallAntenna(f), 50)
		m[1] = 0
		m[2] = 3
		m[3] = rfmath.GammaFromZ(complex(20, 2*math.Pi*f*2e-9), 50)
	}
	return sw
}

// For a unilateral device the two sides do not interact: Γin = S11 and
// Γout = S22 whatever the other network, and the gain is
// G_S·|S21|²·G_L. At one frequency and with a gain requirement alone the
// best stage is therefore the best source network for S11 with the best
// load network for S22, each the exhaustive optimum of its own side
// ([Exhaustive], plain enumeration): the stage search must find exactly
// that gain. This holds only if the load side's reciprocity (a search
// into Γout designs the network out of it) and both networks' orientation
// (element 0 at the device) are right.
func TestSearchStageUnilateralAgainstExhaustive(t *testing.T) {
	t.Parallel()
	dev := unilateral()
	const f = 2.45e9
	bands := []amp.StageBand{{LoHz: f, HiHz: f, StageRequirement: amp.StageRequirement{MinGainDB: 9}}}
	set := Settings{LSeries: "E12", CSeries: "E12", MaxParts: 2, Model: parts.ConstantQ{QL: 30, QC: 200}}
	res, err := SearchStage(context.Background(), dev, nil, 50, bands, &StageSettings{Settings: set})
	if err != nil {
		t.Fatal(err)
	}
	if res.Exact {
		t.Error("a stage search says it is exact")
	}
	best := func(l Load) float64 {
		r, err := Exhaustive(context.Background(), l, []Band{{LoHz: f, HiHz: f}}, &set)
		if err != nil {
			t.Fatal(err)
		}
		return r.Designs[0].WorstPowerToLoad
	}
	in, out, err := StageLoads(dev, nil, 50, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	// G_T = M_s·|S21|²·M_L/((1 − |S11|²)(1 − |S22|²)) with M the share of
	// the available power each side's network delivers into S11 and out of
	// S22 (Pozar's unilateral transducer gain, G_S·G_0·G_L, in those
	// terms). 2.45 GHz is a point of the sweep.
	m := dev.Matrix(3)
	u := (1 - math.Pow(cmplx.Abs(m[0]), 2)) * (1 - math.Pow(cmplx.Abs(m[3]), 2))
	want := 10 * math.Log10(best(in)*9*best(out)/u)
	got := res.Designs[0].Bands[0].MinGainDB
	if math.Abs(got-want) > 1e-9 {
		t.Errorf("best stage gain %.9f dB, want %.9f dB (the two sides' exhaustive optima): source %v, load %v", got, want, res.Designs[0].Source, res.Designs[0].Load)
	}
}

// On the demo transistor with at most one part per side (E6, typical
// 0402 parts), the stage search finds the stage that brute force over
// every pair of one-part networks finds best by the same ranking, with the
// same figures. (A check on one case: the search is best found in general.)
func TestSearchStageAgainstBruteForcePairs(t *testing.T) {
	t.Parallel()
	dev, noise := demoTransistor(t)
	bands := []amp.StageBand{{LoHz: 2.4e9, HiHz: 2.4835e9, StageRequirement: amp.StageRequirement{MinGainDB: 12, MaxNFdB: 1.6, MinInputRLdB: 5, MinOutputRLdB: 8}}}
	set := Settings{LSeries: "E6", CSeries: "E6", MaxParts: 1, Model: parts.Typical0402}
	res, err := SearchStage(context.Background(), dev, noise, 50, bands, &StageSettings{Settings: set})
	if err != nil {
		t.Fatal(err)
	}
	// Every one-part network of each kind over the same ranges the
	// one-side searches use (their Result ranges).
	r, err := Search(context.Background(), mustLoads(t, dev, noise).in, []Band{{LoHz: 2.4e9, HiHz: 2.4835e9}}, &Settings{LSeries: "E6", CSeries: "E6", MaxParts: 1, Model: parts.Typical0402})
	if err != nil {
		t.Fatal(err)
	}
	var nets []Network
	nets = append(nets, nil)
	for _, k := range []Kind{SeriesL, ShuntL, SeriesC, ShuntC} {
		lo, hi := r.LRange[0], r.LRange[1]
		ser := "E6"
		if k.Component() == rfmath.ComponentC {
			lo, hi = r.CRange[0], r.CRange[1]
		}
		s, _ := parts.Lookup(ser)
		first, last := s.Span(lo, hi)
		for i := first; i <= last; i++ {
			nets = append(nets, Network{{Kind: k, Value: s.Value(i), Series: ser, Model: parts.Typical0402}})
		}
	}
	var bestKey stageKey
	var bestPair [2]Network
	first := true
	for _, a := range nets {
		for _, b := range nets {
			st, err := StageOf(dev, noise, 50, a, b)
			if err != nil {
				t.Fatal(err)
			}
			m, err := amp.EvaluateStage(st, bands)
			if err != nil {
				t.Fatal(err)
			}
			if k := keyOf(m); first || k.better(bestKey) {
				bestKey, bestPair, first = k, [2]Network{a, b}, false
			}
		}
	}
	got := keyOf(res.Designs[0].StageMetrics)
	if !got.equal(bestKey) {
		t.Errorf("stage search: %+v with source %v, load %v; brute force over %d pairs: %+v with source %v, load %v",
			got, res.Designs[0].Source, res.Designs[0].Load, len(nets)*len(nets), bestKey, bestPair[0], bestPair[1])
	}
}

type stageLoads struct{ in, out Load }

func mustLoads(t testing.TB, dev *rfmath.Sweep, noise []touchstone.NoisePoint) stageLoads {
	t.Helper()
	in, out, err := StageLoads(dev, noise, 50, nil, nil)
	if err != nil {
		t.Fatal(err)
	}
	return stageLoads{in, out}
}

// The figures a stage search reports are those amp.EvaluateStage gives for
// its networks, and the demo's requirement is met by the best design.
func TestSearchStageDemo(t *testing.T) {
	t.Parallel()
	dev, noise := demoTransistor(t)
	bands := []amp.StageBand{{LoHz: 2.4e9, HiHz: 2.4835e9, StageRequirement: amp.StageRequirement{MinGainDB: 12.5, MaxNFdB: 1.35, MinInputRLdB: 8, MinOutputRLdB: 10}}}
	calls := 0
	res, err := SearchStage(context.Background(), dev, noise, 50, bands, &StageSettings{
		Settings: Settings{MaxParts: 2, Model: parts.Typical0402},
		Progress: func(done, total int) {
			calls++
			if done > total {
				t.Errorf("progress %d of %d", done, total)
			}
		},
	})
	if err != nil {
		t.Fatal(err)
	}
	if calls == 0 || res.Searches == 0 || res.Stages < res.Searches {
		t.Errorf("progress called %d times, %d searches, %d stages judged", calls, res.Searches, res.Stages)
	}
	d := res.Designs[0]
	if !d.Meets() {
		t.Errorf("the best demo stage misses: margin %g dB, unstable at %v", d.MarginDB, d.UnstableHz)
	}
	st, err := StageOf(dev, noise, 50, d.Source, d.Load)
	if err != nil {
		t.Fatal(err)
	}
	m, err := amp.EvaluateStage(st, bands)
	if err != nil {
		t.Fatal(err)
	}
	if m.MarginDB != d.MarginDB || m.Bands[0].WorstNFdB != d.Bands[0].WorstNFdB || m.Bands[0].MinGainDB != d.Bands[0].MinGainDB {
		t.Errorf("reported %+v, evaluated %+v", d.Bands[0], m.Bands[0])
	}
	for i := 1; i < len(res.Designs); i++ {
		if keyOf(res.Designs[i].StageMetrics).better(keyOf(res.Designs[i-1].StageMetrics)) {
			t.Errorf("design %d ranks above design %d", i+1, i)
		}
	}
}

// The loads the two sides are searched on carry the stage's power: with a
// lossless network on the other side (none at all here), the power a
// source network delivers into Γin times the device's operating gain with
// ΓL is the stage's gain, and the power a load network takes from a
// termination into Γout (match.Response, the network driven from its far
// end) times the device's available gain with Γs is the stage's gain too:
// the reciprocity the load side's search rests on. Random lossy networks
// of typical 0402 parts, seeded.
func TestStageLoadsCarryThePower(t *testing.T) {
	t.Parallel()
	dev, noise := demoTransistor(t)
	rnd := rand.New(rand.NewPCG(18, 50))
	kinds := []Kind{SeriesL, ShuntL, SeriesC, ShuntC}
	randomNet := func() Network {
		var n Network
		for range 1 + rnd.IntN(3) {
			k := kinds[rnd.IntN(4)]
			v := 1e-9 * math.Pow(10, rnd.Float64()) // 1–10 nH
			if k.Component() == rfmath.ComponentC {
				v = 0.3e-12 * math.Pow(10, rnd.Float64())
			}
			n = append(n, Part{Kind: k, Value: v, Model: parts.Typical0402})
		}
		return n
	}
	for range 40 {
		src, load := randomNet(), randomNet()
		for _, side := range []string{"source", "load"} {
			s, l := src, Network(nil)
			if side == "load" {
				s, l = nil, load
			}
			st, err := StageOf(dev, noise, 50, s, l)
			if err != nil {
				t.Fatal(err)
			}
			pts, err := st.SweepTo(nil)
			if err != nil {
				t.Fatal(err)
			}
			in, out, err := StageLoads(dev, noise, 50, s, l)
			if err != nil {
				t.Fatal(err)
			}
			net, target := s, in
			if side == "load" {
				net, target = l, out
			}
			_, toLoad, err := Response(target, net, nil, nil)
			if err != nil {
				t.Fatal(err)
			}
			for k, p := range pts {
				if !p.Stable {
					continue
				}
				m := dev.Matrix(k)
				sd := [4]complex128{m[0], m[1], m[2], m[3]}
				g := toLoad[k] * amp.OperatingGain(sd, p.GammaL)
				if side == "load" {
					g = toLoad[k] * amp.AvailableGain(sd, p.GammaS)
				}
				if math.Abs(10*math.Log10(g)-p.GainDB) > 1e-9 {
					t.Fatalf("%s network %v at %g Hz: the side's power gives %.9f dB, the stage %.9f dB", side, net, p.FreqHz, 10*math.Log10(g), p.GainDB)
				}
			}
		}
	}
}

func TestSearchStageErrors(t *testing.T) {
	t.Parallel()
	dev, noise := demoTransistor(t)
	ok := []amp.StageBand{{LoHz: 2.4e9, HiHz: 2.5e9, StageRequirement: amp.StageRequirement{MinGainDB: 10}}}
	small := &StageSettings{Settings: Settings{MaxParts: 1}}
	for _, c := range []struct {
		name  string
		noise []touchstone.NoisePoint
		bands []amp.StageBand
		set   *StageSettings
		want  string
	}{
		{"no band", noise, nil, small, "at least one band"},
		{"outside the sweep", noise, []amp.StageBand{{LoHz: 7e9, HiHz: 8e9}}, small, "outside the device's sweep"},
		{"noise limit without noise data", noise, []amp.StageBand{{LoHz: 0.6e9, HiHz: 0.8e9, StageRequirement: amp.StageRequirement{MaxNFdB: 2}}}, small, "no noise parameters at"},
		{"noise limit, no noise at all", nil, []amp.StageBand{{LoHz: 2.4e9, HiHz: 2.5e9, StageRequirement: amp.StageRequirement{MaxNFdB: 2}}}, small, "no noise parameters at"},
		{"blend", noise, ok, &StageSettings{Settings: Settings{MaxParts: 1}, Blends: []float64{1.5}}, "blend 1.5"},
		{"negative NF limit", noise, []amp.StageBand{{LoHz: 2.4e9, HiHz: 2.5e9, StageRequirement: amp.StageRequirement{MaxNFdB: -1}}}, small, "not negative"},
	} {
		_, err := SearchStage(context.Background(), dev, c.noise, 50, c.bands, c.set)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: error %v, want one saying %q", c.name, err, c.want)
		}
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := SearchStage(ctx, dev, noise, 50, ok, small); !errors.Is(err, context.Canceled) {
		t.Errorf("a cancelled search: %v", err)
	}
	if _, err := SearchStage(context.Background(), rfmath.NewSweep(3, 1, 50), nil, 50, ok, small); !errors.Is(err, amp.ErrNotTwoPort) {
		t.Errorf("a 1-port device: %v", err)
	}
}
