package sessions

import (
	"maps"
	"math"
	"slices"
	"strings"

	"matchbench/rfmath"
	"matchbench/rfmath/match"
	"matchbench/rfmath/parts"
)

// computeNetwork applies the network and part ops to next (a clone of cur).
func computeNetwork(cur, next *State, ch *Change, r *result, lim Limits) error {
	o := &netOp{cur: cur, next: next, ch: ch, r: r, lim: lim, op: ch.Op}
	var err error
	switch ch.Op {
	case OpNetworkAdd:
		err = o.networkAdd()
	case OpNetworkSet:
		err = o.networkSet()
	case OpNetworkSelect:
		err = o.networkSelect()
	case OpNetworkRemove:
		err = o.networkRemove()
	case OpPartAdd:
		err = o.partAdd()
	case OpPartSet:
		err = o.partSet()
	case OpPartRemove:
		err = o.partRemove()
	case OpPartMove:
		err = o.partMove()
	}
	if err != nil {
		return err
	}
	if a := next.Active(); a != nil {
		r.ev.NetworkID = a.ID
	}
	return nil
}

// netOp is one network or part op being applied: the state before it (cur),
// the state being built (next), the change, its result and the limits.
type netOp struct {
	cur, next *State
	ch        *Change
	r         *result
	lim       Limits
	op        string
}

// netOf is the index of network id (the active one when empty) in cur.
func (o *netOp) netOf(id string) (int, error) {
	if id == "" {
		id = o.cur.ActiveNetwork
	}
	if id == "" {
		return -1, invalid(o.op, "networkId", "the session has no matching network yet")
	}
	i := o.cur.NetworkIndex(id)
	if i < 0 {
		return -1, notFound(o.op, "networkId", "network", id)
	}
	return i, nil
}

// partOf is the index of part id in n.
func (o *netOp) partOf(n *Network, id string) (int, error) {
	if id == "" {
		return -1, invalid(o.op, "partId", "missing")
	}
	i := slices.IndexFunc(n.Parts, func(p Part) bool { return p.ID == id })
	if i < 0 {
		return -1, notFound(o.op, "partId", "part", id)
	}
	return i, nil
}

// partIn finds part partID of network netID (the active one when empty) in
// next, the state being built.
func (o *netOp) partIn(netID, partID string) (*Network, int, error) {
	i, err := o.netOf(netID)
	if err != nil {
		return nil, 0, err
	}
	n := &o.next.Networks[i]
	j, err := o.partOf(n, partID)
	return n, j, err
}

// sweepRef is sweep id of cur.
func (o *netOp) sweepRef(id string) (SweepRef, error) {
	i := o.cur.SweepIndex(id)
	if i < 0 {
		return SweepRef{}, notFound(o.op, "sweepId", "sweep", id)
	}
	return o.cur.Sweeps[i], nil
}

// networkAdd adds a network on a sweep of the load (the first when none is
// named), with its design frequency, load set, parts and board, and makes it
// the active one.
func (o *netOp) networkAdd() error {
	cur, next, ch, r, lim, op := o.cur, o.next, o.ch, o.r, o.lim, o.op
	if len(cur.Networks) >= lim.Networks {
		return invalid(op, "", "the session already has %d networks, the limit", len(cur.Networks))
	}
	sweepID := ch.SweepID
	if sweepID == "" {
		if len(cur.Sweeps) == 0 {
			return invalid(op, "sweepId", "upload a sweep of the load first")
		}
		sweepID = cur.Sweeps[0].ID
	}
	ref, err := o.sweepRef(sweepID)
	if err != nil {
		return err
	}
	port := max(ch.Port, 1)
	if port > min(ref.Ports, 2) {
		return invalid(op, "port", "sweep %q has no reflection at port %d", ref.Name, port)
	}
	design := ch.DesignHz
	if design == 0 {
		design = defaultDesignHz(cur, ref)
	}
	if !finite(design) || design < ref.FminHz || design > ref.FmaxHz {
		return invalid(op, "designHz", "%g Hz is outside the sweep (%g–%g Hz)", design, ref.FminHz, ref.FmaxHz)
	}
	name, err := text(op, "name", ch.Name, false, lim.TextRunes)
	if err != nil {
		return err
	}
	id, err := uniqueID(func(id string) bool { return cur.NetworkIndex(id) >= 0 })
	if err != nil {
		return err
	}
	if name == "" {
		name = "Network " + string(rune('A'+len(cur.Networks)%26))
	}
	n := Network{ID: id, Name: name, SweepID: sweepID, Port: port, DesignHz: design, PowerW: 0.1, Parts: []Part{}}
	if ch.SetID != "" && ch.SetID != "none" {
		si := cur.LoadSetIndex(ch.SetID)
		if si < 0 {
			return notFound(op, "setId", "load set", ch.SetID)
		}
		if !isMember(cur.LoadSets[si], sweepID) {
			return invalid(op, "sweepId", "sweep %q is not in load set %q", ref.Name, cur.LoadSets[si].Name)
		}
		n.SetID = ch.SetID
	}
	if len(ch.Parts) > lim.PartsPerNetwork {
		return invalid(op, "parts", "%d parts; a network holds at most %d", len(ch.Parts), lim.PartsPerNetwork)
	}
	for _, p := range ch.Parts {
		p.ID = ""
		if err := checkPart(op, &p); err != nil {
			return err
		}
		if err := checkPartOn(op, p, ref, design); err != nil {
			return err
		}
		p.ID, err = uniqueID(func(id string) bool { return slices.ContainsFunc(n.Parts, func(q Part) bool { return q.ID == id }) })
		if err != nil {
			return err
		}
		n.Parts = append(n.Parts, p)
	}
	if n.Layout, err = checkLayout(op, ch.Layout, len(n.Parts)); err != nil {
		return err
	}
	next.Networks = append(next.Networks, n)
	next.ActiveNetwork = id
	r.ev.SweepID = sweepID
	return nil
}

// networkSet changes a network's name, load, port, load set, design
// frequency, yield builds, Chu radius or power; the parts are checked again
// on new frequencies.
func (o *netOp) networkSet() error {
	cur, next, ch, lim, op := o.cur, o.next, o.ch, o.lim, o.op
	i, err := o.netOf(ch.NetworkID)
	if err != nil {
		return err
	}
	n := &next.Networks[i]
	if ch.Name != "" {
		if n.Name, err = text(op, "name", ch.Name, true, lim.TextRunes); err != nil {
			return err
		}
	}
	if ch.SweepID != "" {
		ref, err := o.sweepRef(ch.SweepID)
		if err != nil {
			return err
		}
		n.SweepID = ref.ID
		if n.DesignHz < ref.FminHz || n.DesignHz > ref.FmaxHz {
			n.DesignHz = defaultDesignHz(cur, ref)
		}
	}
	if ch.Port != 0 {
		n.Port = ch.Port
	}
	switch ch.SetID {
	case "":
	case "none":
		n.SetID = ""
	default:
		si := cur.LoadSetIndex(ch.SetID)
		if si < 0 {
			return notFound(op, "setId", "load set", ch.SetID)
		}
		set := cur.LoadSets[si]
		n.SetID = set.ID
		if !isMember(set, n.SweepID) {
			// The chart follows a member: the first that must pass.
			for _, m := range set.Members {
				if !m.Advisory {
					n.SweepID, n.Port = m.SweepID, m.Port
					break
				}
			}
		}
	}
	ref, err := o.sweepRef(n.SweepID)
	if err != nil {
		return err
	}
	if n.Port < 1 || n.Port > min(ref.Ports, 2) {
		return invalid(op, "port", "sweep %q has no reflection at port %d", ref.Name, n.Port)
	}
	if n.DesignHz < ref.FminHz || n.DesignHz > ref.FmaxHz {
		n.DesignHz = defaultDesignHz(cur, ref)
	}
	if ch.DesignHz != 0 {
		if !finite(ch.DesignHz) || ch.DesignHz < ref.FminHz || ch.DesignHz > ref.FmaxHz {
			return invalid(op, "designHz", "%g Hz is outside the sweep (%g–%g Hz)", ch.DesignHz, ref.FminHz, ref.FmaxHz)
		}
		n.DesignHz = ch.DesignHz
	}
	switch {
	case ch.YieldBuilds < 0:
		n.YieldBuilds = 0
	case ch.YieldBuilds > 100000:
		return invalid(op, "yieldBuilds", "%d builds; at most 100000", ch.YieldBuilds)
	case ch.YieldBuilds > 0:
		n.YieldBuilds = ch.YieldBuilds
	}
	switch {
	case ch.ChuRadiusM < 0:
		n.ChuRadiusM = 0
	case ch.ChuRadiusM > 100 || !finite(ch.ChuRadiusM):
		return invalid(op, "chuRadiusM", "%g m is not a sphere around an antenna on a board", ch.ChuRadiusM)
	case ch.ChuRadiusM > 0:
		n.ChuRadiusM = ch.ChuRadiusM
	}
	if ch.SweepID != "" || ch.DesignHz != 0 {
		for _, p := range n.Parts { // the parts on the new frequencies
			if err := checkPartOn(op, p, ref, n.DesignHz); err != nil {
				return err
			}
		}
	}
	if ch.PowerW != nil {
		if !finite(*ch.PowerW) || *ch.PowerW < 0 || *ch.PowerW > 1e4 {
			return invalid(op, "powerW", "%g W is not within 0–10 kW", *ch.PowerW)
		}
		n.PowerW = *ch.PowerW
	}
	return nil
}

// networkSelect makes a network the active one.
func (o *netOp) networkSelect() error {
	cur, next, ch := o.cur, o.next, o.ch
	i, err := o.netOf(ch.NetworkID)
	if err != nil {
		return err
	}
	next.ActiveNetwork = cur.Networks[i].ID
	return nil
}

// networkRemove removes a network; the one before it becomes active.
func (o *netOp) networkRemove() error {
	next, ch, op := o.next, o.ch, o.op
	if ch.NetworkID == "" {
		return invalid(op, "networkId", "missing")
	}
	i, err := o.netOf(ch.NetworkID)
	if err != nil {
		return err
	}
	next.Networks = slices.Delete(next.Networks, i, i+1)
	if next.ActiveNetwork == ch.NetworkID {
		next.ActiveNetwork = ""
		if len(next.Networks) > 0 {
			next.ActiveNetwork = next.Networks[max(i-1, 0)].ID
		}
	}
	return nil
}

// partAdd adds a part to a network at an index (the end by default).
func (o *netOp) partAdd() error {
	next, ch, r, lim, op := o.next, o.ch, o.r, o.lim, o.op
	i, err := o.netOf(ch.NetworkID)
	if err != nil {
		return err
	}
	n := &next.Networks[i]
	if len(n.Parts) >= lim.PartsPerNetwork {
		return invalid(op, "", "the network already has %d parts, the limit", len(n.Parts))
	}
	p := Part{Kind: ch.Kind, Params: ch.Params}
	if ch.Value != nil {
		p.Value = *ch.Value
	}
	if ch.Model != nil {
		p.Model = *ch.Model
	}
	if ch.ESeries != nil {
		p.ESeries = *ch.ESeries
	}
	if err := checkPart(op, &p); err != nil {
		return err
	}
	if ref, err := o.sweepRef(n.SweepID); err == nil {
		if err := checkPartOn(op, p, ref, n.DesignHz); err != nil {
			return err
		}
	}
	if p.ID, err = uniqueID(func(id string) bool { return slices.ContainsFunc(n.Parts, func(q Part) bool { return q.ID == id }) }); err != nil {
		return err
	}
	at := len(n.Parts)
	if ch.Index != nil {
		if *ch.Index < 0 || *ch.Index > len(n.Parts) {
			return invalid(op, "index", "%d is not within 0–%d", *ch.Index, len(n.Parts))
		}
		at = *ch.Index
	}
	n.Parts = slices.Insert(n.Parts, at, p)
	n.Layout = shiftTraces(n.Layout, at, +1)
	r.ev.PartID = p.ID
	return nil
}

// partSet changes a part's value, model, E-series or parameters (NaN clears a
// parameter).
func (o *netOp) partSet() error {
	ch, r, op := o.ch, o.r, o.op
	n, j, err := o.partIn(ch.NetworkID, ch.PartID)
	if err != nil {
		return err
	}
	p := n.Parts[j]
	if ch.Value != nil {
		p.Value = *ch.Value
	}
	if ch.Model != nil {
		p.Model = *ch.Model
	}
	if ch.ESeries != nil {
		p.ESeries = *ch.ESeries
	}
	if ch.Params != nil {
		merged := maps.Clone(p.Params)
		if merged == nil {
			merged = map[string]float64{}
		}
		for k, v := range ch.Params {
			if math.IsNaN(v) { // NaN clears a parameter
				delete(merged, k)
				continue
			}
			merged[k] = v
		}
		p.Params = merged
	}
	if err := checkPart(op, &p); err != nil {
		return err
	}
	if ref, err := o.sweepRef(n.SweepID); err == nil {
		if err := checkPartOn(op, p, ref, n.DesignHz); err != nil {
			return err
		}
	}
	n.Parts[j] = p
	r.ev.PartID = p.ID
	return nil
}

// partRemove removes a part, and the board's trace before it.
func (o *netOp) partRemove() error {
	ch, r := o.ch, o.r
	n, j, err := o.partIn(ch.NetworkID, ch.PartID)
	if err != nil {
		return err
	}
	n.Parts = slices.Delete(n.Parts, j, j+1)
	n.Layout = shiftTraces(n.Layout, j, -1)
	r.ev.PartID = ch.PartID
	return nil
}

// partMove moves a part to another index.
func (o *netOp) partMove() error {
	ch, r, op := o.ch, o.r, o.op
	n, j, err := o.partIn(ch.NetworkID, ch.PartID)
	if err != nil {
		return err
	}
	if ch.Index == nil || *ch.Index < 0 || *ch.Index >= len(n.Parts) {
		return invalid(op, "index", "want 0–%d", len(n.Parts)-1)
	}
	p := n.Parts[j]
	n.Parts = slices.Delete(n.Parts, j, j+1)
	n.Parts = slices.Insert(n.Parts, *ch.Index, p)
	r.ev.PartID = ch.PartID

	return nil
}

// defaultDesignHz is the centre of the first band inside the sweep
// (rfmath.BandCentreHz, the geometric centre), else the sweep's centre.
func defaultDesignHz(st *State, ref SweepRef) float64 {
	for _, b := range st.Bands {
		c := rfmath.BandCentreHz(b.LoHz, b.HiHz)
		if c >= ref.FminHz && c <= ref.FmaxHz {
			return c
		}
	}
	return (ref.FminHz + ref.FmaxHz) / 2
}

// partParam is the range of one parameter a part may carry: lo ≤ v ≤ hi,
// or v = 0 where zero is allowed (it means "none": lossless, no
// self-resonance). The ranges hold every part a bench holds, with room to
// spare, and keep the arithmetic finite: a Q of 1e-300 at 1e300 Hz would
// make a loss resistance of +Inf and every export of the network NaN.
type partParam struct {
	lo, hi float64
	zero   bool
	what   string
}

var partParams = map[string]partParam{
	"q":          {0.01, 1e6, true, "a Q of 0.01 to 10⁶ (0: lossless)"},
	"qRefHz":     {1e3, 1e12, false, "1 kHz to 1 THz"},
	"srfHz":      {1e3, 1e13, true, "1 kHz to 10 THz (0: none)"},
	"esrOhm":     {0, 1e6, true, "0 to 1 MΩ"},
	"z0Ohm":      {0.1, 1e5, false, "0.1 Ω to 100 kΩ"},
	"vf":         {0.01, 1, false, "0.01 to 1"},
	"lossDBPerM": {0, 1e4, true, "0 to 10⁴ dB/m"},
	"lossRefHz":  {1e3, 1e12, false, "1 kHz to 1 THz"},
	"tolRel":     {0, 0.99, true, "0 to 99 %"},
	"tolAbs":     {0, math.MaxFloat64, true, "0 or more, below the part's value"},
	"maxV":       {1e-3, 1e6, false, "1 mV to 1 MV"},
	"maxA":       {1e-6, 1e4, false, "1 µA to 10 kA"},
}

// partValues are the values a part of each kind may take (SI units), with
// the range in words.
func partValues(k rfmath.PartKind) (lo, hi float64, what string) {
	switch k.Component() {
	case rfmath.ComponentL:
		return 1e-15, 1, "1 fH to 1 H"
	case rfmath.ComponentC:
		return 1e-18, 1, "1 aF to 1 F"
	case rfmath.ComponentR:
		return 1e-6, 1e12, "1 µΩ to 1 TΩ"
	}
	if k == PartTransformer {
		return 1e-3, 1e3, "a turns ratio of 0.001 to 1000"
	}
	return 1e-6, 1e3, "a length of 1 µm to 1 km"
}

// checkPart validates a part in place (normalising its model and series
// names). The error names the field.
func checkPart(op string, p *Part) error {
	if !p.Kind.Valid() {
		var names []string
		for _, k := range PartKinds {
			names = append(names, string(k))
		}
		return invalid(op, "kind", "unknown part kind %q (want one of %s)", p.Kind, strings.Join(names, ", "))
	}
	if !finite(p.Value) || p.Value <= 0 {
		return invalid(op, "value", "%g: a part's value must be a positive number", p.Value)
	}
	if lo, hi, what := partValues(p.Kind); p.Value < lo || p.Value > hi {
		return invalid(op, "value", "%g is outside the values a %s may take (%s)", p.Value, p.Kind, what)
	}
	m := strings.TrimSpace(p.Model)
	if m == "ideal" {
		m = ""
	}
	if m != "" {
		if !isLumped(p.Kind) {
			return invalid(op, "model", "a %s has no part model", p.Kind)
		}
		if _, err := parts.LookupModel(m); err != nil {
			return invalid(op, "model", "%v", err)
		}
	}
	p.Model = m
	es := strings.ToUpper(strings.TrimSpace(p.ESeries))
	if es != "" {
		if !isLumped(p.Kind) {
			return invalid(op, "series", "a %s has no standard values", p.Kind)
		}
		if _, err := parts.Lookup(es); err != nil {
			return invalid(op, "series", "%v", err)
		}
	}
	p.ESeries = es
	for k, v := range p.Params {
		r, ok := partParams[k]
		if !ok {
			return invalid(op, "params."+k, "unknown part parameter")
		}
		if !finite(v) || !(v >= r.lo && v <= r.hi || r.zero && v == 0) {
			return invalid(op, "params."+k, "%g is out of range: want %s", v, r.what)
		}
	}
	if a, ok := p.Params["tolAbs"]; ok && a >= p.Value {
		return invalid(op, "params.tolAbs", "a tolerance of ±%g is not below the value %g", a, p.Value)
	}
	if len(p.Params) == 0 {
		p.Params = nil
	}
	return nil
}

func isLumped(kind rfmath.PartKind) bool { return kind.Component() != "" }

// Design returns the part as rfmath/match builds and judges it: its model
// looked up by name ([parts.LookupModel]). This is the one adapter from a
// stored part to the design type the search, the panel and the exports
// use.
func (p Part) Design() (match.Part, error) {
	m, err := parts.LookupModel(p.Model)
	if err != nil {
		return match.Part{}, err
	}
	return match.Part{Kind: p.Kind, Value: p.Value, Series: p.ESeries, Model: m, Params: p.Params}, nil
}

// checkPartOn checks that part p, as it is built (at its standard value,
// with its model and figures), has a finite two-port matrix at the ends of
// the sweep ref its network sits on and at the design frequency, so that
// no figure or export of the network can be NaN or infinite. The error
// names the field.
func checkPartOn(op string, p Part, ref SweepRef, designHz float64) error {
	d, err := p.Design()
	if err != nil {
		return invalid(op, "model", "%v", err)
	}
	e, err := d.Element(d.BuyValue())
	if err != nil {
		return invalid(op, "value", "%v", err)
	}
	for _, f := range []float64{ref.FminHz, ref.FmaxHz, designHz} {
		if !(f > 0) {
			continue
		}
		for _, v := range e.ABCD(f) {
			if !finite(real(v)) || !finite(imag(v)) {
				field := "value"
				if len(p.Params) > 0 {
					field = "params"
				}
				return invalid(op, field, "the %s as built (value %g with its figures) has no finite response at %g Hz", p.Kind, d.BuyValue(), f)
			}
		}
	}
	return nil
}
