package sessions

import (
	"fmt"

	"matchbench/rfmath"
	"matchbench/rfmath/parts"
)

// Shunt reports whether the part sits across the line (shunt parts and
// stubs) rather than in series with it.
func (p Part) Shunt() bool {
	switch p.Kind {
	case PartShuntL, PartShuntC, PartShuntR, PartStubOpen, PartStubShort:
		return true
	}
	return false
}

// LumpedKind returns the part's kind of component ("L", "C" or "R"), or ""
// for lines, stubs and transformers.
func (p Part) LumpedKind() parts.Kind {
	switch p.Kind {
	case PartSeriesL, PartShuntL:
		return parts.KindL
	case PartSeriesC, PartShuntC:
		return parts.KindC
	case PartSeriesR, PartShuntR:
		return parts.KindR
	}
	return ""
}

// BuyValue is the value the part is built with: Value snapped to the
// nearest value of its E-series (by ratio, see parts.Nearest), or Value
// itself when it has none.
func (p Part) BuyValue() float64 {
	if p.ESeries == "" {
		return p.Value
	}
	return parts.Nearest(p.Value, p.ESeries)
}

func (p Part) param(name string, def float64) float64 {
	if v, ok := p.Params[name]; ok {
		return v
	}
	return def
}

// Component returns the lumped part's impedance model at value v: ideal,
// or the typical part of its family with any figures overridden by Params.
// It returns nil for lines, stubs and transformers.
func (p Part) Component(v float64) rfmath.Part {
	k := p.LumpedKind()
	if k == "" {
		return nil
	}
	var c rfmath.Part
	if fam, err := parts.LookupFamily(p.Model); err == nil && p.Model != "" {
		c = fam.Part(k, v)
	} else {
		c = parts.Ideal.Part(k, v)
	}
	switch m := c.(type) {
	case parts.Inductor:
		m.Q, m.QRefHz, m.SRFHz = p.param("q", m.Q), p.param("qRefHz", m.QRefHz), p.param("srfHz", m.SRFHz)
		c = m
	case parts.IdealInductor:
		if q, ok := p.Params["q"]; ok {
			c = parts.Inductor{LH: v, Q: q, QRefHz: p.param("qRefHz", 1e9), SRFHz: p.param("srfHz", 0)}
		}
	case parts.Capacitor:
		m.ESROhm, m.SRFHz = p.param("esrOhm", m.ESROhm), p.param("srfHz", m.SRFHz)
		if q, ok := p.Params["q"]; ok {
			m.ESROhm, m.Q, m.QRefHz = 0, q, p.param("qRefHz", 1e9)
		}
		c = m
	case parts.IdealCapacitor:
		_, hasQ := p.Params["q"]
		_, hasESR := p.Params["esrOhm"]
		if hasQ || hasESR {
			c = parts.Capacitor{CF: v, ESROhm: p.param("esrOhm", 0), Q: p.param("q", 0), QRefHz: p.param("qRefHz", 1e9), SRFHz: p.param("srfHz", 0)}
		}
	}
	return c
}

// ElementAt returns the part as a two-port element with value v.
func (p Part) ElementAt(v float64) (rfmath.Element, error) {
	if c := p.Component(v); c != nil {
		if p.Shunt() {
			return rfmath.Shunt{Part: c}, nil
		}
		return rfmath.Series{Part: c}, nil
	}
	switch p.Kind {
	case PartLine:
		return rfmath.Line{Z0Ohm: p.param("z0Ohm", 50), LengthM: v, VelocityFactor: p.param("vf", 1),
			LossDBPerM: p.param("lossDBPerM", 0), LossRefHz: p.param("lossRefHz", 1e9)}, nil
	case PartStubOpen, PartStubShort:
		return rfmath.ShuntStub{Line: rfmath.Line{Z0Ohm: p.param("z0Ohm", 50), LengthM: v, VelocityFactor: p.param("vf", 1)}, Open: p.Kind == PartStubOpen}, nil
	case PartTransformer:
		return rfmath.Transformer{Ratio: v}, nil
	}
	return nil, fmt.Errorf("sessions: part kind %q has no element", p.Kind)
}

// Ladder returns the network's parts as an rfmath ladder, load first. With
// buy set, lumped parts take their standard (E-series) values.
func (n *Network) Ladder(buy bool) (rfmath.Ladder, error) {
	l := make(rfmath.Ladder, 0, len(n.Parts))
	for _, p := range n.Parts {
		v := p.Value
		if buy {
			v = p.BuyValue()
		}
		e, err := p.ElementAt(v)
		if err != nil {
			return nil, err
		}
		l = append(l, e)
	}
	return l, nil
}
