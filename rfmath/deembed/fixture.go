package deembed

import (
	"fmt"
	"math"
	"math/cmplx"

	"matchbench/rfmath"
)

// Fixture is a 2-port between an analyser port and the device: an adapter, a
// cable, a test jig. S holds its S-parameters as measured or modelled.
type Fixture struct {
	// S is the fixture's 2-port sweep. A nil S means no fixture.
	S *rfmath.Sweep
	// AnalyserPort is the fixture's port (1 or 2) that faces the analyser;
	// the other faces the device. 0 means 1.
	AnalyserPort int
}

// Remove returns the device seen through the fixtures: a new sweep on the
// frequencies of meas with fix[p] removed from port p+1. meas is a 1-port or
// a 2-port; a Fixture with a nil S leaves its port as it is. meas and the
// fixtures are not modified.
//
// Each fixture X, oriented with port 1 at the analyser, is removed by
// cascading its inverse. For a 1-port the measured Γm = X11 + X12·X21·ΓL/
// (1 − X22·ΓL) is solved for the device's ΓL:
//
//	ΓL = (Γm − X11) / (X12·X21 + X22·(Γm − X11))
//
// For a 2-port measured as M = X ⋆ D ⋆ Y (⋆ the cascade of
// [rfmath.CascadeS]; Y is the port-2 fixture turned to face the device with
// its port 1), the device is D = X⁻¹ ⋆ M ⋆ Y⁻¹, where the inverse network
// is the one whose ABCD matrix is the inverse of the fixture's
// (Pozar, Microwave Engineering, Section 4.4, for the chain matrix; from
// memory). The cascade is made on waves, so a device that transmits
// nothing (S21 = 0) comes out right.
//
// A fixture is used only between its first and last frequency; between its
// points each S-parameter is interpolated linearly in magnitude and in
// phase (along the shorter arc), which follows the turning transmission of a
// cable better than interpolating real and imaginary parts. If meas has
// frequencies outside a fixture, Remove returns a [*CoverageError] naming
// them. Fixture references that differ from meas's at that port are
// renormalised to it first; the result keeps meas's references.
//
// Errors: [ErrPorts] for a meas of more than 2 ports or a fixture that is not
// a 2-port; [ErrSingular] for a fixture that transmits nothing at some
// frequency (S12·S21 = 0) or a cascade without a solution. A fix whose
// length is not meas.Ports, or an AnalyserPort other than 0, 1 or 2, panics.
func Remove(meas *rfmath.Sweep, fix []Fixture) (*rfmath.Sweep, error) {
	if err := checkFixtures(meas, fix, "removed from"); err != nil {
		return nil, err
	}
	out := meas.Clone()
	var inv [2][4]complex128 // S of the inverse network at each port
	var x [4]complex128
	for k, f := range meas.FreqHz {
		for p, fx := range fix {
			if fx.S == nil {
				continue
			}
			if err := fixtureAt(&x, fx, f, meas.Z0[p]); err != nil {
				return nil, fmt.Errorf("port %d at %s: %w", p+1, fmtHz(f), err)
			}
			if meas.Ports == 1 {
				g := meas.Data[k]
				d := g - x[0]
				den := x[1]*x[2] + x[3]*d
				if den == 0 || x[1]*x[2] == 0 {
					return nil, fmt.Errorf("%w: at %s the fixture transmits nothing (S12·S21 = 0)", ErrSingular, fmtHz(f))
				}
				out.Data[k] = d / den
				continue
			}
			if p == 1 {
				// Turn the port-2 fixture so that its port 1 faces the
				// device: the cascade runs device → fixture → analyser.
				x = [4]complex128{x[3], x[2], x[1], x[0]}
			}
			iv, err := inverse(x, meas.Z0[p])
			if err != nil {
				return nil, fmt.Errorf("%w at %s", err, fmtHz(f))
			}
			inv[p] = iv
		}
		if meas.Ports == 1 {
			continue
		}
		m := meas.Matrix(k)
		d := [4]complex128{m[0], m[1], m[2], m[3]}
		if fix[0].S != nil {
			var ok bool
			if d, ok = cascade(inv[0], d); !ok {
				return nil, fmt.Errorf("%w: the cascade with the inverse of the port-1 fixture has no solution at %s", ErrSingular, fmtHz(f))
			}
		}
		if fix[1].S != nil {
			var ok bool
			if d, ok = cascade(d, inv[1]); !ok {
				return nil, fmt.Errorf("%w: the cascade with the inverse of the port-2 fixture has no solution at %s", ErrSingular, fmtHz(f))
			}
		}
		copy(out.Matrix(k), d[:])
	}
	return out, nil
}

// Embed returns dev seen through the fixtures: the opposite of [Remove],
// for building test cases and for previewing a fixture. The conventions are
// those of Remove; Embed also refuses to extrapolate a fixture.
func Embed(dev *rfmath.Sweep, fix []Fixture) (*rfmath.Sweep, error) {
	if err := checkFixtures(dev, fix, "added to"); err != nil {
		return nil, err
	}
	out := dev.Clone()
	var x [4]complex128
	for k, f := range dev.FreqHz {
		m := out.Matrix(k)
		for p, fx := range fix {
			if fx.S == nil {
				continue
			}
			if err := fixtureAt(&x, fx, f, dev.Z0[p]); err != nil {
				return nil, fmt.Errorf("port %d at %s: %w", p+1, fmtHz(f), err)
			}
			if dev.Ports == 1 {
				g := m[0]
				m[0] = x[0] + x[1]*x[2]*g/(1-x[3]*g)
				continue
			}
			d := [4]complex128{m[0], m[1], m[2], m[3]}
			var ok bool
			if p == 0 {
				d, ok = cascade(x, d)
			} else {
				d, ok = cascade(d, [4]complex128{x[3], x[2], x[1], x[0]})
			}
			if !ok {
				return nil, fmt.Errorf("%w: the cascade with the fixture at port %d has no solution at %s", ErrSingular, p+1, fmtHz(f))
			}
			copy(m, d[:])
		}
	}
	return out, nil
}

// covers returns a *CoverageError if any of freqHz lies outside the
// fixture's frequencies.
func covers(fx *rfmath.Sweep, freqHz []float64, port int) error {
	n := fx.Len()
	if n == 0 {
		return fmt.Errorf("%w: the fixture at port %d has no points", ErrCoverage, port)
	}
	lo, hi := fx.FreqHz[0], fx.FreqHz[n-1]
	e := &CoverageError{Port: port, FixtureLoHz: lo, FixtureHiHz: hi}
	for _, f := range freqHz {
		switch {
		case f < lo:
			e.Below = append(e.Below, f)
		case f > hi:
			e.Above = append(e.Above, f)
		}
	}
	if len(e.Below)+len(e.Above) > 0 {
		return e
	}
	return nil
}

// fixtureAt sets x to the fixture's S-matrix at fHz, interpolated in
// magnitude and phase, turned so that index 0 is the analyser side, and
// renormalised to z0 at both ports if the fixture's references differ.
func fixtureAt(x *[4]complex128, fx Fixture, fHz, z0 float64) error {
	s := fx.S
	k, t, err := s.Locate(fHz)
	if err != nil {
		return err
	}
	a := s.Matrix(k)
	if t == 0 || s.Len() == 1 {
		copy(x[:], a)
	} else {
		b := s.Matrix(k + 1)
		for i := range x {
			x[i] = polarInterp(a[i], b[i], t)
		}
	}
	if fx.AnalyserPort == 2 {
		*x = [4]complex128{x[3], x[2], x[1], x[0]}
	}
	if s.Z0[0] != z0 || s.Z0[1] != z0 {
		from := []float64{s.Z0[0], s.Z0[1]}
		if fx.AnalyserPort == 2 {
			from[0], from[1] = from[1], from[0]
		}
		if _, err := rfmath.Renormalize(x[:], x[:], 2, from, []float64{z0, z0}); err != nil {
			return err
		}
	}
	return nil
}

// polarInterp interpolates between a and b at fraction t linearly in
// magnitude and in phase along the shorter arc. If either end is zero it
// interpolates real and imaginary parts.
func polarInterp(a, b complex128, t float64) complex128 {
	ma, mb := cmplx.Abs(a), cmplx.Abs(b)
	if ma == 0 || mb == 0 {
		return rfmath.Lerp(a, b, t)
	}
	pa := cmplx.Phase(a)
	d := cmplx.Phase(b) - pa
	d -= 2 * math.Pi * math.Round(d/(2*math.Pi))
	return cmplx.Rect(ma+t*(mb-ma), pa+t*d)
}

// inverse returns the S-matrix (reference z0 at both ports) of the network
// whose chain (ABCD) matrix is the inverse of that of x: cascaded in front of
// x it gives a through connection.
func inverse(x [4]complex128, z0 float64) ([4]complex128, error) {
	if x[1]*x[2] == 0 {
		return x, fmt.Errorf("%w: the fixture transmits nothing (S12·S21 = 0)", ErrSingular)
	}
	a := rfmath.SToABCD(x, z0, z0)
	det := a.Det()
	inv := rfmath.ABCD{a[3] / det, -a[1] / det, -a[2] / det, a[0] / det}
	s := rfmath.ABCDToS(inv, z0, z0)
	for _, v := range s {
		if cmplx.IsNaN(v) || cmplx.IsInf(v) {
			return x, fmt.Errorf("%w: the inverse of the fixture has no S-matrix", ErrSingular)
		}
	}
	return s, nil
}

// cascade returns a ⋆ b, or false when 1 − a22·b11 = 0.
func cascade(a, b [4]complex128) ([4]complex128, bool) {
	if 1-a[3]*b[0] == 0 {
		return a, false
	}
	return rfmath.CascadeS(a, b, 0), true
}

// checkFixtures checks the fixtures of [Remove] and [Embed] against the
// sweep s: its port count, each fixture's ports and frequency coverage.
// verb says what is done, for the error ("removed from", "added to").
func checkFixtures(s *rfmath.Sweep, fix []Fixture, verb string) error {
	if len(fix) != s.Ports {
		panic(badFixLen)
	}
	if s.Ports > 2 {
		return fmt.Errorf("%w: fixtures can be %s a 1- or 2-port sweep, not a %d-port", ErrPorts, verb, s.Ports)
	}
	for p, fx := range fix {
		if fx.AnalyserPort < 0 || fx.AnalyserPort > 2 {
			panic(badFixPort)
		}
		if fx.S == nil {
			continue
		}
		if fx.S.Ports != 2 {
			return fmt.Errorf("%w: the fixture at port %d has %d ports, want 2", ErrPorts, p+1, fx.S.Ports)
		}
		if err := covers(fx.S, s.FreqHz, p+1); err != nil {
			return err
		}
	}
	return nil
}
