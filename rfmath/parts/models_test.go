package parts

import (
	"errors"
	"math"
	"math/cmplx"
	"testing"

	"matchbench/rfmath"
)

func closeC(a, b complex128, tol float64) bool {
	return cmplx.Abs(a-b) <= tol*math.Max(1, cmplx.Abs(b))
}

// TestInductorModel checks the inductor model against the formula computed
// here by admittances (arithmetic): Y = 1/(R + jωL) + jωCp.
func TestInductorModel(t *testing.T) {
	t.Parallel()
	const l, q, fRef, srf = 10e-9, 20, 500e6, 4e9
	p := Inductor{LH: l, Q: q, QRefHz: fRef, SRFHz: srf}
	cp := 1 / (math.Pow(2*math.Pi*srf, 2) * l)
	if math.Abs(p.ParallelCF()-cp) > 1e-24 {
		t.Errorf("Cp = %v, want %v", p.ParallelCF(), cp)
	}
	for _, f := range []float64{100e6, 500e6, 1e9, 3.9e9, 4.1e9, 10e9} {
		w := 2 * math.Pi * f
		r := 2 * math.Pi * fRef * l / q * math.Sqrt(f/fRef)
		y := 1/complex(r, w*l) + complex(0, w*cp)
		if got := p.ImpedanceAt(f); !closeC(got, 1/y, 1e-12) {
			t.Errorf("Z(%g) = %v, want %v", f, got, 1/y)
		}
	}
	// Q of the series branch at the reference frequency is Q.
	s := Inductor{LH: l, Q: q, QRefHz: fRef}
	if z := s.ImpedanceAt(fRef); math.Abs(imag(z)/real(z)-q) > 1e-12 {
		t.Errorf("Q at ref = %v, want %v", imag(z)/real(z), q)
	}
	// Laws: √f doubles R at 4·f, Flat keeps it, Linear quadruples it.
	for _, tc := range []struct {
		law   Law
		ratio float64
	}{{SqrtF, 2}, {Flat, 1}, {Linear, 4}} {
		s.RLaw = tc.law
		if got := s.SeriesROhm(4*fRef) / s.SeriesROhm(fRef); math.Abs(got-tc.ratio) > 1e-12 {
			t.Errorf("law %d: R(4f)/R(f) = %v, want %v", tc.law, got, tc.ratio)
		}
	}
	// Without loss, the apparent inductance at SRF/3 is 1/(1 − 1/9) = 1.125·L
	// (the claim in the Inductor doc; arithmetic).
	lossless := Inductor{LH: l, SRFHz: srf}
	f := srf / 3
	if la := imag(lossless.ImpedanceAt(f)) / (2 * math.Pi * f); math.Abs(la/l-1.125) > 1e-12 {
		t.Errorf("apparent L at SRF/3 = %v·L, want 1.125", la/l)
	}
	// Reactance changes sign at the SRF (a parallel resonance).
	if imag(lossless.ImpedanceAt(srf*0.999)) <= 0 || imag(lossless.ImpedanceAt(srf*1.001)) >= 0 {
		t.Errorf("no sign change of X at the SRF")
	}
	// No parasitics: exactly the ideal inductor.
	if got, want := (Inductor{LH: l}).ImpedanceAt(1e9), (IdealInductor{l}).ImpedanceAt(1e9); got != want {
		t.Errorf("plain inductor %v, ideal %v", got, want)
	}
}

// TestCapacitorModel checks Z = ESR + jωLs − j/(ωC), the ESR from Q, and the
// series resonance at the SRF (arithmetic).
func TestCapacitorModel(t *testing.T) {
	t.Parallel()
	const c, srf = 10e-12, 2.5e9
	ls := 1 / (math.Pow(2*math.Pi*srf, 2) * c)
	p := Capacitor{CF: c, ESROhm: 0.15, SRFHz: srf}
	for _, f := range []float64{100e6, 1e9, 5e9} {
		w := 2 * math.Pi * f
		want := complex(0.15, w*ls-1/(w*c))
		if got := p.ImpedanceAt(f); !closeC(got, want, 1e-12) {
			t.Errorf("Z(%g) = %v, want %v", f, got, want)
		}
	}
	if x := imag(p.ImpedanceAt(srf)); math.Abs(x) > 1e-9 {
		t.Errorf("X at SRF = %v, want 0", x)
	}
	q := Capacitor{CF: c, Q: 200, QRefHz: 1e9}
	z := q.ImpedanceAt(1e9)
	if got := -imag(z) / real(z); math.Abs(got-200) > 1e-9 {
		t.Errorf("Q at ref = %v, want 200", got)
	}
	// ESROhm wins over Q.
	if (Capacitor{CF: c, ESROhm: 0.3, Q: 200, QRefHz: 1e9}).ESR() != 0.3 {
		t.Errorf("ESROhm not used")
	}
	if got, want := (Capacitor{CF: c}).ImpedanceAt(1e9), (IdealCapacitor{c}).ImpedanceAt(1e9); got != want {
		t.Errorf("plain capacitor %v, ideal %v", got, want)
	}
	r := Resistor{ROhm: 50, ESLH: 0.4e-9}
	if got := r.ImpedanceAt(1e9); !closeC(got, complex(50, 2*math.Pi*1e9*0.4e-9), 1e-15) {
		t.Errorf("resistor Z = %v", got)
	}
	if (IdealResistor{50}).ImpedanceAt(1e9) != 50 {
		t.Errorf("ideal resistor")
	}
}

// TestModelsInLadder places a model in an rfmath ladder: a shunt part is
// seen as its admittance.
func TestModelsInLadder(t *testing.T) {
	t.Parallel()
	p := Typical0402.Inductor(10e-9)
	l := rfmath.Ladder{rfmath.Shunt{Part: p}}
	z := l.InputZ(1e9, 50)
	want := 1 / (1.0/50 + 1/p.ImpedanceAt(1e9))
	if !closeC(z, want, 1e-12) {
		t.Errorf("Zin = %v, want %v", z, want)
	}
}

func TestFamilies(t *testing.T) {
	t.Parallel()
	f := Typical0402
	// At a table point the numbers are the table's.
	p := f.Inductor(10e-9)
	if p.Q != 14 || p.SRFHz != 3.5e9 || p.QRefHz != 500e6 {
		t.Errorf("10 nH: %+v", p)
	}
	// Halfway in log(L) between 10 and 33 nH … log-interpolated.
	l := math.Sqrt(10e-9 * 33e-9)
	if got, want := f.Inductor(l).SRFHz, math.Sqrt(3.5e9*1.8e9); math.Abs(got-want) > 1 {
		t.Errorf("SRF at √(10n·33n) = %v, want %v", got, want)
	}
	// Beyond the table: the end point's numbers.
	if got := f.Inductor(1e-6).SRFHz; got != 0.5e9 {
		t.Errorf("SRF of 1 µH = %v, want the 270 nH point", got)
	}
	c := f.Capacitor(1e-12)
	if math.Abs(c.SeriesLH()-f.CapacitorESLH) > 1e-21 || c.ESROhm != 0.4 {
		t.Errorf("1 pF: Ls %v, ESR %v", c.SeriesLH(), c.ESROhm)
	}
	if r := f.Rating(KindC, 1e-12); r.MaxVoltageV != 50 {
		t.Errorf("rating %+v", r)
	}
	if r := f.Rating(KindL, 1e-9); r.MaxCurrentA != 0.30 {
		t.Errorf("rating %+v", r)
	}
	if lo, hi := f.Range(KindL); lo != 1e-9 || hi != 270e-9 {
		t.Errorf("range %v %v", lo, hi)
	}
	if _, ok := f.Part(KindR, 50).(Resistor); !ok {
		t.Errorf("Part(R) not a Resistor")
	}
	if _, ok := Ideal.Part(KindC, 1e-12).(IdealCapacitor); !ok {
		t.Errorf("Ideal.Part(C) not an IdealCapacitor")
	}
	if g, err := LookupFamily("0603"); err != nil || g != Typical0603 {
		t.Errorf("LookupFamily(0603) = %v, %v", g, err)
	}
	if _, err := LookupFamily("1206"); !errors.Is(err, ErrUnknownFamily) {
		t.Errorf("LookupFamily(1206) error %v", err)
	}
	// Every table is sorted, as bracket needs.
	for _, f := range Families {
		for i := 1; i < len(f.Inductors); i++ {
			if f.Inductors[i].LH <= f.Inductors[i-1].LH {
				t.Errorf("%s inductors not sorted at %d", f.Name, i)
			}
		}
		for i := 1; i < len(f.Capacitors); i++ {
			if f.Capacitors[i].CF <= f.Capacitors[i-1].CF {
				t.Errorf("%s capacitors not sorted at %d", f.Name, i)
			}
		}
	}
}

// TestTolerance checks the "larger of" rule: ±0.1 nH below 5 nH and ±2 %
// above; ±0.05 pF below 2.5 pF and ±2 % above (typical, from memory).
func TestTolerance(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		k    Kind
		v    float64
		want float64
	}{
		{KindL, 1e-9, 0.1e-9},
		{KindL, 5e-9, 0.1e-9},
		{KindL, 22e-9, 0.44e-9},
		{KindC, 1e-12, 0.05e-12},
		{KindC, 10e-12, 0.2e-12},
		{KindR, 100, 1},
	} {
		if got := DefaultTolerance(tc.k).Of(tc.v); math.Abs(got-tc.want) > 1e-9*tc.want {
			t.Errorf("tolerance of %s %g = %g, want %g", tc.k, tc.v, got, tc.want)
		}
	}
	for _, f := range []func(){
		func() { DefaultTolerance("X") },
		func() { Ideal.Part("X", 1) },
		func() { Typical0402.Part("X", 1) },
		func() { Typical0402.Rating("X", 1) },
	} {
		func() {
			defer func() {
				if recover() == nil {
					t.Errorf("unknown kind did not panic")
				}
			}()
			f()
		}()
	}
}
