package match

import (
	"fmt"
	"math"
	"math/cmplx"
	"slices"
	"sort"
	"strings"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/optimize"

	"matchbench/rfmath"
	"matchbench/rfmath/units"
)

// # Fitting the board as built
//
// [FitBoard] works out what a board really is from three things: the load
// as measured alone (the antenna without the network, at the plane where
// the network's load end meets it), the network that was meant (with its
// layout, [Layout]), and a sweep of the board with the network fitted,
// measured at the network's source end. The board is the placed network
// ([Layout.Place]) with some of its numbers free: each part's effective
// value, the pad capacitance at each node and the length of each trace.
// Those are fitted by least squares on the complex reflection over every
// point the two sweeps share:
//
//	minimise  Σ_k w_k²·|Γ_model(f_k; θ) − Γ_built(f_k)|²
//
// where Γ_model takes the measured load through the placed network at θ.
// The load's own noise reaches Γ_model through the network as ∂Γin/∂ΓL, so
// when both sweeps come from one analyser with one noise σ a point's
// residual has variance σ²·(1 + |∂Γin/∂ΓL|²); each point is weighted by
// w_k = 1/√(1 + |∂Γin/∂ΓL|²), taken from the network as fitted (weighted
// least squares). Each parameter stays within physical bounds through the
// change of variable θ = lo + (hi − lo)·(1 + sin x)/2 (on a logarithmic
// scale for part values), and x is found by gonum's Newton method with the
// Gauss–Newton Hessian 2·JᵀJ (J the Jacobian of the weighted residuals,
// by central differences), which gonum makes positive definite by adding a
// multiple of the identity where it must (Nocedal and Wright, Numerical
// Optimization, 2nd ed., Algorithm 3.3).
//
// What is known before the fit. The layout's numbers are known roughly
// (a typical pad capacitance, a trace length read off the layout), the
// parts' effective values not at all (a wrong part must show). Each layout
// number i therefore carries a prior of width σp,i about its nominal value
// μi, and the fit minimises
//
//	Σ_k w_k²·|Γ_model(f_k; θ) − Γ_built(f_k)|² + s²·Σ_i ((θi − μi)/σp,i)²
//
// where s is the residual standard deviation per real component, found by
// iterating s ← √(RSS/(N − P)) from the fit (RSS the weighted sum of
// squares, N real residuals, two per point, P free parameters): a regularised least squares, the
// maximum-a-posteriori estimate of a Gaussian prior and Gaussian noise.
// Where the sweep determines a number the prior hardly matters; where it
// cannot, the number stays near its nominal value and the part it cannot
// be told from takes up the difference.
//
// Uncertainty. The covariance of the parameters is the linearised one
//
//	Cov = (JᵀJ/s² + diag(1/σp²))⁻¹
//
// with J the Jacobian of the data residuals in the parameters' own units
// at the optimum: without priors, the Gauss–Newton covariance s²·(JᵀJ)⁻¹
// of nonlinear least squares (Seber and Wild, Nonlinear Regression, 1989,
// Section 2.1, from memory). Each σ is the square root of a diagonal
// entry, so the uncertainty of a part's value includes what the sweep
// cannot say about the pads beside it. It holds when the noise is alike at
// every point and the model describes the board; a residual much larger
// than the analyser's noise says the model does not, and a warning says so.
//
// Identifiability. Some pairs of numbers the sweep cannot tell apart: a pad
// at a node that holds a shunt capacitor adds to it almost exactly as a
// larger capacitor would, and trace inductance in series with a series
// inductor is a larger inductor. The fit takes the correlation matrix and
// the condition number of JᵀJ of the data alone, its columns scaled to unit
// length (from an SVD of the scaled Jacobian); a pair whose correlation
// reaches MaxCorrelation in size, or that makes up a direction whose
// singular value is near zero, cannot be told apart, and a layout number
// whose uncertainty after the fit is still most of its prior's is not
// determined by the sweep. Each is reported in a warning, never as a
// confident value.

// ParamKind is what a parameter of the board as built is.
type ParamKind int

const (
	// ParamPart is the effective value of a part of the design
	// (FitParam.Index is the part's index): the value that, through the
	// part's model, gives what the board shows.
	ParamPart ParamKind = iota
	// ParamPads is the pad capacitance to ground at a node (Index is the
	// node, [Placed.NodePads]).
	ParamPads
	// ParamTrace is the length of the trace in a gap (Index is the gap).
	ParamTrace
)

// String returns "part", "pads" or "trace", as the command line's JSON
// spells them.
func (k ParamKind) String() string {
	switch k {
	case ParamPads:
		return "pads"
	case ParamTrace:
		return "trace"
	}
	return "part"
}

// ParamSpec chooses one parameter of a fit and its bounds.
type ParamSpec struct {
	Kind  ParamKind
	Index int
	// Lo and Hi bound the fitted value; zero takes the default: half and
	// twice the nominal value for a part, 0 to max(1 pF, 10 × nominal)
	// for pads, 0 to max(10 mm, 3 × nominal) for a trace.
	Lo, Hi float64
	// Prior is the 1σ width of what is known of the parameter before the
	// fit (see above): zero takes the default, half the nominal for pads
	// (0.1 pF when the nominal is zero) and max(30 % of the length, 1 mm)
	// for a trace; parts have none. Negative means none.
	Prior float64
	// Hold keeps the parameter at its nominal value.
	Hold bool
}

// FitSettings tune [FitBoard]. A nil *FitSettings, and every zero field,
// means the default.
type FitSettings struct {
	// Params lists the parameters; nil means [DefaultParams].
	Params []ParamSpec
	// LoHz and HiHz, when positive, fit only the built sweep's points
	// between them; by default every point the two sweeps share.
	LoHz, HiHz float64
	// MaxCorrelation is the size of correlation from which two parameters
	// are said not to be told apart; zero means 0.99 (at that correlation
	// each one's uncertainty is seven times what it would be with the other
	// known).
	MaxCorrelation float64
	// NoPriors fits by the data alone: no parameter has a prior, so numbers
	// the sweep cannot tell apart come out with large uncertainties.
	NoPriors bool
}

// FitParam is one number of the board as built, as fitted.
type FitParam struct {
	Kind  ParamKind
	Index int
	// Name says what it is: "L1" (a part), "pads at node 1", "trace in gap 0".
	Name string
	Unit string // "H", "F" or "m"
	// Nominal is what the design and the layout say; Lo and Hi the bounds;
	// Prior the width of what was known before the fit (+Inf for none).
	Nominal, Lo, Hi, Prior float64
	// Value is the fitted value (Nominal when Held) and Sigma its 1σ
	// uncertainty: 0 when held, +Inf when the data do not determine it.
	Value, Sigma float64
	// Held is set when the parameter was not fitted (asked so).
	Held bool
	// Undetermined is set when the sweep does not determine the parameter:
	// its uncertainty is infinite, more than half its size, or (for a
	// number with a prior) still most of its prior's; see the warnings.
	Undetermined bool
	// AtBound is set when the fit ended at a bound: the board differs from
	// the model by more than the bounds allow, and Sigma means little.
	AtBound bool
}

// Relative returns Sigma/|Value|, or +Inf for a zero value.
func (p FitParam) Relative() float64 {
	if p.Value == 0 {
		return math.Inf(1)
	}
	return p.Sigma / math.Abs(p.Value)
}

// String returns e.g. "L1 1.923 nH ± 0.012 nH (nominal 1.8 nH)".
func (p FitParam) String() string {
	s := p.Name + " " + units.Format(p.Value, p.Unit, 4)
	switch {
	case p.Held:
		s += " (held)"
	case math.IsInf(p.Sigma, 1) || math.IsNaN(p.Sigma):
		s += " ± ∞"
	default:
		s += " ± " + units.Format(p.Sigma, p.Unit, 2)
	}
	return s + " (nominal " + units.Format(p.Nominal, p.Unit, 4) + ")"
}

// BoardFit is what [FitBoard] finds.
type BoardFit struct {
	// Design is the network as intended, Layout its layout as declared.
	Design Network
	Layout Layout
	// Params are the board's numbers, as fitted.
	Params []FitParam
	// Board is the board as fitted: the placed network with every part at
	// its effective value, the pads and the traces as fitted. Judge it with
	// [Evaluate] on the load to see what the board does.
	Board Placed
	// Fitted is the layout as fitted (the traces' fitted lengths); the pads'
	// fitted capacitances are in Params and Board.
	Fitted Layout
	// Points is the number of frequencies fitted, FitLoHz and FitHiHz the
	// first and last.
	Points           int
	FitLoHz, FitHiHz float64
	// RMSResidual is the root mean square of |Γ_model − Γ_built| over the
	// points at the fit, MaxResidual the largest, and NominalRMSResidual
	// the same for the design as intended on the declared layout.
	RMSResidual, MaxResidual, NominalRMSResidual float64
	// ResidualSigma is s, the residual standard deviation per real
	// component (see above).
	ResidualSigma float64
	// Free lists the indices in Params of the parameters fitted, and
	// Correlation their correlation matrix by the data alone, in that
	// order (NaN for a pair in a direction the data do not determine).
	Free        []int
	Correlation [][]float64
	// Condition is the condition number of JᵀJ of the data alone with
	// unit columns; +Inf when singular.
	Condition float64
	// Warnings say what the data could not tell apart, what was held, and
	// where the model does not describe the board.
	Warnings []string
	// Evaluations counts the evaluations of the model over the sweep.
	Evaluations int
}

// Param returns the fitted parameter of kind k and index i, and whether
// the fit has it.
func (f *BoardFit) Param(k ParamKind, i int) (FitParam, bool) {
	for _, p := range f.Params {
		if p.Kind == k && p.Index == i {
			return p, true
		}
	}
	return FitParam{}, false
}

// DefaultParams returns the parameters a fit of n on layout lay frees by
// default: the effective value of every lumped part, the pad capacitance
// at every node that chip parts touch, and the length of every trace the
// layout declares.
func DefaultParams(n Network, lay Layout) ([]ParamSpec, error) {
	pl, err := skeleton(n, lay)
	if err != nil {
		return nil, err
	}
	var out []ParamSpec
	for i, p := range n {
		if p.Kind.Component() != "" {
			out = append(out, ParamSpec{Kind: ParamPart, Index: i})
		}
	}
	for j, c := range pl.NodePads {
		if c > 0 {
			out = append(out, ParamSpec{Kind: ParamPads, Index: j})
		}
	}
	for _, t := range lay.Traces {
		if t.LengthM > 0 {
			out = append(out, ParamSpec{Kind: ParamTrace, Index: t.Gap})
		}
	}
	return out, nil
}

// placeholderPadCF stands in for a pad capacitance of zero while the
// skeleton of a fit is built, so that every node with pads has an element.
const placeholderPadCF = 1e-15

// skeleton places n on lay with an element for the pads of every node that
// has any, even when the footprint has no capacitance.
func skeleton(n Network, lay Layout) (Placed, error) {
	s := lay
	if !(s.Footprint.PadCF > 0) {
		s.Footprint.PadCF = placeholderPadCF
	}
	pl, err := s.Place(n)
	if err != nil {
		return Placed{}, err
	}
	for j := range pl.NodePadCF {
		pl.NodePadCF[j] = float64(pl.NodePads[j]) * lay.Footprint.PadCF
	}
	for j, o := range pl.Origins {
		if o.Role == RolePads {
			pl.Network[j].Value = pl.NodePadCF[o.Index]
		}
	}
	return pl, nil
}

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

// FitBoard fits the board as built (see above): load is the load measured
// alone, built the sweep of the board with the network n fitted (measured
// at the source end, against any real reference: it is brought to the
// load's), and lay the layout as declared. n is taken as it stands: pass
// n.Built() for the standard values that were soldered. The result holds
// every parameter with its uncertainty, the residual, the correlations and
// the warnings; its Board is the board as fitted, ready for [Evaluate] and
// for [NextSwaps].
//
// Errors: a load or built sweep that is empty or out of order (wrapping
// [ErrNoLoad]), too few shared points or nothing to fit ([ErrBuilt]), a
// layout that does not fit n ([ErrLayout]), a part that cannot be built
// ([ErrPart]).
func FitBoard(load, built Load, n Network, lay Layout, s *FitSettings) (*BoardFit, error) {
	set, err := fitSettings(s)
	if err != nil {
		return nil, err
	}
	if err := load.validate(); err != nil {
		return nil, fmt.Errorf("load: %w", err)
	}
	if err := built.validate(); err != nil {
		return nil, fmt.Errorf("board as built: %w", err)
	}
	if len(n) == 0 {
		return nil, fmt.Errorf("%w: the network has no parts", ErrBuilt)
	}
	if _, err := n.Circuit(); err != nil {
		return nil, err
	}
	skel, err := skeleton(n, lay)
	if err != nil {
		return nil, err
	}
	m := &fitModel{skel: skel, z0: load.Z0Ohm}
	if err := m.addParams(n, lay, set); err != nil {
		return nil, err
	}
	lo, hi := m.addPoints(load, built, set)
	P := len(m.params)
	if len(m.freqHz) < P+2 {
		return nil, fmt.Errorf("%w: the sweeps share %d points from %s to %s; %d parameters need at least %d",
			ErrBuilt, len(m.freqHz), units.FormatFrequency(lo, 6), units.FormatFrequency(hi, 6), P, P+2)
	}

	res := &BoardFit{Design: n.Clone(), Layout: lay, Points: len(m.freqHz), FitLoHz: m.freqHz[0], FitHiHz: m.freqHz[len(m.freqHz)-1]}
	vals := make([]float64, P)
	var free []int
	for i, p := range m.params {
		vals[i] = p.Nominal
		if !p.Held {
			free = append(free, i)
		}
	}
	res.NominalRMSResidual, _ = m.misfit(vals)
	sNoise := m.fit(vals, free)

	// Figures at the fit.
	res.RMSResidual, res.MaxResidual = m.misfit(vals)
	res.ResidualSigma = sNoise
	res.Free = append([]int(nil), free...)
	sigma := make([]float64, P)
	var pairs [][2]int
	if len(free) > 0 {
		N := 2 * len(m.freqHz)
		jac := mat.NewDense(N, len(free), nil)
		m.jacobian(jac, vals, free)
		id := identify(jac, set.MaxCorrelation)
		res.Correlation, res.Condition = id.corr, id.cond
		post := m.posterior(jac, free, sNoise)
		for c, i := range free {
			sigma[i] = post[c]
		}
		pairs = id.pairs
	}
	res.Params = m.judge(vals, sigma)
	res.Warnings = fitWarnings(res, free, pairs)
	res.Evaluations = m.evals
	res.Board = m.fittedBoard(res.Params, vals)
	res.Fitted = m.fittedLayout(lay, vals)
	return res, nil
}

// fitSettings returns s with its defaults filled in, or an error for a
// correlation limit outside (0, 1).
func fitSettings(s *FitSettings) (FitSettings, error) {
	var set FitSettings
	if s != nil {
		set = *s
	}
	if set.MaxCorrelation == 0 {
		set.MaxCorrelation = 0.99
	}
	if !(set.MaxCorrelation > 0 && set.MaxCorrelation < 1) {
		return set, fmt.Errorf("%w: correlation limit %g; want between 0 and 1", ErrBuilt, set.MaxCorrelation)
	}
	return set, nil
}

// addParams adds the parameters of the settings (by default
// [DefaultParams] of n on lay) to m, each with its element of the
// skeleton; a parameter listed twice, or none at all, is an error.
func (m *fitModel) addParams(n Network, lay Layout, set FitSettings) error {
	specs := set.Params
	if specs == nil {
		var err error
		if specs, err = DefaultParams(n, lay); err != nil {
			return err
		}
	}
	seen := map[[2]int]bool{}
	for _, sp := range specs {
		p, e, err := paramOf(sp, n, lay, m.skel)
		if err != nil {
			return err
		}
		if set.NoPriors {
			p.Prior = math.Inf(1)
		}
		key := [2]int{int(sp.Kind), sp.Index}
		if seen[key] {
			return fmt.Errorf("%w: %s listed twice", ErrBuilt, p.Name)
		}
		seen[key] = true
		m.params = append(m.params, p)
		m.elem = append(m.elem, e)
	}
	if len(m.params) == 0 {
		return fmt.Errorf("%w: no parameter to fit", ErrBuilt)
	}
	return nil
}

// addPoints adds the fit's points to m: the built sweep's, within the
// load's range and the settings' band (lo to hi, returned), with the load
// interpolated there and the built reflection brought to the load's
// reference. Points where either is not finite are left out.
func (m *fitModel) addPoints(load, built Load, set FitSettings) (lo, hi float64) {
	lo, hi = load.FreqHz[0], load.FreqHz[len(load.FreqHz)-1]
	if set.LoHz > 0 {
		lo = math.Max(lo, set.LoHz)
	}
	if set.HiHz > 0 {
		hi = math.Min(hi, set.HiHz)
	}
	z0 := complex(load.Z0Ohm, 0)
	for k, f := range built.FreqHz {
		if f < lo || f > hi {
			continue
		}
		gl, _ := load.GammaAt(f)
		gm := built.Gamma[k]
		if built.Z0Ohm != load.Z0Ohm {
			gm = rfmath.GammaFromZ(rfmath.ZFromGamma(gm, complex(built.Z0Ohm, 0)), z0)
		}
		if cmplx.IsNaN(gm) || cmplx.IsInf(gm) || cmplx.IsNaN(gl) || cmplx.IsInf(gl) {
			continue
		}
		m.freqHz = append(m.freqHz, f)
		m.gLoad = append(m.gLoad, gl)
		m.gMeas = append(m.gMeas, gm)
	}
	return lo, hi
}

// fit moves the free parameters of vals (in place) to the fit and returns
// the residual standard deviation s, found by iteration (see above): it
// starts at a typical analyser noise of 0.002 in Γ (from memory) and is
// taken again from each fit's residual until it settles; the points'
// weights are taken again from each fit's network.
func (m *fitModel) fit(vals []float64, free []int) float64 {
	N := 2 * len(m.freqHz)
	r := make([]float64, N)
	sNoise, ss := 0.002, 0.0
	m.weigh(vals)
	for it := 0; ; it++ {
		if len(free) > 0 {
			m.minimise(vals, free, sNoise)
		}
		m.weigh(vals)
		ss = m.residuals(r, vals)
		next := math.Sqrt(ss / float64(N-len(free)))
		settled := math.Abs(next-sNoise) <= 0.02*sNoise || next < 1e-12
		sNoise = next
		if settled || it == 7 || len(free) == 0 {
			break
		}
	}
	return sNoise
}

// judge returns the parameters of m at their fitted values vals, each
// free one with its uncertainty sigma and whether it ended at a bound or
// is left undetermined.
func (m *fitModel) judge(vals, sigma []float64) []FitParam {
	out := make([]FitParam, len(m.params))
	for i, p := range m.params {
		p.Value = vals[i]
		if !p.Held {
			p.Sigma = sigma[i]
			span := p.Hi - p.Lo
			p.AtBound = vals[i] <= p.Lo+1e-4*span || vals[i] >= p.Hi-1e-4*span
			p.Undetermined = math.IsInf(p.Sigma, 1) || math.IsNaN(p.Sigma) || (!math.IsInf(p.Prior, 1) && p.Sigma > 0.7*p.Prior) ||
				p.Sigma > 0.5*math.Max(math.Abs(p.Value), math.Abs(p.Nominal))
		}
		out[i] = p
	}
	return out
}

// fitWarnings returns the warnings of the fit res: the pairs of free
// parameters the sweep hardly tells apart ([pairWarnings]), the other
// parameters it leaves undetermined, those that ended at a bound, and a
// residual too large for the model to describe the board.
func fitWarnings(res *BoardFit, free []int, pairs [][2]int) []string {
	var warnings []string
	pw, covered := pairWarnings(res.Params, free, pairs, res.Correlation)
	warnings = append(warnings, pw...)
	for i, p := range res.Params {
		if p.Undetermined && !covered[i] {
			warnings = append(warnings, fmt.Sprintf("the sweep does not determine %s: %s", p.Name, undeterminedText(p)))
		}
		if p.AtBound {
			warnings = append(warnings, fmt.Sprintf("%s ended at its bound (%s): the board differs from the model more than the fit allows (a part of another value or in another place, a missing element?), and its uncertainty means little",
				p.Name, units.Format(p.Value, p.Unit, 3)))
		}
	}
	if res.RMSResidual > 0.02 {
		warnings = append(warnings, fmt.Sprintf("the fitted board still differs from the measurement by %.3g in Γ (rms; %.3g at worst): the model does not describe this board well; check the parts' places and that both sweeps share one reference plane",
			res.RMSResidual, res.MaxResidual))
	}
	return warnings
}

// fittedBoard returns the board as fitted: the placed network at vals
// (pads and traces of zero left out, with their origins) and the pad
// capacitance of each node as fitted.
func (m *fitModel) fittedBoard(params []FitParam, vals []float64) Placed {
	skel := m.skel
	b := Placed{Network: m.network(vals), Nodes: skel.Nodes, NodePads: skel.NodePads, PartNodes: skel.PartNodes, NodePadCF: append([]float64(nil), skel.NodePadCF...)}
	for j, o := range skel.Origins {
		if o.Role != RolePart && !(m.valueOf(j, vals) > 0) {
			continue
		}
		b.Origins = append(b.Origins, o)
	}
	for i, p := range params {
		if p.Kind == ParamPads {
			b.NodePadCF[p.Index] = vals[i]
		}
	}
	return b
}

// fittedLayout returns the layout lay with each trace's length as fitted.
func (m *fitModel) fittedLayout(lay Layout, vals []float64) Layout {
	out := Layout{Footprint: lay.Footprint}
	for _, t := range lay.Traces {
		if e := m.skel.Element(RoleTrace, t.Gap); e >= 0 {
			t.LengthM = m.valueOf(e, vals)
		}
		out.Traces = append(out.Traces, t)
	}
	return out
}

// pairWarnings says which pairs of the free parameters (indices into
// free) the sweep hardly tells apart, each parameter in one warning at
// most: when either ends up undetermined, only their combined effect is
// known; else their uncertainties allow for the correlation. covered marks
// the undetermined parameters (indices into params) a warning explains.
func pairWarnings(params []FitParam, free []int, pairs [][2]int, corr [][]float64) (out []string, covered map[int]bool) {
	covered = map[int]bool{}
	told := map[int]bool{}
	for _, pr := range pairs {
		ia, ib := free[pr[0]], free[pr[1]]
		if told[ia] && told[ib] {
			continue
		}
		told[ia], told[ib] = true, true
		a, b := params[ia], params[ib]
		c := fmtCorr(corr[pr[0]][pr[1]])
		if !a.Undetermined && !b.Undetermined {
			out = append(out, fmt.Sprintf("%s and %s are hard to tell apart in this sweep (correlation %s): their uncertainties allow for it, and their combined effect is known better than either",
				a.Name, b.Name, c))
			continue
		}
		w := fmt.Sprintf("%s and %s cannot be told apart from this sweep (correlation %s): only their combined effect is known", a.Name, b.Name, c)
		covered[ia], covered[ib] = a.Undetermined, b.Undetermined
		switch {
		case b.Undetermined && !math.IsInf(b.Prior, 1) && !a.Undetermined:
			w += fmt.Sprintf("; %s stays near its nominal %s and %s takes up the difference, with an uncertainty that allows for it",
				b.Name, units.Format(b.Nominal, b.Unit, 3), a.Name)
		case a.Undetermined && !math.IsInf(a.Prior, 1) && !b.Undetermined:
			w += fmt.Sprintf("; %s stays near its nominal %s and %s takes up the difference, with an uncertainty that allows for it",
				a.Name, units.Format(a.Nominal, a.Unit, 3), b.Name)
		default:
			w += ", and each one's uncertainty is large"
		}
		out = append(out, w)
	}
	return out, covered
}

// undeterminedText says what an undetermined parameter's value means.
func undeterminedText(p FitParam) string {
	switch {
	case math.IsInf(p.Sigma, 1) || math.IsNaN(p.Sigma):
		return "its value is not known"
	case !math.IsInf(p.Prior, 1) && p.Sigma > 0.7*p.Prior:
		return fmt.Sprintf("it stays near its nominal %s (± %s before the fit, ± %s after)",
			units.Format(p.Nominal, p.Unit, 3), units.Format(p.Prior, p.Unit, 2), units.Format(p.Sigma, p.Unit, 2))
	}
	return fmt.Sprintf("%s ± %s is not a measurement of it", units.Format(p.Value, p.Unit, 3), units.Format(p.Sigma, p.Unit, 2))
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

// paramOf returns the parameter of spec sp with its element in skel.
func paramOf(sp ParamSpec, n Network, lay Layout, skel Placed) (FitParam, int, error) {
	p := FitParam{Kind: sp.Kind, Index: sp.Index, Held: sp.Hold}
	var e int
	switch sp.Kind {
	case ParamPart:
		if sp.Index < 0 || sp.Index >= len(n) {
			return p, 0, fmt.Errorf("%w: no part %d in a network of %d", ErrBuilt, sp.Index+1, len(n))
		}
		q := n[sp.Index]
		if q.Kind.Component() == "" {
			return p, 0, fmt.Errorf("%w: part %d is a %s; only lumped parts have an effective value to fit", ErrBuilt, sp.Index+1, q.Kind)
		}
		p.Name, p.Unit, p.Nominal = n.Designator(sp.Index), q.Kind.Unit(), q.Value
		p.Lo, p.Hi = q.Value/2, 2*q.Value
		e = skel.Element(RolePart, sp.Index)
	case ParamPads:
		if sp.Index < 0 || sp.Index >= skel.Nodes || skel.NodePads[sp.Index] == 0 {
			return p, 0, fmt.Errorf("%w: node %d has no pads", ErrBuilt, sp.Index)
		}
		p.Name, p.Unit, p.Nominal = padName(skel, n, sp.Index), "F", skel.NodePadCF[sp.Index]
		p.Lo, p.Hi = 0, math.Max(1e-12, 10*p.Nominal)
		e = skel.Element(RolePads, sp.Index)
	case ParamTrace:
		t, ok := lay.TraceAt(sp.Index)
		if !ok || !(t.LengthM > 0) {
			return p, 0, fmt.Errorf("%w: the layout has no trace in gap %d", ErrBuilt, sp.Index)
		}
		p.Name, p.Unit, p.Nominal = traceName(n, sp.Index), "m", t.LengthM
		p.Lo, p.Hi = 0, math.Max(10e-3, 3*t.LengthM)
		e = skel.Element(RoleTrace, sp.Index)
	default:
		return p, 0, fmt.Errorf("%w: unknown parameter kind %d", ErrBuilt, sp.Kind)
	}
	switch {
	case sp.Prior < 0 || sp.Kind == ParamPart && sp.Prior == 0:
		p.Prior = math.Inf(1)
	case sp.Prior > 0:
		p.Prior = sp.Prior
	case sp.Kind == ParamPads:
		p.Prior = 0.5 * p.Nominal
		if p.Prior == 0 {
			p.Prior = 0.1e-12
		}
	default:
		p.Prior = math.Max(0.3*p.Nominal, 1e-3)
	}
	if sp.Lo > 0 {
		p.Lo = sp.Lo
	}
	if sp.Hi > 0 {
		p.Hi = sp.Hi
	}
	if !(p.Hi > p.Lo) || p.Lo < 0 || (sp.Kind == ParamPart && !(p.Lo > 0)) || math.IsInf(p.Hi, 0) {
		return p, 0, fmt.Errorf("%w: bounds %g to %g of %s", ErrBuilt, p.Lo, p.Hi, p.Name)
	}
	if p.Nominal < p.Lo || p.Nominal > p.Hi {
		return p, 0, fmt.Errorf("%w: %s's nominal %s lies outside its bounds", ErrBuilt, p.Name, units.Format(p.Nominal, p.Unit, 3))
	}
	return p, e, nil
}

// padName names the pads at node j by the parts that touch it: "pad at
// L1", "pad at C1's load end", "pads at the L1–L2 node".
func padName(pl Placed, n Network, j int) string {
	var names []string
	end := ""
	for i, p := range n {
		if p.Kind.Component() == "" {
			continue
		}
		at := pl.PartNodes[i]
		switch {
		case at == j && p.Kind.Shunt():
			names = append(names, n.Designator(i))
		case at == j:
			names, end = append(names, n.Designator(i)), "'s load end"
		case !p.Kind.Shunt() && at+1 == j:
			names, end = append(names, n.Designator(i)), "'s source end"
		}
	}
	switch len(names) {
	case 0:
		return fmt.Sprintf("pads at node %d", j)
	case 1:
		return "pad at " + names[0] + end
	}
	return "pads at the " + strings.Join(names, "–") + " node"
}

// traceName names the trace in gap g by its neighbours: "trace load–L1".
func traceName(n Network, g int) string {
	a, b := "load", "source"
	if g > 0 {
		a = n.Designator(g - 1)
	}
	if g < len(n) {
		b = n.Designator(g)
	}
	return "trace " + a + "–" + b
}

func fmtCorr(c float64) string {
	if math.IsNaN(c) {
		return "undetermined"
	}
	return strings.Replace(fmt.Sprintf("%+.4f", c), "-", "−", 1)
}

// minimise fits the free parameters (indices into vals) in place, with
// the prior rows weighted by the noise scale s (see above).
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

// posterior returns the σ of each free parameter (see above):
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
