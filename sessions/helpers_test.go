package sessions

import (
	"context"
	"errors"
	"math"
	"math/cmplx"
	"strings"
	"testing"

	"matchbench/rfmath"
)

// openStore opens a store in a fresh temporary folder and closes it when the
// test ends.
func openStore(t testing.TB, opt Options) *Store {
	t.Helper()
	st, err := OpenWith(t.TempDir(), opt)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { st.Close() })
	return st
}

func create(t testing.TB, st *Store, name string) *Session {
	t.Helper()
	s, err := st.Create(context.Background(), name)
	if err != nil {
		t.Fatal(err)
	}
	return s
}

func apply(t testing.TB, st *Store, sid string, ch Change) Event {
	t.Helper()
	ev, err := st.Apply(context.Background(), sid, ch)
	if err != nil {
		t.Fatalf("Apply(%s): %v", ch.Op, err)
	}
	return ev
}

func state(t testing.TB, st *Store, sid string) (*State, int64) {
	t.Helper()
	s, v, err := st.State(context.Background(), sid)
	if err != nil {
		t.Fatal(err)
	}
	return s, v
}

// wantErr checks that err wraps sentinel and, when field is not empty, is an
// *OpError naming that field.
func wantErr(t testing.TB, err, sentinel error, field string) {
	t.Helper()
	if !errors.Is(err, sentinel) {
		t.Fatalf("error = %v, want %v", err, sentinel)
	}
	if field == "" {
		return
	}
	var oe *OpError
	if !errors.As(err, &oe) {
		t.Fatalf("error %v is not an *OpError", err)
	}
	if oe.Field != field {
		t.Fatalf("error %v names field %q, want %q", err, oe.Field, field)
	}
	if !strings.Contains(err.Error(), field) {
		t.Fatalf("error text %q does not name %q", err, field)
	}
}

// Series RLC used as a test load: R = 50 Ω, L = 10 nH, C = 2.533 pF, which
// resonate at f0 = 1/(2π√(LC)) ≈ 1.0000 GHz (series resonance, common
// practice). At resonance Z = R = Z0, so Γ = 0: the deepest dip.
const (
	rlcR = 50.0
	rlcL = 10e-9
	rlcC = 2.533e-12
)

func rlcF0() float64 { return 1 / (2 * math.Pi * math.Sqrt(rlcL*rlcC)) }

// rlcGamma is Γ = (Z − Z0)/(Z + Z0) of the series RLC at fHz, Z0 = 50 Ω.
func rlcGamma(fHz float64) complex128 {
	w := 2 * math.Pi * fHz
	z := complex(rlcR, w*rlcL-1/(w*rlcC))
	return (z - 50) / (z + 50)
}

// testSweep returns an n-point sweep from f1 to f2 Hz. For ports = 1, S11
// is the series RLC; for ports = 2, S22 is the RLC reflection rotated by
// 90° and halved, and S21 = S12 = 0.5.
func testSweep(n, ports int, f1, f2 float64) *rfmath.Sweep {
	s := rfmath.NewSweep(n, ports, 50)
	for k := range n {
		f := f1 + (f2-f1)*float64(k)/float64(max(n-1, 1))
		s.FreqHz[k] = f
		g := rlcGamma(f)
		s.Set(k, 0, 0, g)
		if ports == 2 {
			s.Set(k, 1, 1, 0.5i*g)
			s.Set(k, 0, 1, 0.5)
			s.Set(k, 1, 0, 0.5)
		}
	}
	return s
}

// loopSweep returns an n-point 1-port sweep whose S11 crosses itself: the
// nodal cubic x = s² − 0.25, y = s³ − 0.25·s for s from −1 to 1, through
// the origin at s = ±0.5 (indices n/4 and 3n/4 for n = 4m+1). Frequencies
// run from 1 to 2 GHz.
func loopSweep(n int) *rfmath.Sweep {
	s := rfmath.NewSweep(n, 1, 50)
	for k := range n {
		u := -1 + 2*float64(k)/float64(n-1)
		s.FreqHz[k] = 1e9 + 1e9*float64(k)/float64(n-1)
		s.Data[k] = complex(u*u-0.25, u*u*u-0.25*u)
	}
	return s
}

// addSweep adds a sweep and returns its id.
func addSweep(t testing.TB, st *Store, sid string, sw *rfmath.Sweep, name string) string {
	t.Helper()
	ev := apply(t, st, sid, Change{Op: OpSweepAdd, Name: name, FileName: name + ".s1p", Raw: []byte("! raw " + name + "\n"), Sweep: sw})
	return ev.SweepID
}

func near(a, b, tol float64) bool { return math.Abs(a-b) <= tol*math.Max(1, math.Abs(b)) }

func cnear(a, b complex128, tol float64) bool { return cmplx.Abs(a-b) <= tol }
