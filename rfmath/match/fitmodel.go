package match

import (
	"math"
	"math/cmplx"
	"slices"
	"sort"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"

	"matchbench/rfmath"
)

// fitModel evaluates the placed network over the fit's points for given
// parameter values.
type fitModel struct {
	skel   Placed
	params []FitParam
	elem   []int // per parameter: its element in skel.Network
	freqHz []float64
	gLoad  []complex128
	gMeas  []complex128
	w      []float64 // per point: the weight 1/√(1 + |∂Γin/∂ΓL|²)
	z0     float64
	evals  int
	lad    rfmath.Ladder
}

// network returns the placed network with the parameters at vals (every
// parameter, in order); pads and traces of zero are left out.
func (m *fitModel) network(vals []float64) Network {
	n := m.skel.Network.Clone()
	for i, e := range m.elem {
		n[e].Value = vals[i]
	}
	out := n[:0]
	for j, p := range n {
		if o := m.skel.Origins[j]; o.Role != RolePart && !(p.Value > 0) {
			continue
		}
		out = append(out, p)
	}
	return out
}

// circuit returns the placed network with the parameters at vals,
// compiled; ok is false when it cannot be built.
func (m *fitModel) circuit(vals []float64) (rfmath.Circuit, bool) {
	m.evals++
	n := m.network(vals)
	m.lad = m.lad[:0]
	for _, p := range n {
		e, err := p.Element(p.Value)
		if err != nil {
			return rfmath.Circuit{}, false
		}
		m.lad = append(m.lad, e)
	}
	return m.lad.Circuit(), true
}

// residuals fills r (two per point: the real and imaginary parts of
// Γ_model − Γ_built, times the point's weight) for the parameter values
// vals and returns their sum of squares; +Inf when the network cannot be
// built.
func (m *fitModel) residuals(r []float64, vals []float64) float64 {
	c, ok := m.circuit(vals)
	if !ok {
		for k := range r {
			r[k] = math.Inf(1)
		}
		return math.Inf(1)
	}
	ss := 0.0
	for k, f := range m.freqHz {
		d := c.GammaAt(f, m.gLoad[k], m.z0) - m.gMeas[k]
		w := m.w[k]
		r[2*k], r[2*k+1] = w*real(d), w*imag(d)
		ss += r[2*k]*r[2*k] + r[2*k+1]*r[2*k+1]
	}
	return ss
}

// misfit returns the rms and the largest |Γ_model − Γ_built| over the
// points, unweighted.
func (m *fitModel) misfit(vals []float64) (rms, worst float64) {
	c, ok := m.circuit(vals)
	if !ok {
		return math.Inf(1), math.Inf(1)
	}
	ss := 0.0
	for k, f := range m.freqHz {
		e := cmplx.Abs(c.GammaAt(f, m.gLoad[k], m.z0) - m.gMeas[k])
		ss += e * e
		worst = math.Max(worst, e)
	}
	return math.Sqrt(ss / float64(len(m.freqHz))), worst
}

// weigh sets each point's weight from the network at vals (see
// FitBoard): the load's noise reaches the model through the network as
// ∂Γin/∂ΓL, so a point's residual has variance σ²·(1 + |∂Γin/∂ΓL|²) when
// the two sweeps share one noise σ.
func (m *fitModel) weigh(vals []float64) {
	if m.w == nil {
		m.w = make([]float64, len(m.freqHz))
	}
	c, ok := m.circuit(vals)
	for k, f := range m.freqHz {
		m.w[k] = 1
		if !ok {
			continue
		}
		// Γin is a Möbius map of ΓL, so the derivative is the complex one.
		const h = 1e-6
		d := (c.GammaAt(f, m.gLoad[k]+h, m.z0) - c.GammaAt(f, m.gLoad[k]-h, m.z0)) / (2 * h)
		if t := cmplx.Abs(d); !math.IsNaN(t) && !math.IsInf(t, 0) {
			m.w[k] = 1 / math.Sqrt(1+t*t)
		}
	}
}

// step returns the finite-difference step of parameter i at value v.
func (m *fitModel) step(i int, v float64) float64 {
	switch m.params[i].Kind {
	case ParamPads:
		return 1e-5 * math.Max(v, 0.05e-12)
	case ParamTrace:
		return 1e-5 * math.Max(v, 0.5e-3)
	}
	return 1e-5 * v
}

// scale returns a typical size of parameter i, to make the columns of a
// Jacobian comparable.
func (m *fitModel) scale(i int) float64 {
	p := m.params[i]
	return math.Max(math.Abs(p.Nominal), (p.Hi-p.Lo)/20)
}

// jacobian fills jac (rows: the data residuals; columns: the parameters
// free) by central differences at vals in the parameters' own units,
// one-sided at a bound.
func (m *fitModel) jacobian(jac *mat.Dense, vals []float64, free []int) {
	rows, _ := jac.Dims()
	rp := make([]float64, rows)
	rm := make([]float64, rows)
	v := append([]float64(nil), vals...)
	for c, i := range free {
		h := m.step(i, vals[i])
		up, dn := vals[i]+h, vals[i]-h
		p := m.params[i]
		if up > p.Hi {
			up = vals[i]
		}
		if dn < p.Lo {
			dn = vals[i]
		}
		v[i] = up
		m.residuals(rp, v)
		v[i] = dn
		m.residuals(rm, v)
		v[i] = vals[i]
		for k := range rows {
			jac.Set(k, c, (rp[k]-rm[k])/(up-dn))
		}
	}
}

// bounded is the change of variable that keeps a parameter within its
// bounds: θ = lo + (hi − lo)·(1 + sin x)/2, on log θ for part values.
type bounded struct {
	lo, hi float64
	log    bool
}

func (b bounded) value(x float64) float64 {
	t := (1 + math.Sin(x)) / 2
	if b.log {
		return math.Exp(math.Log(b.lo) + (math.Log(b.hi)-math.Log(b.lo))*t)
	}
	return b.lo + (b.hi-b.lo)*t
}

// deriv returns dθ/dx at x.
func (b bounded) deriv(x float64) float64 {
	dt := math.Cos(x) / 2
	if b.log {
		return b.value(x) * (math.Log(b.hi) - math.Log(b.lo)) * dt
	}
	return (b.hi - b.lo) * dt
}

// inverse returns x for θ, moved a little inside the bounds so that the
// fit can leave a bound it starts on.
func (b bounded) inverse(v float64) float64 {
	var t float64
	if b.log {
		t = (math.Log(v) - math.Log(b.lo)) / (math.Log(b.hi) - math.Log(b.lo))
	} else {
		t = (v - b.lo) / (b.hi - b.lo)
	}
	t = math.Min(math.Max(t, 0.02), 0.98)
	return math.Asin(2*t - 1)
}

// valueOf returns the value of skeleton element e with the parameters at
// vals.
func (m *fitModel) valueOf(e int, vals []float64) float64 {
	for i, j := range m.elem {
		if j == e {
			return vals[i]
		}
	}
	return m.skel.Network[e].Value
}

// minimise fits the free parameters (indices into vals) in place, with
// the prior rows weighted by the noise scale s (see the notes on fitting
// the board at the top of fit.go).
func (m *fitModel) minimise(vals []float64, free []int, s float64) {
	nf := len(free)
	tr := make([]bounded, nf)
	x0 := make([]float64, nf)
	var pri []int // columns with a prior
	for c, i := range free {
		p := m.params[i]
		tr[c] = bounded{lo: p.Lo, hi: p.Hi, log: p.Kind == ParamPart}
		x0[c] = tr[c].inverse(vals[i])
		if !math.IsInf(p.Prior, 1) {
			pri = append(pri, c)
		}
	}
	N := 2 * len(m.freqHz)
	rows := N + len(pri)
	work := append([]float64(nil), vals...)
	setX := func(x []float64) {
		for c, i := range free {
			work[i] = tr[c].value(x[c])
		}
	}
	// objective fills the residuals (data, then prior rows) at work and
	// returns their sum of squares.
	objective := func(r []float64) float64 {
		ss := m.residuals(r[:N], work)
		for j, c := range pri {
			p := m.params[free[c]]
			d := s * (work[free[c]] - p.Nominal) / p.Prior
			r[N+j] = d
			ss += d * d
		}
		return ss
	}
	r := make([]float64, rows)
	jac := mat.NewDense(rows, nf, nil)
	data := jac.Slice(0, N, 0, nf).(*mat.Dense)
	// The residual and Jacobian (in x) at the last x asked for, shared by
	// Grad and Hess.
	var lastX []float64
	eval := func(x []float64) {
		if lastX != nil && slices.Equal(lastX, x) {
			return
		}
		setX(x)
		objective(r)
		lastX = append(lastX[:0], x...)
		m.jacobian(data, work, free)
		for j, c := range pri {
			jac.Set(N+j, c, s/m.params[free[c]].Prior)
		}
		for c := range nf {
			d := tr[c].deriv(x[c])
			for k := range rows {
				jac.Set(k, c, jac.At(k, c)*d)
			}
		}
	}
	prob := optimize.Problem{
		Func: func(x []float64) float64 {
			setX(x)
			return objective(make([]float64, rows))
		},
		Grad: func(g, x []float64) {
			eval(x)
			gv := mat.NewVecDense(nf, g)
			gv.MulVec(jac.T(), mat.NewVecDense(rows, r))
			gv.ScaleVec(2, gv)
		},
		Hess: func(h *mat.SymDense, x []float64) {
			eval(x)
			h.SymOuterK(2, jac.T())
		},
	}
	copy(work, vals)
	f0 := objective(r)
	res, _ := optimize.Minimize(prob, x0, &optimize.Settings{
		MajorIterations: 200,
		Converger:       &optimize.FunctionConverge{Absolute: 1e-14 * (f0 + 1e-30), Relative: 1e-10, Iterations: 3},
	}, &optimize.Newton{GradStopThreshold: 1e-18})
	if res == nil || res.X == nil {
		return
	}
	setX(res.X)
	if objective(r) <= f0 {
		copy(vals, work)
	}
}

// posterior returns the σ of each free parameter (see the notes at the top
// of fit.go):
// √diag((JᵀJ/s² + diag(1/σp²))⁻¹) with jac the data Jacobian of the free
// parameters; +Inf for a parameter in a direction neither the data nor a
// prior determine.
func (m *fitModel) posterior(jac *mat.Dense, free []int, s float64) []float64 {
	_, P := jac.Dims()
	// In units of each parameter's typical size, so that the matrix is
	// well scaled: H̃ = T·H·T.
	t := make([]float64, P)
	for c, i := range free {
		t[c] = m.scale(i)
	}
	h := mat.NewSymDense(P, nil)
	h.SymOuterK(1/(s*s), jac.T())
	for a := range P {
		for b := a; b < P; b++ {
			h.SetSym(a, b, h.At(a, b)*t[a]*t[b])
		}
		if p := m.params[free[a]]; !math.IsInf(p.Prior, 1) {
			h.SetSym(a, a, h.At(a, a)+t[a]*t[a]/(p.Prior*p.Prior))
		}
	}
	out := make([]float64, P)
	var eig mat.EigenSym
	if !eig.Factorize(h, true) {
		for c := range out {
			out[c] = math.Inf(1)
		}
		return out
	}
	lam := eig.Values(nil)
	var v mat.Dense
	eig.VectorsTo(&v)
	top := lam[P-1]
	for c := range P {
		sum := 0.0
		for d := range P {
			if lam[d] <= 1e-13*top {
				if math.Abs(v.At(c, d)) > 1e-3 {
					sum = math.Inf(1)
					break
				}
				continue
			}
			sum += v.At(c, d) * v.At(c, d) / lam[d]
		}
		out[c] = t[c] * math.Sqrt(sum)
	}
	return out
}

// identity is what the scaled Jacobian says about the free parameters:
// their correlations, the condition number, and the pairs that cannot be
// told apart (indices into the free list, the more correlated first).
type identity struct {
	corr  [][]float64
	cond  float64
	pairs [][2]int
}

// identify examines the Jacobian jac of the free parameters.
func identify(jac *mat.Dense, maxCorr float64) identity {
	rows, P := jac.Dims()
	a := mat.NewDense(rows, P, nil)
	a.Copy(jac)
	for c := range P {
		norm := mat.Norm(a.ColView(c), 2)
		if norm > 0 {
			for k := range rows {
				a.Set(k, c, a.At(k, c)/norm)
			}
		}
	}
	var svd mat.SVD
	id := identity{corr: make([][]float64, P)}
	for i := range id.corr {
		id.corr[i] = make([]float64, P)
	}
	if !svd.Factorize(a, mat.SVDThin) {
		id.cond = math.Inf(1)
		return id
	}
	s := svd.Values(nil)
	var v mat.Dense
	svd.VTo(&v)
	id.cond = math.Inf(1)
	if s[P-1] > 0 {
		id.cond = (s[0] / s[P-1]) * (s[0] / s[P-1])
	}
	// (AᵀA)⁻¹ = V·Σ⁻²·Vᵀ over the directions the data determine; a
	// direction whose singular value is below 1e-7 of the largest is not
	// determined, and the parameters that make it up cannot be told apart.
	cut := 1e-7 * s[0]
	inv := mat.NewSymDense(P, nil)
	var null []int
	for d := range P {
		if s[d] <= cut {
			null = append(null, d)
			continue
		}
		w := 1 / (s[d] * s[d])
		for i := range P {
			for j := i; j < P; j++ {
				inv.SetSym(i, j, inv.At(i, j)+w*v.At(i, d)*v.At(j, d))
			}
		}
	}
	for i := range P {
		for j := range P {
			id.corr[i][j] = inv.At(i, j) / math.Sqrt(inv.At(i, i)*inv.At(j, j))
		}
	}
	type pair struct {
		a, b int
		c    float64
	}
	var ps []pair
	have := map[[2]int]bool{}
	for _, d := range null {
		// The two largest components of the undetermined direction.
		var big []int
		for i := range P {
			if math.Abs(v.At(i, d)) > 0.2 {
				big = append(big, i)
			}
		}
		sort.Slice(big, func(x, y int) bool { return math.Abs(v.At(big[x], d)) > math.Abs(v.At(big[y], d)) })
		if len(big) >= 2 {
			k := [2]int{min(big[0], big[1]), max(big[0], big[1])}
			if !have[k] {
				have[k] = true
				ps = append(ps, pair{k[0], k[1], 1})
				id.corr[k[0]][k[1]], id.corr[k[1]][k[0]] = math.NaN(), math.NaN()
			}
		}
	}
	for i := range P {
		for j := i + 1; j < P; j++ {
			if c := math.Abs(id.corr[i][j]); c >= maxCorr && !have[[2]int{i, j}] {
				have[[2]int{i, j}] = true
				ps = append(ps, pair{i, j, c})
			}
		}
	}
	sort.SliceStable(ps, func(x, y int) bool { return ps[x].c > ps[y].c })
	for _, p := range ps {
		id.pairs = append(id.pairs, [2]int{p.a, p.b})
	}
	return id
}
