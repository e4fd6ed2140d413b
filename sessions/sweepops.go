package sessions

import (
	"path"
	"slices"
	"strconv"
	"strings"
)

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
