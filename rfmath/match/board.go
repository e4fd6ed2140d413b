package match

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"matchbench/rfmath"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/units"
)

// # The board a network is built on
//
// A network designed from parts alone meets the board when it is soldered:
// each chip part sits on two copper pads that have capacitance to the
// ground plane beneath, and the parts are joined by traces that add series
// inductance (and a little capacitance) between them. A [Layout] describes
// both, and [Layout.Place] puts a design [Network] on the board: the result
// is again a Network, with the pads as fixed shunt capacitors and the
// traces as lines, so [Evaluate], [Response], the yield, the stress and the
// exports judge the network as it will be built.
//
// Nodes. Along a placed ladder, the series elements (series parts, traces,
// line sections, transformers) separate nodes; node 0 is the load's
// terminal plane. A shunt part sits at one node; a series part joins node
// j to node j+1 and has a pad at each. A gap g is the place between part
// g−1 and part g (gap 0 between the load and part 0, gap len(n) between the
// last part and the source); a trace in a gap is a series element of its
// own, so it starts a new node.

// Footprint is the land pattern a chip part is soldered to, as far as the
// match sees it: the capacitance of each of its two pads to the ground
// plane. A shunt part has one pad at its node (the other goes to ground
// through a via); a series part has one at each end.
type Footprint struct {
	Name  string  // "0402", "0603", or a name of the engineer's own
	PadCF float64 // capacitance of one pad to ground, in farads
}

// Typical pad capacitances of chip footprints over a ground plane about
// 0.2 mm below (the first inner layer of a four-layer board, FR-4 class
// dielectric), typical values FROM MEMORY, not a measurement of any board:
// a parallel-plate estimate ε0·εr·A/h of the pad area (about 0.5 × 0.55 mm
// for 0402, 0.8 × 0.9 mm for 0603) gives 0.05 and 0.13 pF, and fringing
// adds a few tens of percent. Over a two-layer 1.6 mm board the pads have
// nearly ten times less; take a figure for the actual stack-up where it
// matters.
var (
	Footprint0402 = Footprint{Name: "0402", PadCF: 0.08e-12}
	Footprint0603 = Footprint{Name: "0603", PadCF: 0.15e-12}
)

// Footprints lists the typical footprints.
var Footprints = []Footprint{Footprint0402, Footprint0603}

// LookupFootprint returns the typical footprint named name ("0402",
// "0603"), or the zero Footprint (no pads) for "" and "none". An unknown
// name returns an error wrapping [ErrLayout].
func LookupFootprint(name string) (Footprint, error) {
	n := strings.TrimSpace(name)
	if n == "" || strings.EqualFold(n, "none") {
		return Footprint{}, nil
	}
	for _, f := range Footprints {
		if f.Name == n {
			return f, nil
		}
	}
	return Footprint{}, fmt.Errorf("%w: unknown footprint %q (want 0402, 0603 or none)", ErrLayout, name)
}

// Trace is a copper trace in one gap of a ladder, seen as a uniform TEM
// line: LengthM long, of characteristic impedance Z0Ohm and effective
// relative permittivity EpsEff, so its velocity factor is 1/√EpsEff. A
// short trace of delay τ is a series inductance Z0·τ with a shunt
// capacitance τ/Z0 shared between its ends (common practice; the
// telegrapher's line to first order in βl), so a narrow trace (high Z0)
// adds mostly inductance. Use [Microstrip] for the Z0 and EpsEff of a
// trace of given width over a given substrate.
type Trace struct {
	Gap     int     // 0: between the load and part 0; g: between parts g−1 and g; len(n): before the source
	LengthM float64 // length in metres
	Z0Ohm   float64 // characteristic impedance in ohms
	EpsEff  float64 // effective relative permittivity (≥ 1)
}

// DelayS returns the trace's one-way delay LengthM·√EpsEff/c.
func (t Trace) DelayS() float64 { return t.LengthM * math.Sqrt(t.EpsEff) / rfmath.SpeedOfLight }

// SeriesLH returns the series inductance of the trace to first order in its
// electrical length: Z0·τ.
func (t Trace) SeriesLH() float64 { return t.Z0Ohm * t.DelayS() }

// ShuntCF returns the shunt capacitance of the trace to first order in its
// electrical length: τ/Z0.
func (t Trace) ShuntCF() float64 { return t.DelayS() / t.Z0Ohm }

// Part returns the trace as a line part of the network ([Line]) of length
// lengthM.
func (t Trace) Part(lengthM float64) Part {
	return Part{Kind: Line, Value: lengthM, Params: map[string]float64{"z0Ohm": t.Z0Ohm, "vf": 1 / math.Sqrt(t.EpsEff)}}
}

// ParseTrace reads a trace written GAP:LENGTH or GAP:LENGTH:Z0:EPSEFF,
// as the command line and the web app take it: "2:0.5mm" (50 Ω, in air)
// or "2:0.5mm:53.1:3.18". The length takes SI prefixes and an optional
// unit m; Z0 is in ohms. Errors wrap [ErrLayout] and name the field.
func ParseTrace(s string) (Trace, error) {
	f := strings.Split(strings.TrimSpace(s), ":")
	if len(f) != 2 && len(f) != 4 {
		return Trace{}, fmt.Errorf("%w: trace %q: want GAP:LENGTH or GAP:LENGTH:Z0:EPSEFF, e.g. 2:0.5mm:53:3.2", ErrLayout, s)
	}
	gap, err := strconv.Atoi(strings.TrimSpace(f[0]))
	if err != nil || gap < 0 {
		return Trace{}, fmt.Errorf("%w: trace %q: gap %q is not a whole number from 0", ErrLayout, s, f[0])
	}
	length, err := units.ParseValue(f[1], "m")
	if err != nil {
		return Trace{}, fmt.Errorf("%w: trace %q: length: %v", ErrLayout, s, err)
	}
	t := Trace{Gap: gap, LengthM: length, Z0Ohm: 50, EpsEff: 1}
	if len(f) == 4 {
		if t.Z0Ohm, err = units.ParseValue(f[2], "Ω"); err != nil {
			return t, fmt.Errorf("%w: trace %q: Z0: %v", ErrLayout, s, err)
		}
		if t.EpsEff, err = strconv.ParseFloat(strings.TrimSpace(f[3]), 64); err != nil {
			return t, fmt.Errorf("%w: trace %q: effective permittivity %q is not a number", ErrLayout, s, f[3])
		}
	}
	return t, t.validate(math.MaxInt32)
}

// String writes the trace as [ParseTrace] reads it.
func (t Trace) String() string {
	return fmt.Sprintf("%d:%smm:%s:%s", t.Gap, strconv.FormatFloat(t.LengthM*1e3, 'g', 6, 64), strconv.FormatFloat(t.Z0Ohm, 'g', 6, 64),
		strconv.FormatFloat(t.EpsEff, 'g', 6, 64))
}

// Describe says what the layout adds to the network n, in words: "0402
// pads (80 fF each), trace L2–C1 500 µm (53.1 Ω, εeff 3.18)".
func (l Layout) Describe(n Network) string {
	if l.IsZero() {
		return "no board (the parts alone, no pads or traces)"
	}
	var s []string
	if l.Footprint.PadCF > 0 {
		name := l.Footprint.Name
		if name == "" {
			name = "chip"
		}
		s = append(s, fmt.Sprintf("%s pads (%s each)", name, units.Format(l.Footprint.PadCF, "F", 3)))
	}
	for _, t := range l.Traces {
		if t.Gap > len(n) {
			continue
		}
		s = append(s, fmt.Sprintf("%s %s (%s, εeff %.3g)", traceName(n, t.Gap), units.Format(t.LengthM, "m", 3), units.Format(t.Z0Ohm, "Ω", 3), t.EpsEff))
	}
	return strings.Join(s, ", ")
}

func (t Trace) validate(parts int) error {
	switch {
	case t.Gap < 0 || t.Gap > parts:
		return fmt.Errorf("%w: trace in gap %d; a network of %d parts has gaps 0 to %d", ErrLayout, t.Gap, parts, parts)
	case !(t.LengthM >= 0) || t.LengthM > 1 || math.IsInf(t.LengthM, 0):
		return fmt.Errorf("%w: trace in gap %d is %g m long; want 0 to 1 m", ErrLayout, t.Gap, t.LengthM)
	case !(t.Z0Ohm > 0) || t.Z0Ohm > 1000:
		return fmt.Errorf("%w: trace in gap %d has Z0 %g Ω; want 0 to 1000 Ω", ErrLayout, t.Gap, t.Z0Ohm)
	case !(t.EpsEff >= 1) || t.EpsEff > 100:
		return fmt.Errorf("%w: trace in gap %d has effective permittivity %g; want 1 to 100", ErrLayout, t.Gap, t.EpsEff)
	}
	return nil
}

// Microstrip is a microstrip line: a trace WidthM wide on a substrate
// HeightM thick of relative permittivity EpsR over a ground plane. The
// copper's thickness, dispersion and loss are left out.
type Microstrip struct {
	WidthM, HeightM, EpsR float64
}

// EpsEff returns the effective relative permittivity (Hammerstad's closed
// form, E. O. Hammerstad, "Equations for microstrip circuit design", Proc.
// 5th European Microwave Conference, 1975, as given in Pozar, Microwave
// Engineering, Section 3.8, from memory):
//
//	εe = (εr + 1)/2 + (εr − 1)/2 · 1/√(1 + 12·h/W)
func (m Microstrip) EpsEff() float64 {
	return (m.EpsR+1)/2 + (m.EpsR-1)/2/math.Sqrt(1+12*m.HeightM/m.WidthM)
}

// Z0Ohm returns the characteristic impedance in ohms (the same source as
// [Microstrip.EpsEff]), with η0 = 376.73 Ω:
//
//	W/h ≤ 1:  Z0 = 60/√εe · ln(8h/W + W/(4h))
//	W/h ≥ 1:  Z0 = η0 / (√εe · (W/h + 1.393 + 0.667·ln(W/h + 1.444)))
func (m Microstrip) Z0Ohm() float64 {
	u := m.WidthM / m.HeightM
	se := math.Sqrt(m.EpsEff())
	if u <= 1 {
		return 60 / se * math.Log(8/u+u/4)
	}
	return eta0Ohm / (se * (u + 1.393 + 0.667*math.Log(u+1.444)))
}

// eta0Ohm is the impedance of free space, μ0·c ≈ 376.73 Ω.
const eta0Ohm = 376.730313668

// Trace returns a trace of this microstrip, lengthM long, in gap.
func (m Microstrip) Trace(gap int, lengthM float64) Trace {
	return Trace{Gap: gap, LengthM: lengthM, Z0Ohm: m.Z0Ohm(), EpsEff: m.EpsEff()}
}

func (m Microstrip) validate() error {
	if !(m.WidthM > 0) || !(m.HeightM > 0) || !(m.EpsR >= 1) || m.WidthM > 1 || m.HeightM > 1 || m.EpsR > 100 {
		return fmt.Errorf("%w: microstrip %g m wide on %g m of εr %g; want positive sizes under 1 m and εr from 1 to 100", ErrLayout, m.WidthM, m.HeightM, m.EpsR)
	}
	return nil
}

// Layout is how a network is laid out on its board: the footprint of its
// chip parts' pads and the traces in the gaps between them. The zero
// Layout is no board at all: placing a network on it changes nothing.
type Layout struct {
	Footprint Footprint
	Traces    []Trace // at most one per gap
}

// IsZero reports whether the layout adds nothing to a network.
func (l Layout) IsZero() bool {
	if l.Footprint.PadCF > 0 {
		return false
	}
	for _, t := range l.Traces {
		if t.LengthM > 0 {
			return false
		}
	}
	return true
}

// Validate checks the layout against a network of parts parts.
func (l Layout) Validate(parts int) error {
	if !(l.Footprint.PadCF >= 0) || l.Footprint.PadCF > 100e-12 {
		return fmt.Errorf("%w: pad capacitance %g F; want 0 to 100 pF", ErrLayout, l.Footprint.PadCF)
	}
	seen := map[int]bool{}
	for _, t := range l.Traces {
		if err := t.validate(parts); err != nil {
			return err
		}
		if seen[t.Gap] {
			return fmt.Errorf("%w: two traces in gap %d", ErrLayout, t.Gap)
		}
		seen[t.Gap] = true
	}
	return nil
}

// For returns the layout for a network of parts parts: the traces in gaps
// such a network does not have are left out (a board declared for a
// longer ladder, applied to a shorter design).
func (l Layout) For(parts int) Layout {
	out := Layout{Footprint: l.Footprint}
	for _, t := range l.Traces {
		if t.Gap >= 0 && t.Gap <= parts {
			out.Traces = append(out.Traces, t)
		}
	}
	return out
}

// TraceAt returns the trace in gap g and whether there is one.
func (l Layout) TraceAt(g int) (Trace, bool) {
	for _, t := range l.Traces {
		if t.Gap == g {
			return t, true
		}
	}
	return Trace{}, false
}

// Role says what an element of a placed network is.
type Role int

const (
	// RolePart is a part of the design; Origin.Index is its index in the
	// design network.
	RolePart Role = iota
	// RolePads is the pad capacitance at a node; Origin.Index is the node.
	RolePads
	// RoleTrace is a trace; Origin.Index is its gap.
	RoleTrace
)

// Origin says where an element of a placed network comes from.
type Origin struct {
	Role  Role
	Index int
}

// Placed is a design network placed on a board ([Layout.Place]).
type Placed struct {
	// Network holds every element from the load toward the source: the
	// design's parts, the pad capacitance of each node that has pads (an
	// ideal shunt capacitor) and the traces (lines). Pass it to [Evaluate]
	// to judge the network as built on the board.
	Network Network
	// Origins says, for each element of Network, what it is.
	Origins []Origin
	// Nodes is the number of nodes; NodePadCF the pad capacitance at each
	// (zero where no pad touches it) and NodePads the number of pads.
	Nodes     int
	NodePadCF []float64
	NodePads  []int
	// PartNodes gives, for each part of the design, the node it sits at
	// (a shunt part) or starts from on the load side (any other part).
	PartNodes []int
}

// Element returns the index in p.Network of the element of role r and
// index i, or −1 when there is none.
func (p Placed) Element(r Role, i int) int {
	for j, o := range p.Origins {
		if o.Role == r && o.Index == i {
			return j
		}
	}
	return -1
}

// Design returns the parts of the design as the placed network holds them,
// in the design's order.
func (p Placed) Design() Network {
	var n Network
	for j, o := range p.Origins {
		if o.Role == RolePart {
			n = append(n, p.Network[j])
		}
	}
	return n
}

// Name names element j of the placed network of the design n: the part's
// designator ("L2"), its pads ("pad at C1", "pads at the L1–L2 node") or
// its trace ("trace L2–C1").
func (p Placed) Name(n Network, j int) string {
	o := p.Origins[j]
	switch o.Role {
	case RolePads:
		return padName(p, n, o.Index)
	case RoleTrace:
		return traceName(n, o.Index)
	}
	return n.Designator(o.Index)
}

// Tolerances returns, for each element of the placed network, the
// tolerance of the design part it is (its own figures, else the typical
// tolerance of its kind) and none for the pads and traces: the spread
// [Yield] draws when a board's parts are bought again.
func (p Placed) Tolerances() []parts.Tolerance {
	out := make([]parts.Tolerance, len(p.Network))
	for j, o := range p.Origins {
		if o.Role == RolePart {
			out[j] = p.Network[j].Tolerance()
		}
	}
	return out
}

// Place returns the network n laid out on the board: n's parts in their
// order, with a shunt capacitor for the pads at each node that has any
// (the footprint's pad capacitance times the number of pads there) and a
// line for each trace ([Trace.Part]). The parts are copied as they are
// (call n.Built() first for the standard values); the pads are ideal
// capacitors, a fair description of copper over FR-4 class dielectric in
// the low GHz (its loss tangent of about 0.02, common practice, gives the
// pads a Q near 50, against the hundreds of the parts they sit beside).
// A layout that does not fit n returns an error wrapping [ErrLayout].
func (l Layout) Place(n Network) (Placed, error) {
	if err := l.Validate(len(n)); err != nil {
		return Placed{}, err
	}
	// First the items with their nodes, then the pads at each node's start.
	type item struct {
		part   Part
		origin Origin
		series bool
	}
	var items []item
	var node []int // node of each shunt item; node opened by each series item
	pads := []int{0}
	partNodes := make([]int, len(n))
	cur := 0
	advance := func() {
		cur++
		pads = append(pads, 0)
	}
	for g := 0; g <= len(n); g++ {
		if t, ok := l.TraceAt(g); ok && t.LengthM > 0 {
			items = append(items, item{t.Part(t.LengthM), Origin{RoleTrace, g}, true})
			advance()
			node = append(node, cur)
		}
		if g == len(n) {
			break
		}
		p := n[g]
		chip := p.Kind.Component() != ""
		partNodes[g] = cur
		if p.Kind.Shunt() {
			if chip {
				pads[cur]++
			}
			items = append(items, item{p, Origin{RolePart, g}, false})
			node = append(node, cur)
			continue
		}
		if chip {
			pads[cur]++
		}
		items = append(items, item{p, Origin{RolePart, g}, true})
		advance()
		node = append(node, cur)
		if chip {
			pads[cur]++
		}
	}
	pl := Placed{Nodes: cur + 1, NodePads: pads, NodePadCF: make([]float64, cur+1), PartNodes: partNodes}
	emitPads := func(j int) {
		c := float64(pads[j]) * l.Footprint.PadCF
		pl.NodePadCF[j] = c
		if c > 0 {
			pl.Network = append(pl.Network, Part{Kind: ShuntC, Value: c})
			pl.Origins = append(pl.Origins, Origin{RolePads, j})
		}
	}
	emitPads(0)
	for k, it := range items {
		pl.Network = append(pl.Network, it.part)
		pl.Origins = append(pl.Origins, it.origin)
		if it.series {
			emitPads(node[k])
		}
	}
	return pl, nil
}

// Designator names part i of n as a parts list does: L1, C2, R3 for lumped
// parts, TL1 for a line, TS1 for a stub, T1 for a transformer, numbered by
// kind from the load.
func (n Network) Designator(i int) string {
	prefix := func(k Kind) string {
		switch k {
		case Line:
			return "TL"
		case StubOpen, StubShort:
			return "TS"
		case Transformer:
			return "T"
		}
		return string(k.Component())
	}
	want, c := prefix(n[i].Kind), 0
	for j := 0; j <= i; j++ {
		if prefix(n[j].Kind) == want {
			c++
		}
	}
	return want + strconv.Itoa(c)
}
