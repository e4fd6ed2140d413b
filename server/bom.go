package server

import (
	"cmp"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"

	"matchbench/rfmath"
	"matchbench/rfmath/match"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/units"
)

// bomLine is one line of the parts list for purchasing: the parts of one
// kind and value, bought alike, with their designators. The same lines make
// the CSV, the JSON and the report's table.
type bomLine struct {
	Designators  []string `json:"designators"`
	Quantity     int      `json:"quantity"`
	Part         string   `json:"part"`     // "capacitor", "inductor", "resistor", "line section", …
	Value        string   `json:"value"`    // as catalogues write it: "2.2pF", "12nH", "4.7kΩ"
	ValueSI      float64  `json:"value_si"` // farads, henries, ohms, metres or a ratio
	Unit         string   `json:"unit"`     // "F", "H", "Ω", "m" or "" (a ratio)
	Tolerance    string   `json:"tolerance"`
	Dielectric   string   `json:"dielectric,omitempty"`   // capacitors
	Construction string   `json:"construction,omitempty"` // inductors and resistors
	Size         string   `json:"size"`                   // case size: "0402", "0603"; "" when not chosen
	RatedVoltage float64  `json:"rated_voltage_v,omitempty"`
	RatedCurrent float64  `json:"rated_current_a,omitempty"`
	RatedPower   float64  `json:"rated_power_w,omitempty"`
	Series       string   `json:"series"` // IEC 60063 series of the value, "" for none
	Note         string   `json:"note"`
}

// bomHeader is the CSV's header row, in the order of bomLine.row.
var bomHeader = []string{"Designators", "Quantity", "Part", "Value", "Tolerance", "Dielectric or construction", "Size",
	"Rated voltage", "Rated current", "Rated power", "Series", "Note"}

// row is the line as the CSV and the report write it.
func (b bomLine) row() []string {
	rating := func(v float64, unit string) string {
		if v <= 0 {
			return ""
		}
		return units.Format(v, unit, 3)
	}
	return []string{strings.Join(b.Designators, ", "), strconv.Itoa(b.Quantity), b.Part, b.Value, b.Tolerance,
		cmp.Or(b.Dielectric, b.Construction), b.Size, rating(b.RatedVoltage, "V"), rating(b.RatedCurrent, "A"), rating(b.RatedPower, "W"), b.Series, b.Note}
}

// bom returns the parts list of the network as built, grouped: parts of the
// same kind, value and purchase figures are one line with their
// designators, in the order of their first designator from the load.
func bom(ne *netEval) []bomLine {
	var lines []bomLine
	index := map[string]int{}
	for i := range ne.n.Parts {
		b := bomOf(ne.built[i])
		d := designator(ne.n.Parts, i)
		key := strings.Join(b.row()[2:], "\x00")
		if j, ok := index[key]; ok {
			lines[j].Designators = append(lines[j].Designators, d)
			lines[j].Quantity++
			continue
		}
		b.Designators, b.Quantity = []string{d}, 1
		index[key] = len(lines)
		lines = append(lines, b)
	}
	for i := range lines {
		slices.SortFunc(lines[i].Designators, naturalOrder)
	}
	return lines
}

// naturalOrder sorts designators by prefix, then number: C2 before C10.
func naturalOrder(a, b string) int {
	split := func(s string) (string, int) {
		i := strings.IndexFunc(s, func(r rune) bool { return r >= '0' && r <= '9' })
		if i < 0 {
			return s, 0
		}
		n, _ := strconv.Atoi(s[i:])
		return s[:i], n
	}
	pa, na := split(a)
	pb, nb := split(b)
	return cmp.Or(cmp.Compare(pa, pb), cmp.Compare(na, nb))
}

// bomOf describes one part as built for purchasing.
func bomOf(p match.Part) bomLine {
	v := p.Value
	b := bomLine{ValueSI: v, Unit: p.Kind.Unit(), Series: p.Series}
	fam, _ := p.Model.(*parts.Family)
	if fam != nil {
		b.Size = fam.Name
	}
	var notes []string
	switch p.Kind.Component() {
	case rfmath.ComponentC:
		b.Part, b.Value = "capacitor", catalogueValue(v, "F")
		b.Dielectric = "C0G (NP0)" // as the typical models are; common practice for RF matching otherwise
	case rfmath.ComponentL:
		b.Part, b.Value = "inductor", catalogueValue(v, "H")
		b.Construction = "multilayer"
	case rfmath.ComponentR:
		b.Part, b.Value = "resistor", catalogueValue(v, "Ω")
		b.Construction = "thin film"
	}
	if k := p.Kind.Component(); k != "" {
		t := p.Tolerance()
		if t.Abs >= t.Rel*v {
			b.Tolerance = "±" + catalogueValue(t.Abs, p.Kind.Unit())
		} else {
			b.Tolerance = "±" + strconv.FormatFloat(100*t.Rel, 'g', 3, 64) + "%"
		}
		_, ownRel := p.Params["tolRel"]
		_, ownAbs := p.Params["tolAbs"]
		if !ownRel && !ownAbs {
			b.Tolerance += " (typical)"
		}
		rt := p.Rating(v)
		b.RatedVoltage, b.RatedCurrent, b.RatedPower = rt.MaxVoltageV, rt.MaxCurrentA, rt.MaxPowerW
		switch m := p.Model.(type) {
		case *parts.Family:
			notes = append(notes, "typical "+m.Name+" part (figures from memory, not a vendor's data): choose a part and check its data sheet")
			if k == rfmath.ComponentL {
				b.Construction = "multilayer (as the typical model)"
			}
		case parts.ConstantQ:
			notes = append(notes, "designed as a what-if part of "+m.String()+": choose a real part of at least that Q")
		default:
			notes = append(notes, "designed as an ideal part: choose a real part and check the design with its figures")
		}
		if _, ok := p.Params["q"]; ok {
			c := p.Component(v)
			switch c := c.(type) {
			case parts.Inductor:
				notes = append(notes, fmt.Sprintf("needs Q %.3g at %s", c.Q, units.FormatFrequency(c.QRefHz, 4)))
			case parts.Capacitor:
				notes = append(notes, fmt.Sprintf("needs Q %.3g at %s", c.Q, units.FormatFrequency(c.QRefHz, 4)))
			}
		}
		if s, ok := p.Params["srfHz"]; ok && s > 0 {
			notes = append(notes, "self-resonance "+units.FormatFrequency(s, 4))
		}
		if e, ok := p.Params["esrOhm"]; ok {
			notes = append(notes, "ESR "+strconv.FormatFloat(e, 'g', 3, 64)+" Ω")
		}
	} else {
		switch p.Kind {
		case match.Line:
			b.Part = "line section"
		case match.StubOpen:
			b.Part = "open stub"
		case match.StubShort:
			b.Part = "shorted stub"
		case match.Transformer:
			b.Part = "transformer"
		}
		if p.Kind == match.Transformer {
			b.Value = strconv.FormatFloat(v, 'g', 4, 64) + " : 1"
			b.Unit = ""
			notes = append(notes, "ideal turns ratio, source side to load side")
		} else {
			l := p.LineOf(v)
			b.Value = units.Format(v, "m", 4)
			notes = append(notes, fmt.Sprintf("on the board or a cable: Z0 %s, velocity factor %.3g", units.Format(l.Z0Ohm, "Ω", 4), l.VelocityFactor))
			if l.LossDBPerM > 0 {
				notes = append(notes, fmt.Sprintf("loss %.3g dB/m at %s", l.LossDBPerM, units.FormatFrequency(l.LossRefHz, 4)))
			}
		}
	}
	b.Note = strings.Join(notes, "; ")
	return b
}

// catalogueValue writes a value as parts catalogues do, without a space:
// capacitors in pF below 1 nF ("0.5pF", "2.2pF", "820pF"), nF and µF
// above; inductors in nH below 1 µH ("1.0nH" is written "1nH"); resistors
// in Ω, kΩ, MΩ. Three significant figures at most.
func catalogueValue(v float64, unit string) string {
	type step struct {
		below, div float64
		prefix     string
	}
	var steps []step
	switch unit {
	case "F":
		steps = []step{{1e-9, 1e-12, "p"}, {1e-6, 1e-9, "n"}, {1e-3, 1e-6, "µ"}, {math.Inf(1), 1e-3, "m"}}
	case "H":
		steps = []step{{1e-6, 1e-9, "n"}, {1e-3, 1e-6, "µ"}, {math.Inf(1), 1e-3, "m"}}
	case "Ω":
		steps = []step{{1e3, 1, ""}, {1e6, 1e3, "k"}, {math.Inf(1), 1e6, "M"}}
	default:
		return units.Format(v, unit, 3)
	}
	for _, s := range steps {
		if v < s.below*(1-1e-9) {
			return strconv.FormatFloat(roundSig(v/s.div, 3), 'f', -1, 64) + s.prefix + unit
		}
	}
	return units.Format(v, unit, 3)
}

// roundSig rounds v to n significant figures.
func roundSig(v float64, n int) float64 {
	if v == 0 {
		return 0
	}
	p := math.Pow(10, float64(n)-math.Ceil(math.Log10(math.Abs(v))))
	return math.Round(v*p) / p
}

// bomView is the parts list as the report shows it.
func bomView(lines []bomLine) ([]string, [][]string) {
	rows := make([][]string, len(lines))
	for i, b := range lines {
		rows[i] = b.row()
	}
	return bomHeader, rows
}
