package server

import (
	"fmt"
	"math"
	"strconv"
	"strings"

	"matchbench/rfmath/units"
)

// fieldReader reads a form's fields as typed and keeps the first error, as
// encoding/csv's Writer keeps its first: a handler reads the fields it
// needs one after another and checks Err once. After an error every read
// returns zero. The error is a *FieldError naming the form, the field and
// its label on the page.
type fieldReader struct {
	form string
	f    map[string]string
	err  error
}

func newFieldReader(form string, f map[string]string) *fieldReader {
	return &fieldReader{form: form, f: f}
}

// Err returns the first error of the reads so far, or nil.
func (r *fieldReader) Err() error { return r.err }

// Fail records err against field (labelled label on the page) unless an
// earlier error is kept.
func (r *fieldReader) Fail(field, label string, err error) {
	if r.err == nil {
		r.err = &FieldError{r.form, field, label, err}
	}
}

// errAt returns the error of field (labelled label) without keeping it,
// for a reader that returns at its first error.
func (r *fieldReader) errAt(field, label string, err error) error {
	return &FieldError{r.form, field, label, err}
}

// Text returns the field's text with surrounding space removed.
func (r *fieldReader) Text(field string) string { return strings.TrimSpace(r.f[field]) }

// Freq reads a frequency with an SI prefix ("868M", "2.4835 GHz").
func (r *fieldReader) Freq(field, label string) float64 {
	if r.err != nil {
		return 0
	}
	v, err := units.ParseFrequency(r.f[field])
	if err != nil {
		r.Fail(field, label, err)
		return 0
	}
	return v
}

// Value reads a value in unit with an SI prefix ("1.26n", "50 Ω"); an
// empty field is 0.
func (r *fieldReader) Value(field, label, unit string) float64 {
	t := strings.TrimSpace(r.f[field])
	if r.err != nil || t == "" {
		return 0
	}
	v, err := units.ParseValue(t, unit)
	if err != nil {
		r.Fail(field, label, err)
		return 0
	}
	return v
}

// Num reads a finite number; an empty field is an error.
func (r *fieldReader) Num(field, label string) float64 { return r.num(field, label, false) }

// Opt reads a finite number; an empty field or "off" is 0.
func (r *fieldReader) Opt(field, label string) float64 { return r.num(field, label, true) }

func (r *fieldReader) num(field, label string, emptyIsZero bool) float64 {
	if r.err != nil {
		return 0
	}
	s := strings.TrimSpace(r.f[field])
	if s == "" || strings.EqualFold(s, "off") {
		if !emptyIsZero {
			r.Fail(field, label, fmt.Errorf("a number is needed"))
		}
		return 0
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		r.Fail(field, label, fmt.Errorf("%q is not a number", s))
		return 0
	}
	return v
}
