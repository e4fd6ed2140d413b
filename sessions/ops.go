package sessions

import (
	"math"
	"path"
	"slices"
	"sort"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"matchbench/rfmath"
)

// result is what computing a change produces before it is stored.
type result struct {
	next     *State
	ev       Event // ids filled; version and state set by the caller
	newSweep *newSweep
}

// newSweep is a sweep.add's row, stored in the same transaction as the state.
type newSweep struct {
	id       string
	fileName string
	raw      []byte
	parsed   []byte
	sweep    *rfmath.Sweep // a private copy, cached after the commit
}

// compute validates ch against the state cur of session sid and returns the
// new state. It never modifies cur. All validation happens here, so the
// error names the op and the field at fault. Each op is one function of
// the same arguments: the state before (cur), the state being built (next,
// a clone of cur), the change, the result, whose event gets the ids of
// what changed, and the limits; the ops that read a sweep's numbers are
// methods of the store and take the session's id too.
func (st *Store) compute(sid string, cur *State, ch *Change) (result, error) {
	op := ch.Op
	lim := st.lim
	next := cur.clone()
	r := result{next: next, ev: Event{Op: op}}
	var err error
	switch op {
	case OpSessionRename:
		err = computeSessionRename(cur, next, ch, &r, lim)
	case OpSweepAdd:
		err = computeSweepAdd(cur, next, ch, &r, lim)
	case OpSweepRename:
		err = computeSweepRename(cur, next, ch, &r, lim)
	case OpSweepColor:
		err = computeSweepColor(cur, next, ch, &r, lim)
	case OpSweepVisible:
		err = computeSweepVisible(cur, next, ch, &r, lim)
	case OpSweepRemove:
		err = computeSweepRemove(cur, next, ch, &r, lim)
	case OpMarkerAdd:
		err = st.computeMarkerAdd(sid, cur, next, ch, &r, lim)
	case OpMarkerMove:
		err = st.computeMarkerMove(sid, cur, next, ch, &r, lim)
	case OpMarkerStep:
		err = st.computeMarkerStep(sid, cur, next, ch, &r, lim)
	case OpMarkerLabel:
		err = computeMarkerLabel(cur, next, ch, &r, lim)
	case OpMarkerRemove:
		err = computeMarkerRemove(cur, next, ch, &r, lim)
	case OpMarkerToDip:
		err = st.computeMarkerToDip(sid, cur, next, ch, &r, lim)
	case OpBandSet:
		err = computeBandSet(cur, next, ch, &r, lim)
	case OpBandRemove:
		err = computeBandRemove(cur, next, ch, &r, lim)
	case OpChartSet:
		err = computeChartSet(cur, next, ch, &r, lim)
	case OpSweepRefPlane:
		err = computeSweepRefPlane(cur, next, ch, &r, lim)
	case OpTDRSet:
		err = computeTDRSet(cur, next, ch, &r, lim)
	case OpSearchStore:
		err = computeSearchStore(cur, next, ch, &r, lim)
	case OpSearchClear:
		next.Search = nil
	case OpNetworkAdd, OpNetworkSet, OpNetworkSelect, OpNetworkRemove, OpPartAdd, OpPartSet, OpPartRemove, OpPartMove:
		err = computeNetwork(cur, next, ch, &r, lim)
	case OpSetSave, OpSetRemove:
		err = computeSet(cur, next, ch, &r, lim)
	case OpNetworkLayout, OpTuneStore, OpTuneUse:
		err = computeTune(cur, next, ch, &r, lim)
	case OpAmpSet, OpAmpPoint, OpAmpClear, OpStageSet, OpStageRemove, OpStageStore, OpStageUse, OpStageParts:
		err = computeAmp(cur, next, ch, &r, lim)
	case "":
		err = invalid("(no op)", "op", "missing")
	default:
		err = invalid(op, "op", "unknown op %q", op)
	}
	if err != nil {
		return r, err
	}
	tidyAmp(next)
	return r, nil
}

// sweepOf returns the index in cur of the sweep id, which op must give,
// and records it in r's event.
func sweepOf(cur *State, op string, r *result, id string) (int, error) {
	if id == "" {
		return -1, invalid(op, "sweepId", "missing")
	}
	i := cur.SweepIndex(id)
	if i < 0 {
		return -1, notFound(op, "sweepId", "sweep", id)
	}
	r.ev.SweepID = id
	return i, nil
}

// markerOf returns the index in cur of the marker id, which op must give,
// and records it and its sweep in r's event.
func markerOf(cur *State, op string, r *result, id string) (int, error) {
	if id == "" {
		return -1, invalid(op, "markerId", "missing")
	}
	i := cur.MarkerIndex(id)
	if i < 0 {
		return -1, notFound(op, "markerId", "marker", id)
	}
	r.ev.MarkerID = id
	r.ev.SweepID = cur.Markers[i].SweepID
	return i, nil
}

// computeSessionRename applies session.rename: the session takes the name given.
func computeSessionRename(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	name, err := text(op, "name", ch.Name, true, lim.TextRunes)
	if err != nil {
		return err
	}
	next.Name = name
	return nil
}

// computeSweepAdd applies sweep.add: the sweep uploaded joins the session
// under a new id, named after the name given, else its file name, else its
// place, and coloured with the colour given or the first one no sweep has.
// It is refused past the session's count or bytes of sweeps. The sweep's
// rows go in r.newSweep, stored with the state.
func computeSweepAdd(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	if len(cur.Sweeps) >= lim.SweepsPerSession {
		return invalid(op, "", "the session already has %d sweeps, the limit", len(cur.Sweeps))
	}
	if ch.Sweep == nil {
		return invalid(op, "sweep", "missing")
	}
	if err := ch.Sweep.Validate(); err != nil {
		return invalid(op, "sweep", "%v", err)
	}
	fileName, err := text(op, "fileName", ch.FileName, false, lim.TextRunes)
	if err != nil {
		return err
	}
	name, err := text(op, "name", ch.Name, false, lim.TextRunes)
	if err != nil {
		return err
	}
	if name == "" {
		name = strings.TrimSuffix(fileName, path.Ext(fileName))
	}
	if name == "" {
		name = "Sweep " + strconv.Itoa(len(cur.Sweeps)+1)
	}
	color := ch.Color
	if color == "" {
		color = pickColor(cur.Sweeps)
	} else if color, err = checkColor(op, color); err != nil {
		return err
	}
	id, err := uniqueID(func(id string) bool { return cur.SweepIndex(id) >= 0 })
	if err != nil {
		return err
	}
	ref := SweepRef{
		ID: id, Name: name, FileName: fileName, Color: color, Visible: true,
		Ports: ch.Sweep.Ports, Points: ch.Sweep.Len(), FminHz: ch.Sweep.FreqHz[0], FmaxHz: ch.Sweep.FreqHz[ch.Sweep.Len()-1],
	}
	total := ref.DataBytes()
	for _, s := range cur.Sweeps {
		total += s.DataBytes()
	}
	if total > lim.SweepBytes {
		return invalid(op, "sweep", "the session's sweeps would hold %.1f MB of numbers with this one (%.1f MB), more than the limit of %.1f MB a session; remove a sweep first",
			float64(total)/1e6, float64(ref.DataBytes())/1e6, float64(lim.SweepBytes)/1e6)
	}
	sw := ch.Sweep.Clone()
	next.Sweeps = append(next.Sweeps, ref)
	r.ev.SweepID = id
	r.newSweep = &newSweep{
		id: id, fileName: fileName, raw: slices.Clone(ch.Raw), parsed: encodeSweep(sw), sweep: sw,
	}
	if r.newSweep.raw == nil {
		r.newSweep.raw = []byte{}
	}
	return nil
}

// computeSweepRename applies sweep.rename: the sweep takes the name given.
func computeSweepRename(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	i, err := sweepOf(cur, op, r, ch.SweepID)
	if err != nil {
		return err
	}
	name, err := text(op, "name", ch.Name, true, lim.TextRunes)
	if err != nil {
		return err
	}
	next.Sweeps[i].Name = name
	return nil
}

// computeSweepColor applies sweep.color: the sweep takes the colour given.
func computeSweepColor(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	i, err := sweepOf(cur, op, r, ch.SweepID)
	if err != nil {
		return err
	}
	color, err := checkColor(op, ch.Color)
	if err != nil {
		return err
	}
	next.Sweeps[i].Color = color
	return nil
}

// computeSweepVisible applies sweep.visible: the sweep is shown or hidden.
func computeSweepVisible(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	i, err := sweepOf(cur, op, r, ch.SweepID)
	if err != nil {
		return err
	}
	next.Sweeps[i].Visible = ch.Visible
	return nil
}

// computeSweepRemove applies sweep.remove: the sweep goes, with its markers
// and its places in the load sets.
func computeSweepRemove(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	i, err := sweepOf(cur, op, r, ch.SweepID)
	if err != nil {
		return err
	}
	next.Sweeps = slices.Delete(next.Sweeps, i, i+1)
	next.Markers = slices.DeleteFunc(next.Markers, func(m Marker) bool { return m.SweepID == ch.SweepID })
	dropFromSets(next, ch.SweepID)
	return nil
}

// computeMarkerAdd applies marker.add: a new marker on a trace of a sweep (port 1
// unless given), at the point of the trace nearest the Γ point given,
// else at the frequency given, pinned into the sweep. It is refused past
// the trace's count of markers.
func (st *Store) computeMarkerAdd(sid string, cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	i, err := sweepOf(cur, op, r, ch.SweepID)
	if err != nil {
		return err
	}
	ref := cur.Sweeps[i]
	port := ch.Port
	if port == 0 {
		port = 1
	}
	if port < 1 || port > ref.Ports {
		return invalid(op, "port", "port %d of sweep %q, which has %d port(s)", ch.Port, ref.ID, ref.Ports)
	}
	n := 0
	for _, m := range cur.Markers {
		if m.SweepID == ref.ID && m.Port == port {
			n++
		}
	}
	if n >= lim.MarkersPerTrace {
		return invalid(op, "", "trace S%d%d of sweep %q already has %d markers, the limit", port, port, ref.ID, n)
	}
	label, err := text(op, "label", ch.Label, false, lim.TextRunes)
	if err != nil {
		return err
	}
	var f float64
	if ch.Gamma != nil {
		if f, err = st.snapFreq(op, sid, ref, port, *ch.Gamma, 0, -1); err != nil {
			return err
		}
	} else if f, err = pinFreq(op, ref, ch.FreqHz); err != nil {
		return err
	}
	id, err := uniqueID(func(id string) bool { return cur.MarkerIndex(id) >= 0 })
	if err != nil {
		return err
	}
	next.Markers = append(next.Markers, Marker{ID: id, SweepID: ref.ID, Port: port, FreqHz: f, Label: label})
	r.ev.MarkerID = id
	return nil
}

// computeMarkerMove applies marker.move: the marker moves to the point of
// its trace nearest the Γ point given, searched near where it is (see
// [Change].Window), else to the frequency given, pinned into the sweep.
func (st *Store) computeMarkerMove(sid string, cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	i, err := markerOf(cur, op, r, ch.MarkerID)
	if err != nil {
		return err
	}
	m := cur.Markers[i]
	ref := cur.Sweeps[cur.SweepIndex(m.SweepID)]
	var f float64
	if ch.Gamma != nil {
		if ch.Window < 0 {
			return invalid(op, "window", "%d is negative", ch.Window)
		}
		f, err = st.snapFreq(op, sid, ref, m.Port, *ch.Gamma, m.FreqHz, ch.Window)
	} else {
		f, err = pinFreq(op, ref, ch.FreqHz)
	}
	if err != nil {
		return err
	}
	next.Markers[i].FreqHz = f
	r.ev.Gesture = ch.Gesture
	return nil
}

// computeMarkerStep applies marker.step: the marker moves Steps measured points
// along its sweep.
func (st *Store) computeMarkerStep(sid string, cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	i, err := markerOf(cur, op, r, ch.MarkerID)
	if err != nil {
		return err
	}
	if ch.Steps == 0 {
		return invalid(op, "steps", "must not be 0")
	}
	m := cur.Markers[i]
	sw, err := st.sweep(sid, m.SweepID)
	if err != nil {
		return err
	}
	next.Markers[i].FreqHz = sw.sw.FreqHz[stepIndex(sw.sw, m.FreqHz, ch.Steps)]
	return nil
}

// computeMarkerLabel applies marker.label: the marker takes the label given.
func computeMarkerLabel(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	i, err := markerOf(cur, op, r, ch.MarkerID)
	if err != nil {
		return err
	}
	label, err := text(op, "label", ch.Label, false, lim.TextRunes)
	if err != nil {
		return err
	}
	next.Markers[i].Label = label
	return nil
}

// computeMarkerRemove applies marker.remove.
func computeMarkerRemove(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	i, err := markerOf(cur, op, r, ch.MarkerID)
	if err != nil {
		return err
	}
	next.Markers = slices.Delete(next.Markers, i, i+1)
	return nil
}

// computeMarkerToDip applies marker.to_dip: the marker moves to the deepest
// dip of its trace, within LoHz–HiHz when either is given.
func (st *Store) computeMarkerToDip(sid string, cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	i, err := markerOf(cur, op, r, ch.MarkerID)
	if err != nil {
		return err
	}
	m := cur.Markers[i]
	ref := cur.Sweeps[cur.SweepIndex(m.SweepID)]
	lo, hi := ref.FminHz, ref.FmaxHz
	if ch.LoHz != 0 || ch.HiHz != 0 {
		if err := checkRange(op, ch.LoHz, ch.HiHz); err != nil {
			return err
		}
		lo, hi = max(lo, ch.LoHz), min(hi, ch.HiHz)
	}
	e, err := st.sweep(sid, m.SweepID)
	if err != nil {
		return err
	}
	k := deepestDip(e.sw.FreqHz, e.trace(m.Port), lo, hi)
	if k < 0 {
		return invalid(op, "loHz", "no measured point of sweep %q (%g–%g Hz) lies within %g–%g Hz",
			ref.ID, ref.FminHz, ref.FmaxHz, ch.LoHz, ch.HiHz)
	}
	next.Markers[i].FreqHz = e.sw.FreqHz[k]
	return nil
}

// computeBandSet applies band.set: the band BandID (else a new band) takes the
// range and the requirements given.
func computeBandSet(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	i := -1
	if ch.BandID != "" {
		if i = cur.BandIndex(ch.BandID); i < 0 {
			return notFound(op, "bandId", "band", ch.BandID)
		}
	} else if len(cur.Bands) >= lim.Bands {
		return invalid(op, "", "the session already has %d bands, the limit", len(cur.Bands))
	}
	if err := checkRange(op, ch.LoHz, ch.HiHz); err != nil {
		return err
	}
	if rl := ch.MinReturnLossDB; !finite(rl) || rl < 0 || rl > 200 {
		return invalid(op, "minReturnLossDB", "%g dB is not within 0–200 dB", rl)
	}
	if p := ch.MinPowerToLoad; !finite(p) || p < 0 || p > 1 {
		return invalid(op, "minPowerToLoad", "%g is not a share of the power from 0 to 1 (100 %%)", p)
	}
	name, err := text(op, "name", ch.Name, false, lim.TextRunes)
	if err != nil {
		return err
	}
	b := Band{Name: name, LoHz: ch.LoHz, HiHz: ch.HiHz, MinReturnLossDB: ch.MinReturnLossDB, MinPowerToLoad: ch.MinPowerToLoad}
	if i >= 0 {
		b.ID = ch.BandID
		if b.Name == "" {
			b.Name = cur.Bands[i].Name
		}
		next.Bands[i] = b
	} else {
		if b.ID, err = uniqueID(func(id string) bool { return cur.BandIndex(id) >= 0 }); err != nil {
			return err
		}
		if b.Name == "" {
			b.Name = "Band " + strconv.Itoa(len(cur.Bands)+1)
		}
		next.Bands = append(next.Bands, b)
	}
	r.ev.BandID = b.ID
	return nil
}

// computeBandRemove applies band.remove.
func computeBandRemove(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	if ch.BandID == "" {
		return invalid(op, "bandId", "missing")
	}
	i := cur.BandIndex(ch.BandID)
	if i < 0 {
		return notFound(op, "bandId", "band", ch.BandID)
	}
	next.Bands = slices.Delete(next.Bands, i, i+1)
	r.ev.BandID = ch.BandID
	return nil
}

// computeChartSet applies chart.set: the fields of the chart patch given.
func computeChartSet(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	if ch.Chart == nil {
		return invalid(op, "chart", "missing")
	}
	if err := applyChart(op, &next.Chart, ch.Chart, lim); err != nil {
		return err
	}
	return nil
}

// computeSweepRefPlane applies sweep.refplane: the sweep's reference plane.
func computeSweepRefPlane(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	i, err := sweepOf(cur, op, r, ch.SweepID)
	if err != nil {
		return err
	}
	rp, err := checkRefPlane(op, cur, ch.SweepID, ch.RefPlane)
	if err != nil {
		return err
	}
	next.Sweeps[i].RefPlane = rp
	return nil
}

// computeTDRSet applies tdr.set: the time-domain view's settings.
func computeTDRSet(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	if ch.TimeDomain == nil {
		return invalid(op, "timeDomain", "missing")
	}
	td := *ch.TimeDomain
	if td.SweepID != "" {
		if _, err := sweepOf(cur, op, r, td.SweepID); err != nil {
			return err
		}
	}
	if err := checkTimeDomain(op, &td); err != nil {
		return err
	}
	next.TimeDomain = td
	return nil
}

// computeSearchStore applies search.store: a search's result, its designs' parts
// checked and copied without their ids.
func computeSearchStore(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	if ch.Search == nil {
		return invalid(op, "search", "missing")
	}
	res := *ch.Search
	if _, err := sweepOf(cur, op, r, res.SweepID); err != nil {
		return err
	}
	if res.SetID != "" && cur.LoadSetIndex(res.SetID) < 0 {
		return notFound(op, "search.setId", "load set", res.SetID)
	}
	if len(res.Designs) > 20 {
		return invalid(op, "search.designs", "%d designs; at most 20 are kept", len(res.Designs))
	}
	res.Designs = slices.Clone(res.Designs)
	for i := range res.Designs {
		d := &res.Designs[i]
		if len(d.Parts) > lim.PartsPerNetwork {
			return invalid(op, "search.designs.parts", "%d parts; a network holds at most %d", len(d.Parts), lim.PartsPerNetwork)
		}
		d.Parts = slices.Clone(d.Parts)
		for j := range d.Parts {
			d.Parts[j].ID = ""
			if err := checkPart(op, &d.Parts[j]); err != nil {
				return err
			}
		}
	}
	var err error
	if res.Layout, err = checkLayout(op, res.Layout, lim.PartsPerNetwork); err != nil {
		return err
	}
	next.Search = &res
	return nil
}

func applyChart(op string, c *ChartSettings, p *ChartPatch, lim Limits) error {
	setBool := func(dst *bool, v *bool) {
		if v != nil {
			*dst = *v
		}
	}
	setBool(&c.ImpedanceGrid, p.ImpedanceGrid)
	setBool(&c.AdmittanceGrid, p.AdmittanceGrid)
	setBool(&c.ShowAngleScale, p.ShowAngleScale)
	setBool(&c.ShowWavelengthScale, p.ShowWavelengthScale)
	if v := p.Zoom; v != nil {
		if !finite(*v) || *v < 1 || *v > MaxZoom {
			return invalid(op, "chart.zoom", "%g is not within 1–%d", *v, MaxZoom)
		}
		c.Zoom = *v
	}
	if v := p.VSWRCircle; v != nil {
		if !finite(*v) || (*v != 0 && *v <= 1) || *v > 1e6 {
			return invalid(op, "chart.vswrCircle", "%g: give 0 (off) or a VSWR above 1", *v)
		}
		c.VSWRCircle = *v
	}
	if v := p.ReturnLossCircleDB; v != nil {
		if !finite(*v) || *v < 0 || *v > 200 {
			return invalid(op, "chart.returnLossCircleDB", "%g dB: give 0 (off) or a return loss up to 200 dB", *v)
		}
		c.ReturnLossCircleDB = *v
	}
	if v := p.QArcs; v != nil {
		if len(*v) > lim.QArcs {
			return invalid(op, "chart.qArcs", "%d arcs, the limit is %d", len(*v), lim.QArcs)
		}
		for i, q := range *v {
			if !finite(q) || q <= 0 || q > 1e6 {
				return invalid(op, "chart.qArcs", "arc %d: Q = %g must be positive and finite", i+1, q)
			}
		}
		c.QArcs = slices.Clone(*v)
	}
	return nil
}

// snapFreq returns the frequency of the point of a trace nearest to the Γ
// point g: searched whole (window < 0) or near the point of fromHz.
func (st *Store) snapFreq(op, sid string, ref SweepRef, port int, g Point, fromHz float64, window int) (float64, error) {
	if !finite(g.Re) || !finite(g.Im) {
		return 0, invalid(op, "gamma", "(%g, %g) is not a finite point", g.Re, g.Im)
	}
	e, err := st.sweep(sid, ref.ID)
	if err != nil {
		return 0, err
	}
	freq := e.sw.FreqHz
	n := len(freq)
	near := 0
	if window >= 0 {
		k, t, err := e.sw.Locate(min(max(fromHz, freq[0]), freq[n-1]))
		if err != nil {
			return 0, invalid(op, "gamma", "%v", err)
		}
		near = k
		if t >= 0.5 {
			near = k + 1
		}
		if window == 0 {
			window = max(MinSnapWindow, n/SnapWindowDivisor)
		}
	}
	k, t := rfmath.SnapToTrace(e.trace(port), complex(g.Re, g.Im), near, window)
	if n == 1 {
		return freq[0], nil
	}
	return freq[k] + t*(freq[k+1]-freq[k]), nil
}

// pinFreq checks that f is a finite frequency and pins it into the sweep.
func pinFreq(op string, ref SweepRef, f float64) (float64, error) {
	if !finite(f) {
		return 0, invalid(op, "freqHz", "%g is not a finite frequency", f)
	}
	return min(max(f, ref.FminHz), ref.FmaxHz), nil
}

// stepIndex returns the index of the measured point n points from fHz
// (n > 0 upwards), pinned into the sweep. From between two points, the first
// step goes to the neighbour in that direction.
func stepIndex(sw *rfmath.Sweep, fHz float64, n int) int {
	last := sw.Len() - 1
	fHz = min(max(fHz, sw.FreqHz[0]), sw.FreqHz[last])
	k, t, err := sw.Locate(fHz)
	if err != nil || last == 0 {
		return 0
	}
	n = min(max(n, -last-1), last+1) // so that k+1+n cannot overflow (found by FuzzChange)
	var j int
	switch {
	case t == 0:
		j = k + n
	case t == 1:
		j = k + 1 + n
	case n > 0:
		j = k + n
	default:
		j = k + 1 + n
	}
	return min(max(j, 0), last)
}

// deepestDip returns the index of the measured point of highest return
// loss with lo ≤ f ≤ hi (by [rfmath.DeepestDip] over those points), or −1
// when no point lies in the range. The measured point, not the refined
// frequency, is used so that the marker's readout shows that return loss.
func deepestDip(freq []float64, gamma []complex128, lo, hi float64) int {
	i0 := sort.SearchFloat64s(freq, lo)
	i1 := sort.Search(len(freq), func(i int) bool { return freq[i] > hi })
	if i0 >= i1 {
		return -1
	}
	d := rfmath.DeepestDip(freq[i0:i1], gamma[i0:i1])
	if d.Index < 0 {
		return -1
	}
	return i0 + d.Index
}

func checkRange(op string, lo, hi float64) error {
	if !finite(lo) || lo < 0 {
		return invalid(op, "loHz", "%g is not a finite frequency ≥ 0", lo)
	}
	if !finite(hi) {
		return invalid(op, "hiHz", "%g is not a finite frequency", hi)
	}
	if lo >= hi {
		return invalid(op, "hiHz", "the range %g–%g Hz is empty: lo must be below hi", lo, hi)
	}
	return nil
}

// text checks a name or label: valid UTF-8 without control characters, at
// most maxRunes runes after trimming spaces; required means not empty.
func text(op, field, s string, required bool, maxRunes int) (string, error) {
	if !utf8.ValidString(s) {
		return "", invalid(op, field, "not valid UTF-8")
	}
	s = strings.TrimSpace(s)
	if required && s == "" {
		return "", invalid(op, field, "must not be empty")
	}
	if n := utf8.RuneCountInString(s); n > maxRunes {
		return "", invalid(op, field, "%d characters, the limit is %d", n, maxRunes)
	}
	if i := strings.IndexFunc(s, unicode.IsControl); i >= 0 {
		return "", invalid(op, field, "control character %U at byte %d", []rune(s[i:])[0], i)
	}
	if i := strings.IndexFunc(s, isBidiControl); i >= 0 {
		return "", invalid(op, field, "bidirectional control character %U at byte %d: it can make a name read differently from what it is (a file name's ending shown reversed, say)", []rune(s[i:])[0], i)
	}
	return s, nil
}

// isBidiControl reports whether r is a bidirectional control character:
// Unicode's Bidi_Control property (PropList.txt, through Go's unicode
// tables: U+061C, U+200E–U+200F, U+202A–U+202E, U+2066–U+2069), the
// embeddings, overrides, isolates and marks of the Bidirectional Algorithm
// (Unicode Standard Annex #9). Names holding them are refused:
// "report\u202Efdp.exe" shows as "reportexe.pdf".
func isBidiControl(r rune) bool { return unicode.Is(unicode.Bidi_Control, r) }

// checkColor accepts "#rrggbb" (any case) and returns it in lower case.
func checkColor(op, c string) (string, error) {
	if len(c) != 7 || c[0] != '#' {
		return "", invalid(op, "color", "%q is not a colour of the form #rrggbb", c)
	}
	if _, err := strconv.ParseUint(c[1:], 16, 32); err != nil {
		return "", invalid(op, "color", "%q is not a colour of the form #rrggbb", c)
	}
	return strings.ToLower(c), nil
}

// pickColor returns the first palette colour no sweep uses, or cycles.
func pickColor(sweeps []SweepRef) string {
	for _, c := range Palette {
		if !slices.ContainsFunc(sweeps, func(s SweepRef) bool { return s.Color == c }) {
			return c
		}
	}
	return Palette[len(sweeps)%len(Palette)]
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
