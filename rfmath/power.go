package rfmath

import (
	"math"
	"math/cmplx"
)

// Stress is the voltage across one element of a ladder and the current
// through it, as peak phasor magnitudes (RMS = peak/√2 for a sine).
type Stress struct {
	VPeakV float64 // volts across the part (series) or across the line at it (shunt)
	IPeakA float64 // amperes through the part
}

// StressTo fills dst (one entry per element, load first) with the voltage
// and current of each element of l at fHz when a source of real impedance
// z0Ohm that can deliver powerW watts (its available power) drives the
// ladder terminated in zLoad. The source's peak open-circuit voltage is
//
//	Vs = √(8·P·Z0)
//
// (available power P = Vs²/(8·Z0) for a peak-phasor Vs, common practice).
// The port voltage and current at the source are walked toward the load
// through each element's inverse ABCD matrix. A series element (A = D = 1,
// C = 0) reports the voltage drop across it and the current through it; a
// shunt element (A = D = 1, B = 0) the voltage across it and the current
// it takes; any other element (a line, a transformer) the voltage and
// current at its source side. A nil dst is allocated; a dst whose length
// is not len(l) panics.
func (l Ladder) StressTo(dst []Stress, fHz float64, zLoad complex128, z0Ohm, powerW float64) []Stress {
	if dst == nil {
		dst = make([]Stress, len(l))
	} else if len(dst) != len(l) {
		panic(badLength)
	}
	zin := l.InputZ(fHz, zLoad)
	vs := complex(math.Sqrt(8*powerW*z0Ohm), 0)
	var v, i complex128
	if cmplx.IsInf(zin) {
		v, i = vs, 0
	} else {
		i = vs / (complex(z0Ohm, 0) + zin)
		v = i * zin
	}
	for k := len(l) - 1; k >= 0; k-- {
		a := l[k].ABCD(fHz)
		det := a.Det()
		// [V2; I2] = A⁻¹·[V1; I1] with A⁻¹ = [D −B; −C A]/det.
		v2 := (a[3]*v - a[1]*i) / det
		i2 := (-a[2]*v + a[0]*i) / det
		switch {
		case a[0] == 1 && a[3] == 1 && a[2] == 0: // series
			dst[k] = Stress{VPeakV: cmplx.Abs(v - v2), IPeakA: cmplx.Abs(i)}
		case a[0] == 1 && a[3] == 1 && a[1] == 0: // shunt
			dst[k] = Stress{VPeakV: cmplx.Abs(v), IPeakA: cmplx.Abs(i - i2)}
		default:
			dst[k] = Stress{VPeakV: cmplx.Abs(v), IPeakA: cmplx.Abs(i)}
		}
		v, i = v2, i2
	}
	return dst
}
