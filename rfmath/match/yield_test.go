package match

import (
	"context"
	"errors"
	"math"
	"math/cmplx"
	"reflect"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/parts"
)

// yieldCase is a 2.4 GHz antenna with a network found by the search.
func yieldCase(t *testing.T) (Load, []Band, Network) {
	t.Helper()
	l := loadOf(grid(2.3e9, 2.6e9, 121), 50, smallAntenna)
	bands := []Band{{2.4e9, 2.4835e9, 10, 0}}
	res, err := Search(context.Background(), l, bands, &Settings{MaxParts: 3, Top: 1})
	if err != nil {
		t.Fatal(err)
	}
	return l, bands, res.Designs[0].Network
}

func TestYieldReproducible(t *testing.T) {
	t.Parallel()
	l, bands, n := yieldCase(t)
	for _, d := range []Distribution{Uniform, Normal} {
		s := &YieldSettings{Builds: 500, Seed: 7, Dist: d, Traces: 3}
		a, err := Yield(context.Background(), l, bands, n, s)
		if err != nil {
			t.Fatal(err)
		}
		b, err := Yield(context.Background(), l, bands, n, s)
		if err != nil {
			t.Fatal(err)
		}
		if !reflect.DeepEqual(a, b) {
			t.Errorf("dist %d: two runs with seed 7 differ", d)
		}
		s.Seed = 8
		c, err := Yield(context.Background(), l, bands, n, s)
		if err != nil {
			t.Fatal(err)
		}
		if c.WorstMarginDB == a.WorstMarginDB && c.MedianMarginDB == a.MedianMarginDB {
			t.Errorf("dist %d: seeds 7 and 8 give the same spread", d)
		}
		if len(a.Traces) != 3 || len(a.Traces[0]) != len(l.FreqHz) {
			t.Errorf("traces %d × %d", len(a.Traces), len(a.Traces[0]))
		}
		if a.Yield < 0 || a.Yield > 1 || a.Passed != int(math.Round(a.Yield*500)) {
			t.Errorf("yield %v, passed %d", a.Yield, a.Passed)
		}
		if !(a.WorstMarginDB <= a.P5MarginDB && a.P5MarginDB <= a.MedianMarginDB) {
			t.Errorf("worst %v, p5 %v, median %v out of order", a.WorstMarginDB, a.P5MarginDB, a.MedianMarginDB)
		}
		// The nominal is one of the builds' neighbours: the worst build is
		// no better than the nominal, the worst corner no better either.
		if a.WorstMarginDB > a.Nominal.MarginDB || a.WorstCorner.MarginDB > a.Nominal.MarginDB {
			t.Errorf("worst build %v or corner %v above nominal %v", a.WorstMarginDB, a.WorstCorner.MarginDB, a.Nominal.MarginDB)
		}
	}
}

// TestYieldZeroTolerance: with no spread every build is the nominal
// network, so the yield is 1 when the nominal meets the requirement and 0
// when it does not.
func TestYieldZeroTolerance(t *testing.T) {
	t.Parallel()
	l, bands, n := yieldCase(t)
	zero := make([]parts.Tolerance, len(n))
	nom, err := Evaluate(l, bands, n)
	if err != nil {
		t.Fatal(err)
	}
	for _, req := range []float64{nom.Bands[0].WorstRLdB - 0.5, nom.Bands[0].WorstRLdB + 0.5} {
		b := []Band{{bands[0].LoHz, bands[0].HiHz, req, 0}}
		r, err := Yield(context.Background(), l, b, n, &YieldSettings{Builds: 200, Tolerances: zero, Dist: Normal})
		if err != nil {
			t.Fatal(err)
		}
		want := 0.0
		if r.Nominal.Meets() {
			want = 1
		}
		if r.Yield != want || r.WorstMarginDB != r.Nominal.MarginDB {
			t.Errorf("requirement %v dB: yield %v, want %v (nominal margin %v)", req, r.Yield, want, r.Nominal.MarginDB)
		}
		for _, s := range r.Sensitivity {
			if s.DropDB != 0 {
				t.Errorf("zero tolerance costs %v dB", s.DropDB)
			}
		}
	}
}

// TestYieldSensitivity: a part given a large tolerance is the one that
// matters most; the corner values are the nominal ± tolerance.
func TestYieldSensitivity(t *testing.T) {
	t.Parallel()
	l, bands, n := yieldCase(t)
	tol := make([]parts.Tolerance, len(n))
	for i := range tol {
		tol[i] = parts.Tolerance{Rel: 0.001}
	}
	tol[1] = parts.Tolerance{Rel: 0.10}
	r, err := Yield(context.Background(), l, bands, n, &YieldSettings{Builds: 100, Tolerances: tol})
	if err != nil {
		t.Fatal(err)
	}
	if r.MostSensitive != 1 || r.Sensitivity[1].Importance < 0.5 {
		t.Errorf("most sensitive %d, %+v", r.MostSensitive, r.Sensitivity)
	}
	for i, v := range r.WorstCorner.Values {
		want := n[i].Value * (1 + float64(r.WorstCorner.Signs[i])*tol[i].Rel)
		if math.Abs(v-want) > 1e-12*want {
			t.Errorf("corner value %d = %v, want %v", i, v, want)
		}
	}
	if _, err := Yield(context.Background(), l, bands, n, &YieldSettings{Tolerances: tol[:1]}); err == nil {
		t.Errorf("wrong number of tolerances accepted")
	}
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if _, err := Yield(ctx, l, bands, n, nil); !errors.Is(err, context.Canceled) {
		t.Errorf("cancelled: %v", err)
	}
}

// TestYieldDefaults checks the default tolerances (parts.DefaultTolerance)
// reach the corners.
func TestYieldDefaults(t *testing.T) {
	t.Parallel()
	l, bands, n := yieldCase(t)
	r, err := Yield(context.Background(), l, bands, n.WithModel(parts.Typical0402), &YieldSettings{Builds: 10})
	if err != nil {
		t.Fatal(err)
	}
	for i, s := range r.Sensitivity {
		if want := parts.DefaultTolerance(n[i].Kind.Component()).Of(n[i].Value); s.Tolerance != want {
			t.Errorf("part %d tolerance %v, want %v", i, s.Tolerance, want)
		}
	}
}

// TestStress checks voltages and currents against hand-worked values:
// the L-network of Pozar Example 5.1 (REFERENCE-CHECKS §6a) at 500 MHz with
// 1 W from a 100 Ω source is matched, so V_in = √(2·P·Z0) = 14.142 V peak
// and I_in = 0.14142 A; the series part (X = ±122.47 Ω) carries I_in and
// has 17.32 V across; the shunt part has the load's voltage
// |V_in·(1 − jX/Z0)| = 22.36 V, and the load then takes ½|V|²·Re(1/ZL) =
// 1 W (arithmetic).
func TestStress(t *testing.T) {
	t.Parallel()
	zl := complex(200, -100)
	l := loadOf(grid(490e6, 510e6, 3), 100, func(float64) complex128 { return zl })
	sols, _, _ := LNetworks(zl, 100, 500e6)
	bands := []Band{{500e6, 500e6, 0, 0}}
	for _, s := range sols {
		rep, err := Stress(l, bands, s.Parts, StressSettings{PowerW: 1})
		if err != nil {
			t.Fatal(err)
		}
		shunt, series := rep[0].PerFreq[0], rep[1].PerFreq[0]
		x := s.XOhm
		vl := 14.142135623730951 * cmplx.Abs(complex(1, -x/100))
		if math.Abs(series.IPeak-0.1414213562) > 1e-9 || math.Abs(series.VPeak-math.Abs(x)*0.1414213562) > 1e-8 {
			t.Errorf("series part: %+v", series)
		}
		if math.Abs(shunt.VPeak-vl) > 1e-9 || math.Abs(shunt.VRMS-vl/math.Sqrt2) > 1e-9 {
			t.Errorf("shunt part: %+v, want %v V peak", shunt, vl)
		}
		if pl := 0.5 * shunt.VPeak * shunt.VPeak * real(1/zl); math.Abs(pl-1) > 1e-9 {
			t.Errorf("load power %v W, want 1", pl)
		}
		if math.Abs(shunt.VPeak-22.3607) > 1e-4 || math.Abs(series.VPeak-17.3205) > 1e-4 {
			t.Errorf("hand values: shunt %v V, series %v V", shunt.VPeak, series.VPeak)
		}
	}
}

// TestStressRandom checks Stress against rfmath's ladder on random
// networks and loads: the current through a series part is the voltage at
// its load-side node over the impedance seen there, and every part's
// stress scales as √P.
func TestStressRandom(t *testing.T) {
	t.Parallel()
	l := loadOf(grid(2.3e9, 2.6e9, 31), 50, smallAntenna)
	bands := []Band{{2.4e9, 2.5e9, 10, 0}}
	n := Network{{Kind: ShuntC, Value: 1.2e-12, Series: ""}, {Kind: SeriesL, Value: 3.3e-9, Series: ""}, {Kind: ShuntL, Value: 4.7e-9, Series: ""}, {Kind: SeriesC, Value: 2.2e-12, Series: ""}}
	n = n.WithModel(parts.Typical0402)
	r1, err := Stress(l, bands, n, StressSettings{PowerW: 1})
	if err != nil {
		t.Fatal(err)
	}
	r4, err := Stress(l, bands, n, StressSettings{PowerW: 4})
	if err != nil {
		t.Fatal(err)
	}
	lad := ladderOf(t, n, parts.Typical0402)
	for k, st := range r1[3].PerFreq {
		f := st.FreqHz
		zl, _ := l.ZAt(f)
		// Input: incident 10 V peak (1 W in 50 Ω); V_in = a(1 + Γ).
		zin := lad.InputZ(f, zl)
		g := rfmath.GammaFromZ(zin, 50)
		vin := 10 * (1 + g)
		iin := vin / zin
		// Part 3 (series C, at the source) carries I_in.
		if math.Abs(st.IPeak-cmplx.Abs(iin)) > 1e-9*cmplx.Abs(iin) {
			t.Errorf("f %g: series current %v, want %v", f, st.IPeak, cmplx.Abs(iin))
		}
		// Part 2 (shunt L) has the node after part 3: V_in − Z3·I_in.
		z3 := parts.Typical0402.Part(parts.KindC, 2.2e-12).ImpedanceAt(f)
		v2 := vin - z3*iin
		if got := r1[2].PerFreq[k].VPeak; math.Abs(got-cmplx.Abs(v2)) > 1e-9*cmplx.Abs(v2) {
			t.Errorf("f %g: shunt voltage %v, want %v", f, got, cmplx.Abs(v2))
		}
		for j := range n {
			a, b := r1[j].PerFreq[k], r4[j].PerFreq[k]
			if math.Abs(b.VPeak-2*a.VPeak) > 1e-9*b.VPeak || math.Abs(b.IRMS-2*a.IRMS) > 1e-9*b.IRMS || math.Abs(b.DissipationW-4*a.DissipationW) > 1e-9*b.DissipationW+1e-300 {
				t.Errorf("part %d does not scale as √P", j)
			}
		}
	}
}

func TestStressWarnings(t *testing.T) {
	t.Parallel()
	l, bands, n := yieldCase(t)
	n = n.WithModel(parts.Typical0402)
	rep, err := Stress(l, bands, n, StressSettings{PowerW: 0.01})
	if err != nil {
		t.Fatal(err)
	}
	for _, r := range rep {
		if len(r.Warnings) != 0 {
			t.Errorf("10 mW: %v", r.Warnings)
		}
		if r.Rating == (parts.Rating{}) {
			t.Errorf("no rating from the 0402 family for %v", r.Part)
		}
	}
	rep, err = Stress(l, bands, n, StressSettings{PowerW: 200})
	if err != nil {
		t.Fatal(err)
	}
	warned := 0
	for _, r := range rep {
		warned += len(r.Warnings)
	}
	if warned == 0 {
		t.Errorf("200 W through 0402 parts gives no warning")
	}
	if _, err := Stress(l, bands, n, StressSettings{PowerW: -1}); err == nil {
		t.Errorf("negative power accepted")
	}
}
