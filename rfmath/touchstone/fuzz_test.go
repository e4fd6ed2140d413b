package touchstone

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
)

// fuzzLimits keep each fuzz input cheap.
var fuzzLimits = Limits{MaxBytes: 1 << 20, MaxPorts: 8, MaxPoints: 10000}

// addFixtureSeeds adds every fixture whose name has one of the suffixes.
func addFixtureSeeds(f *testing.F, add func(name string, data []byte), suffixes ...string) {
	f.Helper()
	entries, err := os.ReadDir(fixtureDir)
	if err != nil {
		f.Fatal(err)
	}
	for _, e := range entries {
		for _, s := range suffixes {
			if strings.HasSuffix(e.Name(), s) {
				data, err := os.ReadFile(filepath.Join(fixtureDir, e.Name()))
				if err != nil {
					f.Fatal(err)
				}
				add(e.Name(), data)
			}
		}
	}
}

func checkParseError(t *testing.T, err error) {
	t.Helper()
	var pe *ParseError
	if !errors.As(err, &pe) {
		t.Fatalf("error %v (%T) is not a *ParseError", err, err)
	}
	if !errors.Is(err, ErrSyntax) && !errors.Is(err, ErrUnsupported) && !errors.Is(err, ErrLimit) {
		t.Fatalf("error %v wraps no sentinel", err)
	}
}

// FuzzRead checks that Read never panics, that failures are ParseErrors
// with no File, and that a successful read written again (RI, Hz, 17
// digits: exact) and read back gives the same numbers.
func FuzzRead(f *testing.F) {
	addFixtureSeeds(f, func(name string, data []byte) {
		ports, ok := PortsFromName(name)
		if !ok {
			ports = 1
		}
		f.Add(data, uint8(ports-1))
	}, ".s1p", ".s2p", ".s3p", ".s4p", ".s5p", ".ts")
	f.Fuzz(func(t *testing.T, data []byte, p uint8) {
		name := fmt.Sprintf("fuzz.s%dp", int(p%6)+1)
		file, err := Read(bytes.NewReader(data), name, fuzzLimits)
		if err != nil {
			checkParseError(t, err)
			if file != nil {
				t.Fatal("a File came with the error")
			}
			return
		}
		if err := file.Sweep.Validate(); err != nil {
			t.Fatal(err)
		}
		version := 0 // version 1, or 2 for per-port references (which version 1 cannot write)
		if file.Version != "1.1" {
			version = 2
		}
		var buf bytes.Buffer
		opt := WriteOptions{Version: version, FreqUnit: "Hz", Digits: 17, Comments: file.Comments, Noise: file.Noise}
		if err := Write(&buf, file.Sweep, opt); err != nil {
			t.Fatalf("rewriting: %v", err)
		}
		again, err := Read(&buf, name, fuzzLimits)
		if err != nil {
			t.Fatalf("reading the rewrite: %v\n%s", err, buf.String())
		}
		a, b := file.Sweep, again.Sweep
		if a.Ports != b.Ports || a.Len() != b.Len() || len(file.Noise) != len(again.Noise) {
			t.Fatalf("shape changed: %d×%d (%d noise) → %d×%d (%d noise)", a.Ports, a.Len(), len(file.Noise), b.Ports, b.Len(), len(again.Noise))
		}
		for i := range a.Z0 {
			if a.Z0[i] != b.Z0[i] {
				t.Fatalf("Z0 %v → %v", a.Z0, b.Z0)
			}
		}
		for k := range a.FreqHz {
			if a.FreqHz[k] != b.FreqHz[k] {
				t.Fatalf("frequency %d: %v → %v", k, a.FreqHz[k], b.FreqHz[k])
			}
		}
		for i := range a.Data {
			if a.Data[i] != b.Data[i] && !(a.Data[i] == 0 && b.Data[i] == 0) {
				t.Fatalf("data %d: %v → %v", i, a.Data[i], b.Data[i])
			}
		}
		for i, n := range file.Noise {
			m := again.Noise[i]
			// Version 1 divides Rn by R on writing and multiplies on reading.
			if n.FreqHz != m.FreqHz || n.NFminDB != m.NFminDB || n.GammaOptMag != m.GammaOptMag ||
				n.GammaOptDeg != m.GammaOptDeg || math.Abs(n.RnOhm-m.RnOhm) > 4e-16*n.RnOhm {
				t.Fatalf("noise %d: %+v → %+v", i, n, m)
			}
		}
	})
}

// FuzzReadCSV checks that ReadCSV never panics, that failures are
// ParseErrors, and that WriteCSV output of a successful read reads back
// exactly.
func FuzzReadCSV(f *testing.F) {
	addFixtureSeeds(f, func(_ string, data []byte) { f.Add(data) }, ".csv")
	f.Fuzz(func(t *testing.T, data []byte) {
		s, err := ReadCSV(bytes.NewReader(data), "fuzz.csv", fuzzLimits)
		if err != nil {
			checkParseError(t, err)
			if s != nil {
				t.Fatal("a sweep came with the error")
			}
			return
		}
		var buf bytes.Buffer
		if err := WriteCSV(&buf, s); err != nil {
			t.Fatal(err)
		}
		again, err := ReadCSV(&buf, "again.csv", fuzzLimits)
		if err != nil {
			t.Fatalf("reading the rewrite: %v\n%s", err, buf.String())
		}
		if again.Len() != s.Len() || again.Ports != s.Ports || !slices.Equal(again.Z0, s.Z0) {
			t.Fatalf("shape or Z0 changed: %d×%d %v → %d×%d %v", s.Len(), s.Ports, s.Z0, again.Len(), again.Ports, again.Z0)
		}
		for k := range s.FreqHz {
			if again.FreqHz[k] != s.FreqHz[k] || !slices.Equal(again.Matrix(k), s.Matrix(k)) {
				t.Fatalf("point %d: %v %v → %v %v", k, s.FreqHz[k], s.Matrix(k), again.FreqHz[k], again.Matrix(k))
			}
		}
	})
}
