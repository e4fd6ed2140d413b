package rfmath

import (
	"math"
	"math/cmplx"
)

// Reflection is one reflection parameter of a sweep, S(p, p), as a function
// of frequency: its measured points and the rule that gives it between them,
// in the reference resistance it is shown in. Every figure read off a
// reflection trace (a readout, a band and its edges, the deepest dip, a zero
// of the reactance) comes from its methods, so that they agree with one
// another at every frequency: a band edge reads exactly the threshold, a
// zero crossing reads X = 0.
//
// Between measured points S is interpolated linearly in the complex plane
// in the sweep's own reference resistances ([Lerp], as [Sweep.InterpAt]
// does) and then renormalised to the references it is shown in, if they
// differ ([Renormalize]). The order matters: renormalising is not linear,
// and interpolating first keeps the impedance at a frequency independent of
// the reference it is shown in.
//
// A Reflection keeps the sweep's frequencies (and, for a multi-port shown in
// other references, the sweep itself), not copies: do not change the sweep
// while it is in use. Its methods change nothing and may be called from
// several goroutines at once.
type Reflection struct {
	freqHz []float64
	z0Ohm  float64      // the reference of the port as shown
	pts    []complex128 // Γ at the measured points, as shown
	kind   reflKind

	// file and rho are the 1-port Γ in the sweep's own reference and the
	// ρ of the renormalisation (mobius kind).
	file []complex128
	rho  float64

	// sweep, port and z0To give a multi-port shown in other references
	// (general kind).
	sweep *Sweep
	port  int
	z0To  []float64
}

type reflKind int

const (
	// linear: the points themselves are interpolated with Lerp.
	linear reflKind = iota
	// mobius: a 1-port shown in another reference, Γ' = (Γ − ρ)/(1 − ρΓ)
	// of the interpolated Γ.
	mobius
	// general: one reflection of a multi-port shown in other references:
	// the interpolated S-matrix renormalised.
	general
)

// NewReflection returns the reflection S(port+1, port+1) of s (port counts
// from zero), shown in the reference resistances z0Ohm (one per port, in
// ohms; nil shows s in its own). Renormalising a multi-port changes the
// terminations of its other ports too: S′(p, p) is the reflection at port p
// with every other port terminated in its new reference.
//
// It returns the error of [Sweep.Validate] for an invalid sweep and an
// error for a reference that is not positive and finite. A port outside
// the sweep, or a z0Ohm of the wrong length, panics.
func NewReflection(s *Sweep, port int, z0Ohm []float64) (*Reflection, error) {
	if port < 0 || port >= s.Ports {
		panic(badPort)
	}
	if err := s.Validate(); err != nil {
		return nil, err
	}
	same := true
	if z0Ohm != nil {
		if len(z0Ohm) != s.Ports {
			panic(badRefCount)
		}
		if err := checkRefs(z0Ohm); err != nil {
			return nil, err
		}
		for i, z := range z0Ohm {
			same = same && z == s.Z0[i]
		}
	}
	r := &Reflection{freqHz: s.FreqHz, z0Ohm: s.Z0[port]}
	switch {
	case same:
		r.pts = s.Param(nil, port, port)
	case s.Ports == 1:
		r.kind, r.z0Ohm = mobius, z0Ohm[0]
		r.file = s.Param(nil, 0, 0)
		r.rho = rho(s.Z0[0], z0Ohm[0])
		r.pts = make([]complex128, len(r.file))
		for k, g := range r.file {
			r.pts[k] = r.renorm1(g)
		}
	default:
		r.kind, r.z0Ohm = general, z0Ohm[port]
		r.sweep, r.port = s, port
		r.z0To = append([]float64(nil), z0Ohm...)
		r.pts = make([]complex128, s.Len())
		n := s.Ports
		m := make([]complex128, n*n)
		for k := range r.pts {
			if _, err := Renormalize(m, s.Matrix(k), n, s.Z0, r.z0To); err != nil {
				return nil, err
			}
			r.pts[k] = m[port*n+port]
		}
	}
	return r, nil
}

// ReflectionOf returns the reflection trace of the reflection coefficients
// gamma, measured against z0Ohm ohms at freqHz (increasing), interpolated
// with [Lerp]. It keeps the slices, not copies. Points whose Γ is NaN are
// allowed; they break the trace (see [DipsHysteresis]). A gamma whose length
// differs from freqHz panics.
func ReflectionOf(freqHz []float64, gamma []complex128, z0Ohm float64) *Reflection {
	if len(gamma) != len(freqHz) {
		panic(badSweepLength)
	}
	return &Reflection{freqHz: freqHz, z0Ohm: z0Ohm, pts: gamma}
}

// Len returns the number of measured points.
func (r *Reflection) Len() int { return len(r.freqHz) }

// Z0Ohm returns the reference resistance the reflection is shown in.
func (r *Reflection) Z0Ohm() float64 { return r.z0Ohm }

// At returns Γ at fHz. A frequency outside the sweep returns an error
// wrapping [ErrOutOfRange]; there is no extrapolation.
func (r *Reflection) At(fHz float64) (complex128, error) {
	k, t, err := locate(r.freqHz, fHz)
	if err != nil {
		return 0, err
	}
	if t == 0 || len(r.freqHz) == 1 {
		return r.pts[k], nil
	}
	return r.eval(k, t), nil
}

// Readout returns the readout ([NewReadout]) at fHz, with an error as [At]
// gives.
func (r *Reflection) Readout(fHz float64) (Readout, error) {
	g, err := r.At(fHz)
	if err != nil {
		return Readout{}, err
	}
	return NewReadout(fHz, g, r.z0Ohm), nil
}

// renorm1 returns Γ renormalised with the 1-port map (Γ − ρ)/(1 − ρΓ).
func (r *Reflection) renorm1(g complex128) complex128 {
	rho := complex(r.rho, 0)
	return (g - rho) / (1 - rho*g)
}

// eval returns Γ as shown at fraction t of segment k (points k and k+1).
func (r *Reflection) eval(k int, t float64) complex128 {
	switch r.kind {
	case linear:
		return Lerp(r.pts[k], r.pts[k+1], t)
	case mobius:
		return r.renorm1(Lerp(r.file[k], r.file[k+1], t))
	}
	s := r.sweep
	n := s.Ports
	a, b := s.Matrix(k), s.Matrix(k+1)
	m := make([]complex128, 2*n*n)
	x, y := m[:n*n], m[n*n:]
	for i := range x {
		x[i] = Lerp(a[i], b[i], t)
	}
	if _, err := Renormalize(y, x, n, s.Z0, r.z0To); err != nil {
		return cmplx.NaN()
	}
	return y[r.port*n+r.port]
}

// freqAt returns the frequency at fraction t of segment k.
func (r *Reflection) freqAt(k int, t float64) float64 {
	return r.freqHz[k] + t*(r.freqHz[k+1]-r.freqHz[k])
}

// inBand reports whether the return loss of g is at least thr dB (false
// for NaN).
func inBand(g complex128, thr float64) bool { return returnLoss(g) >= thr }

// segmentIn returns the parts of segment k, as fractions [t0, t1] of it,
// where the return loss is at least thr dB (|Γ| ≤ gmax = 10^(−thr/20)),
// given whether points k (sa) and k+1 (sb) are. A part that touches point k
// starts at exactly 0 and one that touches point k+1 ends at exactly 1, so
// the parts agree with the points.
//
// For the linear and mobius kinds Γ = N(t)/D(t) with N and D linear in t,
// and |N|² − gmax²·|D|² ≤ 0 is a quadratic inequality solved exactly; a
// band that lies wholly between the two points is found. For the general
// kind the segment is taken to cross the threshold at most once, found by
// bisection.
func (r *Reflection) segmentIn(k int, thr, gmax float64, sa, sb bool) (iv [2][2]float64, n int) {
	if r.kind == general {
		switch {
		case sa && sb:
			return [2][2]float64{{0, 1}}, 1
		case sa:
			return [2][2]float64{{0, r.bisect(k, thr, sa)}}, 1
		case sb:
			return [2][2]float64{{r.bisect(k, thr, sa), 1}}, 1
		}
		return iv, 0
	}
	n0, n1, d0, d1 := r.numDen(k)
	g2 := gmax * gmax
	qa := sq(n1) - g2*sq(d1)
	qb := 2 * (dotRe(n0, n1) - g2*dotRe(d0, d1))
	qc := sq(n0) - g2*sq(d0)
	roots, nr := quadRoots01(qa, qb, qc)
	if nr == 0 && sa != sb {
		// Rounding put the crossing at an end of the segment, or just past
		// it: find it on Γ itself.
		t := r.bisect(k, thr, sa)
		if sa {
			return [2][2]float64{{0, t}}, 1
		}
		return [2][2]float64{{t, 1}}, 1
	}
	// Pieces between the breakpoints 0, roots…, 1; the first and last take
	// the state of their points, a middle one that of its midpoint.
	bp := [4]float64{0, roots[0], roots[1], 1}
	bp[nr+1] = 1
	var state [3]bool
	for i := 0; i <= nr; i++ {
		switch {
		case i == 0:
			state[i] = sa
		case i == nr:
			state[i] = sb
		default:
			m := (bp[i] + bp[i+1]) / 2
			state[i] = (qa*m+qb)*m+qc <= 0
		}
	}
	for i := 0; i <= nr; i++ {
		if !state[i] {
			continue
		}
		if n > 0 && iv[n-1][1] == bp[i] {
			iv[n-1][1] = bp[i+1] // joins the piece before
			continue
		}
		iv[n] = [2]float64{bp[i], bp[i+1]}
		n++
	}
	return iv, n
}

// sq returns |z|².
func sq(z complex128) float64 { return real(z)*real(z) + imag(z)*imag(z) }

// dotRe returns Re(conj(a)·b).
func dotRe(a, b complex128) float64 { return real(a)*real(b) + imag(a)*imag(b) }

// quadRoots01 returns the real roots of a·t² + b·t + c that lie strictly
// between 0 and 1, in increasing order, computed without cancellation
// (W. H. Press et al., Numerical Recipes, 3rd ed., Section 5.6, from
// memory): q = −(b + sgn(b)·√(b² − 4ac))/2, t = q/a and c/q.
func quadRoots01(a, b, c float64) (r [2]float64, n int) {
	add := func(x float64) {
		if x > 0 && x < 1 && (n == 0 || x != r[0]) {
			r[n] = x
			n++
		}
	}
	if a == 0 {
		if b != 0 {
			add(-c / b)
		}
		return r, n
	}
	d := b*b - 4*a*c
	if !(d >= 0) || math.IsInf(d, 0) {
		return r, n
	}
	q := -(b + math.Copysign(math.Sqrt(d), b)) / 2
	if q == 0 {
		return r, n // b = c = 0: a double root at 0
	}
	x1, x2 := q/a, c/q
	if x1 > x2 {
		x1, x2 = x2, x1
	}
	add(x1)
	add(x2)
	return r, n
}

// bisect returns the fraction of segment k at which the return loss
// crosses thr, given the state sa at its start (the end has the other).
func (r *Reflection) bisect(k int, thr float64, sa bool) float64 {
	lo, hi := 0.0, 1.0
	for range 64 {
		m := (lo + hi) / 2
		if m <= lo || m >= hi {
			break
		}
		if inBand(r.eval(k, m), thr) == sa {
			lo = m
		} else {
			hi = m
		}
	}
	return (lo + hi) / 2
}

// rawBand is a stretch of the trace at or above a threshold, before the
// hysteresis joins any.
type rawBand struct {
	loK, hiK       int     // segments (or points, at t = 0) of the edges
	loT, hiT       float64 // fractions of those segments
	loOpen, hiOpen bool
	first, last    int // measured points inside: first..last (empty if first > last)
}

// rawBands returns every stretch of the trace whose return loss is at
// least thr dB, in order of frequency.
func (r *Reflection) rawBands(thr float64) []rawBand {
	n := len(r.freqHz)
	gmax := math.Pow(10, -thr/20)
	isNaN := func(k int) bool { return cmplx.IsNaN(r.pts[k]) }
	var out []rawBand
	var cur rawBand
	open := false
	closeAt := func(k int, t float64, hiOpen bool, last int) {
		cur.hiK, cur.hiT, cur.hiOpen, cur.last = k, t, hiOpen, last
		out = append(out, cur)
		open = false
	}
	next := n > 0 && inBand(r.pts[0], thr) // whether point k is in
	for k := 0; k < n; k++ {
		in := next
		next = k+1 < n && inBand(r.pts[k+1], thr)
		if isNaN(k) {
			continue
		}
		if in && !open {
			// The sweep's first point, or the first after a NaN (or a
			// crossing that rounding put exactly on this point).
			cur = rawBand{loK: k, loOpen: k == 0 || isNaN(k-1), first: k}
			open = true
		}
		if k+1 == n || isNaN(k+1) {
			if open {
				closeAt(k, 0, true, k)
			}
			continue
		}
		iv, m := r.segmentIn(k, thr, gmax, in, next)
		for _, p := range iv[:m] {
			if p[0] > 0 {
				cur = rawBand{loK: k, loT: p[0], first: k + 1}
				open = true
			}
			if p[1] < 1 {
				closeAt(k, p[1], false, k)
			}
		}
	}
	return out
}

// lo and hi return the edge frequencies of a raw band.
func (r *Reflection) lo(b rawBand) float64 {
	if b.loT == 0 {
		return r.freqHz[b.loK]
	}
	return r.freqAt(b.loK, b.loT)
}

func (r *Reflection) hi(b rawBand) float64 {
	if b.hiT == 0 {
		return r.freqHz[b.hiK]
	}
	return r.freqAt(b.hiK, b.hiT)
}

// Dips returns every band in which the return loss is at or above
// thresholdDB, in order of frequency, with the hysteresis hysteresisDB
// (see [DipsHysteresis] for the rules).
func (r *Reflection) Dips(thresholdDB, hysteresisDB float64) []Dip {
	if math.IsNaN(thresholdDB) {
		return nil
	}
	if !(hysteresisDB > 0) {
		hysteresisDB = 0
	}
	raw := r.rawBands(thresholdDB)
	var dips []Dip
	for i := 0; i < len(raw); {
		j := i // raw[i..j] make one band
		ridgeK, ridgeRL := -1, math.Inf(1)
		for hysteresisDB > 0 && j+1 < len(raw) && !raw[j].hiOpen {
			a, b := raw[j].last+1, raw[j+1].first-1 // the points between
			if a > b {
				break
			}
			lowK, low := -1, math.Inf(1)
			for k := a; k <= b; k++ {
				rl := returnLoss(r.pts[k])
				if math.IsNaN(rl) {
					lowK, low = k, rl
					break
				}
				if rl < low {
					lowK, low = k, rl
				}
			}
			if !(low >= thresholdDB-hysteresisDB) {
				break // below the release level, or NaN
			}
			if low < ridgeRL {
				ridgeK, ridgeRL = lowK, low
			}
			j++
		}
		d := r.bandDip(raw[i : j+1])
		if j > i {
			d.Ridges = j - i
			d.RidgeHz, d.RidgeReturnLossDB = r.freqHz[ridgeK], ridgeRL
		}
		dips = append(dips, d)
		i = j + 1
	}
	return dips
}

// DeepestDip returns the deepest point of the trace with its half-power
// band; see the function [DeepestDip].
func (r *Reflection) DeepestDip() Dip {
	best, bestRL := -1, math.Inf(-1)
	for k, g := range r.pts {
		if rl := returnLoss(g); rl > bestRL {
			best, bestRL = k, rl
		}
	}
	if best < 0 {
		return Dip{Index: -1}
	}
	k, t, g := best, 0.0, r.pts[best]
	if r.kind == general {
		k, t, g = r.nearMin(best, 0, 0, float64(len(r.pts)-1), 0)
	} else {
		for s := 0; s+1 < len(r.pts); s++ {
			if cmplx.IsNaN(r.pts[s]) || cmplx.IsNaN(r.pts[s+1]) {
				continue
			}
			if ts, gs := r.segmentMin(s, 0, 1); cmplx.Abs(gs) < cmplx.Abs(g) {
				k, t, g = s, ts, gs
			}
		}
	}
	m := cmplx.Abs(g)
	thr := -10 * math.Log10((1+m*m)/2)
	at := float64(k) + t
	for _, b := range r.rawBands(thr) {
		if float64(b.loK)+b.loT <= at && at <= float64(b.hiK)+b.hiT {
			d := r.bandDip([]rawBand{b})
			d.Index = best
			return d
		}
	}
	// |Γ| > 1 at the deepest point (active data): no half-power band.
	f := r.freqHz[k]
	if t > 0 {
		f = r.freqAt(k, t)
	}
	return Dip{Index: best, FreqHz: f, ReturnLossDB: returnLoss(g), LoHz: f, HiHz: f}
}

// bandDip returns the dip of the raw bands bs, joined into one band: its
// edges, and its deepest point, the least |Γ| of the interpolated trace
// between them.
func (r *Reflection) bandDip(bs []rawBand) Dip {
	first, last := bs[0], bs[len(bs)-1]
	d := Dip{
		Index:  -1,
		LoHz:   r.lo(first),
		HiHz:   r.hi(last),
		LoOpen: first.loOpen,
		HiOpen: last.hiOpen,
	}
	bestRL := math.Inf(-1)
	for _, b := range bs {
		for k := b.first; k <= b.last; k++ {
			if rl := returnLoss(r.pts[k]); rl > bestRL {
				d.Index, bestRL = k, rl
			}
		}
	}
	lo, hi := float64(first.loK)+first.loT, float64(last.hiK)+last.hiT
	var k int
	var t float64
	var g complex128
	switch {
	case r.kind == general:
		k, t, g = r.nearMin(d.Index, first.loK, first.loT, float64(last.hiK), last.hiT)
	default:
		k, t, g = first.loK, first.loT, cmplx.NaN()
		if first.loT == 0 {
			g = r.pts[k]
		}
		for s := first.loK; float64(s) < hi; s++ {
			ta, tb := math.Max(lo-float64(s), 0), math.Min(hi-float64(s), 1)
			if ts, gs := r.segmentMin(s, ta, tb); !(cmplx.Abs(gs) >= cmplx.Abs(g)) {
				k, t, g = s, ts, gs
			}
		}
	}
	if t == 1 {
		k, t = k+1, 0
	}
	d.FreqHz, d.ReturnLossDB = r.freqHz[k], returnLoss(g)
	if t > 0 {
		d.FreqHz = r.freqAt(k, t)
	}
	if d.Index < 0 { // wholly between points k and k+1
		d.Index = k
		if t > 0.5 {
			d.Index = k + 1
		}
	}
	return d
}

// segmentMin returns the fraction t ∈ [ta, tb] of segment k where |Γ| is
// least, and Γ there. For the linear and mobius kinds Γ = N/D with N and D
// linear in t, |N|² = a₂t² + a₁t + a₀ and |D|² = b₂t² + b₁t + b₀, and the
// derivative of |N|²/|D|² vanishes where
//
//	(a₂b₁ − a₁b₂)·t² + 2(a₂b₀ − a₀b₂)·t + (a₁b₀ − a₀b₁) = 0
//
// (the cubic terms cancel), so the least value is at a root or an end. For
// the general kind it is a golden-section search.
func (r *Reflection) segmentMin(k int, ta, tb float64) (float64, complex128) {
	if r.kind == general {
		return r.goldenMin(k, ta, tb)
	}
	n0, n1, d0, d1 := r.numDen(k)
	a2, a1, a0 := sq(n1), 2*dotRe(n0, n1), sq(n0)
	b2, b1, b0 := sq(d1), 2*dotRe(d0, d1), sq(d0)
	roots, nr := quadRoots01(a2*b1-a1*b2, 2*(a2*b0-a0*b2), a1*b0-a0*b1)
	bt, bg := ta, r.evalEnd(k, ta)
	try := func(t float64) {
		if t < ta || t > tb {
			return
		}
		if g := r.evalEnd(k, t); cmplx.Abs(g) < cmplx.Abs(bg) {
			bt, bg = t, g
		}
	}
	try(tb)
	for _, t := range roots[:nr] {
		try(t)
	}
	return bt, bg
}

// evalEnd is eval that returns the measured points themselves at t = 0 and
// t = 1.
func (r *Reflection) evalEnd(k int, t float64) complex128 {
	switch t {
	case 0:
		return r.pts[k]
	case 1:
		return r.pts[k+1]
	}
	return r.eval(k, t)
}

// numDen returns Γ = N/D on segment k of the linear and mobius kinds as
// N = n0 + n1·t, D = d0 + d1·t.
func (r *Reflection) numDen(k int) (n0, n1, d0, d1 complex128) {
	if r.kind == linear {
		return r.pts[k], r.pts[k+1] - r.pts[k], 1, 0
	}
	rho := complex(r.rho, 0)
	a, d := r.file[k], r.file[k+1]-r.file[k]
	return a - rho, d, 1 - rho*a, -rho * d
}

// nearMin returns the least |Γ| of the general kind near the measured point
// best: on the segments beside it, within the positions (loK + loT) to
// (hi + hiT).
func (r *Reflection) nearMin(best, loK int, loT, hi, hiT float64) (int, float64, complex128) {
	lo, end := float64(loK)+loT, hi+hiT
	k, t, g := best, 0.0, r.pts[best]
	for _, s := range []int{best - 1, best} {
		if s < 0 || s+1 >= len(r.pts) {
			continue
		}
		ta, tb := math.Max(lo-float64(s), 0), math.Min(end-float64(s), 1)
		if ta >= tb {
			continue
		}
		if ts, gs := r.goldenMin(s, ta, tb); cmplx.Abs(gs) < cmplx.Abs(g) {
			k, t, g = s, ts, gs
		}
	}
	return k, t, g
}

// goldenMin returns the fraction t ∈ [t0, t1] of segment k where |Γ| is
// least, and Γ there, by golden-section search, keeping an end if it is
// lower.
func (r *Reflection) goldenMin(k int, t0, t1 float64) (float64, complex128) {
	const ig = 0.6180339887498949 // (√5 − 1)/2
	a, b := t0, t1
	x1, x2 := b-ig*(b-a), a+ig*(b-a)
	f1, f2 := cmplx.Abs(r.eval(k, x1)), cmplx.Abs(r.eval(k, x2))
	for range 80 {
		if f1 <= f2 {
			b, x2, f2 = x2, x1, f1
			x1 = b - ig*(b-a)
			f1 = cmplx.Abs(r.eval(k, x1))
		} else {
			a, x1, f1 = x1, x2, f2
			x2 = a + ig*(b-a)
			f2 = cmplx.Abs(r.eval(k, x2))
		}
	}
	bt, bg := (a+b)/2, r.eval(k, (a+b)/2)
	for _, t := range []float64{t0, t1} {
		if g := r.evalEnd(k, t); cmplx.Abs(g) < cmplx.Abs(bg) {
			bt, bg = t, g
		}
	}
	return bt, bg
}

// ZeroCrossings returns the frequencies at which the reactance of the
// trace passes through zero, with the rules of [ReactanceZeroCrossings]
// for poles and runs of exact zeros, but each crossing between two points
// found on the interpolated trace: there Im Γ = 0 (for a real reference,
// X = 0 exactly where Im Γ = 0), so a readout at the crossing reads X = 0.
// For a 1-port shown in another reference the crossings are those of the
// sweep's own reference.
func (r *Reflection) ZeroCrossings() []Crossing {
	z := make([]complex128, len(r.pts))
	for k, g := range r.pts {
		z[k] = ZFromGamma(g, complex(r.z0Ohm, 0))
	}
	return zeroCrossings(r.freqHz, z, func(k int) float64 {
		switch r.kind {
		case linear:
			return crossAt(r.freqHz[k], r.freqHz[k+1], imag(r.pts[k]), imag(r.pts[k+1]), 0)
		case mobius:
			// Im Γ′ = (1 − ρ²)·Im Γ/|1 − ρΓ|² for a real ρ.
			return crossAt(r.freqHz[k], r.freqHz[k+1], imag(r.file[k]), imag(r.file[k+1]), 0)
		}
		lo, hi := 0.0, 1.0
		neg := imag(r.pts[k]) < 0
		for range 64 {
			m := (lo + hi) / 2
			if m <= lo || m >= hi {
				break
			}
			if (imag(r.eval(k, m)) < 0) == neg {
				lo = m
			} else {
				hi = m
			}
		}
		return r.freqAt(k, (lo+hi)/2)
	})
}
