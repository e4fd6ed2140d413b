package touchstone

import (
	"bufio"
	"fmt"
	"io"
	"math"
	"math/cmplx"
	"strconv"
	"strings"

	"matchbench/rfmath"
)

// WriteOptions control [Write]. The zero value writes version 1.1 syntax,
// S-parameters, RI format, a frequency unit chosen from the sweep and 12
// significant digits.
type WriteOptions struct {
	// Version is 1 (version 1.1 syntax, no keywords) or 2 ([Version] 2.1
	// with the keywords it requires). Zero chooses 1, or 2 when the ports'
	// reference resistances differ: a version 1 option line holds one R
	// for every port, so such a sweep cannot be written as version 1, and
	// an explicit Version 1 returns an error wrapping [ErrUnsupported].
	Version int
	// Param is the parameter type to write: 'S' (the default), 'Y' or 'Z'.
	// Y and Z are converted from the sweep's S-parameters at its reference
	// resistances; version 1 writes them normalised to R, which needs one
	// reference resistance for all ports.
	Param byte
	// Format is "RI" (the default), "MA" or "DB" (case-insensitive).
	Format string
	// FreqUnit is "Hz", "kHz", "MHz" or "GHz" (case-insensitive). The
	// default is the largest unit not above the sweep's highest frequency
	// (GHz from 1 GHz up, MHz from 1 MHz, kHz from 1 kHz, else Hz).
	FreqUnit string
	// Digits is the number of significant digits of each data value, 1 to
	// 17; 0 means 12. Frequencies are always written with as many digits
	// as it takes to read them back exactly in the chosen unit.
	Digits int
	// Comments are written first, each on a line of its own after '!'. They
	// must be printable ASCII without line breaks.
	Comments []string
	// Noise is 2-port noise data written after the network data. Version 1
	// files need the first noise frequency at or below the last network
	// frequency, which is how a reader finds the noise block.
	Noise []NoisePoint
}

// zeroDB is the level written for an exact zero magnitude in DB format,
// whose logarithm is −∞: −400 dB is a magnitude of 10⁻²⁰.
const zeroDB = -400

// Write writes s as a Touchstone file. Version 1 output puts a 1- or 2-port
// point on one line (2-port order N11 N21 N12 N22) and writes each matrix
// row of a larger network on new lines of at most four pairs. Version 2
// output uses the same layout after [Network Data], with [Two-Port Data
// Order] 12_21 (row order) for 2-ports and [Reference] when the ports'
// references differ (which version 1 cannot hold: see
// [WriteOptions.Version]). Bad options or an invalid sweep return an error
// before anything is written; errors of w are returned as they come.
func Write(w io.Writer, s *rfmath.Sweep, opt WriteOptions) error {
	if err := s.Validate(); err != nil {
		return fmt.Errorf("touchstone: cannot write the sweep: %w", err)
	}
	o, err := checkOptions(s, opt)
	if err != nil {
		return err
	}
	bw := bufio.NewWriterSize(w, 64<<10)
	b := make([]byte, 0, 256)
	for _, c := range opt.Comments {
		bw.WriteString("!" + c + "\n")
	}
	n := s.Ports
	if o.version == 2 {
		bw.WriteString("[Version] 2.1\n")
	}
	b = append(b[:0], "# "...)
	b = append(b, o.unit.name...)
	b = append(b, ' ', o.param, ' ')
	b = append(b, o.format...)
	b = append(b, " R "...)
	b = strconv.AppendFloat(b, s.Z0[0], 'g', -1, 64)
	b = append(b, '\n')
	bw.Write(b)
	if o.version == 2 {
		fmt.Fprintf(bw, "[Number of Ports] %d\n", n)
		if n == 2 {
			bw.WriteString("[Two-Port Data Order] 12_21\n")
		}
		fmt.Fprintf(bw, "[Number of Frequencies] %d\n", s.Len())
		if len(opt.Noise) > 0 {
			fmt.Fprintf(bw, "[Number of Noise Frequencies] %d\n", len(opt.Noise))
		}
		if !o.sameRef {
			b = append(b[:0], "[Reference]"...)
			for _, z := range s.Z0 {
				b = append(b, ' ')
				b = strconv.AppendFloat(b, z, 'g', -1, 64)
			}
			b = append(b, '\n')
			bw.Write(b)
		}
		bw.WriteString("[Network Data]\n")
	}

	pp := n * n
	m := make([]complex128, pp)
	order := make([]int, pp) // file position → row-major index
	for k := range order {
		order[k] = k
	}
	if n == 2 && o.version == 1 {
		order[1], order[2] = 2, 1
	}
	for k := range s.Len() {
		if err := o.matrix(m, s, k); err != nil {
			return err
		}
		b = appendFreq(b[:0], s.FreqHz[k]/o.unit.mul)
		for row := range n {
			if row > 0 && n > 2 {
				b = append(b, "\n "...)
			}
			for col := range n {
				idx := row*n + col
				if n > 2 && col > 0 && col%4 == 0 {
					b = append(b, "\n "...)
				}
				b = o.appendPair(b, m[order[idx]])
			}
		}
		b = append(b, '\n')
		if _, err := bw.Write(b); err != nil {
			return err
		}
	}
	if len(opt.Noise) > 0 {
		if o.version == 2 {
			bw.WriteString("[Noise Data]\n")
		}
		for _, np := range opt.Noise {
			rn := np.RnOhm
			if o.version == 1 {
				rn /= s.Z0[0]
			}
			b = appendFreq(b[:0], np.FreqHz/o.unit.mul)
			for _, v := range [...]float64{np.NFminDB, np.GammaOptMag, np.GammaOptDeg, rn} {
				b = append(b, ' ')
				b = strconv.AppendFloat(b, v, 'g', o.digits, 64)
			}
			b = append(b, '\n')
			bw.Write(b)
		}
	}
	if o.version == 2 {
		bw.WriteString("[End]\n")
	}
	return bw.Flush()
}

type writeOpts struct {
	sameRef bool // every port has the same reference
	version int
	param   byte
	format  string
	unit    unitInfo
	digits  int
}

func checkOptions(s *rfmath.Sweep, opt WriteOptions) (*writeOpts, error) {
	o := &writeOpts{sameRef: true, version: opt.Version, param: opt.Param, format: strings.ToUpper(opt.Format), digits: opt.Digits}
	for _, z := range s.Z0 {
		o.sameRef = o.sameRef && z == s.Z0[0]
	}
	if o.version == 0 {
		o.version = 1
		if !o.sameRef {
			o.version = 2
		}
	}
	if o.version != 1 && o.version != 2 {
		return nil, fmt.Errorf("touchstone: WriteOptions.Version %d: want 1 or 2", opt.Version)
	}
	if o.version == 1 && !o.sameRef {
		return nil, fmt.Errorf("%w: version 1 has one reference resistance on its option line for every port, but the ports' references differ (%s ohm); write version 2, whose [Reference] gives one per port, or renormalise to one reference", ErrUnsupported, joinG(s.Z0))
	}
	switch o.param {
	case 0:
		o.param = 'S'
	case 'S', 'Y', 'Z':
	default:
		return nil, fmt.Errorf("touchstone: WriteOptions.Param %q: want 'S', 'Y' or 'Z'", opt.Param)
	}
	switch o.format {
	case "":
		o.format = "RI"
	case "RI", "MA", "DB":
	default:
		return nil, fmt.Errorf("touchstone: WriteOptions.Format %q: want RI, MA or DB", opt.Format)
	}
	if opt.FreqUnit == "" {
		o.unit = units["hz"]
		top := s.FreqHz[s.Len()-1]
		for _, u := range []string{"ghz", "mhz", "khz"} {
			if top >= units[u].mul {
				o.unit = units[u]
				break
			}
		}
	} else if u, ok := units[strings.ToLower(opt.FreqUnit)]; ok {
		o.unit = u
	} else {
		return nil, fmt.Errorf("touchstone: WriteOptions.FreqUnit %q: want Hz, kHz, MHz or GHz", opt.FreqUnit)
	}
	if o.digits == 0 {
		o.digits = 12
	}
	if o.digits < 1 || o.digits > 17 {
		return nil, fmt.Errorf("touchstone: WriteOptions.Digits %d: want 1 to 17", opt.Digits)
	}
	for i, c := range opt.Comments {
		for k := 0; k < len(c); k++ {
			if charClass[c[k]] == clsBad {
				return nil, fmt.Errorf("touchstone: comment %d has byte 0x%02X at %d; comments must be printable ASCII on one line", i+1, c[k], k)
			}
		}
	}
	// The frequencies must stay strictly increasing as written.
	prev := math.Inf(-1)
	for _, f := range s.FreqHz {
		v := f / o.unit.mul
		if !(v > prev) {
			return nil, fmt.Errorf("touchstone: frequencies %g and its predecessor become equal in %s", f, o.unit.name)
		}
		prev = v
	}
	if len(opt.Noise) > 0 {
		if s.Ports != 2 {
			return nil, fmt.Errorf("touchstone: noise data need a 2-port sweep, not %d ports", s.Ports)
		}
		if o.version == 1 && opt.Noise[0].FreqHz > s.FreqHz[s.Len()-1] {
			return nil, fmt.Errorf("touchstone: a version 1 file cannot hold noise data that start above the last network frequency (%g Hz > %g Hz): readers find the noise block by the frequency going down", opt.Noise[0].FreqHz, s.FreqHz[s.Len()-1])
		}
		prev := math.Inf(-1)
		for i, np := range opt.Noise {
			vals := [...]float64{np.FreqHz, np.NFminDB, np.GammaOptMag, np.GammaOptDeg, np.RnOhm}
			for _, v := range vals {
				if math.IsNaN(v) || math.IsInf(v, 0) {
					return nil, fmt.Errorf("touchstone: noise point %d is not finite", i+1)
				}
			}
			f := np.FreqHz / o.unit.mul
			if np.FreqHz < 0 || !(f > prev) || np.GammaOptMag < 0 || np.RnOhm < 0 {
				return nil, fmt.Errorf("touchstone: noise point %d: frequencies must be non-negative and increase, |Γopt| and Rn must not be negative", i+1)
			}
			prev = f
		}
	}
	return o, nil
}

// joinG writes the values separated by ", ", each in the shortest form.
func joinG(v []float64) string {
	var b []byte
	for i, x := range v {
		if i > 0 {
			b = append(b, ", "...)
		}
		b = strconv.AppendFloat(b, x, 'g', -1, 64)
	}
	return string(b)
}

// matrix fills m with point k in the parameter to write.
func (o *writeOpts) matrix(m []complex128, s *rfmath.Sweep, k int) error {
	src := s.Matrix(k)
	if o.param == 'S' {
		copy(m, src)
		return nil
	}
	var err error
	if o.param == 'Z' {
		_, err = rfmath.SToZ(m, src, s.Ports, s.Z0)
	} else {
		_, err = rfmath.SToY(m, src, s.Ports, s.Z0)
	}
	if err != nil {
		return fmt.Errorf("touchstone: point %d (%g Hz) has no %c-parameters: %w", k+1, s.FreqHz[k], o.param, err)
	}
	if o.version == 1 { // TS-14: version 1 stores Z/R and Y·R
		r := complex(s.Z0[0], 0)
		for i := range m {
			if o.param == 'Z' {
				m[i] /= r
			} else {
				m[i] *= r
			}
		}
	}
	for _, v := range m {
		if !finite(v) {
			return fmt.Errorf("touchstone: point %d (%g Hz) has no finite %c-parameters", k+1, s.FreqHz[k], o.param)
		}
	}
	return nil
}

// appendFreq writes a frequency in plain decimal, with the fewest digits
// that read back as the same float64.
func appendFreq(b []byte, v float64) []byte {
	return strconv.AppendFloat(b, v, 'f', -1, 64)
}

func (o *writeOpts) appendPair(b []byte, v complex128) []byte {
	var x, y float64
	switch o.format {
	case "RI":
		x, y = real(v), imag(v)
	case "MA":
		x, y = cmplx.Abs(v), rfmath.AngleDeg(v)
	default:
		a := cmplx.Abs(v)
		x, y = zeroDB, rfmath.AngleDeg(v)
		if a > 0 {
			x = 20 * math.Log10(a)
		}
	}
	b = append(b, ' ')
	b = strconv.AppendFloat(b, x, 'g', o.digits, 64)
	b = append(b, ' ')
	return strconv.AppendFloat(b, y, 'g', o.digits, 64)
}
