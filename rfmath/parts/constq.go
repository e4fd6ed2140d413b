package parts

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"matchbench/rfmath"
)

// ConstantQ is the [Model] of what-if parts of a constant unloaded Q: each
// inductor or capacitor is its ideal reactance X in series with
// R = |X|/Q at every frequency, with no self-resonance. QL is the Q of the
// inductors and QC of the capacitors; a Q of zero (or less) makes that kind
// lossless. Resistors are ideal. It shows how a design depends on the
// quality of its parts, apart from any real part's behaviour.
type ConstantQ struct {
	QL, QC float64
}

// constQRefHz is the reference frequency of the constant-Q parts' loss
// laws; any frequency gives the same parts.
const constQRefHz = 1e9

// Part returns the part of kind k and value v: an [Inductor] whose series
// resistance grows as f ([Linear]), a [Capacitor] whose ESR falls as 1/f
// (ConstantQ), or an [IdealResistor]. An unknown kind panics.
func (m ConstantQ) Part(k Kind, v float64) rfmath.Part {
	switch k {
	case KindL:
		if !(m.QL > 0) {
			return IdealInductor{v}
		}
		return Inductor{LH: v, Q: m.QL, QRefHz: constQRefHz, RLaw: Linear}
	case KindC:
		if !(m.QC > 0) {
			return IdealCapacitor{v}
		}
		return Capacitor{CF: v, Q: m.QC, QRefHz: constQRefHz, ConstantQ: true}
	case KindR:
		return IdealResistor{v}
	}
	panic(badKind)
}

// String returns e.g. "constant Q (L 30, C 300)".
func (m ConstantQ) String() string {
	q := func(v float64) string {
		if !(v > 0) {
			return "lossless"
		}
		return strconv.FormatFloat(v, 'g', 4, 64)
	}
	return fmt.Sprintf("constant Q (L %s, C %s)", q(m.QL), q(m.QC))
}

// ParseConstantQ reads "L=30,C=300" (either may be left out, meaning
// lossless; "30" alone sets both). A Q must be a positive number.
func ParseConstantQ(s string) (ConstantQ, error) {
	var m ConstantQ
	s = strings.TrimSpace(s)
	if s == "" {
		return m, fmt.Errorf("parts: empty Q; want L=30,C=300")
	}
	num := func(t string) (float64, error) {
		v, err := strconv.ParseFloat(strings.TrimSpace(t), 64)
		if err != nil || !(v > 0) || math.IsInf(v, 0) {
			return 0, fmt.Errorf("parts: Q %q is not a positive number", strings.TrimSpace(t))
		}
		return v, nil
	}
	if !strings.Contains(s, "=") {
		v, err := num(s)
		return ConstantQ{v, v}, err
	}
	for _, kv := range strings.Split(s, ",") {
		k, v, ok := strings.Cut(strings.TrimSpace(kv), "=")
		if !ok {
			return m, fmt.Errorf("parts: %q: want L=30,C=300", kv)
		}
		q, err := num(v)
		if err != nil {
			return m, err
		}
		switch strings.ToUpper(strings.TrimSpace(k)) {
		case "L":
			m.QL = q
		case "C":
			m.QC = q
		default:
			return m, fmt.Errorf("parts: unknown part kind %q in a Q (L or C)", k)
		}
	}
	return m, nil
}

// ConstantQName is the name [LookupModel] knows the constant-Q model by.
const ConstantQName = "constq"

// DefaultConstantQ is the constant-Q model a part named only "constq" is
// made by: Q 30 for inductors and 300 for capacitors, round what-if figures
// in the range of small chip parts (from memory), not any part's data. A
// part's own Q replaces them.
var DefaultConstantQ = ConstantQ{QL: 30, QC: 300}

// LookupModel returns the model named name: "" or "ideal" for [Ideal], a
// family's name ("0402", "0603") for its typical parts, or "constq" for
// [DefaultConstantQ]. An unknown name returns an error wrapping
// [ErrUnknownFamily].
func LookupModel(name string) (Model, error) {
	switch n := strings.TrimSpace(name); n {
	case "", "ideal":
		return Ideal, nil
	case ConstantQName:
		return DefaultConstantQ, nil
	}
	f, err := LookupFamily(name)
	if err != nil {
		return nil, fmt.Errorf("%w, ideal or %s", err, ConstantQName)
	}
	return f, nil
}
