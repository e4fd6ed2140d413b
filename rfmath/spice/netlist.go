package spice

import (
	"bytes"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"

	"matchbench/rfmath"
	"matchbench/rfmath/match"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/units"
)

// Options control [Write].
type Options struct {
	// Name is the subcircuit's name. Characters other than ASCII letters,
	// digits and '_' become '_'; an empty name is "MATCH".
	Name string
	// Designators name the parts (one per part, from the load); nil names
	// them P1, P2, ….
	Designators []string
	// Fit says where the equivalents of lossy parts must hold: the span of
	// the sweep, the bands that matter most, and the reference resistance
	// Z0 of the line the network sits in (see [FitLumped]); Shunt is set
	// per part.
	Fit FitSpec
	// Comments are written first, each as a comment line; characters
	// outside printable ASCII are replaced.
	Comments []string
}

// PartSummary says how one part was written.
type PartSummary struct {
	Designator string
	// Elements counts the SPICE elements that stand for the part.
	Elements int
	// Exact reports that the elements are the part model itself (constant
	// R, L, C, an ideal line, transformer); otherwise MaxDS21 and
	// MaxDS21Bands are the worst |ΔS21| of the part's equivalent across
	// the span and within the bands ([Equivalent]).
	Exact                 bool
	MaxDS21, MaxDS21Bands float64
}

// Write writes the network n (parts from the load toward the source, at
// the values they are built with) as a SPICE subcircuit:
//
//	.SUBCKT NAME SRC LOAD
//	…
//	.ENDS NAME
//
// SRC faces the source (the radio) and LOAD the load (the antenna); node 0
// is the global ground and is not a pin. Series parts run from LOAD toward
// SRC and a shunt part connects its node to 0 directly. The grammar is
// classic SPICE (Berkeley SPICE 3 and its descendants): R, L, C, T
// (lossless line), E, F and V elements, values with SPICE scale suffixes
// (f p n u m k meg g t), no element of zero value and no model cards.
//
// Each part appears as its model's elements: an ideal part as one element;
// a part whose loss does not change with frequency (a capacitor's constant
// ESR, a resistor and its series inductance) as exactly those elements; a
// part whose loss follows a law of frequency (an inductor's R ∝ √f, a
// constant-Q part) as an R-L-C equivalent fitted across opt.Fit.Span
// ([FitLumped]), with its parallel capacitance as it is. A lossy line is a
// lossless T element followed by a matched T attenuator whose arms are
// fitted the same way (the line model's Z0 is real, so line and attenuator
// commute); an ideal transformer n:1 is a voltage-controlled voltage
// source and a current-controlled current source with a zero-volt source
// sensing its current. A network with no series part joins SRC and LOAD
// with a zero-volt source, the usual SPICE through connection.
//
// Nothing is written to w unless the whole netlist could be made: a part
// that cannot be built or whose elements would not be finite returns an
// error wrapping [ErrPart], [ErrBand] or [ErrFit] naming the part.
func Write(w io.Writer, n match.Network, opt Options) ([]PartSummary, error) {
	if err := opt.Fit.normalise(); err != nil {
		return nil, err
	}
	name := subcktName(opt.Name)
	nw := &netWriter{fit: opt.Fit}
	des := func(i int) string {
		if i < len(opt.Designators) && opt.Designators[i] != "" {
			return ident(opt.Designators[i])
		}
		return "P" + strconv.Itoa(i+1)
	}
	lastSeries := -1
	for i, p := range n {
		if !p.Kind.Shunt() {
			lastSeries = i
		}
	}
	var body bytes.Buffer
	nw.b = &body
	sums := make([]PartSummary, len(n))
	node := "LOAD"
	for i, p := range n {
		ref := des(i)
		e, err := p.Element(p.Value)
		if err != nil {
			return nil, fmt.Errorf("%w: %s: %v", ErrPart, ref, err)
		}
		next := node
		if !p.Kind.Shunt() {
			next = "N" + strconv.Itoa(i+1)
			if i == lastSeries {
				next = "SRC"
			}
		}
		fmt.Fprintf(&body, "* %s: %s\n", ref, ascii(partText(p)))
		start := nw.count
		nw.exact, nw.ds, nw.dsBands = true, 0, 0
		switch el := e.(type) {
		case rfmath.Series:
			err = nw.lumped(ref, el.Part, node, next, false)
		case rfmath.Shunt:
			err = nw.lumped(ref, el.Part, node, "0", true)
		case rfmath.Line:
			err = nw.line(ref, el, node, next)
		case rfmath.ShuntStub:
			err = nw.stub(ref, el, node)
		case rfmath.Transformer:
			err = nw.transformer(ref, el.Ratio, node, next)
		default:
			err = fmt.Errorf("%w: %s: no SPICE form for %T", ErrPart, ref, e)
		}
		if err != nil {
			return nil, err
		}
		sums[i] = PartSummary{Designator: ref, Elements: nw.count - start, Exact: nw.exact, MaxDS21: nw.ds, MaxDS21Bands: nw.dsBands}
		if !nw.exact {
			fmt.Fprintf(&body, "* %s: fitted equivalent, worst |dS21| %.2g within the bands, %.2g from %s to %s\n",
				ref, nw.dsBands, nw.ds, freqText(nw.fit.Span.LoHz), freqText(nw.fit.Span.HiHz))
		}
		node = next
	}
	if lastSeries < 0 {
		body.WriteString("* no series part: a zero-volt source joins SRC and LOAD\n")
		nw.elem("V", "THRU", "SRC", "LOAD", "DC 0")
	}
	if nw.err != nil {
		return nil, nw.err
	}

	var out bytes.Buffer
	for _, c := range opt.Comments {
		fmt.Fprintf(&out, "* %s\n", ascii(strings.TrimSpace(c)))
	}
	fmt.Fprintf(&out, "* Subcircuit %s: pin SRC faces the source, pin LOAD the load; node 0 is ground (not a pin).\n", name)
	fmt.Fprintf(&out, "* The network sits in a line of reference %s ohm. Parts are listed from the load toward the source.\n", value(opt.Fit.Z0Ohm))
	fmt.Fprintf(&out, "* Lossy parts are R-L-C equivalents that hold from %s to %s; |dS21| is the error of a part's\n", freqText(opt.Fit.Span.LoHz), freqText(opt.Fit.Span.HiHz))
	out.WriteString("* transmission between references Z0 that its equivalent makes.\n")
	fmt.Fprintf(&out, ".SUBCKT %s SRC LOAD\n", name)
	out.Write(body.Bytes())
	fmt.Fprintf(&out, ".ENDS %s\n", name)
	if _, err := w.Write(out.Bytes()); err != nil {
		return nil, err
	}
	return sums, nil
}

// netWriter writes element lines and keeps the first error.
type netWriter struct {
	b           *bytes.Buffer
	fit         FitSpec
	count       int
	err         error
	exact       bool    // every element of the current part is exact
	ds, dsBands float64 // worst |ΔS21| of the current part's equivalents
	nodeSeq     int
}

// elem writes one element line: kind letter, name, two nodes, value.
func (nw *netWriter) elem(kind, name, a, b, val string) {
	fmt.Fprintf(nw.b, "%s_%s %s %s %s\n", kind, name, a, b, val)
	nw.count++
}

// val checks a value and formats it; a value that is not positive and
// finite records an error.
func (nw *netWriter) val(ref, what string, v float64) string {
	if !(v > 0) || math.IsInf(v, 0) {
		if nw.err == nil {
			nw.err = fmt.Errorf("%w: %s: %s of %g", ErrPart, ref, what, v)
		}
		return "1"
	}
	return value(v)
}

// lumped writes a lumped part between nodes a and b.
func (nw *netWriter) lumped(ref string, p rfmath.Part, a, b string, shunt bool) error {
	lp, ok := p.(rfmath.Lumper)
	if !ok {
		return fmt.Errorf("%w: %s: part %T has no closed form", ErrPart, ref, p)
	}
	spec := nw.fit
	spec.Shunt = shunt
	e, err := FitLumped(lp.Lumped(), spec)
	if err != nil {
		return fmt.Errorf("%s: %w", ref, err)
	}
	nw.equivalent(ref, e, a, b)
	return nw.err
}

// equivalent writes the elements of e between nodes a and b, with names
// and internal nodes prefixed by ref.
func (nw *netWriter) equivalent(ref string, e Equivalent, a, b string) {
	if !e.Exact {
		nw.exact = false
		nw.ds, nw.dsBands = math.Max(nw.ds, e.MaxDS21), math.Max(nw.dsBands, e.MaxDS21Bands)
	}
	type item struct {
		kind, name string
		v          float64
		pair       string // the parallel element's kind for a section
		pv         float64
	}
	var items []item
	if e.ROhm > 0 {
		items = append(items, item{kind: "R", name: ref, v: e.ROhm})
	}
	if e.LH > 0 {
		items = append(items, item{kind: "L", name: ref, v: e.LH})
	}
	if e.CF > 0 {
		items = append(items, item{kind: "C", name: ref, v: e.CF})
	}
	for k, s := range e.RL {
		items = append(items, item{kind: "R", name: ref + "_K" + strconv.Itoa(k+1), v: s.ROhm, pair: "L", pv: s.X})
	}
	for k, s := range e.RC {
		items = append(items, item{kind: "R", name: ref + "_M" + strconv.Itoa(k+1), v: s.ROhm, pair: "C", pv: s.X})
	}
	if len(items) == 0 {
		if nw.err == nil {
			nw.err = fmt.Errorf("%w: %s has no elements", ErrPart, ref)
		}
		return
	}
	from := a
	for k, it := range items {
		to := b
		if k < len(items)-1 {
			to = nw.node(ref)
		}
		nw.elem(it.kind, it.name, from, to, nw.val(ref, it.kind, it.v))
		if it.pair != "" {
			nw.elem(it.pair, it.name, from, to, nw.val(ref, it.pair, it.pv))
		}
		from = to
	}
	if e.ParallelCF > 0 {
		nw.elem("C", ref+"_P", a, b, nw.val(ref, "Cp", e.ParallelCF))
	}
}

// node returns a fresh internal node of part ref.
func (nw *netWriter) node(ref string) string {
	nw.nodeSeq++
	return ref + "_" + strconv.Itoa(nw.nodeSeq)
}

// line writes a line section from a (load side) to b (source side).
func (nw *netWriter) line(ref string, l rfmath.Line, a, b string) error {
	if l.LossDBPerM <= 0 {
		nw.tline(ref, l, a, b)
		return nw.err
	}
	m := nw.node(ref)
	nw.tline(ref, l, a, m)
	return nw.attenuator(ref, l, m, b, false)
}

// stub writes a shunt stub hanging from node a.
func (nw *netWriter) stub(ref string, s rfmath.ShuntStub, a string) error {
	end := "0"
	if s.Open {
		end = ref + "_END"
	}
	if s.Line.LossDBPerM <= 0 {
		nw.tline(ref, s.Line, a, end)
		return nw.err
	}
	m := nw.node(ref)
	nw.tline(ref, s.Line, a, m)
	return nw.attenuator(ref, s.Line, m, end, s.Open)
}

// tline writes a lossless T element between a and b (each against 0).
func (nw *netWriter) tline(ref string, l rfmath.Line, a, b string) {
	fmt.Fprintf(nw.b, "T_%s %s 0 %s 0 Z0=%s TD=%s\n", ref, a, b, nw.val(ref, "Z0", l.Z0Ohm), nw.val(ref, "delay", l.DelayS()))
	nw.count++
}

// attenuator writes the matched T attenuator that carries a line's loss,
// from a to b: series arms Z0·tanh(A/2) and a shunt arm Z0/sinh(A), A the
// line's loss in nepers, which grows as √f (the line model's law). With
// open set the far end is open, so only the first arm and the shunt arm
// are written.
func (nw *netWriter) attenuator(ref string, l rfmath.Line, a, b string, open bool) error {
	z0 := l.Z0Ohm
	loss := func(f float64) float64 { return l.AlphaNpPerM(f) * l.LengthM }
	arm := func(f float64) complex128 { return complex(z0*math.Tanh(loss(f)/2), 0) }
	leg := func(f float64) complex128 { return complex(z0/math.Sinh(loss(f)), 0) }
	fit := func(z func(float64) complex128, shunt bool) (Equivalent, error) {
		spec := nw.fit
		spec.Z0Ohm, spec.Shunt = z0, shunt
		if !(l.LossRefHz > 0) { // a loss that does not change with frequency
			r := real(z(spec.Span.LoHz))
			return Equivalent{ROhm: r, Span: spec.Span, Exact: true}, nil
		}
		e, err := FitImpedance(z, spec)
		if err != nil {
			return e, fmt.Errorf("%s: the line's loss: %w", ref, err)
		}
		return e, nil
	}
	ea, err := fit(arm, false)
	if err != nil {
		return err
	}
	eg, err := fit(leg, true)
	if err != nil {
		return err
	}
	mid := nw.node(ref)
	nw.equivalent(ref+"_A", ea, a, mid)
	nw.equivalent(ref+"_G", eg, mid, "0")
	if !open {
		nw.equivalent(ref+"_B", ea, mid, b)
	}
	return nw.err
}

// transformer writes an ideal n:1 transformer: V(b) = n·V(a) and the
// current into a is n times the current into b; b faces the source.
func (nw *netWriter) transformer(ref string, n float64, a, b string) error {
	s := ref + "_S"
	g := nw.val(ref, "ratio", n)
	fmt.Fprintf(nw.b, "E_%s %s %s %s 0 %s\n", ref, b, s, a, g)
	fmt.Fprintf(nw.b, "V_%s %s 0 DC 0\n", ref, s)
	fmt.Fprintf(nw.b, "F_%s 0 %s V_%s %s\n", ref, a, ref, g)
	nw.count += 3
	return nw.err
}

// value writes v with a SPICE scale suffix and up to 10 significant
// digits: 3.9n, 1.2p, 50, 4.7k, 2.45g. SPICE reads "m" as milli and "meg"
// as mega.
func value(v float64) string {
	type sfx struct {
		exp int
		s   string
	}
	a := math.Abs(v)
	for _, x := range []sfx{{12, "t"}, {9, "g"}, {6, "meg"}, {3, "k"}, {0, ""}, {-3, "m"}, {-6, "u"}, {-9, "n"}, {-12, "p"}, {-15, "f"}} {
		if a >= math.Pow10(x.exp)*(1-1e-12) {
			return strconv.FormatFloat(v/math.Pow10(x.exp), 'g', 10, 64) + x.s
		}
	}
	return strconv.FormatFloat(v, 'e', 9, 64)
}

// freqText writes a frequency for a comment: "868 MHz".
func freqText(f float64) string { return ascii(units.FormatFrequency(f, 6)) }

// subcktName returns name as a SPICE identifier, "MATCH" when empty.
func subcktName(name string) string {
	s := strings.ToUpper(ident(name))
	if s == "" || s == "_" {
		return "MATCH"
	}
	if c := s[0]; c >= '0' && c <= '9' {
		s = "M_" + s
	}
	return s
}

// ident keeps ASCII letters, digits and '_', replacing other characters
// by '_'.
func ident(s string) string {
	var b strings.Builder
	for _, r := range strings.TrimSpace(s) {
		switch {
		case r >= 'a' && r <= 'z', r >= 'A' && r <= 'Z', r >= '0' && r <= '9', r == '_':
			b.WriteRune(r)
		default:
			b.WriteByte('_')
		}
	}
	return b.String()
}

// ascii replaces what a SPICE comment should not hold.
func ascii(s string) string {
	var b strings.Builder
	for _, r := range s {
		switch {
		case r == 'Ω':
			b.WriteString("ohm")
		case r == 'µ' || r == 'μ':
			b.WriteString("u")
		case r == '–' || r == '—' || r == '−' || r == '·':
			b.WriteByte('-')
		case r >= 0x20 && r <= 0x7e:
			b.WriteRune(r)
		default:
			b.WriteByte('?')
		}
	}
	return b.String()
}

// partText describes a part and its model for the netlist's comments.
func partText(p match.Part) string {
	s := p.String()
	switch m := p.Model.(type) {
	case nil:
	case *parts.Family:
		s += ", typical " + m.Name + " part (typical values from memory)"
	case parts.ConstantQ:
		s += ", " + m.String()
	default:
		if m != parts.Ideal {
			s += fmt.Sprintf(", model %v", m)
		}
	}
	if len(p.Params) > 0 {
		s += ", with its own figures"
	}
	return s
}
