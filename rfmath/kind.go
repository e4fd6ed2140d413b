package rfmath

// PartKind names a part of a matching ladder by what it is and how it is
// placed. It is the one spelling of part kinds in matchbench: the session
// state, the search, the command line's JSON and the chart's drag all use
// these strings.
type PartKind string

// Kinds of part. The strings are part of the stored sessions and of the
// command line's JSON; never rename them.
const (
	PartSeriesL PartKind = "series_L"
	PartSeriesC PartKind = "series_C"
	PartSeriesR PartKind = "series_R"
	PartShuntL  PartKind = "shunt_L"
	PartShuntC  PartKind = "shunt_C"
	PartShuntR  PartKind = "shunt_R"
	// PartLine is a section of transmission line in series; its value is
	// its length in metres.
	PartLine PartKind = "line"
	// PartStubOpen and PartStubShort are stubs across the line; their value
	// is the length in metres.
	PartStubOpen  PartKind = "stub_open"
	PartStubShort PartKind = "stub_short"
	// PartTransformer is an ideal transformer; its value is the turns ratio
	// n (source side : load side).
	PartTransformer PartKind = "transformer"
)

// PartKinds lists every kind, in the order a panel offers them.
var PartKinds = []PartKind{PartSeriesL, PartSeriesC, PartShuntL, PartShuntC, PartSeriesR, PartShuntR, PartLine, PartStubOpen, PartStubShort, PartTransformer}

// Component is the kind of a lumped component without its place.
type Component string

// Kinds of lumped component.
const (
	ComponentL Component = "L" // inductor; values in henries
	ComponentC Component = "C" // capacitor; values in farads
	ComponentR Component = "R" // resistor; values in ohms
)

// Valid reports whether k is one of the kinds above.
func (k PartKind) Valid() bool {
	for _, x := range PartKinds {
		if k == x {
			return true
		}
	}
	return false
}

// Shunt reports whether the part sits across the line (shunt parts and
// stubs) rather than in series with it.
func (k PartKind) Shunt() bool {
	switch k {
	case PartShuntL, PartShuntC, PartShuntR, PartStubOpen, PartStubShort:
		return true
	}
	return false
}

// Component returns the lumped component of the kind (L, C or R), or ""
// for lines, stubs and transformers.
func (k PartKind) Component() Component {
	switch k {
	case PartSeriesL, PartShuntL:
		return ComponentL
	case PartSeriesC, PartShuntC:
		return ComponentC
	case PartSeriesR, PartShuntR:
		return ComponentR
	}
	return ""
}

// Reactive reports whether the kind is a series or shunt inductor or
// capacitor: the parts whose point can be dragged along a circle of
// constant resistance or conductance.
func (k PartKind) Reactive() bool {
	c := k.Component()
	return c == ComponentL || c == ComponentC
}

// Unit returns the unit of the kind's value: "H", "F", "Ω", "m" or "" (a
// ratio).
func (k PartKind) Unit() string {
	switch k.Component() {
	case ComponentL:
		return "H"
	case ComponentC:
		return "F"
	case ComponentR:
		return "Ω"
	}
	switch k {
	case PartLine, PartStubOpen, PartStubShort:
		return "m"
	}
	return ""
}
