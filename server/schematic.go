package server

import (
	"fmt"
	"strings"

	"matchbench/chartsvg"
	"matchbench/rfmath"
	"matchbench/rfmath/match"
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
// model (lines and stubs: their Z0 and velocity factor). A network on a
// board is drawn as its figures judge it (match.Placed): the board's pads,
// as one capacitor to ground at each node that has any, and its traces, as
// lines, in grey between the parts.
func schematicParts(ne *netEval) []chartsvg.SchematicPart {
	out := make([]chartsvg.SchematicPart, len(ne.board.Network))
	for j, b := range ne.board.Network {
		sp := chartsvg.SchematicPart{Symbol: symbols[b.Kind], Shunt: b.Kind.Shunt(), Designator: netlistRef(ne, j), Color: boardColour}
		switch o := ne.board.Origins[j]; o.Role {
		case match.RolePads:
			sp.Value = units.Format(b.Value, "F", 3)
			sp.Notes = []string{fmt.Sprintf("board: %d pad(s)", ne.board.NodePads[o.Index])}
		case match.RoleTrace:
			l := b.LineOf(b.Value)
			sp.Value = units.Format(b.Value, "m", 3)
			sp.Notes = []string{"board trace", fmt.Sprintf("Z0 %s, VF %.3g", units.Format(l.Z0Ohm, "Ω", 3), l.VelocityFactor)}
		default:
			sp = partSchematic(ne, o.Index, b)
		}
		out[j] = sp
	}
	return out
}

// partSchematic describes part i of the network, built as b.
func partSchematic(ne *netEval, i int, b match.Part) chartsvg.SchematicPart {
	p := ne.n.Parts[i]
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
	return sp
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
	load := []string{"Load", shorten(sweepName(sc.st, ne.n.SweepID), 22), fmt.Sprintf("S%d%d", ne.port, ne.port)}
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

// shorten cuts s to at most n characters with an ellipsis, for a label
// in a drawing (clip, for error messages, also says the length).
func shorten(s string, n int) string {
	r := []rune(s)
	if len(r) <= n {
		return s
	}
	return string(r[:n-1]) + "…"
}
