package match

import (
	"context"
	"math"
)

// walker enumerates the networks of one shape within a box of table rows
// (phase 2 of Search). Levels are the parts from the load: level p is
// Network[p]. The state after level p at point k, the normalised voltage
// and current (v, i) carried from the load (see [rfmath.Circuit.GammaAt]), is
// cached for every level but the last, and is valid while stamp[p][k]
// equals gen[p]; gen[p] takes a new value from a global clock whenever
// level p's part changes, which also happens after any change below it.
type walker struct {
	e     *engine
	n     int
	shunt []bool
	tab   [][]complex128
	srt   []*sorted
	cnt   []int
	lo    []int // box, per level
	hi    []int
	idx   []int
	sv    [][]complex128
	si    [][]complex128
	stamp [][]uint64
	gen   []uint64
	clock uint64

	thr     float64 // drop a network whose key provably reaches thr
	best    float64
	bestIdx []int
	checked int64
}

func newWalker(e *engine, top []Kind) *walker {
	n := len(top)
	w := &walker{
		e: e, n: n,
		shunt: make([]bool, n),
		tab:   e.tables(top),
		srt:   e.sortedTables(top),
		cnt:   e.counts(top),
		lo:    make([]int, n),
		hi:    make([]int, n),
		idx:   make([]int, n),
		gen:   make([]uint64, n),
		best:  math.Inf(1),
		thr:   math.Inf(1),
	}
	for p, k := range top {
		w.shunt[p] = k.Shunt()
	}
	for range max(n-1, 0) {
		w.sv = append(w.sv, make([]complex128, e.K))
		w.si = append(w.si, make([]complex128, e.K))
		w.stamp = append(w.stamp, make([]uint64, e.K))
	}
	return w
}

// setBox sets the box to b, within the table.
func (w *walker) setBox(b box) {
	for p := range w.n {
		if b.r[p] < 0 {
			w.lo[p], w.hi[p] = 0, w.cnt[p]-1
		} else {
			w.lo[p], w.hi[p] = max(b.c[p]-b.r[p], 0), min(b.c[p]+b.r[p], w.cnt[p]-1)
		}
	}
}

// unitLevel is the level whose every part choice is one unit of progress.
func (w *walker) unitLevel() int {
	return min(1, w.n-2)
}

// units returns the progress units of the box set.
func (w *walker) units() int {
	m := 1
	for p := 0; p <= w.unitLevel(); p++ {
		m *= w.hi[p] - w.lo[p] + 1
	}
	return m
}

// run enumerates the box, updating best and thr. prog may be nil.
func (w *walker) run(ctx context.Context, prog *progress) error {
	if w.n == 1 {
		w.leaves()
		if prog != nil {
			prog.add(1)
		}
		return ctx.Err()
	}
	return w.level(ctx, prog, 0)
}

func (w *walker) level(ctx context.Context, prog *progress, p int) error {
	unit := p == w.unitLevel()
	for j := w.lo[p]; j <= w.hi[p]; j++ {
		w.idx[p] = j
		w.clock++
		w.gen[p] = w.clock
		if unit {
			if err := ctx.Err(); err != nil {
				return err
			}
			if prog != nil {
				prog.add(1)
			}
		}
		if w.inefficient(p) {
			continue
		}
		if p == w.n-2 {
			w.leaves()
			continue
		}
		if p == w.n-3 && w.hopeless2() {
			continue
		}
		if err := w.level(ctx, prog, p+1); err != nil {
			return err
		}
	}
	return nil
}

// state returns (v, i) after level p at point k, computing and caching
// what is stale. p = −1 is the load.
func (w *walker) state(p, k int) (v, i complex128) {
	q := p
	for q >= 0 && w.stamp[q][k] != w.gen[q] {
		q--
	}
	if q >= 0 {
		v, i = w.sv[q][k], w.si[q][k]
	} else {
		v, i = w.e.v0[k], w.e.i0[k]
	}
	K := w.e.K
	for q++; q <= p; q++ {
		x := w.tab[q][w.idx[q]*K+k]
		if w.shunt[q] {
			i += x * v
		} else {
			v += x * i
		}
		w.sv[q][k], w.si[q][k], w.stamp[q][k] = v, i, w.gen[q]
	}
	return v, i
}

// hopelessPoints is how many of the first points in the order the bound
// of hopeless2 is tried at.
const hopelessPoints = 2

// hopeless2 reports whether no two passive last parts (one shunt, one
// series, in either order) can bring the network of levels 0 … n−3 below
// thr, tried at the first points of the order.
//
// Shunt then series: the shunt part only adds conductance, so after it
// G' ≥ g + gmin (g the conductance now, gmin the least real part of the
// shunt part's admittance over its rows) and the resistance is at most
// 1/G'; the series part adds at most rmax. So the final resistance is at
// most R = 1/(g + gmin) + rmax, and if R < 1, |Γ| ≥ (1 − R)/(1 + R). Series
// then shunt is the same with impedance and admittance exchanged.
func (w *walker) hopeless2() bool {
	p := w.n - 3
	a, b := w.srt[w.n-2], w.srt[w.n-1] // next part, last part
	shuntNext := w.shunt[w.n-2]
	for q := 0; q < hopelessPoints && q < len(w.e.ord); q++ {
		k := w.e.ord[q]
		v, i := w.state(p, k)
		// g: the real part of i/v (shunt next) or of v/i (series next).
		num := real(v)*real(i) + imag(v)*imag(i)
		var den float64
		if shuntNext {
			den = real(v)*real(v) + imag(v)*imag(v)
		} else {
			den = real(i)*real(i) + imag(i)*imag(i)
		}
		if !(den > 0) {
			continue
		}
		g := num/den + a.rmin[k]
		if !(g > 0) {
			continue
		}
		r := 1/g + b.rmax[k]
		if r >= 1 {
			continue
		}
		c, allowed := w.e.gammaCap(k, w.thr)
		lo, hi := (1-r)*(1-r), c*(1+r)*(1+r) // |Γ|² ≥ lo/(1+r)², the cap is hi/(1+r)²
		if lo > hi || (!allowed && lo >= hi) {
			return true
		}
	}
	return false
}

// efficiencyPoints is how many of the first points in the order the
// efficiency bound of inefficient is tried at.
const efficiencyPoints = 2

// inefficient reports whether the partial network of levels 0 … p is
// already too lossy to win: its efficiency η = P_load/P_in at a point is
// below the least G_T a winner needs there (the parts still to come can
// only lose power, so the whole network's G_T ≤ η). In the walk's units
// η = acc/Re(v·i*). The bound is widened by 1e-9 so that rounding never
// drops a network the full check would keep.
func (w *walker) inefficient(p int) bool {
	e := w.e
	for q := 0; q < efficiencyPoints && q < len(e.ord); q++ {
		k := e.ord[q]
		floor := e.powerFloor(k, w.thr)
		if !(floor > 0) {
			continue
		}
		v, i := w.state(p, k)
		in := realDot(v, i)
		if in > 0 && e.acc[k]*(1+1e-9) < floor*in {
			return true
		}
	}
	return false
}

// leaves tries every row of the last level. A network is dropped at the
// first point where its weighted |Γ|² reaches thr; that point moves to the
// front of the order.
func (w *walker) leaves() {
	e := w.e
	K := e.K
	p := w.n - 1
	shunt := w.shunt[p]
	ord := e.ord
	var sv, si []complex128
	var stamp []uint64
	var gen uint64
	if p > 0 {
		sv, si, stamp, gen = w.sv[p-1], w.si[p-1], w.stamp[p-1], w.gen[p-1]
	}
	lo, hi := w.lo[p], w.hi[p]
	for _, jj := range w.rows(p) {
		j := int(jj)
		if j < lo || j > hi {
			continue
		}
		w.checked++
		row := w.tab[p][j*K : (j+1)*K]
		ok := true
		for q, k := range ord {
			var v, i complex128
			switch {
			case p == 0:
				v, i = e.v0[k], e.i0[k]
			case stamp[k] == gen:
				v, i = sv[k], si[k]
			default:
				v, i = w.state(p-1, k)
			}
			x := row[k]
			if shunt {
				i += x * v
			} else {
				v += x * i
			}
			if e.fails(k, v, i, w.thr) {
				if q > 0 {
					copy(ord[1:q+1], ord[:q])
					ord[0] = k
				}
				ok = false
				break
			}
		}
		if !ok {
			continue
		}
		// A survivor: its exact key, in the order of Exhaustive.
		var sc score
		for k := range K {
			var v, i complex128
			if p == 0 {
				v, i = e.v0[k], e.i0[k]
			} else {
				v, i = w.state(p-1, k)
			}
			x := row[k]
			if shunt {
				i += x * v
			} else {
				v += x * i
			}
			e.addPoint(&sc, k, v, i)
		}
		worst := e.key(sc)
		w.idx[p] = j
		if worst < w.best {
			w.best = worst
			w.bestIdx = append(w.bestIdx[:0], w.idx...)
		}
		if worst < w.thr {
			w.thr = worst
		}
	}
}

// rows returns the rows of the last level that can survive the check at
// the first point of the order, k0 = ord[0], in increasing order of the
// part's imaginary part there (the caller keeps those inside the box).
//
// With u the normalised impedance after the last part (series: u = v/i +
// z; shunt: the admittance u = i/v + y, where Γ changes only its sign), a
// network survives at k0 only when |Γ|² = |u − 1|²/|u + 1|² stays within
// the cap c < 1 the incumbent sets there ([engine.gammaCap]), that is,
// when u lies inside the Apollonius circle
//
//	|u − a|² < a² − 1,   a = (1 + c)/(1 − c)
//
// The part's real part lies in [rmin, rmax] over the rows (zero for an
// ideal part), so Im u must lie within ±h, h² = a² − 1 − d², where d is the
// distance from a to the strip Re u ∈ [Re + rmin, Re + rmax]. The rows
// whose imaginary part puts Im u within ±h are a range of the rows sorted
// by it, found by bisection; h is widened by 1e-9 so that rounding never
// drops a row that the full check would keep.
func (w *walker) rows(p int) []int32 {
	e := w.e
	k := e.ord[0]
	st := w.srt[p]
	all := st.perm[k*st.n : (k+1)*st.n]
	c, _ := e.gammaCap(k, w.thr)
	if !(c < 1) {
		return all
	}
	var v, i complex128
	if p == 0 {
		v, i = e.v0[k], e.i0[k]
	} else {
		v, i = w.state(p-1, k)
	}
	var u complex128
	if w.shunt[p] {
		if v == 0 {
			return all
		}
		u = i / v
	} else {
		if i == 0 {
			return all
		}
		u = v / i
	}
	a := (1 + c) / (1 - c)
	d := 0.0
	if r := real(u) + st.rmin[k]; a < r {
		d = r - a
	} else if r := real(u) + st.rmax[k]; a > r {
		d = a - r
	}
	h2 := a*a - 1 - d*d
	if !(h2 > 0) {
		return nil
	}
	h := math.Sqrt(h2)*(1+1e-9) + 1e-12
	xlo, xhi := -h-imag(u), h-imag(u)
	im := st.im[k*st.n : (k+1)*st.n]
	// first: the first row with im > xlo; last: the first with im ≥ xhi.
	a0, b0 := 0, len(im)
	for a0 < b0 {
		m := int(uint(a0+b0) >> 1)
		if im[m] > xlo {
			b0 = m
		} else {
			a0 = m + 1
		}
	}
	first := a0
	b0 = len(im)
	for a0 < b0 {
		m := int(uint(a0+b0) >> 1)
		if im[m] >= xhi {
			b0 = m
		} else {
			a0 = m + 1
		}
	}
	return all[first:a0]
}
