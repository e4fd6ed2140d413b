package match

import (
	"fmt"
	"math"
	"slices"

	"matchbench/rfmath"
	"matchbench/rfmath/parts"
)

// realDot returns Re(a·b*).
func realDot(a, b complex128) float64 { return real(a)*real(b) + imag(a)*imag(b) }

// score is a whole network's worst figures over the band points so far:
// q the worst of wt·|Γ|² and MinPowerToLoad/G_T, g the least G_T.
type score struct {
	q, g float64
	n    int
}

// addPoint adds point k, where the walk from the load ended at (v, i), to
// sc. Exhaustive and the walker's survivors share it, so their keys are
// the same bits.
func (e *engine) addPoint(sc *score, k int, v, i complex128) {
	d, s := v-i, v+i
	dn := real(d)*real(d) + imag(d)*imag(d)
	sn := real(s)*real(s) + imag(s)*imag(s)
	q := dn * e.wt[k] / sn
	if pm := e.pmin[k]; pm > 0 {
		if e.acc[k] > 0 {
			q = math.Max(q, pm*sn/(4*e.acc[k]))
		} else {
			q = math.Inf(1)
		}
	}
	sc.add(q, 4*e.acc[k]/sn)
}

// add adds a point's power ratio q and G_T g to sc.
func (sc *score) add(q, g float64) {
	if math.IsNaN(q) {
		q = math.Inf(1)
	}
	if math.IsNaN(g) {
		g = math.Inf(-1)
	}
	if sc.n == 0 {
		sc.q, sc.g = q, g
	} else {
		sc.q, sc.g = math.Max(sc.q, q), math.Min(sc.g, g)
	}
	sc.n++
}

// key returns the objective's key of a whole network's score: least best.
func (e *engine) key(sc score) float64 {
	if e.obj == PowerToLoad && sc.q <= 1 {
		return -sc.g
	}
	return sc.q
}

// feasibleMode reports whether a key threshold thr asks a network to meet
// every requirement (and then to beat a G_T of −thr).
func (e *engine) feasibleMode(thr float64) bool {
	return e.obj == PowerToLoad && thr <= 1
}

// fails reports whether a whole network whose walk ends at (v, i) at
// point k provably has a key of at least thr (see [Search]).
func (e *engine) fails(k int, v, i complex128, thr float64) bool {
	d, s := v-i, v+i
	dn := real(d)*real(d) + imag(d)*imag(d)
	sn := real(s)*real(s) + imag(s)*imag(s)
	pm, acc4 := e.pmin[k], 4*e.acc[k]
	if e.feasibleMode(thr) {
		return dn*e.wt[k] > sn || (pm > 0 && pm*sn > acc4) || acc4 <= -thr*sn || !(sn > 0)
	}
	return dn*e.wt[k] >= thr*sn || (pm > 0 && pm*sn >= thr*acc4)
}

// gammaCap returns the bound on |Γ|² at point k that a network must stay
// below to beat thr, and whether the bound itself is allowed (≤ rather
// than <).
func (e *engine) gammaCap(k int, thr float64) (c float64, allowed bool) {
	if e.feasibleMode(thr) {
		return math.Min(1/e.wt[k], 1+thr), true
	}
	return thr / e.wt[k], false
}

// powerFloor returns the least G_T at point k a network must exceed (or
// reach) to beat thr; 0 when the power does not bound it.
func (e *engine) powerFloor(k int, thr float64) float64 {
	if e.feasibleMode(thr) {
		return math.Max(e.pmin[k], -thr)
	}
	return e.pmin[k] / thr
}

// kinds of part value tables
const (
	tabL = 0
	tabC = 1
)

// kindTab returns the table of the part kind k: tabL for an inductor, else
// tabC.
func kindTab(k Kind) int {
	if k.Component() == rfmath.ComponentL {
		return tabL
	}
	return tabC
}

// engine holds the data of one search: the band points and the tables of
// part impedances at them.
type engine struct {
	sj     *setJudge // the members, and the evaluator of results
	z0     float64   // the set's reference
	bands  []Band
	pts    points
	K      int
	v0, i0 []complex128 // at the load: 1 + Γ, 1 − Γ
	wt     []float64    // per point: 10^(requirement/10), so wt·|Γ|² ≤ 1 meets it
	pmin   []float64    // per point: the least share of the power at the load asked
	acc    []float64    // per point: Re(v0·i0*) = 1 − |Γ|², the load's power in the walk's units (at least 0)
	obj    Objective
	ser    [2]*parts.Series
	first  [2]int // series index of table row 0
	count  [2]int
	z, y   [2][]complex128 // [kind][row·K + k]: Z/Z0 and Z0/Z of the part
	zs, ys [2]sorted       // the rows of z and y sorted by imaginary part, per point
	lim    [2][2]float64   // value ranges asked for
	ord    []int           // order in which points are tried
}

// ranger is a model that knows what values are sold.
type ranger interface {
	Range(k parts.Kind) (lo, hi float64)
}

// newEngine returns the engine of a search with the settings set (its
// defaults filled in) on the bands across the members: the band points of
// every binding member, the value ranges (those asked for, else ωL and
// 1/(ωC) within Z0/25 to 25·Z0 over the points, within what the model
// sells) and the tables of the parts' impedances at every point. Bad
// settings, bands or ranges are errors.
func newEngine(members []Member, bands []Band, set *Settings) (*engine, error) {
	sj, err := newSetJudge(members, bands)
	if err != nil {
		return nil, err
	}
	// The points of every binding member, one after the other.
	var pts points
	for i, m := range sj.members {
		if m.Advisory {
			continue
		}
		p, err := bandPoints(m.Load, bands)
		if err != nil {
			return nil, fmt.Errorf("member %s: %w", m.name(i), err)
		}
		pts.freqHz = append(pts.freqHz, p.freqHz...)
		pts.gamma = append(pts.gamma, p.gamma...)
		pts.minRLdB = append(pts.minRLdB, p.minRLdB...)
		pts.minPower = append(pts.minPower, p.minPower...)
		for range p.freqHz {
			pts.member = append(pts.member, i)
		}
	}
	if set.MinParts < 1 || set.MaxParts > 4 || set.MinParts > set.MaxParts {
		return nil, fmt.Errorf("match: parts %d to %d; want 1 ≤ min ≤ max ≤ 4", set.MinParts, set.MaxParts)
	}
	if set.Top < 1 {
		return nil, fmt.Errorf("match: top %d; want at least 1", set.Top)
	}
	e := &engine{sj: sj, z0: sj.members[0].Load.Z0Ohm, bands: bands, pts: pts, K: len(pts.freqHz), obj: set.Objective}
	for j, name := range []string{set.LSeries, set.CSeries} {
		if e.ser[j], err = parts.Lookup(name); err != nil {
			return nil, err
		}
	}
	e.v0 = make([]complex128, e.K)
	e.i0 = make([]complex128, e.K)
	e.wt = make([]float64, e.K)
	e.pmin = make([]float64, e.K)
	e.acc = make([]float64, e.K)
	for k, g := range pts.gamma {
		e.v0[k], e.i0[k] = 1+g, 1-g
		e.wt[k] = math.Pow(10, pts.minRLdB[k]/10)
		e.pmin[k] = pts.minPower[k]
		// A point where noise makes the load look active takes no power.
		e.acc[k] = math.Max(realDot(e.v0[k], e.i0[k]), 0)
	}

	// Value ranges.
	z0 := e.z0
	fLo, fHi := slices.Min(pts.freqHz), slices.Max(pts.freqHz)
	wLo, wHi := 2*math.Pi*fLo, 2*math.Pi*fHi
	def := [2][2]float64{
		{z0 / 25 / wHi, 25 * z0 / wLo},         // L: ωL within [Z0/25, 25·Z0]
		{1 / (25 * z0 * wHi), 25 / (z0 * wLo)}, // C: 1/(ωC) likewise
	}
	if r, ok := set.Model.(ranger); ok {
		for j, pk := range []parts.Kind{parts.KindL, parts.KindC} {
			lo, hi := r.Range(pk)
			def[j][0] = math.Max(def[j][0], lo)
			def[j][1] = math.Min(def[j][1], hi)
		}
	}
	asked := [2][2]float64{set.LRange, set.CRange}
	for j := range 2 {
		lim := def[j]
		for b := range 2 {
			if asked[j][b] > 0 {
				lim[b] = asked[j][b]
			}
		}
		if !(lim[0] > 0 && lim[1] >= lim[0]) || math.IsInf(lim[1], 0) {
			return nil, fmt.Errorf("%w: %s %g to %g", ErrRange, []string{"inductors", "capacitors"}[j], lim[0], lim[1])
		}
		e.lim[j] = lim
		first, last := e.ser[j].Span(lim[0], lim[1])
		if last < first {
			return nil, fmt.Errorf("%w: no %s value of %s between %g and %g", ErrRange, e.ser[j], []string{"inductance", "capacitance"}[j], lim[0], lim[1])
		}
		e.first[j], e.count[j] = first, last-first+1
	}

	// Tables of part impedances, by the compiled forms of rfmath.Circuit.
	for j, pk := range []Kind{SeriesL, SeriesC} {
		n := e.count[j]
		e.z[j] = make([]complex128, n*e.K)
		e.y[j] = make([]complex128, n*e.K)
		for r := range n {
			c := (Part{Kind: pk, Model: set.Model}).Component(e.ser[j].Value(e.first[j] + r))
			pair := rfmath.Ladder{rfmath.Series{Part: c}, rfmath.Shunt{Part: c}}.Circuit()
			for k, f := range pts.freqHz {
				e.z[j][r*e.K+k], _, _ = pair.Step(0, f, z0)
				e.y[j][r*e.K+k], _, _ = pair.Step(1, f, z0)
			}
		}
	}
	for j := range 2 {
		e.zs[j] = sortRows(e.z[j], e.count[j], e.K)
		e.ys[j] = sortRows(e.y[j], e.count[j], e.K)
	}
	e.ord = initialOrder(pts, bands)
	return e, nil
}

// sorted holds, for each point k, the rows of a table in increasing order
// of their imaginary part at k (perm[k·n + r]) with those parts (im), and
// the least and greatest real part over the rows (rmin[k], rmax[k]).
type sorted struct {
	n          int
	perm       []int32
	im         []float64
	rmin, rmax []float64
}

// sortRows returns the sorted view of the table t of n rows.
func sortRows(t []complex128, n, K int) sorted {
	s := sorted{n: n, perm: make([]int32, n*K), im: make([]float64, n*K), rmin: make([]float64, K), rmax: make([]float64, K)}
	for k := range K {
		p := s.perm[k*n : (k+1)*n]
		if k == 0 {
			for r := range p {
				p[r] = int32(r)
			}
		} else {
			// Neighbouring points order the rows alike: start from the
			// last order, and insertion sort has little to do.
			copy(p, s.perm[(k-1)*n:k*n])
		}
		for a := 1; a < n; a++ {
			x := p[a]
			xi := imag(t[int(x)*K+k])
			b := a
			for b > 0 && imag(t[int(p[b-1])*K+k]) > xi {
				p[b] = p[b-1]
				b--
			}
			p[b] = x
		}
		s.rmin[k], s.rmax[k] = math.Inf(1), math.Inf(-1)
		for r, j := range p {
			x := t[int(j)*K+k]
			s.im[k*n+r] = imag(x)
			s.rmin[k] = math.Min(s.rmin[k], real(x))
			s.rmax[k] = math.Max(s.rmax[k], real(x))
		}
	}
	return s
}

// initialOrder lists the points with each band's edges first (where a
// match is usually worst), then the rest spread out.
func initialOrder(p points, bands []Band) []int {
	K := len(p.freqHz)
	ord := make([]int, 0, K)
	seen := make([]bool, K)
	add := func(k int) {
		if !seen[k] {
			seen[k] = true
			ord = append(ord, k)
		}
	}
	for _, b := range bands {
		for k, f := range p.freqHz {
			if f == b.LoHz || f == b.HiHz {
				add(k)
			}
		}
	}
	// Bit-reversal-like spread: halves, quarters, eighths …
	for step := K; step >= 1; step /= 2 {
		for k := step / 2; k < K; k += max(step, 1) {
			add(k)
		}
		if step == 1 {
			break
		}
	}
	for k := range K {
		add(k)
	}
	return ord
}

// tables returns, for each part of the shape, the table the walk reads:
// Z/Z0 for a series part, Z0/Z for a shunt part.
func (e *engine) tables(top []Kind) [][]complex128 {
	t := make([][]complex128, len(top))
	for p, k := range top {
		if k.Shunt() {
			t[p] = e.y[kindTab(k)]
		} else {
			t[p] = e.z[kindTab(k)]
		}
	}
	return t
}

// sortedTables returns, for each part of the shape, the sorted view of its
// table.
func (e *engine) sortedTables(top []Kind) []*sorted {
	m := make([]*sorted, len(top))
	for p, k := range top {
		if k.Shunt() {
			m[p] = &e.ys[kindTab(k)]
		} else {
			m[p] = &e.zs[kindTab(k)]
		}
	}
	return m
}

// counts returns the number of table rows (standard values) of each part
// of shape top.
func (e *engine) counts(top []Kind) []int {
	c := make([]int, len(top))
	for p, k := range top {
		c[p] = e.count[kindTab(k)]
	}
	return c
}

// topologies returns every ladder shape of min to max parts: series and
// shunt alternate, starting with either at the load, each part an L or a C;
// fewer parts first.
func topologies(lo, hi int) [][]Kind {
	var out [][]Kind
	for n := lo; n <= hi; n++ {
		for _, shuntFirst := range []bool{true, false} {
			for m := 0; m < 1<<n; m++ {
				top := make([]Kind, n)
				for p := range n {
					shunt := (p%2 == 0) == shuntFirst
					isC := m>>(n-1-p)&1 == 1
					switch {
					case shunt && isC:
						top[p] = ShuntC
					case shunt:
						top[p] = ShuntL
					case isC:
						top[p] = SeriesC
					default:
						top[p] = SeriesL
					}
				}
				out = append(out, top)
			}
		}
	}
	return out
}
