package deembed

import "matchbench/rfmath"

// Plane is a move of the reference plane as its steps, always taken in
// this order: the fixtures are removed (each port's, see [Remove]), then
// the port extensions applied ([Extend]), then the sweep renormalised to
// one reference ([RenormalizeAll]). The command line's deembed and the web
// app's reference-plane panel both move a sweep's plane through it, so the
// order is written once.
type Plane struct {
	// Fixtures holds a fixture per port (a nil S leaves that port); empty
	// means none.
	Fixtures []Fixture
	// Extensions holds a port extension per port (zero leaves that port);
	// empty means none.
	Extensions []Extension
	// RenormOhm is the one reference the result is renormalised to; zero
	// keeps the sweep's references.
	RenormOhm float64
}

// IsZero reports whether p moves nothing.
func (p Plane) IsZero() bool {
	return !p.hasFixture() && !p.hasExtension() && p.RenormOhm == 0
}

func (p Plane) hasFixture() bool {
	for _, f := range p.Fixtures {
		if f.S != nil {
			return true
		}
	}
	return false
}

func (p Plane) hasExtension() bool {
	for _, e := range p.Extensions {
		if e.DelayS != 0 || e.LossDB != 0 || e.FlatLossDB != 0 {
			return true
		}
	}
	return false
}

// Apply returns s at the new reference plane, a new sweep (s itself when p
// moves nothing). Fixtures and Extensions, when not empty, need one entry
// per port of s: another length panics, as in [Remove] and [Extend]. The
// errors are those of the steps.
func (p Plane) Apply(s *rfmath.Sweep) (*rfmath.Sweep, error) {
	var err error
	if p.hasFixture() {
		if s, err = Remove(s, p.Fixtures); err != nil {
			return nil, err
		}
	}
	if p.hasExtension() {
		s = Extend(s, p.Extensions)
	}
	if p.RenormOhm > 0 {
		if s, err = RenormalizeAll(s, p.RenormOhm); err != nil {
			return nil, err
		}
	}
	return s, nil
}
