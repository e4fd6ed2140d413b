package match

import (
	"fmt"
	"math"
	"math/cmplx"

	"gonum.org/v1/gonum/mat"

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
