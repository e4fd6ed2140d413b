package server

import (
	"fmt"
	"strings"

	"matchbench/chartsvg"
	"matchbench/rfmath"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/units"
	"matchbench/sessions"
)

// symbols are the schematic symbols of the part kinds.
var symbols = map[rfmath.PartKind]chartsvg.Symbol{
	sessions.PartSeriesL: chartsvg.SymInductor, sessions.PartShuntL: chartsvg.SymInductor,
	sessions.PartSeriesC: chartsvg.SymCapacitor, sessions.PartShuntC: chartsvg.SymCapacitor,
	sessions.PartSeriesR: chartsvg.SymResistor, sessions.PartShuntR: chartsvg.SymResistor,
	sessions.PartLine: chartsvg.SymLine, sessions.PartStubOpen: chartsvg.SymStubOpen,
	sessions.PartStubShort: chartsvg.SymStubShort, sessions.PartTransformer: chartsvg.SymTransformer,
}

// schematicParts describes the network as built for chartsvg's schematic:
// each part's symbol, designator, value as built, and its size, series and
// model (lines and stubs: their Z0 and velocity factor).
func schematicParts(ne *netEval) []chartsvg.SchematicPart {
	out := make([]chartsvg.SchematicPart, len(ne.n.Parts))
	for i, p := range ne.n.Parts {
		b := ne.built[i]
		sp := chartsvg.SchematicPart{Symbol: symbols[p.Kind], Shunt: p.Kind.Shunt(), Designator: designator(ne.n.Parts, i),
			Color: partColours[i%len(partColours)]}
		switch {
		case p.Kind == sessions.PartTransformer:
			sp.Value = fmt.Sprintf("%.4g : 1", b.Value)
			sp.Notes = []string{"ideal"}
		case p.Kind.Component() == "":
			l := b.LineOf(b.Value)
			sp.Value = units.Format(b.Value, "m", 3)
			sp.Notes = []string{fmt.Sprintf("Z0 %s, VF %.3g", units.Format(l.Z0Ohm, "Ω", 3), l.VelocityFactor)}
			if l.LossDBPerM > 0 {
				sp.Notes = append(sp.Notes, fmt.Sprintf("%.3g dB/m", l.LossDBPerM))
			}
		default:
			sp.Value = units.Format(b.Value, p.Kind.Unit(), 3)
			var n []string
			switch m := b.Model.(type) {
			case *parts.Family:
				n = append(n, m.Name)
			case parts.ConstantQ:
				n = append(n, "Q "+constQText(m, p.Kind))
			default:
				n = append(n, "ideal")
			}
			if p.ESeries != "" {
				n = append(n, p.ESeries)
			}
			sp.Notes = []string{strings.Join(n, ", ")}
		}
		out[i] = sp
	}
	return out
}

func constQText(m parts.ConstantQ, k rfmath.PartKind) string {
	q := m.QL
	if k.Component() == rfmath.ComponentC {
		q = m.QC
	}
	return fmt.Sprintf("%.3g", q)
}

// schematicSVG draws the active network from the source to its load.
func (sc *scene) schematicSVG(idPrefix string) (string, error) {
	ne := sc.net
	load := []string{"Load", clip(sweepName(sc.st, ne.n.SweepID), 22), fmt.Sprintf("S%d%d", ne.port, ne.port)}
	if sc.raw[ne.n.SweepID] != nil {
		load[2] += ", corrected plane"
	}
	s := chartsvg.Schematic{
		Source:   []string{"Source (radio)", "Z0 " + units.Format(ne.z0, "Ω", 4)},
		Load:     load,
		IDPrefix: idPrefix,
		Title:    ne.n.Name + ": schematic from the source to the load",
	}
	var b strings.Builder
	err := s.Render(&b, schematicParts(ne))
	return b.String(), err
}

// clip shortens s to at most n characters with an ellipsis.
func clip(s string, n int) string {
	r := []rune(s)
	if len(r) <= n {
		return s
	}
	return string(r[:n-1]) + "…"
}
