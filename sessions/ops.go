package sessions

import (
	"math"
	"slices"
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

// computeSessionRename applies session.rename: the session takes the name
// given.
func computeSessionRename(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	name, err := text(op, "name", ch.Name, true, lim.TextRunes)
	if err != nil {
		return err
	}
	next.Name = name
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

// computeSearchStore applies search.store: a search's result, its designs'
// parts checked and copied without their ids.
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

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }
