package match

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"strconv"
	"strings"

	"matchbench/rfmath"
	"matchbench/rfmath/parts"
)

// # The network file
//
// A network file (NET.json) holds a design network and, optionally, its
// layout on the board, as JSON. It is the one file form of a network in
// matchbench: `matchbench tune --network` reads it, the web app exports
// the active network in it, and a design object printed by `matchbench
// match --json` is one as it stands (its other keys are ignored). An
// object:
//
//	{
//	  "parts": [                          from the load toward the source
//	    {"kind": "shunt_L", "value": 1.8e-9, "series": "E24", "model": "0402"},
//	    …
//	  ],
//	  "model": "typical 0402",            the model of parts that name none
//	  "layout": {                         optional: the board
//	    "footprint": "0402",              "0402", "0603" or "none"
//	    "pad_cf": 0.1e-12,                optional: each pad's capacitance, over the footprint's
//	    "traces": [
//	      {"gap": 2, "length_m": 1e-3, "z0_ohm": 53.1, "eps_eff": 3.18},
//	      {"gap": 0, "length_m": 2e-3, "width_m": 0.36e-3, "height_m": 0.2e-3, "eps_r": 4.2}
//	    ]
//	  }
//	}
//
// A part's "kind" is one of the [Kind] strings (series_L, shunt_C, line,
// …), "value" is in SI units (henries, farads, ohms, metres, or a ratio),
// "series" the E-series its value is bought from, "model" its part model
// as [parts.LookupModel] names them ("", "ideal", "0402", "0603",
// "constq") and "params" its own figures (see [Part]). The top-level
// "model" may also be written as `match` prints it: "ideal", "typical
// 0402", or "constant Q (L 30, C 300)". A trace gives either its
// characteristic impedance and effective permittivity, or its width over a
// substrate of given height and relative permittivity ([Microstrip]); its
// gap is as in [Trace]. A file holding a JSON array of such objects (the
// whole output of `match --json`) holds several networks.

// NetworkFile is the JSON form of a network file (see above).
type NetworkFile struct {
	Parts  []PartFile  `json:"parts"`
	Model  string      `json:"model,omitempty"`
	Layout *LayoutFile `json:"layout,omitempty"`
}

// PartFile is one part of a [NetworkFile].
type PartFile struct {
	Kind   string             `json:"kind"`
	Value  float64            `json:"value"`
	Series string             `json:"series,omitempty"`
	Model  string             `json:"model,omitempty"`
	Params map[string]float64 `json:"params,omitempty"`
}

// LayoutFile is the layout of a [NetworkFile].
type LayoutFile struct {
	Footprint string      `json:"footprint,omitempty"`
	PadCF     *float64    `json:"pad_cf,omitempty"`
	Traces    []TraceFile `json:"traces,omitempty"`
}

// TraceFile is one trace of a [LayoutFile].
type TraceFile struct {
	Gap     int     `json:"gap"`
	LengthM float64 `json:"length_m"`
	Z0Ohm   float64 `json:"z0_ohm,omitempty"`
	EpsEff  float64 `json:"eps_eff,omitempty"`
	WidthM  float64 `json:"width_m,omitempty"`
	HeightM float64 `json:"height_m,omitempty"`
	EpsR    float64 `json:"eps_r,omitempty"`
}

// ParamNames lists the figures a part may carry in its Params (see
// [Part]), each with the range it must lie in.
var ParamNames = map[string]func(v float64) bool{
	"q":          func(v float64) bool { return v >= 0 && v < 1e6 },
	"qRefHz":     func(v float64) bool { return v > 0 },
	"srfHz":      func(v float64) bool { return v >= 0 },
	"esrOhm":     func(v float64) bool { return v >= 0 && v < 1e6 },
	"z0Ohm":      func(v float64) bool { return v > 0 && v < 1e6 },
	"vf":         func(v float64) bool { return v > 0 && v <= 1 },
	"lossDBPerM": func(v float64) bool { return v >= 0 && v < 1e4 },
	"lossRefHz":  func(v float64) bool { return v > 0 },
	"tolRel":     func(v float64) bool { return v >= 0 && v < 1 },
	"tolAbs":     func(v float64) bool { return v >= 0 },
	"maxV":       func(v float64) bool { return v > 0 },
	"maxA":       func(v float64) bool { return v > 0 },
}

// ModelName returns the name of a part model as `matchbench match` prints
// it and a network file's top-level "model" holds: "ideal", "typical
// 0402", "constant Q (L 30, C 300)".
func ModelName(m parts.Model) string {
	switch m := m.(type) {
	case nil:
		return "ideal"
	case *parts.Family:
		return "typical " + m.Name
	case parts.ConstantQ:
		return m.String()
	}
	if m == parts.Ideal {
		return "ideal"
	}
	return fmt.Sprint(m)
}

// ParseModelName reads a part model written as [ModelName] writes it, or
// as [parts.LookupModel] names it.
func ParseModelName(s string) (parts.Model, error) {
	t := strings.TrimSpace(s)
	if rest, ok := strings.CutPrefix(t, "typical "); ok {
		t = strings.TrimSpace(rest)
	}
	if rest, ok := strings.CutPrefix(t, "constant Q"); ok {
		rest = strings.TrimSpace(rest)
		rest = strings.TrimSuffix(strings.TrimPrefix(rest, "("), ")")
		var cq parts.ConstantQ
		for _, kv := range strings.Split(rest, ",") {
			k, v, ok := strings.Cut(strings.TrimSpace(kv), " ")
			if !ok {
				return nil, fmt.Errorf("model %q: want constant Q (L 30, C 300)", s)
			}
			q := 0.0
			if v = strings.TrimSpace(v); v != "lossless" {
				var err error
				if q, err = strconv.ParseFloat(v, 64); err != nil || !(q > 0) || math.IsInf(q, 0) {
					return nil, fmt.Errorf("model %q: Q %q is not a positive number", s, v)
				}
			}
			switch k {
			case "L":
				cq.QL = q
			case "C":
				cq.QC = q
			default:
				return nil, fmt.Errorf("model %q: want constant Q (L 30, C 300)", s)
			}
		}
		return cq, nil
	}
	m, err := parts.LookupModel(t)
	if err != nil {
		return nil, fmt.Errorf("model %q: %w", s, err)
	}
	return m, nil
}

// partModelName names the model of one part as [parts.LookupModel] does,
// with the params that make a constant-Q part of its own Q.
func partModelName(p Part) (string, map[string]float64) {
	switch m := p.Model.(type) {
	case *parts.Family:
		return m.Name, p.Params
	case parts.ConstantQ:
		q := m.QC
		if p.Kind.Component() == parts.KindL {
			q = m.QL
		}
		if _, own := p.Params["q"]; own || !(q > 0) || m == parts.DefaultConstantQ {
			return parts.ConstantQName, p.Params
		}
		ps := map[string]float64{"q": q}
		for k, v := range p.Params {
			ps[k] = v
		}
		return parts.ConstantQName, ps
	}
	return "", p.Params
}

// FileOf returns the network n with its layout lay as a [NetworkFile]. A
// zero layout is left out.
func FileOf(n Network, lay Layout) NetworkFile {
	f := NetworkFile{Parts: make([]PartFile, len(n))}
	models := map[string]bool{}
	for i, p := range n {
		name, params := partModelName(p)
		f.Parts[i] = PartFile{Kind: string(p.Kind), Value: p.Value, Series: p.Series, Model: name, Params: params}
		if p.Kind.Component() != "" {
			models[ModelName(p.Model)] = true
		}
	}
	if len(models) == 1 {
		for m := range models {
			f.Model = m
		}
	}
	if !lay.IsZero() || lay.Footprint.Name != "" {
		lf := &LayoutFile{Footprint: lay.Footprint.Name}
		if typ, err := LookupFootprint(lay.Footprint.Name); err != nil || typ.PadCF != lay.Footprint.PadCF || lay.Footprint.Name == "" {
			c := lay.Footprint.PadCF
			lf.PadCF = &c
			if err != nil {
				lf.Footprint = ""
			}
		}
		for _, t := range lay.Traces {
			lf.Traces = append(lf.Traces, TraceFile{Gap: t.Gap, LengthM: t.LengthM, Z0Ohm: t.Z0Ohm, EpsEff: t.EpsEff})
		}
		f.Layout = lf
	}
	return f
}

// MarshalNetwork returns the network file of n on the layout lay,
// indented.
func MarshalNetwork(n Network, lay Layout) ([]byte, error) {
	b, err := json.MarshalIndent(FileOf(n, lay), "", "  ")
	if err != nil {
		return nil, err
	}
	return append(b, '\n'), nil
}

// Network returns the file's network and layout. Errors name the part or
// trace and the field, and wrap [ErrNetworkFile].
func (f NetworkFile) Network() (Network, Layout, error) {
	bad := func(format string, a ...any) error {
		return fmt.Errorf("%w: %s", ErrNetworkFile, fmt.Sprintf(format, a...))
	}
	if len(f.Parts) == 0 {
		return nil, Layout{}, bad(`no "parts"`)
	}
	var def parts.Model
	if f.Model != "" {
		m, err := ParseModelName(f.Model)
		if err != nil {
			return nil, Layout{}, bad("%v", err)
		}
		def = m
	}
	n := make(Network, len(f.Parts))
	for i, pf := range f.Parts {
		at := fmt.Sprintf("part %d", i+1)
		k := Kind(pf.Kind)
		if !k.Valid() {
			var names []string
			for _, x := range rfmath.PartKinds {
				names = append(names, string(x))
			}
			return nil, Layout{}, bad("%s: kind %q: want one of %s", at, pf.Kind, strings.Join(names, ", "))
		}
		if !(pf.Value > 0) || math.IsInf(pf.Value, 0) || pf.Value > 1e9 {
			return nil, Layout{}, bad("%s (%s): value %g is not a positive number", at, k, pf.Value)
		}
		p := Part{Kind: k, Value: pf.Value, Model: def}
		if s := strings.TrimSpace(pf.Series); s != "" {
			if k.Component() == "" {
				return nil, Layout{}, bad("%s: a %s has no standard values (series %q)", at, k, s)
			}
			ser, err := parts.Lookup(s)
			if err != nil {
				return nil, Layout{}, bad("%s: series: %v", at, err)
			}
			p.Series = ser.Name()
		}
		if pf.Model != "" {
			if k.Component() == "" {
				return nil, Layout{}, bad("%s: a %s has no part model (model %q)", at, k, pf.Model)
			}
			m, err := ParseModelName(pf.Model)
			if err != nil {
				return nil, Layout{}, bad("%s: %v", at, err)
			}
			p.Model = m
		}
		if k.Component() == "" {
			p.Model = nil
		}
		for name, v := range pf.Params {
			ok := ParamNames[name]
			if ok == nil {
				return nil, Layout{}, bad("%s: unknown parameter %q", at, name)
			}
			if math.IsNaN(v) || math.IsInf(v, 0) || !ok(v) {
				return nil, Layout{}, bad("%s: parameter %q = %g is out of range", at, name, v)
			}
		}
		if len(pf.Params) > 0 {
			p.Params = make(map[string]float64, len(pf.Params))
			for name, v := range pf.Params {
				p.Params[name] = v
			}
		}
		if _, err := p.Element(p.Value); err != nil {
			return nil, Layout{}, bad("%s: %s", at, detail(err, ErrPart))
		}
		n[i] = p
	}
	var lay Layout
	if lf := f.Layout; lf != nil {
		fp, err := LookupFootprint(lf.Footprint)
		if err != nil {
			return nil, Layout{}, bad("layout: %s", detail(err, ErrLayout))
		}
		if lf.PadCF != nil {
			if c := *lf.PadCF; !(c >= 0) || c > 100e-12 {
				return nil, Layout{}, bad("layout: pad_cf %g F is not within 0 to 100 pF", c)
			}
			fp.PadCF = *lf.PadCF
			if fp.Name == "" {
				fp.Name = "custom"
			}
		}
		lay.Footprint = fp
		for j, tf := range lf.Traces {
			at := fmt.Sprintf("layout: trace %d", j+1)
			t := Trace{Gap: tf.Gap, LengthM: tf.LengthM, Z0Ohm: tf.Z0Ohm, EpsEff: tf.EpsEff}
			ms := tf.WidthM != 0 || tf.HeightM != 0 || tf.EpsR != 0
			switch {
			case ms && (tf.Z0Ohm != 0 || tf.EpsEff != 0):
				return nil, Layout{}, bad("%s: give z0_ohm and eps_eff, or width_m, height_m and eps_r, not both", at)
			case ms:
				m := Microstrip{WidthM: tf.WidthM, HeightM: tf.HeightM, EpsR: tf.EpsR}
				if err := m.validate(); err != nil {
					return nil, Layout{}, bad("%s: %s", at, detail(err, ErrLayout))
				}
				t = m.Trace(tf.Gap, tf.LengthM)
			case t.EpsEff == 0:
				t.EpsEff = 1
			}
			lay.Traces = append(lay.Traces, t)
		}
		if err := lay.Validate(len(n)); err != nil {
			return nil, Layout{}, bad("layout: %s", detail(err, ErrLayout))
		}
	}
	return n, lay, nil
}

// UnmarshalNetworks reads a network file: one network object, or an
// array of them (the output of `matchbench match --json`). Errors say
// which network (for an array), which part or trace and which field, and
// wrap [ErrNetworkFile].
func UnmarshalNetworks(data []byte) ([]Network, []Layout, error) {
	data = bytes.TrimSpace(data)
	var files []NetworkFile
	if len(data) > 0 && data[0] == '[' {
		if err := strictUnmarshal(data, &files); err != nil {
			return nil, nil, err
		}
		if len(files) == 0 {
			return nil, nil, fmt.Errorf("%w: an empty array holds no network", ErrNetworkFile)
		}
	} else {
		var f NetworkFile
		if err := strictUnmarshal(data, &f); err != nil {
			return nil, nil, err
		}
		files = []NetworkFile{f}
	}
	ns := make([]Network, len(files))
	ls := make([]Layout, len(files))
	for i, f := range files {
		n, l, err := f.Network()
		if err != nil {
			if len(files) > 1 {
				return nil, nil, fmt.Errorf("network %d: %w", i+1, err)
			}
			return nil, nil, err
		}
		ns[i], ls[i] = n, l
	}
	return ns, ls, nil
}

// detail returns err's message without the sentinel's own words.
func detail(err, sentinel error) string {
	return strings.TrimPrefix(err.Error(), sentinel.Error()+": ")
}

// strictUnmarshal decodes JSON with an error that says where it failed.
func strictUnmarshal(data []byte, v any) error {
	if err := json.Unmarshal(data, v); err != nil {
		var se *json.SyntaxError
		var te *json.UnmarshalTypeError
		switch {
		case errors.As(err, &se):
			line, col := lineCol(data, se.Offset)
			return fmt.Errorf("%w: line %d, column %d: %v", ErrNetworkFile, line, col, err)
		case errors.As(err, &te):
			line, col := lineCol(data, te.Offset)
			return fmt.Errorf("%w: line %d, column %d: %q should be a %s, not a %s", ErrNetworkFile, line, col, te.Field, te.Type, te.Value)
		}
		return fmt.Errorf("%w: %v", ErrNetworkFile, err)
	}
	return nil
}

func lineCol(data []byte, off int64) (int, int) {
	line, col := 1, 1
	for i := int64(0); i < off && i < int64(len(data)); i++ {
		if data[i] == '\n' {
			line, col = line+1, 1
		} else {
			col++
		}
	}
	return line, col
}
