package spice

import (
	"errors"
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"

	"matchbench/rfmath"
	"matchbench/rfmath/parts"
)

// TestNNLSBruteForce checks the active-set solver against brute force: for
// small random problems, the best of the unconstrained least-squares fits
// over every subset of the columns whose solution is non-negative is the
// constrained optimum (the solution of a non-negative least-squares
// problem is the least-squares solution on its own support).
func TestNNLSBruteForce(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(1, 1))
	for trial := range 200 {
		m, n := 8, 1+rng.IntN(5)
		a := mat.NewDense(m, n, nil)
		b := make([]float64, m)
		for i := range m {
			b[i] = rng.NormFloat64()
			for j := range n {
				a.Set(i, j, rng.NormFloat64())
			}
		}
		x, err := nnls(a, b)
		if err != nil {
			t.Fatal(err)
		}
		got := residual(a, b, x)
		best := residual(a, b, make([]float64, n))
		for mask := 1; mask < 1<<n; mask++ {
			var idx []int
			for j := range n {
				if mask&(1<<j) != 0 {
					idx = append(idx, j)
				}
			}
			sub := mat.NewDense(m, len(idx), nil)
			for k, j := range idx {
				for i := range m {
					sub.Set(i, k, a.At(i, j))
				}
			}
			var s mat.VecDense
			if err := s.SolveVec(sub, mat.NewVecDense(m, b)); err != nil {
				continue
			}
			y := make([]float64, n)
			ok := true
			for k, j := range idx {
				if y[j] = s.AtVec(k); y[j] < 0 {
					ok = false
				}
			}
			if ok {
				best = math.Min(best, residual(a, b, y))
			}
		}
		for j, v := range x {
			if v < 0 {
				t.Fatalf("trial %d: x[%d] = %g < 0", trial, j, v)
			}
		}
		if got > best*(1+1e-9)+1e-12 {
			t.Fatalf("trial %d: residual %.12g, brute force finds %.12g", trial, got, best)
		}
	}
}

func residual(a *mat.Dense, b, x []float64) float64 {
	m, n := a.Dims()
	s := 0.0
	for i := range m {
		r := -b[i]
		for j := range n {
			r += a.At(i, j) * x[j]
		}
		s += r * r
	}
	return math.Sqrt(s)
}

// TestFitLumpedExact: parts whose loss does not change with frequency are
// their own equivalents (the closed form of [rfmath.Lumped]).
func TestFitLumpedExact(t *testing.T) {
	t.Parallel()
	spec := FitSpec{Span: Range{700e6, 1.1e9}, Z0Ohm: 50}
	for _, c := range []struct {
		name string
		p    rfmath.Lumped
	}{
		{"ideal inductor", rfmath.Lumped{LH: 12e-9}},
		{"capacitor with ESR and ESL", parts.Typical0402.Capacitor(2.2e-12).Lumped()},
		{"resistor with ESL", parts.Resistor{ROhm: 22, ESLH: 0.4e-9}.Lumped()},
		{"inductor without loss but with Cp", parts.Inductor{LH: 10e-9, SRFHz: 3e9}.Lumped()},
	} {
		e, err := FitLumped(c.p, spec)
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		if !e.Exact || e.MaxRelErr > 1e-12 || e.MaxDS21 > 1e-12 {
			t.Errorf("%s: exact %v, relative error %g, |ΔS21| %g; want the part itself", c.name, e.Exact, e.MaxRelErr, e.MaxDS21)
		}
	}
}

// TestFitLumpedLossLaws fits parts whose resistance follows a law of
// frequency and checks the equivalent against the part's closed form: every
// element positive (passive), Re Z ≥ 0, and the error the fit reports is
// the error found on an independent grid. Bounds are what the fit reaches
// (a regression check), the part's Q named.
func TestFitLumpedLossLaws(t *testing.T) {
	t.Parallel()
	narrow := Range{700e6, 1.1e9}
	bands := []Range{{863e6, 870e6}, {902e6, 928e6}}
	for _, c := range []struct {
		name         string
		p            rfmath.Lumped
		shunt        bool
		bandTol, tol float64
	}{
		{"0402 12 nH, Q ∝ √f (Q 14 at 500 MHz)", parts.Typical0402.Inductor(12e-9).Lumped(), false, 2e-5, 1e-3},
		{"0402 22 nH shunt", parts.Typical0402.Inductor(22e-9).Lumped(), true, 2e-5, 1e-3},
		{"constant Q 40 inductor", parts.ConstantQ{QL: 40}.Part(parts.KindL, 6.8e-9).(rfmath.Lumper).Lumped(), false, 2e-5, 1e-3},
		{"constant Q 250 capacitor", parts.ConstantQ{QC: 250}.Part(parts.KindC, 3.3e-12).(rfmath.Lumper).Lumped(), false, 2e-5, 1e-3},
	} {
		e, err := FitLumped(c.p, FitSpec{Span: narrow, Bands: bands, Z0Ohm: 50, Shunt: c.shunt})
		if err != nil {
			t.Fatalf("%s: %v", c.name, err)
		}
		if e.Exact {
			t.Errorf("%s: reported exact", c.name)
		}
		if e.MaxDS21Bands > c.bandTol || e.MaxDS21 > c.tol {
			t.Errorf("%s: |ΔS21| %.3g in the bands, %.3g across the span; want ≤ %g, %g", c.name, e.MaxDS21Bands, e.MaxDS21, c.bandTol, c.tol)
		}
		for _, v := range append([]float64{e.ROhm, e.LH, e.CF, e.ParallelCF}, sections(e)...) {
			if v < 0 || math.IsNaN(v) || math.IsInf(v, 0) {
				t.Errorf("%s: element value %g", c.name, v)
			}
		}
		worst := 0.0
		for _, f := range logGrid(narrow.LoHz, narrow.HiHz, 777) {
			z := e.ImpedanceAt(f)
			if real(z) < 0 {
				t.Errorf("%s: Re Z = %g at %g Hz", c.name, real(z), f)
			}
			worst = math.Max(worst, cmplx.Abs(z-c.p.ImpedanceAt(f))/cmplx.Abs(c.p.ImpedanceAt(f)))
		}
		if worst > 1.01*e.MaxRelErr+1e-12 {
			t.Errorf("%s: relative error %.3g on another grid, reported %.3g", c.name, worst, e.MaxRelErr)
		}
	}
}

func sections(e Equivalent) []float64 {
	var v []float64
	for _, s := range append(append([]Section(nil), e.RL...), e.RC...) {
		v = append(v, s.ROhm, s.X)
	}
	return v
}

func TestFitRefuses(t *testing.T) {
	t.Parallel()
	ok := FitSpec{Span: Range{1e9, 2e9}, Z0Ohm: 50}
	for _, c := range []struct {
		name string
		p    rfmath.Lumped
		spec FitSpec
		want error
	}{
		{"no span", rfmath.Lumped{LH: 1e-9}, FitSpec{Z0Ohm: 50}, ErrBand},
		{"reversed span", rfmath.Lumped{LH: 1e-9}, FitSpec{Span: Range{2e9, 1e9}, Z0Ohm: 50}, ErrBand},
		{"no reference", rfmath.Lumped{LH: 1e-9}, FitSpec{Span: Range{1e9, 2e9}}, ErrBand},
		{"infinite resistance", rfmath.Lumped{LH: 1e-9, ROhm: math.Inf(1), RefHz: 1e9}, ok, ErrPart},
		{"NaN capacitance", rfmath.Lumped{CF: math.NaN()}, ok, ErrPart},
	} {
		if _, err := FitLumped(c.p, c.spec); !errors.Is(err, c.want) {
			t.Errorf("%s: error %v, want %v", c.name, err, c.want)
		}
	}
}
