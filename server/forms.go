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
	fe := func(field, label string, err error) error { return &FieldError{form, field, label, err} }
	freq := func(field, label string) (float64, error) {
		v, err := units.ParseFrequency(f[field])
		if err != nil {
			return 0, fe(field, label, err)
		}
		return v, nil
	}
	num := func(field, label string, emptyIsZero bool) (float64, error) {
		s := strings.TrimSpace(f[field])
		if s == "" || strings.EqualFold(s, "off") {
			if emptyIsZero {
				return 0, nil
			}
			return 0, fe(field, label, fmt.Errorf("a number is needed"))
		}
		v, err := strconv.ParseFloat(s, 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return 0, fe(field, label, fmt.Errorf("%q is not a number", s))
		}
		return v, nil
	}
	switch form {
	case "marker.add":
		sweepID, portS, ok := strings.Cut(f["trace"], ":")
		port, err := strconv.Atoi(portS)
		if !ok || err != nil || sweepID == "" {
			return sessions.Change{}, fe("trace", "Trace", fmt.Errorf("choose a trace"))
		}
		fr, err := freq("freq", "Frequency")
		if err != nil {
			return sessions.Change{}, err
		}
		return sessions.Change{Op: sessions.OpMarkerAdd, SweepID: sweepID, Port: port, FreqHz: fr, Label: strings.TrimSpace(f["label"])}, nil
	case "band.set":
		lo, err := freq("lo", "From")
		if err != nil {
			return sessions.Change{}, err
		}
		hi, err := freq("hi", "To")
		if err != nil {
			return sessions.Change{}, err
		}
		rl, err := num("rl", "Return loss", true)
		if err != nil {
			return sessions.Change{}, err
		}
		var share float64
		if t := strings.TrimSpace(f["minPower"]); t != "" {
			if share, err = limits.ParseShare(t); err != nil {
				return sessions.Change{}, &FieldError{form, "minPower", "Power to the load", err}
			}
		}
		name := strings.TrimSpace(f["name"])
		if name == "" {
			name = units.FormatFrequency(lo, 5) + " – " + units.FormatFrequency(hi, 5)
		}
		return sessions.Change{Op: sessions.OpBandSet, BandID: f["bandId"], Name: name, LoHz: lo, HiHz: hi, MinReturnLossDB: math.Abs(rl), MinPowerToLoad: share}, nil
	case "chart.set":
		p := &sessions.ChartPatch{}
		b := func(field string) *bool { v := f[field] == "true" || f[field] == "on"; return &v }
		p.ImpedanceGrid, p.AdmittanceGrid = b("impedanceGrid"), b("admittanceGrid")
		p.ShowAngleScale, p.ShowWavelengthScale = b("showAngleScale"), b("showWavelengthScale")
		vswr, err := num("vswrCircle", "VSWR circle", true)
		if err != nil {
			return sessions.Change{}, err
		}
		rl, err := num("returnLossCircleDB", "Return-loss circle", true)
		if err != nil {
			return sessions.Change{}, err
		}
		rl = math.Abs(rl)
		p.VSWRCircle, p.ReturnLossCircleDB = &vswr, &rl
		if _, ok := f["zoom"]; ok { // the page zooms its own view now; older pages still send it
			zoom, err := num("zoom", "Zoom", true)
			if err != nil {
				return sessions.Change{}, err
			}
			if zoom == 0 {
				zoom = 1
			}
			p.Zoom = &zoom
		}
		q := []float64{} // no arcs: [] clears them; a nil slice would encode as null, "leave as is"
		for _, part := range strings.FieldsFunc(f["qArcs"], func(r rune) bool { return r == ',' || r == ';' || r == ' ' }) {
			v, err := strconv.ParseFloat(part, 64)
			if err != nil || !(v > 0) || math.IsInf(v, 0) {
				return sessions.Change{}, fe("qArcs", "Q arcs", fmt.Errorf("%q is not a positive number", part))
			}
			q = append(q, v)
		}
		p.QArcs = &q
		return sessions.Change{Op: sessions.OpChartSet, Chart: p}, nil
	case "session.rename":
		return sessions.Change{Op: sessions.OpSessionRename, Name: strings.TrimSpace(f["name"])}, nil
	}
	return sessions.Change{}, fmt.Errorf("unknown form %q", form)
}
