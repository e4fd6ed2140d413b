package spice

import (
	"fmt"
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/mat"

	"matchbench/rfmath"
)

// Section is one R ∥ L or R ∥ C pair of an [Equivalent], in series with the
// rest of the branch.
type Section struct {
	ROhm float64 // the resistance
	X    float64 // the inductance in henries (R ∥ L) or capacitance in farads (R ∥ C)
}

// Equivalent is a network of constant resistors, inductors and capacitors
// that stands for a two-terminal part over a band of frequencies: a series
// chain of R, L and C, sections R_k ∥ L_k and sections R_m ∥ C_m, the whole
// chain shunted by Cp:
//
//	Zs = R + jωL + 1/(jωC) + Σ jωL_k·R_k/(R_k + jωL_k) + Σ R_m/(1 + jωR_m·C_m)
//	Z  = Zs ∥ 1/(jωCp)
//
// A zero R, L, C or Cp leaves that element out (C = 0 means no series
// capacitor, a DC path). Every element value is positive, so the network is
// passive and any circuit simulator takes it. An R ∥ L section's resistance
// grows from 0 (well below its corner R_k/(2πL_k)) to R_k (well above), an
// R ∥ C section's falls from R_m to 0: a sum of them follows a resistance
// that grows or falls with frequency, as the skin effect (R ∝ √f) or a
// constant Q (R ∝ f, R ∝ 1/f) makes it.
type Equivalent struct {
	ROhm, LH, CF float64
	RL, RC       []Section
	ParallelCF   float64

	// Span is the band the equivalent was fitted over. MaxDS21 is the
	// largest error it makes in the part's transmission between references
	// Z0 there, |ΔS21| (see [FitLumped]), MaxDS21Bands the largest within
	// the bands that mattered most, and MaxRelErr the largest relative
	// error of the impedance, |Z_eq − Z|/|Z|, across the span. Exact
	// reports that the part is itself made of constant elements: no fit was
	// needed and the errors are rounding.
	Span                  Range
	MaxDS21, MaxDS21Bands float64
	MaxRelErr             float64
	Exact                 bool
}

// ImpedanceAt returns the equivalent's impedance in ohms at fHz.
func (e Equivalent) ImpedanceAt(fHz float64) complex128 {
	w := 2 * math.Pi * fHz
	jw := complex(0, w)
	z := complex(e.ROhm, w*e.LH)
	if e.CF > 0 {
		z += 1 / (jw * complex(e.CF, 0))
	}
	for _, s := range e.RL {
		z += jw * complex(s.X*s.ROhm, 0) / complex(s.ROhm, w*s.X)
	}
	for _, s := range e.RC {
		z += complex(s.ROhm, 0) / complex(1, w*s.ROhm*s.X)
	}
	if e.ParallelCF > 0 {
		z = z / (1 + jw*complex(e.ParallelCF, 0)*z)
	}
	return z
}

// Elements returns how many R, L and C elements the equivalent has.
func (e Equivalent) Elements() int {
	n := 2*len(e.RL) + 2*len(e.RC)
	for _, v := range []float64{e.ROhm, e.LH, e.CF, e.ParallelCF} {
		if v > 0 {
			n++
		}
	}
	return n
}

// Range is a band of frequencies, LoHz ≤ HiHz.
type Range struct{ LoHz, HiHz float64 }

// FitSpec says where and how a part is used, which is what its equivalent
// must reproduce: across Span (the sweep) and best within Bands, as a
// series or shunt part in a line of reference resistance Z0Ohm.
type FitSpec struct {
	Span  Range
	Bands []Range
	Z0Ohm float64
	Shunt bool
}

// Fit settings. The corners of the sections are spread evenly in log
// frequency, sectionsPerDecade to the decade, from fitMargin below the
// span to fitMargin above it. The fit grid has fitPointsPerDec points a
// decade across the span and bandPoints in each band, whose errors weigh
// bandWeight times more; the fit takes the best of lawsonRounds rounds of
// reweighting. The check grid has checkPoints across the span and
// checkBandPoints in each band.
const (
	sectionsPerDecade = 4
	fitMargin         = 10.0
	fitPointsPerDec   = 60
	bandPoints        = 41
	bandWeight        = 100
	lawsonRounds      = 12
	checkPoints       = 2001
	checkBandPoints   = 401
)

// FitLumped returns an [Equivalent] of the lumped part p for the use spec.
//
// A part whose resistance does not depend on frequency (the Flat law, or
// no resistance) is itself made of constant elements and is returned
// exactly. Otherwise the series branch Zs = R(f) + jωL + 1/(jωC) is fitted
// as a whole by non-negative least squares (C. L. Lawson and R. J. Hanson,
// Solving Least Squares Problems, Prentice-Hall 1974, chapter 23) with the
// section corners fixed on a log grid, and Cp is put across it as it is.
//
// What is made small is the worst error the equivalent makes in the part's
// transmission as a two-port between references Z0, |ΔS21|, which for a
// series part of impedance Z is 2·Z0·|ΔZ|/|Z + 2·Z0|² and for a shunt part
// 2·Z0·|ΔZ|/|2·Z + Z0|² (to first order; the same holds for |ΔS11|). A
// part model whose resistance grows as √f at a constant inductance has no
// exact passive equivalent (its real and imaginary parts are not a
// Hilbert pair), so the error cannot be made zero; it is smallest where
// the part's Q is high and is reported, worst case on a fine grid, in
// MaxDS21 (span) and MaxDS21Bands (bands), with the worst relative
// impedance error in MaxRelErr.
//
// The span must be positive and increasing, and Z0Ohm positive; otherwise
// FitLumped returns an error wrapping [ErrBand].
func FitLumped(p rfmath.Lumped, spec FitSpec) (Equivalent, error) {
	if err := spec.normalise(); err != nil {
		return Equivalent{}, err
	}
	for _, v := range []float64{p.LH, p.CF, p.ROhm, p.ParallelCF} {
		if !(v >= 0) || math.IsInf(v, 0) {
			return Equivalent{}, fmt.Errorf("%w: element values L %g H, C %g F, R %g Ω, Cp %g F", ErrPart, p.LH, p.CF, p.ROhm, p.ParallelCF)
		}
	}
	e := Equivalent{LH: p.LH, CF: p.CF, ParallelCF: p.ParallelCF, Span: spec.Span}
	flat := p.ROhm == 0 || !(p.RefHz > 0) || p.RLaw == rfmath.Flat
	if flat {
		e.ROhm, e.Exact = p.ROhm, true
	} else {
		series := p
		series.ParallelCF = 0
		if err := fitBranch(&e, series.ImpedanceAt, p.ParallelCF, p.CF > 0, spec); err != nil {
			return Equivalent{}, err
		}
	}
	e.check(p.ImpedanceAt, spec)
	return e, nil
}

// FitImpedance returns an [Equivalent] of a one-port of impedance z(f)
// (ohms) for the use spec, fitted as [FitLumped] fits a part's series
// branch: a chain of R, L and sections R ∥ L and R ∥ C, without a series
// capacitor (the equivalent passes DC). It stands for the
// frequency-dependent resistors of a lossy line's attenuator. z must be a
// passive impedance; an equivalent that cannot be found returns an error
// wrapping [ErrFit].
func FitImpedance(z func(fHz float64) complex128, spec FitSpec) (Equivalent, error) {
	if err := spec.normalise(); err != nil {
		return Equivalent{}, err
	}
	e := Equivalent{Span: spec.Span}
	if err := fitBranch(&e, z, 0, false, spec); err != nil {
		return Equivalent{}, err
	}
	e.check(z, spec)
	return e, nil
}

// normalise checks the spec, widens a span of one frequency to ±10 % and
// clips the bands to the span.
func (spec *FitSpec) normalise() error {
	lo, hi := spec.Span.LoHz, spec.Span.HiHz
	if !(lo > 0) || !(hi >= lo) || math.IsInf(hi, 0) || !(spec.Z0Ohm > 0) || math.IsInf(spec.Z0Ohm, 0) {
		return fmt.Errorf("%w: %g–%g Hz in %g Ω", ErrBand, lo, hi, spec.Z0Ohm)
	}
	if hi < 1.2*lo { // a single frequency, or nearly: fit ±10 % about it
		c := rfmath.BandCentreHz(lo, hi)
		spec.Span = Range{math.Min(lo, c/1.1), math.Max(hi, c*1.1)}
	}
	var bands []Range
	for _, b := range spec.Bands {
		b.LoHz, b.HiHz = math.Max(b.LoHz, spec.Span.LoHz), math.Min(b.HiHz, spec.Span.HiHz)
		if b.LoHz > 0 && b.HiHz >= b.LoHz {
			bands = append(bands, b)
		}
	}
	spec.Bands = bands
	return nil
}

// ds21Weight returns the factor that turns an error ΔZs of the series
// branch of a part of impedance z (branch zs) into its |ΔS21|.
func ds21Weight(z, zs complex128, wCp, z0 float64, shunt bool) float64 {
	d := z + complex(2*z0, 0)
	if shunt {
		d = 2*z + complex(z0, 0)
	}
	k := 1 + complex(0, wCp)*zs // dZ/dZs = 1/k²
	return 2 * z0 / (cmplx.Abs(d) * cmplx.Abs(d) * cmplx.Abs(k) * cmplx.Abs(k))
}

// fitBranch fits e's series chain to the branch impedance zs(f), which
// is shunted by cp (farads; 0 for none) in the part; hasC allows a series
// capacitor.
func fitBranch(e *Equivalent, zs func(float64) complex128, cp float64, hasC bool, spec FitSpec) error {
	lo, hi := spec.Span.LoHz, spec.Span.HiHz
	nf := max(40, int(math.Ceil(math.Log10(hi/lo)*fitPointsPerDec)))
	freqs := logGrid(lo, hi, nf)
	wts := make([]float64, len(freqs))
	for i := range wts {
		wts[i] = 1
	}
	for _, b := range spec.Bands {
		for _, f := range logGrid(b.LoHz, b.HiHz, bandPoints) {
			freqs = append(freqs, f)
			wts = append(wts, bandWeight)
		}
	}
	nc := int(math.Ceil(math.Log10(fitMargin*fitMargin*hi/lo)*sectionsPerDecade)) + 1
	corners := logGrid(lo/fitMargin, hi*fitMargin, nc)

	// Columns: R, L, (1/C), then R ∥ L and R ∥ C at each corner.
	type col struct {
		kind byte // 'R', 'L', 'S' (elastance 1/C), 'l' (R ∥ L), 'c' (R ∥ C)
		wc   float64
	}
	cols := []col{{kind: 'R'}, {kind: 'L'}}
	if hasC {
		cols = append(cols, col{kind: 'S'})
	}
	for _, f := range corners {
		cols = append(cols, col{kind: 'l', wc: 2 * math.Pi * f}, col{kind: 'c', wc: 2 * math.Pi * f})
	}
	m, n := 2*len(freqs), len(cols)
	a := mat.NewDense(m, n, nil)
	b := make([]float64, m)
	for i, f := range freqs {
		w := 2 * math.Pi * f
		jw := complex(0, w)
		z := zs(f)
		zp := z
		if cp > 0 {
			zp = z / (1 + complex(0, w*cp)*z)
		}
		wt := wts[i] * ds21Weight(zp, z, w*cp, spec.Z0Ohm, spec.Shunt)
		b[2*i], b[2*i+1] = real(z)*wt, imag(z)*wt
		for j, c := range cols {
			var v complex128
			switch c.kind {
			case 'R':
				v = 1
			case 'L':
				v = jw
			case 'S':
				v = 1 / jw
			case 'l':
				v = (jw / complex(c.wc, 0)) / (1 + jw/complex(c.wc, 0))
			case 'c':
				v = 1 / (1 + jw/complex(c.wc, 0))
			}
			a.Set(2*i, j, real(v)*wt)
			a.Set(2*i+1, j, imag(v)*wt)
		}
	}
	x, err := lawson(a, b)
	if err != nil {
		return err
	}
	e.LH, e.CF = 0, 0
	for j, c := range cols {
		v := x[j]
		if !(v > 0) || math.IsInf(v, 0) {
			continue
		}
		switch c.kind {
		case 'R':
			e.ROhm = v
		case 'L':
			e.LH = v
		case 'S':
			e.CF = 1 / v
		case 'l': // R·(jω/ωc)/(1 + jω/ωc) is R ∥ L with L = R/ωc
			e.RL = append(e.RL, Section{ROhm: v, X: v / c.wc})
		case 'c': // R/(1 + jω/ωc) is R ∥ C with C = 1/(R·ωc)
			e.RC = append(e.RC, Section{ROhm: v, X: 1 / (v * c.wc)})
		}
	}
	if hasC && e.CF == 0 {
		return fmt.Errorf("%w: the fit lost the series capacitance", ErrFit)
	}
	return nil
}

// check fills e's error figures on the check grids.
func (e *Equivalent) check(zf func(float64) complex128, spec FitSpec) {
	worst := func(freqs []float64) (ds, rel float64) {
		for _, f := range freqs {
			z, ze := zf(f), e.ImpedanceAt(f)
			d := z + complex(2*spec.Z0Ohm, 0)
			de := ze + complex(2*spec.Z0Ohm, 0)
			if spec.Shunt {
				d, de = 2*z+complex(spec.Z0Ohm, 0), 2*ze+complex(spec.Z0Ohm, 0)
			}
			// S21 of a series part is 2Z0/(Z + 2Z0), of a shunt part 2Z/(2Z + Z0).
			s, se := complex(2*spec.Z0Ohm, 0)/d, complex(2*spec.Z0Ohm, 0)/de
			if spec.Shunt {
				s, se = 2*z/d, 2*ze/de
			}
			x, r := cmplx.Abs(se-s), cmplx.Abs(ze-z)/cmplx.Abs(z)
			if math.IsNaN(x) || math.IsNaN(r) {
				return math.Inf(1), math.Inf(1)
			}
			ds, rel = math.Max(ds, x), math.Max(rel, r)
		}
		return ds, rel
	}
	e.MaxDS21, e.MaxRelErr = worst(logGrid(spec.Span.LoHz, spec.Span.HiHz, checkPoints))
	e.MaxDS21Bands = e.MaxDS21
	if len(spec.Bands) > 0 {
		e.MaxDS21Bands = 0
		for _, b := range spec.Bands {
			ds, _ := worst(logGrid(b.LoHz, b.HiHz, checkBandPoints))
			e.MaxDS21Bands = math.Max(e.MaxDS21Bands, ds)
		}
	}
}

// lawson returns the x ≥ 0 that makes the largest |(A·x − b)_k| over the
// points k (each point a pair of rows, the real and imaginary parts) as
// small as it can: least squares with weights updated by the size of each
// point's residual (C. L. Lawson's algorithm for minimax approximation,
// thesis, UCLA 1961, as described by J. R. Rice and K. H. Usow, Math.
// Comp. 22, 1968), keeping the best of lawsonRounds rounds. Each round is
// a non-negative least-squares fit ([nnls]) of A with its columns scaled
// to unit length (the unknowns span twenty orders of magnitude: henries
// and ohms).
func lawson(a *mat.Dense, b []float64) ([]float64, error) {
	m, n := a.Dims()
	pts := m / 2
	lw := make([]float64, pts)
	for i := range lw {
		lw[i] = 1
	}
	var best []float64
	bestMax := math.Inf(1)
	aw := mat.NewDense(m, n, nil)
	bw := make([]float64, m)
	res := make([]float64, pts)
	for round := 0; round < lawsonRounds; round++ {
		for i := range m {
			s := math.Sqrt(lw[i/2])
			bw[i] = b[i] * s
			for j := range n {
				aw.Set(i, j, a.At(i, j)*s)
			}
		}
		scale := make([]float64, n)
		for j := range n {
			s := mat.Norm(aw.ColView(j), 2)
			if s == 0 {
				s = 1
			}
			scale[j] = s
			for i := range m {
				aw.Set(i, j, aw.At(i, j)/s)
			}
		}
		x, err := nnls(aw, bw)
		if err != nil {
			return nil, err
		}
		for j := range x {
			x[j] /= scale[j]
		}
		worst, sum := 0.0, 0.0
		for k := range pts {
			re, im := -b[2*k], -b[2*k+1]
			for j := range n {
				re += a.At(2*k, j) * x[j]
				im += a.At(2*k+1, j) * x[j]
			}
			res[k] = math.Hypot(re, im)
			worst = math.Max(worst, res[k])
		}
		if worst < bestMax {
			best, bestMax = x, worst
		}
		for k := range pts {
			lw[k] *= res[k]
			sum += lw[k]
		}
		if !(sum > 0) {
			break
		}
		for k := range pts {
			lw[k] *= float64(pts) / sum
		}
	}
	return best, nil
}

// logGrid returns n frequencies from lo to hi evenly spaced in log
// frequency (lo alone when n is 1).
func logGrid(lo, hi float64, n int) []float64 {
	out := make([]float64, n)
	for i := range out {
		if n == 1 {
			out[i] = lo
			continue
		}
		out[i] = lo * math.Pow(hi/lo, float64(i)/float64(n-1))
	}
	out[n-1] = hi
	return out
}

// nnls solves min ‖A·x − b‖ subject to x ≥ 0 by the active-set method of
// Lawson and Hanson (Solving Least Squares Problems, 1974, chapter 23,
// algorithm NNLS). A must have at least as many rows as columns.
func nnls(a *mat.Dense, b []float64) ([]float64, error) {
	m, n := a.Dims()
	bv := mat.NewVecDense(m, b)
	x := make([]float64, n)
	passive := make([]bool, n)
	resid := mat.NewVecDense(m, nil)
	w := mat.NewVecDense(n, nil)
	gradient := func() {
		resid.MulVec(a, mat.NewVecDense(n, x))
		resid.SubVec(bv, resid)
		w.MulVec(a.T(), resid)
	}
	tol := 1e-12 * float64(max(m, n))
	solve := func() ([]float64, error) { // least squares on the passive set
		var idx []int
		for j := range n {
			if passive[j] {
				idx = append(idx, j)
			}
		}
		ap := mat.NewDense(m, len(idx), nil)
		for k, j := range idx {
			for i := range m {
				ap.Set(i, k, a.At(i, j))
			}
		}
		var s mat.VecDense
		if err := s.SolveVec(ap, bv); err != nil {
			var c mat.Condition
			if !asCondition(err, &c) {
				return nil, fmt.Errorf("%w: %v", ErrFit, err)
			}
		}
		z := make([]float64, n)
		for k, j := range idx {
			z[j] = s.AtVec(k)
		}
		return z, nil
	}
	gradient()
	for iter := 0; iter < 3*n; iter++ {
		t, best := -1, tol
		for j := range n {
			if !passive[j] && w.AtVec(j) > best {
				t, best = j, w.AtVec(j)
			}
		}
		if t < 0 {
			return x, nil
		}
		passive[t] = true
		for inner := 0; ; inner++ {
			z, err := solve()
			if err != nil {
				return nil, err
			}
			feasible := true
			alpha := math.Inf(1)
			for j := range n {
				if passive[j] && z[j] <= 0 {
					feasible = false
					if d := x[j] - z[j]; d > 0 {
						alpha = math.Min(alpha, x[j]/d)
					} else {
						alpha = 0
					}
				}
			}
			if feasible {
				copy(x, z)
				break
			}
			if inner > 3*n {
				return nil, fmt.Errorf("%w: the active set does not settle", ErrFit)
			}
			for j := range n {
				x[j] += alpha * (z[j] - x[j])
				if passive[j] && x[j] <= tol*1e-3 {
					passive[j], x[j] = false, 0
				}
			}
		}
		gradient()
	}
	return x, nil
}

// asCondition reports whether err is a mat.Condition (an ill-conditioned
// but solved system), which the fit accepts: it checks its own error.
func asCondition(err error, c *mat.Condition) bool {
	v, ok := err.(mat.Condition)
	if ok {
		*c = v
	}
	return ok
}
