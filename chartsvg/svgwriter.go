package chartsvg

import (
	"io"
	"math"
	"strconv"
	"sync"
)

// flushAt is the buffer length at which a writer hands its bytes to the
// underlying io.Writer. Elements are appended whole, so the buffer may grow a
// little past it.
const flushAt = 32 << 10

// writer is a buffered SVG text writer with a sticky first error, in the
// manner of encoding/csv's Writer: methods append to buf; flush hands the
// bytes on and remembers the first error, after which nothing more is written.
type writer struct {
	w   io.Writer
	buf []byte
	err error

	// Scratch reused between renders (see pool).
	pts  []pt
	keep []bool
	idx  []int
	lbl  []box
}

var pool = sync.Pool{New: func() any { return &writer{buf: make([]byte, 0, flushAt+4096)} }}

func getWriter(w io.Writer) *writer {
	sw := pool.Get().(*writer)
	sw.w = w
	sw.buf = sw.buf[:0]
	sw.err = nil
	return sw
}

// done flushes, returns the writer to the pool and reports the first error.
func (sw *writer) done() error {
	sw.flush()
	err := sw.err
	sw.w = nil
	if cap(sw.buf) <= 1<<20 {
		pool.Put(sw)
	}
	return err
}

func (sw *writer) flush() {
	if sw.err == nil && len(sw.buf) > 0 {
		_, sw.err = sw.w.Write(sw.buf)
	}
	sw.buf = sw.buf[:0]
}

// maybeFlush flushes when the buffer has grown past flushAt.
func (sw *writer) maybeFlush() {
	if len(sw.buf) >= flushAt {
		sw.flush()
	}
}

func (sw *writer) s(s string) { sw.buf = append(sw.buf, s...) }
func (sw *writer) b(c byte)   { sw.buf = append(sw.buf, c) }

// text appends s escaped for XML character data and attribute values.
func (sw *writer) text(s string) { sw.buf = appendEscaped(sw.buf, s) }

// attr appends ` name="value"` with value escaped.
func (sw *writer) attr(name, value string) {
	sw.buf = append(sw.buf, ' ')
	sw.buf = append(sw.buf, name...)
	sw.buf = append(sw.buf, '=', '"')
	sw.buf = appendEscaped(sw.buf, value)
	sw.buf = append(sw.buf, '"')
}

// num appends v rounded to one decimal (a tenth of a pixel in user units).
func (sw *writer) num(v float64) { sw.buf = appendTenths(sw.buf, tenths(v)) }

// numAttr appends ` name="v"` with v rounded to a tenth.
func (sw *writer) numAttr(name string, v float64) {
	sw.buf = append(sw.buf, ' ')
	sw.buf = append(sw.buf, name...)
	sw.buf = append(sw.buf, '=', '"')
	sw.buf = appendTenths(sw.buf, tenths(v))
	sw.buf = append(sw.buf, '"')
}

// g appends v with up to prec significant digits (for data attributes).
func (sw *writer) g(v float64, prec int) {
	sw.buf = strconv.AppendFloat(sw.buf, v, 'g', prec, 64)
}

// pair appends " x y" in tenths, the separator omitted before a minus sign.
func (sw *writer) pair(x, y int) {
	sw.sep(x)
	sw.buf = appendTenths(sw.buf, x)
	sw.sep(y)
	sw.buf = appendTenths(sw.buf, y)
}

// xy appends "x y" in tenths with no leading separator (after a command
// letter), the space omitted before a minus sign.
func (sw *writer) xy(x, y int) {
	sw.buf = appendTenths(sw.buf, x)
	sw.sep(y)
	sw.buf = appendTenths(sw.buf, y)
}

// sep appends the separator needed before the number v (in tenths) in path
// data: none before a minus sign, else a space.
func (sw *writer) sep(v int) {
	if v >= 0 {
		sw.buf = append(sw.buf, ' ')
	}
}

// tenths rounds v to an integer count of tenths. Values beyond ±1e8 are
// clamped so that a wild point cannot produce an absurd number.
func tenths(v float64) int {
	v *= 10
	switch {
	case v > 1e9:
		v = 1e9
	case v < -1e9:
		v = -1e9
	case v != v: // NaN
		v = 0
	}
	return int(math.Round(v))
}

// appendTenths appends n/10 in the shortest form: 12 → "1.2", -5 → "-.5",
// 30 → "3", 0 → "0".
func appendTenths(b []byte, n int) []byte {
	if n < 0 {
		b = append(b, '-')
		n = -n
	}
	whole, frac := n/10, n%10
	if whole != 0 || frac == 0 {
		b = strconv.AppendInt(b, int64(whole), 10)
	}
	if frac != 0 {
		b = append(b, '.', byte('0'+frac))
	}
	return b
}

// appendEscaped appends s with the five XML special characters escaped.
func appendEscaped(b []byte, s string) []byte {
	for i := 0; i < len(s); i++ {
		switch c := s[i]; c {
		case '&':
			b = append(b, "&amp;"...)
		case '<':
			b = append(b, "&lt;"...)
		case '>':
			b = append(b, "&gt;"...)
		case '"':
			b = append(b, "&quot;"...)
		case '\'':
			b = append(b, "&#39;"...)
		default:
			if c < 0x20 && c != '\t' && c != '\n' && c != '\r' {
				continue // not allowed in XML 1.0
			}
			b = append(b, c)
		}
	}
	return b
}
