package server

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"matchbench/rfmath/limits"
	"matchbench/rfmath/units"
	"matchbench/sessions"
)

// FieldError names the form field that could not be read.
type FieldError struct {
	Form, Field, Label string
	Err                error
}

func (e *FieldError) Error() string { return fmt.Sprintf("%s: %v", e.Label, e.Err) }
func (e *FieldError) Unwrap() error { return e.Err }

// formChange turns a panel's form, with its fields as typed, into a change.
// Frequencies accept SI prefixes ("868M", "2.4835 GHz").
func formChange(form string, f map[string]string) (sessions.Change, error) {
	r := newFieldReader(form, f)
	var ch sessions.Change
	switch form {
	case "marker.add":
		ch = markerAddForm(r)
	case "band.set":
		ch = bandSetForm(r)
	case "chart.set":
		ch = chartSetForm(r)
	case "session.rename":
		ch = sessions.Change{Op: sessions.OpSessionRename, Name: r.Text("name")}
	default:
		return sessions.Change{}, fmt.Errorf("unknown form %q", form)
	}
	if err := r.Err(); err != nil {
		return sessions.Change{}, err
	}
	return ch, nil
}

// markerAddForm reads the marker form: a trace ("sweep:port"), a frequency
// and a label.
func markerAddForm(r *fieldReader) sessions.Change {
	sweepID, portS, ok := strings.Cut(r.f["trace"], ":")
	port, err := strconv.Atoi(portS)
	if !ok || err != nil || sweepID == "" {
		r.Fail("trace", "Trace", fmt.Errorf("choose a trace"))
	}
	fr := r.Freq("freq", "Frequency")
	return sessions.Change{Op: sessions.OpMarkerAdd, SweepID: sweepID, Port: port, FreqHz: fr, Label: r.Text("label")}
}

// bandSetForm reads a band: its edges, its return-loss requirement and its
// power-to-the-load requirement (a share, "90 %" or "0.9"); a band with no
// name is named by its edges.
func bandSetForm(r *fieldReader) sessions.Change {
	lo := r.Freq("lo", "From")
	hi := r.Freq("hi", "To")
	rl := r.Opt("rl", "Return loss")
	var share float64
	if t := r.Text("minPower"); t != "" && r.Err() == nil {
		var err error
		if share, err = limits.ParseShare(t); err != nil {
			r.Fail("minPower", "Power to the load", err)
		}
	}
	name := r.Text("name")
	if name == "" {
		name = units.FormatFrequency(lo, 5) + " – " + units.FormatFrequency(hi, 5)
	}
	return sessions.Change{Op: sessions.OpBandSet, BandID: r.f["bandId"], Name: name, LoHz: lo, HiHz: hi, MinReturnLossDB: math.Abs(rl), MinPowerToLoad: share}
}

// chartSetForm reads the chart's settings: grids, scales, the VSWR and
// return-loss circles, the zoom of older pages and the Q arcs.
func chartSetForm(r *fieldReader) sessions.Change {
	p := &sessions.ChartPatch{}
	b := func(field string) *bool { v := r.f[field] == "true" || r.f[field] == "on"; return &v }
	p.ImpedanceGrid, p.AdmittanceGrid = b("impedanceGrid"), b("admittanceGrid")
	p.ShowAngleScale, p.ShowWavelengthScale = b("showAngleScale"), b("showWavelengthScale")
	vswr := r.Opt("vswrCircle", "VSWR circle")
	rl := math.Abs(r.Opt("returnLossCircleDB", "Return-loss circle"))
	p.VSWRCircle, p.ReturnLossCircleDB = &vswr, &rl
	if _, ok := r.f["zoom"]; ok { // the page zooms its own view now; older pages still send it
		zoom := r.Opt("zoom", "Zoom")
		if zoom == 0 {
			zoom = 1
		}
		p.Zoom = &zoom
	}
	q := []float64{} // no arcs: [] clears them; a nil slice would encode as null, "leave as is"
	for _, part := range strings.FieldsFunc(r.f["qArcs"], func(c rune) bool { return c == ',' || c == ';' || c == ' ' }) {
		v, err := strconv.ParseFloat(part, 64)
		if err != nil || !(v > 0) || math.IsInf(v, 0) {
			r.Fail("qArcs", "Q arcs", fmt.Errorf("%q is not a positive number", part))
			break
		}
		q = append(q, v)
	}
	p.QArcs = &q
	return sessions.Change{Op: sessions.OpChartSet, Chart: p}
}
