package server

import (
	"bufio"
	"encoding/csv"
	"fmt"
	"io"
	"math"
	"net/http"
	"strconv"
	"strings"
	"time"

	"matchbench/chartsvg"
	"matchbench/rfmath"
	"matchbench/rfmath/match"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/touchstone"
	"matchbench/rfmath/units"
	"matchbench/sessions"
	"matchbench/web"
)

// activeNet loads the request's session and its active network, answering
// 404 when it has none.
func (s *Server) activeNet(w http.ResponseWriter, r *http.Request) (*scene, *netEval, bool) {
	sc, ok := s.requestScene(w, r)
	if !ok {
		return nil, nil, false
	}
	if sc.net == nil || sc.net.err != nil {
		http.Error(w, "This session has no matching network to export.", http.StatusNotFound)
		return nil, nil, false
	}
	return sc, sc.net, true
}

// netComments describe a network in an exported file's header.
func netComments(sc *scene, ne *netEval) []string {
	c := []string{
		fmt.Sprintf(" matchbench session %q, network %q", sc.st.Name, ne.n.Name),
		fmt.Sprintf(" load: sweep %q, S%d%d; design frequency %s", sweepName(sc.st, ne.n.SweepID), ne.port, ne.port, fmtF(ne.n.DesignHz)),
		" parts from the load toward the source:",
	}
	for i := range ne.n.Parts {
		c = append(c, " "+partLine(ne, i))
	}
	if !ne.lay.IsZero() {
		c = append(c, " on the board: "+ne.lay.Describe(ne.built)+" (included in the figures)")
	}
	return touchstone.CommentLines(c)
}

func sweepName(st *sessions.State, id string) string {
	if i := st.SweepIndex(id); i >= 0 {
		return st.Sweeps[i].Name
	}
	return id
}

// partLine describes part i of the network as built.
func partLine(ne *netEval, i int) string {
	p, b := ne.n.Parts[i], ne.built[i]
	s := fmt.Sprintf("%s %s %s", designator(ne.n.Parts, i), kindLabels[p.Kind], units.Format(b.Value, p.Kind.Unit(), 4))
	if p.ESeries != "" {
		s += " (" + p.ESeries + ")"
	}
	if p.Model != "" {
		s += ", " + modelText(p.Model)
	}
	return s
}

func (s *Server) exportMatched(w http.ResponseWriter, r *http.Request) {
	sc, ne, ok := s.activeNet(w, r)
	if !ok {
		return
	}
	out := rfmath.NewSweep(ne.sweep.Len(), 1, ne.z0)
	copy(out.FreqHz, ne.sweep.FreqHz)
	copy(out.Data, ne.result())
	attachment(w, safeName(ne.n.Name)+"-matched.s1p", "text/plain; charset=utf-8")
	bw := bufio.NewWriter(w)
	comments := append([]string{" input reflection of the load seen through the network (standard values where set)"}, netComments(sc, ne)...)
	if err := touchstone.Write(bw, out, touchstone.WriteOptions{Comments: comments}); err != nil {
		s.log.Error("export matched", "err", err)
	}
	bw.Flush()
}

func (s *Server) exportNetwork2(w http.ResponseWriter, r *http.Request) {
	sc, ne, ok := s.activeNet(w, r)
	if !ok {
		return
	}
	l, err := ne.board.Network.Ladder()
	if err != nil {
		http.Error(w, "The network cannot be built: "+err.Error(), http.StatusUnprocessableEntity)
		return
	}
	out := rfmath.NewSweep(ne.sweep.Len(), 2, ne.z0)
	copy(out.FreqHz, ne.sweep.FreqHz)
	for k, f := range out.FreqHz {
		sm := rfmath.ABCDToS(l.ABCD(f), ne.z0, ne.z0)
		copy(out.Matrix(k), sm[:])
	}
	attachment(w, safeName(ne.n.Name)+"-network.s2p", "text/plain; charset=utf-8")
	bw := bufio.NewWriter(w)
	comments := append([]string{" the matching network alone: port 1 faces the source (radio), port 2 the load"}, netComments(sc, ne)...)
	if err := touchstone.Write(bw, out, touchstone.WriteOptions{Comments: comments}); err != nil {
		s.log.Error("export network", "err", err)
	}
	bw.Flush()
}

// spiceValue writes v with a SPICE scale suffix (f p n u m k meg g t);
// SPICE reads "m" as milli and "meg" as mega.
func spiceValue(v float64) string {
	type sfx struct {
		exp float64
		s   string
	}
	for _, x := range []sfx{{12, "t"}, {9, "g"}, {6, "meg"}, {3, "k"}, {0, ""}, {-3, "m"}, {-6, "u"}, {-9, "n"}, {-12, "p"}, {-15, "f"}} {
		if math.Abs(v) >= math.Pow(10, x.exp)*0.9999999 {
			return strconv.FormatFloat(v/math.Pow(10, x.exp), 'g', 6, 64) + x.s
		}
	}
	return strconv.FormatFloat(v, 'g', 6, 64)
}

// writeNetlist writes the network as a SPICE subcircuit with nodes SRC
// (toward the radio), LOAD (toward the antenna) and 0. Part models appear
// as their parasitic elements; an inductor's loss resistance, which grows
// with frequency in the model, is written at the design frequency.
func writeNetlist(w io.Writer, sc *scene, ne *netEval) error {
	bw := bufio.NewWriter(w)
	name := strings.ToUpper(safeName(ne.n.Name))
	for _, c := range netComments(sc, ne) {
		fmt.Fprintf(bw, "*%s\n", c)
	}
	fmt.Fprintf(bw, "* nodes: SRC faces the source (radio), LOAD the load (antenna), 0 ground\n")
	fmt.Fprintf(bw, ".SUBCKT MATCH_%s SRC LOAD 0\n", name)
	els := ne.board.Network
	node := func(k int) string { // node between element k-1 and element k, from the load
		switch {
		case k == 0:
			return "LOAD"
		case k == len(els):
			return "SRC"
		}
		return "N" + strconv.Itoa(k)
	}
	fd := ne.n.DesignHz
	for k, p := range els {
		ref := netlistRef(ne, k)
		a, b := node(k), node(k+1)
		if p.Kind.Shunt() {
			// A shunt part hangs from this part's node; the line runs on.
			fmt.Fprintf(bw, "R%s_THRU %s %s 0\n", ref, a, b)
			b = "0"
		}
		v := p.Value
		switch c := p.Component(v).(type) {
		case parts.Inductor:
			mid := ref + "_R"
			fmt.Fprintf(bw, "L%s %s %s %s\n", ref, a, mid, spiceValue(c.LH))
			fmt.Fprintf(bw, "R%s %s %s %s\n", ref+"_LOSS", mid, b, spiceValue(math.Max(c.SeriesROhm(fd), 1e-6)))
			if cp := c.ParallelCF(); cp > 0 {
				fmt.Fprintf(bw, "C%s %s %s %s\n", ref+"_P", a, b, spiceValue(cp))
			}
		case parts.IdealInductor:
			fmt.Fprintf(bw, "L%s %s %s %s\n", ref, a, b, spiceValue(c.LH))
		case parts.Capacitor:
			m1, m2 := ref+"_ESR", ref+"_ESL"
			esr := c.ESR()
			fmt.Fprintf(bw, "C%s %s %s %s\n", ref, a, m1, spiceValue(c.CF))
			if c.SRFHz > 0 {
				ls := 1 / (math.Pow(2*math.Pi*c.SRFHz, 2) * c.CF)
				fmt.Fprintf(bw, "R%s %s %s %s\n", ref+"_LOSS", m1, m2, spiceValue(math.Max(esr, 1e-6)))
				fmt.Fprintf(bw, "L%s %s %s %s\n", ref+"_S", m2, b, spiceValue(ls))
			} else {
				fmt.Fprintf(bw, "R%s %s %s %s\n", ref+"_LOSS", m1, b, spiceValue(math.Max(esr, 1e-6)))
			}
		case parts.IdealCapacitor:
			fmt.Fprintf(bw, "C%s %s %s %s\n", ref, a, b, spiceValue(c.CF))
		case parts.Resistor:
			if c.ESLH > 0 {
				fmt.Fprintf(bw, "R%s %s %s %s\n", ref, a, ref+"_L", spiceValue(c.ROhm))
				fmt.Fprintf(bw, "L%s %s %s %s\n", ref+"_S", ref+"_L", b, spiceValue(c.ESLH))
			} else {
				fmt.Fprintf(bw, "R%s %s %s %s\n", ref, a, b, spiceValue(c.ROhm))
			}
		case parts.IdealResistor:
			fmt.Fprintf(bw, "R%s %s %s %s\n", ref, a, b, spiceValue(c.ROhm))
		case nil:
			e, err := p.Element(v)
			if err != nil {
				return err
			}
			switch el := e.(type) {
			case rfmath.Line:
				fmt.Fprintf(bw, "T%s %s 0 %s 0 Z0=%s TD=%s\n", ref, a, b, spiceValue(el.Z0Ohm), spiceValue(el.DelayS()))
				if el.LossDBPerM > 0 {
					fmt.Fprintf(bw, "* T%s: the line's loss (%.3g dB/m at %s) is not in this lossless model\n", ref, el.LossDBPerM, fmtF(el.LossRefHz))
				}
			case rfmath.ShuntStub:
				end := ref + "_END"
				fmt.Fprintf(bw, "T%s %s 0 %s 0 Z0=%s TD=%s\n", ref, a, end, spiceValue(el.Line.Z0Ohm), spiceValue(el.Line.DelayS()))
				if el.Open {
					fmt.Fprintf(bw, "R%s %s 0 1e12\n", ref+"_OPEN", end)
				} else {
					fmt.Fprintf(bw, "R%s %s 0 1e-6\n", ref+"_SHORT", end)
				}
			case rfmath.Transformer:
				// An ideal n:1 transformer from a tightly coupled pair; the
				// load side (secondary, n turns relative) sees n² impedance.
				fmt.Fprintf(bw, "L%s_P %s 0 1\n", ref, b)
				fmt.Fprintf(bw, "L%s_S %s 0 %s\n", ref, a, spiceValue(1/(el.Ratio*el.Ratio)))
				fmt.Fprintf(bw, "K%s L%s_P L%s_S 0.999999\n", ref, ref, ref)
			}
		}
	}
	fmt.Fprintf(bw, ".ENDS MATCH_%s\n", name)
	return bw.Flush()
}

// netlistRef names element k of the board's network in a netlist: the
// part's designator, PADn for the pads at node n, TRg for the trace in gap
// g.
func netlistRef(ne *netEval, k int) string {
	switch o := ne.board.Origins[k]; o.Role {
	case match.RolePads:
		return "PAD" + strconv.Itoa(o.Index)
	case match.RoleTrace:
		return "TR" + strconv.Itoa(o.Index)
	default:
		return designator(ne.n.Parts, o.Index)
	}
}

func (s *Server) exportNetlist(w http.ResponseWriter, r *http.Request) {
	sc, ne, ok := s.activeNet(w, r)
	if !ok {
		return
	}
	attachment(w, safeName(ne.n.Name)+".cir", "text/plain; charset=utf-8")
	if err := writeNetlist(w, sc, ne); err != nil {
		s.log.Error("export netlist", "err", err)
	}
}

// exportNetworkFile writes the active network with its board as a network
// file (rfmath/match's NET.json, the format `matchbench tune --network`
// reads and `matchbench match --json` writes).
func (s *Server) exportNetworkFile(w http.ResponseWriter, r *http.Request) {
	_, ne, ok := s.activeNet(w, r)
	if !ok {
		return
	}
	b, err := match.MarshalNetwork(ne.design, ne.lay)
	if err != nil {
		s.log.Error("export network file", "err", err)
		http.Error(w, "The network cannot be written.", http.StatusInternalServerError)
		return
	}
	attachment(w, safeName(ne.n.Name)+".json", "application/json")
	w.Write(b)
}

// partsRows are the parts list: designator, kind, value, series,
// tolerance, size, rating.
func partsRows(ne *netEval) [][]string {
	rows := [][]string{{"designator", "kind", "value", "value_si", "typed_value_si", "series", "tolerance", "size", "rating"}}
	for i, p := range ne.n.Parts {
		d := ne.built[i]
		v := d.Value
		u := p.Kind.Unit()
		tol, size, rating := "", "", ""
		if p.Kind.Component() != "" {
			t := d.Tolerance()
			tol = fmt.Sprintf("±%s (±%.3g %%, at least ±%s; typical, from memory)", units.Format(t.Of(v), u, 3), 100*t.Rel, units.Format(t.Abs, u, 3))
			if fam, ok := d.Model.(*parts.Family); ok {
				size = fam.Name
			}
			rating = ratingText(d.Rating(v))
		}
		rows = append(rows, []string{designator(ne.n.Parts, i), kindLabels[p.Kind], units.Format(v, u, 4),
			strconv.FormatFloat(v, 'g', 6, 64), strconv.FormatFloat(p.Value, 'g', 6, 64), p.ESeries, tol, size, rating})
	}
	return rows
}

func ratingText(rt parts.Rating) string {
	var s []string
	if rt.MaxVoltageV > 0 {
		s = append(s, fmt.Sprintf("%.3g V", rt.MaxVoltageV))
	}
	if rt.MaxCurrentA > 0 {
		s = append(s, fmt.Sprintf("%.3g A", rt.MaxCurrentA))
	}
	if rt.MaxPowerW > 0 {
		s = append(s, fmt.Sprintf("%.3g W", rt.MaxPowerW))
	}
	return strings.Join(s, ", ")
}

func (s *Server) exportParts(w http.ResponseWriter, r *http.Request) {
	_, ne, ok := s.activeNet(w, r)
	if !ok {
		return
	}
	attachment(w, safeName(ne.n.Name)+"-parts.csv", "text/csv; charset=utf-8")
	cw := csv.NewWriter(w)
	cw.WriteAll(partsRows(ne))
}

// powerRows gives each part's worst peak voltage, RMS current and
// dissipation over the bands' points (or the design frequency when there
// are no bands) for the network's input power, with its rating where
// known (match.Stress on the network as built).
func (sc *scene) powerRows() ([]web.PowerRow, string) {
	ne := sc.net
	if ne == nil || ne.err != nil || len(ne.n.Parts) == 0 || ne.n.PowerW <= 0 {
		return nil, ""
	}
	bands, _ := ne.netBands(sc.st, false)
	if len(bands) == 0 {
		bands = []match.Band{{LoHz: ne.n.DesignHz, HiHz: ne.n.DesignHz}}
	}
	rep, err := match.Stress(ne.load, bands, ne.board.Network, match.StressSettings{PowerW: ne.n.PowerW})
	if err != nil {
		return nil, "Stress: " + err.Error()
	}
	var rows []web.PowerRow
	for k, r := range rep {
		if ne.board.Origins[k].Role != match.RolePart {
			continue // the board's pads and traces carry no rating
		}
		row := web.PowerRow{Designator: designator(ne.n.Parts, ne.board.Origins[k].Index), VPeak: units.Format(r.WorstV.VPeak, "V", 3), IRMS: units.Format(r.WorstI.IRMS, "A", 3),
			Heat: units.Format(r.WorstP.DissipationW, "W", 3), Rating: "—", At: fmtF(r.WorstV.FreqHz)}
		if t := ratingText(r.Rating); t != "" {
			row.Rating = t
		}
		row.Over = len(r.Warnings) > 0
		rows = append(rows, row)
	}
	note := fmt.Sprintf("over %d frequencies in the bands", len(rep[0].PerFreq))
	return rows, note
}

func (s *Server) report(w http.ResponseWriter, r *http.Request) {
	sc, ne, ok := s.activeNet(w, r)
	if !ok {
		return
	}
	load := chartsvg.Trace{ID: "load", Name: sweepName(sc.st, ne.n.SweepID), Color: "#1f5fa8", FreqHz: ne.sweep.FreqHz, Gamma: ne.gLoad}
	ch := sc.chart
	ch.SizePx = 420
	var before, after, plotB strings.Builder
	ch.Render(&before, []chartsvg.Trace{load}, nil, nil)
	path, handles := ne.path(-1, 0, 1)
	ch.IDPrefix = "after-"
	ch.Render(&after, append([]chartsvg.Trace{load}, sc.netTraces()...), handles, path)
	for _, p := range sc.plots() {
		if p.id == "refl" {
			p.render(&plotB, nil)
		}
	}
	rows := partsRows(ne)
	nv := sc.networkView()
	v := web.ReportView{
		Title: ne.n.Name + " report · matchbench", Session: sc.st.Name, Network: ne.n.Name,
		Load: fmt.Sprintf("%s S%d%d", sweepName(sc.st, ne.n.SweepID), ne.port, ne.port), Design: fmtF(ne.n.DesignHz),
		Generated: time.Now().Format("2006-01-02 15:04"), ChartBefore: before.String(), ChartAfter: after.String(), Plot: plotB.String(),
		Metrics: nv.Metrics, PartsHeader: rows[0], Parts: rows[1:], Power: nv.Power, PowerW: nv.PowerW, Set: nv.Set,
	}
	if !ne.lay.IsZero() {
		v.Board = ne.lay.Describe(ne.built)
	}
	s.render(w, r, http.StatusOK, web.ReportPage(v))
}
