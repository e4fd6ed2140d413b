package sessions

import (
	"slices"
	"sort"

	"matchbench/rfmath"
)

// computeMarkerAdd applies marker.add: a new marker on a trace of a sweep
// (port 1 unless given), at the point of the trace nearest the Γ point
// given, else at the frequency given, pinned into the sweep. It is refused
// past the trace's count of markers.
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
