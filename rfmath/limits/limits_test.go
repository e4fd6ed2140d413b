package limits

import (
	"bytes"
	"errors"
	"math"
	"strings"
	"testing"
)

func TestParse(t *testing.T) {
	t.Parallel()
	in := "\uFEFF# Fieldnode production limits\n" +
		"band 863M 870M rl 10        EU SRD\n" +
		"\n" +
		"   # indented comment\n" +
		"BAND 902MHz 928MHz VSWR 1.9 US  ISM # trailing comment\r\n" +
		"band\t2.4GHz\t2483.5M\trl\t9.5\n" +
		"band 433920000 433920000 vswr 2\n"
	got, err := Parse(strings.NewReader(in), "fieldnode.lim")
	if err != nil {
		t.Fatal(err)
	}
	want := []Band{
		{LoHz: 863e6, HiHz: 870e6, Kind: ReturnLoss, Value: 10, Label: "EU SRD", Line: 2},
		{LoHz: 902e6, HiHz: 928e6, Kind: VSWR, Value: 1.9, Label: "US ISM", Line: 5},
		{LoHz: 2.4e9, HiHz: 2483.5e6, Kind: ReturnLoss, Value: 9.5, Line: 6},
		{LoHz: 433.92e6, HiHz: 433.92e6, Kind: VSWR, Value: 2, Line: 7},
	}
	if len(got) != len(want) {
		t.Fatalf("got %d bands, want %d: %+v", len(got), len(want), got)
	}
	for i := range want {
		if got[i] != want[i] {
			t.Errorf("band %d = %+v, want %+v", i, got[i], want[i])
		}
	}
}

func TestParseErrors(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name      string
		in        string
		line, col int
		kind      error
		says      string
	}{
		{"empty", "", 0, 0, ErrEmpty, "no band"},
		{"comments only", "# nothing\n\n", 0, 0, ErrEmpty, "no band"},
		{"unknown keyword", "bnad 1M 2M rl 10\n", 1, 1, ErrSyntax, `"bnad"`},
		{"missing value", "band 1M 2M rl\n", 1, 14, ErrSyntax, "missing the limit's value"},
		{"missing kind", "# x\nband 1M 2M\n", 2, 11, ErrSyntax, "missing rl or vswr"},
		{"missing HI", "band 1M\n", 1, 8, ErrSyntax, "missing HI"},
		{"missing LO", "band\n", 1, 5, ErrSyntax, "missing LO"},
		{"bad LO", "band one 2M rl 10\n", 1, 6, ErrSyntax, "LO"},
		{"space in frequency", "band 863 MHz 870 MHz rl 10\n", 1, 10, ErrSyntax, "HI"},
		{"ambiguous m", "band 863m 870m rl 10\n", 1, 6, ErrSyntax, "ambiguous"},
		{"bad kind", "band 1M 2M dB 10\n", 1, 12, ErrSyntax, `"dB"`},
		{"bad number", "band 1M 2M rl ten\n", 1, 15, ErrSyntax, "not a number"},
		{"LO above HI", "band 2M 1M rl 10\n", 1, 6, ErrValue, "lower frequency first"},
		{"zero return loss", "band 1M 2M rl 0\n", 1, 15, ErrValue, "return loss 0"},
		{"negative return loss", "band 1M 2M rl -10\n", 1, 15, ErrValue, "return loss -10"},
		{"huge return loss", "band 1M 2M rl 1000\n", 1, 15, ErrValue, "at most 100"},
		{"VSWR of 1", "band 1M 2M vswr 1\n", 1, 17, ErrValue, "above 1"},
		{"VSWR infinite", "band 1M 2M vswr Inf\n", 1, 17, ErrValue, "VSWR +Inf"},
		{"NaN", "band 1M 2M rl NaN\n", 1, 15, ErrValue, "NaN"},
		{"control character", "band 1M 2M rl 10 a\x01b\n", 1, 19, ErrSyntax, "control character"},
		{"CR alone", "band 1M 2M rl 10\rband 3M 4M rl 10\n", 1, 17, ErrSyntax, "control character"},
		{"bad UTF-8", "band 1M 2M rl 10 \xff\n", 1, 1, ErrSyntax, "UTF-8"},
		{"second line", "band 1M 2M rl 10\nband 1M 2M rl x\n", 2, 15, ErrSyntax, "not a number"},
		{"after a BOM", "\uFEFFbnad\n", 1, 4, ErrSyntax, `"bnad"`},
		{"long line", "band 1M 2M rl 10 " + strings.Repeat("x", maxLine) + "\n", 1, 1, ErrSyntax, "longer than"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			_, err := Parse(strings.NewReader(tc.in), "t.lim")
			var pe *ParseError
			if !errors.As(err, &pe) {
				t.Fatalf("err = %v, want a *ParseError", err)
			}
			if pe.Line != tc.line || pe.Column != tc.col || !errors.Is(err, tc.kind) || pe.File != "t.lim" {
				t.Errorf("error at %s:%d:%d (%v), want line %d column %d wrapping %v", pe.File, pe.Line, pe.Column, pe.Err, tc.line, tc.col, tc.kind)
			}
			if !strings.Contains(err.Error(), tc.says) {
				t.Errorf("message %q does not say %q", err.Error(), tc.says)
			}
		})
	}
	// The message format, as encoding/csv and the touchstone reader write
	// theirs.
	e := &ParseError{Line: 3, Column: 7, Err: ErrSyntax}
	if e.Error() != "limits:3:7: limits: syntax error" {
		t.Errorf("Error() = %q", e.Error())
	}
	if (&ParseError{File: "a", Err: ErrEmpty}).Error() != "a: limits: no band in the file" {
		t.Error("whole-file message")
	}
}

type failWriter struct{}

func (failWriter) Write([]byte) (int, error) { return 0, errors.New("disk full") }

func TestWriteRoundTrip(t *testing.T) {
	t.Parallel()
	bands := []Band{
		{LoHz: 863e6, HiHz: 870e6, Kind: ReturnLoss, Value: 10, Label: "EU SRD"},
		{LoHz: 902.5e6, HiHz: 928e6, Kind: VSWR, Value: 1.92},
		{LoHz: 0, HiHz: 123456789.123, Kind: ReturnLoss, Value: 0.1, Label: "odd ünïcode ~ label"},
		{LoHz: 1e-3, HiHz: 1e30, Kind: VSWR, Value: 1e300},
		{LoHz: 2.4e9, HiHz: 2.4835e9, Kind: ReturnLoss, Value: 100},
	}
	var buf bytes.Buffer
	if err := Write(&buf, bands); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(buf.String(), "band 863M 870M rl 10 EU SRD\n") || !strings.Contains(buf.String(), "band 2.4G 2.4835G rl 100\n") {
		t.Errorf("output:\n%s", buf.String())
	}
	got, err := Parse(&buf, "")
	if err != nil {
		t.Fatal(err)
	}
	for i := range bands {
		g := got[i]
		g.Line = 0
		if g != bands[i] {
			t.Errorf("band %d: %+v, want %+v", i, g, bands[i])
		}
	}
	for _, bad := range []Band{
		{LoHz: 2, HiHz: 1, Value: 10},
		{LoHz: math.NaN(), HiHz: 1, Value: 10},
		{LoHz: 1, HiHz: math.Inf(1), Value: 10},
		{LoHz: 1, HiHz: 2, Value: 0},
		{LoHz: 1, HiHz: 2, Kind: VSWR, Value: 1},
		{LoHz: 1, HiHz: 2, Kind: 9, Value: 1},
		{LoHz: 1, HiHz: 2, Value: 10, Label: "a # b"},
		{LoHz: 1, HiHz: 2, Value: 10, Label: " a"},
		{LoHz: 1, HiHz: 2, Value: 10, Label: "a  b"},
		{LoHz: 1, HiHz: 2, Value: 10, Label: "a\tb"},
		{LoHz: 1, HiHz: 2, Value: 10, Label: "a\nb"},
		{LoHz: 1, HiHz: 2, Value: 10, Label: "\xff"},
	} {
		var b bytes.Buffer
		if err := Write(&b, []Band{bands[0], bad}); !errors.Is(err, ErrValue) || b.Len() != 0 {
			t.Errorf("Write(%+v) = %v, wrote %d bytes", bad, err, b.Len())
		}
	}
	if err := Write(failWriter{}, bands); err == nil || err.Error() != "disk full" {
		t.Errorf("writer error: %v", err)
	}
}

func TestBandConversions(t *testing.T) {
	t.Parallel()
	// REFERENCE-CHECKS §2a (C): VSWR 2.0 is |Γ| = 1/3 and RL 9.5424 dB;
	// VSWR 1.5 is |Γ| = 0.2 and RL 13.9794 dB. RL 10 dB is |Γ| = 0.316228.
	tests := []struct {
		b       Band
		rl, mag float64
	}{
		{Band{Kind: VSWR, Value: 2}, 9.5424, 1.0 / 3},
		{Band{Kind: VSWR, Value: 1.5}, 13.9794, 0.2},
		{Band{Kind: ReturnLoss, Value: 10}, 10, 0.316228},
	}
	for _, tc := range tests {
		if rl, m := tc.b.MinReturnLossDB(), tc.b.MaxGammaMag(); math.Abs(rl-tc.rl) > 5e-5 || math.Abs(m-tc.mag) > 5e-7 {
			t.Errorf("%v: RL %v, |Γ| %v; want %v, %v", tc.b, rl, m, tc.rl, tc.mag)
		}
	}
	b := Band{LoHz: 863e6, HiHz: 870e6, Kind: ReturnLoss, Value: 10, Label: "EU SRD"}
	if s := b.String(); s != "863 MHz–870 MHz: RL ≥ 10 dB (EU SRD)" {
		t.Errorf("String = %q", s)
	}
	if s := (Band{LoHz: 2.4e9, HiHz: 2.5e9, Kind: VSWR, Value: 2}).String(); s != "2.4 GHz–2.5 GHz: VSWR ≤ 2" {
		t.Errorf("String = %q", s)
	}
	if ReturnLoss.String() != "rl" || VSWR.String() != "vswr" || Kind(5).String() != "Kind(5)" {
		t.Error("Kind.String")
	}
}

// TestParsePower reads power limits as a percentage and as a loss in dB
// (1 dB of loss is 10^(−0.1) = 79.43 % of the power, arithmetic) and
// refuses a share out of range or without its unit.
func TestParsePower(t *testing.T) {
	t.Parallel()
	bands, err := Parse(strings.NewReader("band 902M 928M power 80% US ISM\nband 863M 870M power 1dB\n"), "p.lim")
	if err != nil {
		t.Fatal(err)
	}
	if bands[0].Kind != Power || bands[0].Value != 0.8 || bands[0].Label != "US ISM" {
		t.Errorf("band 0: %+v", bands[0])
	}
	if math.Abs(bands[1].Value-0.7943282347242815) > 1e-15 {
		t.Errorf("1 dB: %v", bands[1].Value)
	}
	if r := bands[0].Requirement(); r.MinPowerToLoad != 0.8 || r.MinReturnLossDB != 0 {
		t.Errorf("requirement %+v", r)
	}
	var b strings.Builder
	if err := Write(&b, bands); err != nil {
		t.Fatal(err)
	}
	back, err := Parse(strings.NewReader(b.String()), "back")
	if err != nil || back[0].Value != bands[0].Value || back[1].Value != bands[1].Value {
		t.Errorf("round trip %q: %v, %v", b.String(), back, err)
	}
	for _, line := range []string{"band 1G 2G power 0", "band 1G 2G power 0%", "band 1G 2G power 120%", "band 1G 2G power 80", "band 1G 2G power -1dB", "band 1G 2G power x%"} {
		_, err := Parse(strings.NewReader(line), "bad")
		var pe *ParseError
		if !errors.As(err, &pe) || pe.Column != 18 {
			t.Errorf("%q: %v", line, err)
		}
	}
}
