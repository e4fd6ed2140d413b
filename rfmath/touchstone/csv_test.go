package touchstone

import (
	"bytes"
	"errors"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"matchbench/rfmath"
)

func readCSVFixture(t *testing.T, name string) (*rfmath.Sweep, error) {
	t.Helper()
	fh, err := os.Open(filepath.Join(fixtureDir, name))
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	return ReadCSV(fh, name, Limits{})
}

func TestReadCSVFixtures(t *testing.T) {
	t.Parallel()
	tests := []struct {
		file  string
		freq  []float64
		gamma []complex128
		tol   float64
		z0    float64
	}{
		{"csv_ri_comma.csv", []float64{1e9, 2e9}, []complex128{0.2, 0.1 - 0.3i}, 0, 50},
		// TS-8 numbers (C): −6.0206 dB ∠90° is j0.5; −20 dB is 0.1.
		{"csv_db_semicolon.csv", []float64{1e9, 1.5e9}, []complex128{0.5i, 0.1}, 1e-6, 50},
		{"csv_mag_tab.csv", []float64{100, 200}, []complex128{0.2, -0.5}, 0, 75},
		{"csv_re_s11.csv", []float64{100e6, 200e6}, []complex128{0.5 - 0.25i, 0.125}, 0, 50},
	}
	for _, tc := range tests {
		t.Run(tc.file, func(t *testing.T) {
			t.Parallel()
			s, err := readCSVFixture(t, tc.file)
			if err != nil {
				t.Fatal(err)
			}
			if s.Ports != 1 || s.Len() != len(tc.freq) || s.Z0[0] != tc.z0 {
				t.Fatalf("ports %d points %d z0 %v", s.Ports, s.Len(), s.Z0)
			}
			for k := range tc.freq {
				if math.Abs(s.FreqHz[k]-tc.freq[k]) > 1e-12*tc.freq[k] {
					t.Errorf("freq %d = %g, want %g", k, s.FreqHz[k], tc.freq[k])
				}
				if !near(s.Data[k], tc.gamma[k], tc.tol) {
					t.Errorf("Γ %d = %v, want %v", k, s.Data[k], tc.gamma[k])
				}
			}
		})
	}
}

func TestReadCSVErrors(t *testing.T) {
	t.Parallel()
	tests := []struct {
		file, text string
		kind       error
		line, col  int
		msg        []string
	}{
		{file: "csv_bad_header.csv", kind: ErrSyntax, line: 3, col: 1,
			msg: []string{`found columns ["time" "voltage" "current"]`, "expected a frequency column", `"re(S11)"`}},
		{file: "csv_no_header.csv", kind: ErrSyntax, line: 3, col: 1, msg: []string{"found numbers"}},
		{file: "csv_2port.csv", kind: ErrSyntax, line: 4, col: 1, msg: []string{"2-port CSV needs S11, S21, S12 and S22", "S12 has no complete pair"}},
		{text: "freq,s11 re,s11 im,s31 re,s31 im\n1,0,0,0,0\n", kind: ErrUnsupported, line: 1, col: 1, msg: []string{"1- and 2-port S-parameters", "S31"}},
		{text: "freq,z11 re,z11 im\n1,0,0\n", kind: ErrUnsupported, line: 1, col: 1, msg: []string{"Z11"}},
		{text: "# Z0 = 50 50 50\nfreq,re,im\n1,0,0\n", kind: ErrSyntax, line: 1, col: 1, msg: []string{"3 reference resistances for a 1-port"}},
		{file: "csv_decreasing.csv", kind: ErrSyntax, line: 5, col: 1, msg: []string{"does not increase"}},
		{text: "freq,re,im\n1,0.5,x\n", kind: ErrSyntax, line: 2, col: 7, msg: []string{`column "im"`, `"x"`}},
		{text: "freq,re,im\n1,0.5\n", kind: ErrSyntax, line: 2, col: 1, msg: []string{"wrong number of fields"}},
		{text: "freq,re,im\n1,nan,0\n", kind: ErrSyntax, line: 2, col: 3, msg: []string{"expected a decimal number"}},
		// Numbers are decimal, as the Touchstone reader reads them (TS
		// reader: `expected a number, found "0x10"`): strconv would take
		// these.
		{text: "freq,re,im\n1,0x1p-2,0\n", kind: ErrSyntax, line: 2, col: 3, msg: []string{"expected a decimal number", `"0x1p-2"`}},
		{text: "freq,re,im\n0x10,0.5,0\n", kind: ErrSyntax, line: 2, col: 1, msg: []string{`column "freq"`, `"0x10"`}},
		{text: "freq,re,im\n1,Inf,0\n", kind: ErrSyntax, line: 2, col: 3, msg: []string{`"Inf"`}},
		{text: "freq;re;im\n1;0x1,5p0;0\n", kind: ErrSyntax, line: 2, col: 3, msg: []string{"decimal"}},
		{text: "# Z0 = 0x4B\nfreq,re,im\n1,0,0\n", kind: ErrSyntax, line: 1, col: 1, msg: []string{"Z0 must be followed", `"0x4b"`}},
		{text: "freq,re,re\n1,0.5,0\n", kind: ErrSyntax, line: 1, col: 1, msg: []string{"two columns"}},
		{text: "freq\n1\n", kind: ErrSyntax, line: 1, col: 1, msg: []string{"one column"}},
		{text: "# only a comment\n", kind: ErrSyntax, line: 1, col: 1, msg: []string{"no header row"}},
		{text: "freq,re,im\n", kind: ErrSyntax, line: 1, col: 1, msg: []string{"no data rows"}},
		{text: "# Z0 = -5\nfreq,re,im\n1,0,0\n", kind: ErrSyntax, line: 1, col: 1, msg: []string{"positive"}},
		{text: "freq,z re,z im\n1,50,0\n", kind: ErrSyntax, line: 1, col: 1, msg: []string{"cannot understand"}},
		{text: "freq,re,im\n1,0,0\n2,0,0\n3,0,0\n", kind: ErrLimit, line: 3, col: 1, msg: []string{"MaxPoints limit of 1 "}},
		// Decimal numbers only, as the Touchstone reader takes them (digits,
		// sign, point, exponent: what analysers export, common practice).
		// Go's strconv.ParseFloat alone takes hexadecimal floats (0x1p-2 is
		// 0.25 by the Go spec's floating-point literals) and underscores.
		{text: "freq,re,im\n0x1p4,0.5,0\n", kind: ErrSyntax, line: 2, col: 1, msg: []string{"expected a decimal number", `"0x1p4"`}},
		{text: "freq;re;im\n1;0,5;0x0p0\n", kind: ErrSyntax, line: 2, col: 7, msg: []string{`"0x0p0"`}},
		{text: "freq,re,im\n1,1_0,0\n", kind: ErrSyntax, line: 2, col: 3, msg: []string{`"1_0"`}},
	}
	for _, tc := range tests {
		name := tc.file
		if name == "" {
			name = "inline.csv"
		}
		t.Run(name+strings.Join(tc.msg, ","), func(t *testing.T) {
			t.Parallel()
			var s *rfmath.Sweep
			var err error
			if tc.file != "" {
				s, err = readCSVFixture(t, tc.file)
			} else {
				lim := Limits{}
				if tc.kind == ErrLimit {
					lim.MaxPoints = 1
				}
				s, err = ReadCSV(strings.NewReader(tc.text), name, lim)
			}
			if s != nil {
				t.Errorf("got a sweep with the error")
			}
			var pe *ParseError
			if !errors.As(err, &pe) || !errors.Is(err, tc.kind) {
				t.Fatalf("err = %v, want a *ParseError wrapping %v", err, tc.kind)
			}
			if pe.File != name || pe.Line != tc.line || pe.Column != tc.col {
				t.Errorf("position %s:%d:%d, want %s:%d:%d (%v)", pe.File, pe.Line, pe.Column, name, tc.line, tc.col, err)
			}
			for _, m := range tc.msg {
				if !strings.Contains(err.Error(), m) {
					t.Errorf("message %q lacks %q", err, m)
				}
			}
		})
	}
}

// TestReadCSVHeaders checks the column-name matching on a table of headers.
func TestReadCSVHeaders(t *testing.T) {
	t.Parallel()
	tests := []struct {
		header, row string
		freq        float64
		gamma       complex128
	}{
		{"Frequency,Real,Imag", "5,0.1,0.2", 5, 0.1 + 0.2i},
		{"f [GHz],s11 re,s11 im", "2,0.1,0.2", 2e9, 0.1 + 0.2i},
		{"freq_khz,re(s11),im(s11)", "2,0.1,0.2", 2e3, 0.1 + 0.2i},
		{"Freq (MHz),S11 Magnitude (dB),S11 Phase (deg)", "3,-20,180", 3e6, -0.1},
		{"freq,mag db,ang", "1,0,-90", 1, -1i},
		{"freq,|S11|,arg(S11) rad", "1,0.5,3.141592653589793", 1, -0.5},
		{"freq,re,im,mag,phase", "1,0.3,0.4,9,9", 1, 0.3 + 0.4i}, // re/im preferred
		{"FREQ\tLIN MAG\tPHASE", "1\t0.25\t0", 1, 0.25},
		{"\xEF\xBB\xBFfreq;re;im", "1;0,5;0", 1, 0.5}, // UTF-8 byte-order mark, decimal comma
	}
	for _, tc := range tests {
		t.Run(tc.header, func(t *testing.T) {
			t.Parallel()
			s, err := ReadCSV(strings.NewReader(tc.header+"\n"+tc.row+"\n"), "h.csv", Limits{})
			if err != nil {
				t.Fatal(err)
			}
			if s.FreqHz[0] != tc.freq || !near(s.Data[0], tc.gamma, 1e-15) {
				t.Errorf("got %g Hz, %v; want %g Hz, %v", s.FreqHz[0], s.Data[0], tc.freq, tc.gamma)
			}
		})
	}
}

// TestCSVRoundTrip writes random 1-port sweeps and reads them back exactly:
// WriteCSV uses the shortest exact form of every number.
func TestCSVRoundTrip(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(3, 3))
	for range 20 {
		s := randomSweep(rng, 1+rng.IntN(30), []float64{[]float64{50, 75, 1e-3}[rng.IntN(3)]}, 2)
		var buf bytes.Buffer
		if err := WriteCSV(&buf, s); err != nil {
			t.Fatal(err)
		}
		got, err := ReadCSV(&buf, "rt.csv", Limits{})
		if err != nil {
			t.Fatalf("%v\n%s", err, buf.String())
		}
		if got.Z0[0] != s.Z0[0] {
			t.Errorf("Z0 %v, want %v", got.Z0, s.Z0)
		}
		for k := range s.FreqHz {
			if got.FreqHz[k] != s.FreqHz[k] || got.Data[k] != s.Data[k] {
				t.Fatalf("point %d: %g %v, want %g %v", k, got.FreqHz[k], got.Data[k], s.FreqHz[k], s.Data[k])
			}
		}
	}
}

func TestWriteCSVMultiPort(t *testing.T) {
	t.Parallel()
	s := rfmath.NewSweep(1, 2, 50)
	s.FreqHz[0] = 1e9
	copy(s.Data, []complex128{1, 2i, 3, -4})
	var buf bytes.Buffer
	if err := WriteCSV(&buf, s); err != nil {
		t.Fatal(err)
	}
	want := "# Z0 = 50 50\nfreq_hz,s11_re,s11_im,s12_re,s12_im,s21_re,s21_im,s22_re,s22_im\n1e+09,1,0,0,2,3,0,-4,0\n"
	if buf.String() != want {
		t.Errorf("got\n%s\nwant\n%s", buf.String(), want)
	}
	// A 2-port reads back as it was written, references included.
	s.Z0[1] = 75
	buf.Reset()
	if err := WriteCSV(&buf, s); err != nil {
		t.Fatal(err)
	}
	got, err := ReadCSV(&buf, "m.csv", Limits{})
	if err != nil {
		t.Fatal(err)
	}
	if got.Ports != 2 || got.Z0[0] != 50 || got.Z0[1] != 75 || got.FreqHz[0] != 1e9 || !equalData(got.Data, s.Data) {
		t.Errorf("read back %+v, want %+v", got, s)
	}
	// More than two ports are refused on reading, by name.
	s3 := rfmath.NewSweep(1, 3, 50)
	s3.FreqHz[0] = 1e9
	buf.Reset()
	if err := WriteCSV(&buf, s3); err != nil {
		t.Fatal(err)
	}
	if _, err := ReadCSV(&buf, "m3.csv", Limits{}); !errors.Is(err, ErrUnsupported) || !strings.Contains(err.Error(), "S13") {
		t.Errorf("reading a 3-port CSV: %v", err)
	}
}

func equalData(a, b []complex128) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
}

// TestReadCSV2Port reads 2-port CSV fixtures and checks them against the
// same values read from a Touchstone file (ts10_2port.s2p, N21 before N12
// in version 1 order) and against values worked by hand.
func TestReadCSV2Port(t *testing.T) {
	t.Parallel()
	fh, err := os.Open(filepath.Join(fixtureDir, "ts10_2port.s2p"))
	if err != nil {
		t.Fatal(err)
	}
	defer fh.Close()
	ts, err := Read(fh, "ts10_2port.s2p", Limits{})
	if err != nil {
		t.Fatal(err)
	}
	csv, err := readCSVFixture(t, "csv_2port_ri.csv")
	if err != nil {
		t.Fatal(err)
	}
	if csv.Ports != 2 || csv.FreqHz[0] != ts.Sweep.FreqHz[0] || !equalData(csv.Data, ts.Sweep.Data) || csv.Z0[0] != 50 || csv.Z0[1] != 50 {
		t.Errorf("CSV %v %v %v, Touchstone %v %v", csv.FreqHz, csv.Z0, csv.Data, ts.Sweep.FreqHz, ts.Sweep.Data)
	}
	// dB and degrees, decimal comma under ';', one reference per port:
	// −20 dB ∠90° = 0.1j; 0 dB ∠0° = 1; −6.0206 dB ∠180° = −0.5 (20·log10 2 =
	// 6.0206); −40 dB ∠−90° = −0.01j.
	db, err := readCSVFixture(t, "csv_2port_db.csv")
	if err != nil {
		t.Fatal(err)
	}
	want := []complex128{0.1i, -0.5, 1, -0.01i} // row order S11, S12, S21, S22
	if db.FreqHz[0] != 100e6 || db.Z0[0] != 50 || db.Z0[1] != 75 {
		t.Errorf("frequency %v, references %v", db.FreqHz, db.Z0)
	}
	for i, w := range want {
		if d := db.Data[i] - w; math.Hypot(real(d), imag(d)) > 1e-5 {
			t.Errorf("S[%d] = %v, want %v", i, db.Data[i], w)
		}
	}
}

// An error quotes little of what it found: a header of 2 MB, a field of
// 2 MB and a Touchstone keyword of 2 MB each give a message of a few
// hundred bytes that still says where and what.
func TestErrorsQuoteLittle(t *testing.T) {
	t.Parallel()
	huge := strings.Repeat("x", 2<<20)
	cases := []struct {
		name, text string
		csv        bool
		where      string
	}{
		{"one-column header", huge + "\n1\n", true, "big.csv:1:1:"},
		{"many columns", strings.Repeat("a,", 1<<20) + "b\n1,2\n", true, "big.csv:1:1:"},
		{"a field", "freq,re,im\n1," + huge + ",0\n", true, "big.csv:2:3:"},
		{"a keyword", "[Version] 2.0\n[" + huge + "]\n", false, "big.s1p:2:"},
		{"a version", "[Version] " + huge + "\n", false, "big.s1p:1:"},
		{"a number", "# GHz S RI R 50\n1 " + strings.Repeat("9", 2<<20) + "e999 0\n", false, "big.s1p:2:"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			var err error
			if tc.csv {
				_, err = ReadCSV(strings.NewReader(tc.text), "big.csv", Limits{MaxBytes: 8 << 20})
			} else {
				_, err = Read(strings.NewReader(tc.text), "big.s1p", Limits{MaxBytes: 8 << 20})
			}
			if err == nil {
				t.Fatal("no error")
			}
			if msg := err.Error(); len(msg) > 600 || !strings.HasPrefix(msg, tc.where) || !strings.Contains(msg, "…") {
				t.Errorf("message of %d bytes, starting %.80q; want at most 600 bytes from %q, with the input cut (…)", len(msg), msg, tc.where)
			}
		})
	}
}
