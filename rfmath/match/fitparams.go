package match

import (
	"fmt"
	"math"
	"strings"

	"matchbench/rfmath/units"
)

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
