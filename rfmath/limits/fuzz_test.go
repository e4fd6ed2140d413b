package limits

import (
	"bytes"
	"errors"
	"strings"
	"testing"
)

// FuzzParse reads arbitrary text. Whatever Parse accepts, Write must write
// and Parse must read back to the same bands; whatever it refuses must come
// as a *ParseError wrapping one of the documented sentinels.
func FuzzParse(f *testing.F) {
	for _, s := range []string{
		"band 863M 870M rl 10 EU SRD\nband 902MHz 928MHz vswr 1.9 US ISM\n",
		"# comment only\n",
		"\uFEFFband 2.4G 2.4835G rl 9.5 # tail\r\n",
		"BAND 0 0 VSWR 1.0001\n",
		"band 1e3 1e30 rl 100\n",
		"band 863 MHz 870 MHz rl 10\n",
		"band 2M 1M rl 10\n",
		"band 1M 2M rl -3\n",
		"band 1M 2M vswr inf\n",
		"band 1m 2m rl 10\n",
		"band\t1k\t2k\trl\t3\tlabel\twith\ttabs\n",
		"band 1M 2M rl 10 ünïcode ✓\n",
		"band 1M 2M rl 10 a\x00b\n",
		"band 1M 2M rl 10\rband 1M 2M rl 10",
		"",
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, in string) {
		bands, err := Parse(strings.NewReader(in), "fuzz")
		if err != nil {
			var pe *ParseError
			if !errors.As(err, &pe) || !(errors.Is(err, ErrSyntax) || errors.Is(err, ErrValue) || errors.Is(err, ErrEmpty)) {
				t.Fatalf("error %v is not a ParseError with a sentinel", err)
			}
			if pe.Line < 0 || (pe.Line > 0 && pe.Column < 1) {
				t.Fatalf("position %d:%d", pe.Line, pe.Column)
			}
			return
		}
		var buf bytes.Buffer
		if err := Write(&buf, bands); err != nil {
			t.Fatalf("Write refused parsed bands %+v: %v", bands, err)
		}
		back, err := Parse(&buf, "again")
		if err != nil {
			t.Fatalf("Parse of Write output: %v\n%s", err, buf.String())
		}
		if len(back) != len(bands) {
			t.Fatalf("%d bands back, want %d", len(back), len(bands))
		}
		for i := range bands {
			a, b := bands[i], back[i]
			a.Line, b.Line = 0, 0
			if a != b {
				t.Fatalf("band %d: %+v back as %+v\n%s", i, a, b, buf.String())
			}
		}
	})
}
