package match

import (
	"fmt"
	"maps"
	"math"
	"strings"

	"matchbench/rfmath"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/units"
)

// Kind is the kind and place of a part in a ladder: [rfmath.PartKind].
type Kind = rfmath.PartKind

// Kinds of part, as [rfmath.PartKind] spells them. The strings are part of
// the command line's JSON and of the stored sessions.
const (
	SeriesL     = rfmath.PartSeriesL
	SeriesC     = rfmath.PartSeriesC
	SeriesR     = rfmath.PartSeriesR
	ShuntL      = rfmath.PartShuntL
	ShuntC      = rfmath.PartShuntC
	ShuntR      = rfmath.PartShuntR
	Line        = rfmath.PartLine
	StubOpen    = rfmath.PartStubOpen
	StubShort   = rfmath.PartStubShort
	Transformer = rfmath.PartTransformer
)

// Part is one part of a matching network under design: what it is, its
// value, the standard series it is bought from, the model of the real part
// and the part's own figures. The search, the yield, the network panel, the
// exports and the command line all build and judge a network from these.
//
// Value is in SI units: henries, farads, ohms, metres (lines and stubs) or
// a plain ratio (a transformer, source side : load side).
//
// Params holds the part's own figures, which override its model's:
//
//	"q", "qRefHz"   Q at a frequency (default 1 GHz); for a constant-Q model the Q itself
//	"srfHz"         self-resonant frequency
//	"esrOhm"        a capacitor's series resistance
//	"tolRel", "tolAbs"  tolerance, relative (0.02 for ±2 %) and absolute
//	"maxV", "maxA"  rated peak voltage and RMS current
//	"z0Ohm", "vf", "lossDBPerM", "lossRefHz"  a line's or stub's figures
type Part struct {
	Kind   Kind
	Value  float64
	Series string      // the E-series the value snaps to; "" for none
	Model  parts.Model // makes the real part; nil means ideal
	Params map[string]float64
}

// String returns e.g. "shunt_C 1 pF (E12)".
func (p Part) String() string {
	s := string(p.Kind) + " " + units.Format(p.Value, p.Kind.Unit(), 4)
	if p.Series != "" {
		s += " (" + p.Series + ")"
	}
	return s
}

// Param returns the part's own figure name, or def when it has none.
func (p Part) Param(name string, def float64) float64 {
	if v, ok := p.Params[name]; ok {
		return v
	}
	return def
}

// BuyValue is the value the part is built with: Value snapped to the
// nearest value of its E-series (by ratio, see [parts.Nearest]), or Value
// itself when it has none or is not a lumped part.
func (p Part) BuyValue() float64 {
	if p.Series == "" || p.Kind.Component() == "" {
		return p.Value
	}
	return parts.Nearest(p.Value, p.Series)
}

// qRefDefaultHz is where a part's own Q holds when no frequency is given.
const qRefDefaultHz = 1e9

// Component returns the lumped part at value v: the model's part (ideal
// without a model) with the part's own figures put in. It returns nil for
// lines, stubs and transformers.
func (p Part) Component(v float64) rfmath.Part {
	k := p.Kind.Component()
	if k == "" {
		return nil
	}
	m := p.Model
	if m == nil {
		m = parts.Ideal
	}
	if cq, ok := m.(parts.ConstantQ); ok {
		// A constant-Q part's own Q replaces the model's Q of its kind.
		if q, ok := p.Params["q"]; ok {
			cq.QL, cq.QC = q, q
		}
		return cq.Part(k, v)
	}
	c := m.Part(k, v)
	switch c := c.(type) {
	case parts.Inductor:
		c.Q, c.QRefHz, c.SRFHz = p.Param("q", c.Q), p.Param("qRefHz", c.QRefHz), p.Param("srfHz", c.SRFHz)
		return c
	case parts.IdealInductor:
		_, hasQ := p.Params["q"]
		_, hasSRF := p.Params["srfHz"]
		if hasQ || hasSRF {
			return parts.Inductor{LH: v, Q: p.Param("q", 0), QRefHz: p.Param("qRefHz", qRefDefaultHz), SRFHz: p.Param("srfHz", 0)}
		}
	case parts.Capacitor:
		c.ESROhm, c.SRFHz = p.Param("esrOhm", c.ESROhm), p.Param("srfHz", c.SRFHz)
		if q, ok := p.Params["q"]; ok {
			c.ESROhm, c.Q, c.QRefHz = 0, q, p.Param("qRefHz", qRefDefaultHz)
		}
		return c
	case parts.IdealCapacitor:
		_, hasQ := p.Params["q"]
		_, hasESR := p.Params["esrOhm"]
		_, hasSRF := p.Params["srfHz"]
		if hasQ || hasESR || hasSRF {
			return parts.Capacitor{CF: v, ESROhm: p.Param("esrOhm", 0), Q: p.Param("q", 0), QRefHz: p.Param("qRefHz", qRefDefaultHz), SRFHz: p.Param("srfHz", 0)}
		}
	}
	return c
}

// LineOf returns the line of a line or stub part of length lengthM: its
// "z0Ohm" (default 50 Ω), "vf" (default 1), "lossDBPerM" and "lossRefHz"
// (default 1 GHz).
func (p Part) LineOf(lengthM float64) rfmath.Line {
	return rfmath.Line{Z0Ohm: p.Param("z0Ohm", 50), LengthM: lengthM, VelocityFactor: p.Param("vf", 1),
		LossDBPerM: p.Param("lossDBPerM", 0), LossRefHz: p.Param("lossRefHz", qRefDefaultHz)}
}

// Element returns the part as a two-port element with value v.
func (p Part) Element(v float64) (rfmath.Element, error) {
	if !(v > 0) || math.IsInf(v, 0) {
		return nil, fmt.Errorf("%w: %s of value %g", ErrPart, p.Kind, v)
	}
	if c := p.Component(v); c != nil {
		if p.Kind.Shunt() {
			return rfmath.Shunt{Part: c}, nil
		}
		return rfmath.Series{Part: c}, nil
	}
	switch p.Kind {
	case Line:
		return p.LineOf(v), nil
	case StubOpen, StubShort:
		return rfmath.ShuntStub{Line: p.LineOf(v), Open: p.Kind == StubOpen}, nil
	case Transformer:
		return rfmath.Transformer{Ratio: v}, nil
	}
	return nil, fmt.Errorf("%w: unknown kind %q", ErrPart, p.Kind)
}

// Tolerance returns the part's tolerance: its own "tolRel" and "tolAbs"
// over the typical tolerance of its kind ([parts.DefaultTolerance]). Parts
// that are not lumped have none.
func (p Part) Tolerance() parts.Tolerance {
	k := p.Kind.Component()
	if k == "" {
		return parts.Tolerance{}
	}
	t := parts.DefaultTolerance(k)
	t.Rel, t.Abs = p.Param("tolRel", t.Rel), p.Param("tolAbs", t.Abs)
	return t
}

// Rating returns the part's rating at value v: its own "maxV" and "maxA"
// over the model's rating, where the model rates its parts.
func (p Part) Rating(v float64) parts.Rating {
	var r parts.Rating
	if rt, ok := p.Model.(Rater); ok && p.Kind.Component() != "" {
		r = rt.Rating(p.Kind.Component(), v)
	}
	r.MaxVoltageV, r.MaxCurrentA = p.Param("maxV", r.MaxVoltageV), p.Param("maxA", r.MaxCurrentA)
	return r
}

// Network is a ladder of parts listed from the LOAD toward the SOURCE:
// Network[0] is connected to the load. The empty network is a through
// connection.
type Network []Part

// String lists the parts from the load, separated by ", ".
func (n Network) String() string {
	s := make([]string, len(n))
	for i, p := range n {
		s[i] = p.String()
	}
	return strings.Join(s, ", ")
}

// Clone returns a copy of n that shares nothing with it.
func (n Network) Clone() Network {
	c := append(Network(nil), n...)
	for i := range c {
		c[i].Params = maps.Clone(c[i].Params)
	}
	return c
}

// Built returns the network as it is built: each part at its standard
// value ([Part.BuyValue]).
func (n Network) Built() Network {
	c := append(Network(nil), n...)
	for i := range c {
		c[i].Value = c[i].BuyValue()
	}
	return c
}

// HasSnaps reports whether some part's standard value differs from its
// value as typed.
func (n Network) HasSnaps() bool {
	for _, p := range n {
		if p.BuyValue() != p.Value {
			return true
		}
	}
	return false
}

// Ladder returns the network as an rfmath ladder, in the same order.
func (n Network) Ladder() (rfmath.Ladder, error) {
	l := make(rfmath.Ladder, len(n))
	for i, p := range n {
		e, err := p.Element(p.Value)
		if err != nil {
			return nil, fmt.Errorf("part %d: %w", i+1, err)
		}
		l[i] = e
	}
	return l, nil
}

// Circuit returns the network compiled for evaluation ([rfmath.Circuit]).
func (n Network) Circuit() (rfmath.Circuit, error) {
	l, err := n.Ladder()
	if err != nil {
		return rfmath.Circuit{}, err
	}
	return l.Circuit(), nil
}

// WithModel returns a copy of n whose parts are all made by the model m.
func (n Network) WithModel(m parts.Model) Network {
	c := n.Clone()
	for i := range c {
		c[i].Model = m
	}
	return c
}

// Load is a one-port load as measured: its reflection coefficient Gamma[k]
// against the real reference Z0Ohm at FreqHz[k], frequencies increasing.
type Load struct {
	FreqHz []float64
	Gamma  []complex128
	Z0Ohm  float64
}

// LoadFromSweep returns port (from zero) of the sweep s as a load, with
// reflection S(port, port) against the port's reference resistance.
func LoadFromSweep(s *rfmath.Sweep, port int) (Load, error) {
	if err := s.Validate(); err != nil {
		return Load{}, err
	}
	if port < 0 || port >= s.Ports {
		return Load{}, fmt.Errorf("%w: no port %d in a %d-port sweep", ErrNoLoad, port+1, s.Ports)
	}
	return Load{
		FreqHz: append([]float64(nil), s.FreqHz...),
		Gamma:  s.Param(nil, port, port),
		Z0Ohm:  s.Z0[port],
	}, nil
}

func (l Load) validate() error {
	if len(l.FreqHz) == 0 || len(l.FreqHz) != len(l.Gamma) {
		return fmt.Errorf("%w: %d frequencies, %d reflection coefficients", ErrNoLoad, len(l.FreqHz), len(l.Gamma))
	}
	if !(l.Z0Ohm > 0) || math.IsInf(l.Z0Ohm, 0) {
		return fmt.Errorf("%w: reference %g Ω", ErrNoLoad, l.Z0Ohm)
	}
	for k := 1; k < len(l.FreqHz); k++ {
		if !(l.FreqHz[k] > l.FreqHz[k-1]) {
			return fmt.Errorf("%w: frequency does not increase at point %d", ErrNoLoad, k+1)
		}
	}
	return nil
}

// GammaAt returns Γ at fHz, interpolated linearly in the complex plane
// between measured points ([rfmath.InterpGamma]), and whether fHz lies
// within the sweep.
func (l Load) GammaAt(fHz float64) (complex128, bool) {
	return rfmath.InterpGamma(l.FreqHz, l.Gamma, fHz)
}

// ZAt returns the load impedance in ohms at fHz, interpolated as GammaAt.
func (l Load) ZAt(fHz float64) (complex128, bool) {
	g, ok := l.GammaAt(fHz)
	return rfmath.ZFromGamma(g, complex(l.Z0Ohm, 0)), ok
}

// Response fills gamma and toLoad (each nil, allocated, or of the load's
// length) with the reflection seen from the source and the share of the
// available power that reaches the load ([rfmath.Circuit.PowerAt]) at
// every frequency of the load, through the network n as it stands (use
// [Network.Built] for the standard values).
func Response(l Load, n Network, gamma []complex128, toLoad []float64) ([]complex128, []float64, error) {
	if err := l.validate(); err != nil {
		return nil, nil, err
	}
	c, err := n.Circuit()
	if err != nil {
		return nil, nil, err
	}
	if gamma == nil {
		gamma = make([]complex128, len(l.FreqHz))
	}
	if toLoad == nil {
		toLoad = make([]float64, len(l.FreqHz))
	}
	if len(gamma) != len(l.FreqHz) || len(toLoad) != len(l.FreqHz) {
		panic(badLength)
	}
	for k, f := range l.FreqHz {
		gamma[k], toLoad[k] = c.PowerAt(f, l.Gamma[k], l.Z0Ohm)
	}
	return gamma, toLoad, nil
}
