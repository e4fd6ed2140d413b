package server

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"math"
	"math/cmplx"
	"net/http"
	"path"
	"strconv"
	"strings"

	"github.com/go-chi/chi/v5"

	"matchbench/rfmath"
	"matchbench/rfmath/match"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/spice"
	"matchbench/rfmath/touchstone"
	"matchbench/rfmath/units"
	"matchbench/sessions"
	"matchbench/web"
)

// Every export is made whole in memory before anything is sent: an export
// that cannot be made answers with an error status and a message that says
// why, never 200 with an empty or cut file.

// send answers with a finished file as an attachment.
func send(w http.ResponseWriter, name, ctype string, body []byte) {
	attachment(w, name, ctype)
	w.Header().Set("Content-Length", strconv.Itoa(len(body)))
	w.WriteHeader(http.StatusOK)
	w.Write(body)
}

// exportFailed answers an export that could not be made: 422 with what
// could not be made and why (the cause is the network's or the sweep's,
// not the server's).
func (s *Server) exportFailed(w http.ResponseWriter, what string, err error) {
	s.log.Info("export refused", "export", what, "err", err)
	http.Error(w, "The "+what+" cannot be made: "+err.Error(), http.StatusUnprocessableEntity)
}

// activeNet loads the request's session and its active network, answering
// 404 when it has none and 422 when it cannot be evaluated.
func (s *Server) activeNet(w http.ResponseWriter, r *http.Request) (*scene, *netEval, bool) {
	sc, ok := s.requestScene(w, r)
	if !ok {
		return nil, nil, false
	}
	if sc.net == nil {
		http.Error(w, "This session has no matching network to export.", http.StatusNotFound)
		return nil, nil, false
	}
	if sc.net.err != nil {
		http.Error(w, "The matching network cannot be evaluated: "+sc.net.err.Error(), http.StatusUnprocessableEntity)
		return nil, nil, false
	}
	return sc, sc.net, true
}

// netComments describe a network in an exported file's header: the
// session, the load and its reference plane, the references, the parts.
func netComments(sc *scene, ne *netEval) []string {
	c := []string{
		fmt.Sprintf(" matchbench session %q, network %q", sc.st.Name, ne.n.Name),
		fmt.Sprintf(" load: sweep %q, S%d%d; design frequency %s", sweepName(sc.st, ne.n.SweepID), ne.port, ne.port, fmtF(ne.n.DesignHz)),
		" " + loadPlaneText(sc, ne.n.SweepID),
		fmt.Sprintf(" source and load references: %s (the load sweep's reference)", units.Format(ne.z0, "Ω", 6)),
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

// loadPlaneText says at which reference plane a sweep is: as measured, or
// with its reference-plane steps.
func loadPlaneText(sc *scene, sweepID string) string {
	i := sc.st.SweepIndex(sweepID)
	if i < 0 || sc.st.Sweeps[i].RefPlane == nil {
		return "reference plane: as measured"
	}
	if e := sc.errs[sweepID]; e != "" {
		return "reference plane: " + e
	}
	return "reference plane corrected: " + strings.Join(planeSteps(sc.st, sc.st.Sweeps[i].RefPlane), "; ")
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

// finiteSweep reports the first point of s that is not finite.
func finiteSweep(s *rfmath.Sweep) error {
	for k := range s.Len() {
		for _, v := range s.Matrix(k) {
			if cmplx.IsNaN(v) || cmplx.IsInf(v) {
				return fmt.Errorf("the response at %s is not a finite number; check the parts' figures", fmtF(s.FreqHz[k]))
			}
		}
	}
	return nil
}

// touchstoneFile writes s as Touchstone with comments, refusing a sweep
// that is not finite.
func touchstoneFile(s *rfmath.Sweep, opt touchstone.WriteOptions) ([]byte, error) {
	if err := finiteSweep(s); err != nil {
		return nil, err
	}
	var b bytes.Buffer
	if err := touchstone.Write(&b, s, opt); err != nil {
		return nil, err
	}
	return b.Bytes(), nil
}

// matchedFile is the matched response as Touchstone: the load's
// reflection seen through the network as built.
func (sc *scene) matchedFile() ([]byte, error) {
	ne := sc.net
	out := rfmath.NewSweep(ne.sweep.Len(), 1, ne.z0)
	copy(out.FreqHz, ne.sweep.FreqHz)
	copy(out.Data, ne.result())
	comments := append([]string{" input reflection of the load seen through the network (standard values where set)"}, netComments(sc, ne)...)
	return touchstoneFile(out, touchstone.WriteOptions{Comments: comments})
}

// network2File is the network as built as a 2-port Touchstone file,
// port 1 toward the source.
func (sc *scene) network2File() ([]byte, error) {
	ne := sc.net
	l, err := ne.board.Network.Ladder()
	if err != nil {
		return nil, err
	}
	out := rfmath.NewSweep(ne.sweep.Len(), 2, ne.z0)
	copy(out.FreqHz, ne.sweep.FreqHz)
	for k, f := range out.FreqHz {
		sm := rfmath.ABCDToS(l.ABCD(f), ne.z0, ne.z0)
		copy(out.Matrix(k), sm[:])
	}
	comments := append([]string{" the matching network alone: port 1 faces the source (radio), port 2 the load"}, netComments(sc, ne)...)
	return touchstoneFile(out, touchstone.WriteOptions{Comments: comments})
}

func (s *Server) exportMatched(w http.ResponseWriter, r *http.Request) {
	sc, ne, ok := s.activeNet(w, r)
	if !ok {
		return
	}
	b, err := sc.matchedFile()
	if err != nil {
		s.exportFailed(w, "matched response", err)
		return
	}
	send(w, safeName(ne.n.Name)+"-matched.s1p", "text/plain; charset=utf-8", b)
}

func (s *Server) exportNetwork2(w http.ResponseWriter, r *http.Request) {
	sc, ne, ok := s.activeNet(w, r)
	if !ok {
		return
	}
	b, err := sc.network2File()
	if err != nil {
		s.exportFailed(w, "network's 2-port", err)
		return
	}
	send(w, safeName(ne.n.Name)+"-network.s2p", "text/plain; charset=utf-8", b)
}

// netlist writes the active network as a SPICE subcircuit (rfmath/spice),
// with its board's pads and traces where it has a board, its lossy parts'
// equivalents fitted across the load sweep and best in the session's
// bands.
func (sc *scene) netlist() ([]byte, []spice.PartSummary, error) {
	ne := sc.net
	bands, _ := ne.netBands(sc.st, false)
	fs := ne.sweep.FreqHz
	lo := fs[0]
	for k := 0; !(lo > 0) && k < len(fs); k++ { // a point at DC holds no fit
		lo = fs[k]
	}
	spec := spice.FitSpec{Span: spice.Range{LoHz: lo, HiHz: fs[len(fs)-1]}, Z0Ohm: ne.z0}
	for _, b := range bands {
		spec.Bands = append(spec.Bands, spice.Range{LoHz: b.LoHz, HiHz: b.HiHz})
	}
	if len(spec.Bands) == 0 {
		spec.Bands = []spice.Range{{LoHz: ne.n.DesignHz, HiHz: ne.n.DesignHz}}
	}
	// The network as its figures judge it: on a board, with the board's
	// pads and traces between the parts.
	des := make([]string, len(ne.board.Network))
	for j := range des {
		des[j] = netlistRef(ne, j)
	}
	var b bytes.Buffer
	sums, err := spice.Write(&b, ne.board.Network, spice.Options{Name: "MATCH_" + safeName(ne.n.Name), Designators: des, Fit: spec, Comments: netComments(sc, ne)})
	return b.Bytes(), sums, err
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
	b, _, err := sc.netlist()
	if err != nil {
		s.exportFailed(w, "SPICE netlist", err)
		return
	}
	send(w, safeName(ne.n.Name)+".cir", "text/plain; charset=utf-8", b)
}

// safeCell neutralises a spreadsheet formula: a cell of user text that
// begins with =, +, -, @, a tab or a carriage return gets a leading
// apostrophe, so that a spreadsheet shows it as text instead of running
// it (common practice, as the OWASP note on CSV injection describes).
func safeCell(s string) string {
	if s != "" && strings.ContainsRune("=+-@\t\r", rune(s[0])) {
		return "'" + s
	}
	return s
}

// exportNetworkFile sends the active network with its board as a network
// file (rfmath/match's NET.json, the format `matchbench tune --network`
// reads and `matchbench match --json` writes).
func (s *Server) exportNetworkFile(w http.ResponseWriter, r *http.Request) {
	_, ne, ok := s.activeNet(w, r)
	if !ok {
		return
	}
	b, err := match.MarshalNetwork(ne.design, ne.lay)
	if err != nil {
		s.exportFailed(w, "network file", err)
		return
	}
	send(w, safeName(ne.n.Name)+".json", "application/json", b)
}

// csvBytes writes rows as CSV, neutralising every cell of text (cells
// flagged in num hold numbers the program wrote and are left as they are).
func csvBytes(rows [][]string, num func(col int) bool) ([]byte, error) {
	var b bytes.Buffer
	cw := csv.NewWriter(&b)
	for _, row := range rows {
		out := make([]string, len(row))
		for i, c := range row {
			if num != nil && num(i) {
				out[i] = c
			} else {
				out[i] = safeCell(c)
			}
		}
		cw.Write(out)
	}
	cw.Flush()
	return b.Bytes(), cw.Error()
}

func (s *Server) exportParts(w http.ResponseWriter, r *http.Request) {
	_, ne, ok := s.activeNet(w, r)
	if !ok {
		return
	}
	rows := [][]string{bomHeader}
	for _, l := range bom(ne) {
		rows = append(rows, l.row())
	}
	b, err := csvBytes(rows, nil)
	if err != nil {
		s.exportFailed(w, "parts list", err)
		return
	}
	send(w, safeName(ne.n.Name)+"-parts.csv", "text/csv; charset=utf-8", b)
}

// partsJSON is the parts list as JSON.
type partsJSON struct {
	Session string `json:"session"`
	Network string `json:"network"`
	Note    string `json:"note"`
	// Board is the board the network is built on, in words (its pads and
	// traces are not parts to buy; the figures include them); "" for none.
	Board string    `json:"board,omitempty"`
	Lines []bomLine `json:"lines"`
}

func (s *Server) exportPartsJSON(w http.ResponseWriter, r *http.Request) {
	sc, ne, ok := s.activeNet(w, r)
	if !ok {
		return
	}
	pj := partsJSON{Session: sc.st.Name, Network: ne.n.Name, Lines: bom(ne),
		Note: "values as built (standard values where a series is set); typical model figures are from memory, not a vendor's data"}
	if !ne.lay.IsZero() {
		pj.Board = ne.lay.Describe(ne.built)
	}
	b, err := json.MarshalIndent(pj, "", "  ")
	if err != nil {
		s.exportFailed(w, "parts list", err)
		return
	}
	send(w, safeName(ne.n.Name)+"-parts.json", "application/json", append(b, '\n'))
}

func (s *Server) exportSchematic(w http.ResponseWriter, r *http.Request) {
	sc, ne, ok := s.activeNet(w, r)
	if !ok {
		return
	}
	svg, err := sc.schematicSVG("")
	if err != nil {
		s.exportFailed(w, "schematic", err)
		return
	}
	send(w, safeName(ne.n.Name)+"-schematic.svg", "image/svg+xml", []byte(svg))
}

// exportCorrected sends a sweep at its corrected reference plane (the
// fixture removed, the port extension and the change of reference applied)
// as Touchstone 1.1 (.sNp), 2.1 (.ts) or CSV. A sweep without a plane is
// sent as it was read.
func (s *Server) exportCorrected(w http.ResponseWriter, r *http.Request) {
	sc, ok := s.requestScene(w, r)
	if !ok {
		return
	}
	id, ext := chi.URLParam(r, "sweep"), strings.ToLower(chi.URLParam(r, "ext"))
	i := sc.st.SweepIndex(id)
	sw := sc.all[id]
	if i < 0 || sw == nil {
		http.Error(w, "No such sweep in this session.", http.StatusNotFound)
		return
	}
	ref := sc.st.Sweeps[i]
	if e := sc.errs[id]; e != "" {
		s.exportFailed(w, "corrected sweep", fmt.Errorf("%s", e))
		return
	}
	name := safeName(ref.Name) + "-corrected"
	comments := touchstone.CommentLines([]string{
		fmt.Sprintf(" matchbench session %q, sweep %q (file %s)", sc.st.Name, ref.Name, ref.FileName),
		" " + loadPlaneText(sc, id),
	})
	var b []byte
	var err error
	switch {
	case ext == "csv":
		if err = finiteSweep(sw); err == nil {
			var buf bytes.Buffer
			err = touchstone.WriteCSV(&buf, sw)
			b = buf.Bytes()
		}
		name += ".csv"
	case ext == "ts":
		b, err = touchstoneFile(sw, touchstone.WriteOptions{Version: 2, Comments: comments})
		name += ".ts"
	default:
		n, ok := touchstone.PortsFromName("x." + ext)
		if !ok {
			http.Error(w, "Ask for .s"+strconv.Itoa(sw.Ports)+"p, .ts or .csv.", http.StatusNotFound)
			return
		}
		if n != sw.Ports {
			http.Error(w, fmt.Sprintf("This sweep has %d port(s): ask for .s%dp (or .ts, .csv).", sw.Ports, sw.Ports), http.StatusNotFound)
			return
		}
		b, err = touchstoneFile(sw, touchstone.WriteOptions{Comments: comments})
		name += "." + ext
	}
	if err != nil {
		s.exportFailed(w, "corrected sweep", err)
		return
	}
	ctype := "text/plain; charset=utf-8"
	if path.Ext(name) == ".csv" {
		ctype = "text/csv; charset=utf-8"
	}
	send(w, name, ctype, b)
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

// finite reports whether v is a finite number.
func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
