package touchstone

import (
	"errors"
	"slices"
	"strings"
	"testing"

	"matchbench/rfmath"
)

// TestReadNamed reads one sweep written as CSV, as a .s1p and as a .ts file
// (Touchstone 1.1 and 2.0 syntax of the same numbers, IBIS Touchstone
// specification 2.0 §§ 4–6) and refuses a name the reader could only guess.
func TestReadNamed(t *testing.T) {
	t.Parallel()
	files := map[string]string{
		"a.csv": "freq_hz,re_s11,im_s11\n1e9,0.5,-0.25\n2e9,0.1,0.2\n",
		"a.s1p": "! one port\n# Hz S RI R 50\n1e9 0.5 -0.25\n2e9 0.1 0.2\n",
		"A.TS":  "! one port\n[Version] 2.0\n# Hz S RI R 50\n[Number of Ports] 1\n[Number of Frequencies] 2\n[Network Data]\n1e9 0.5 -0.25\n2e9 0.1 0.2\n[End]\n",
	}
	want := []complex128{complex(0.5, -0.25), complex(0.1, 0.2)}
	for name, text := range files {
		f, err := ReadNamed(strings.NewReader(text), name, Limits{})
		if err != nil {
			t.Fatalf("%s: %v", name, err)
		}
		if !slices.Equal(f.Sweep.Data, want) || !slices.Equal(f.Sweep.FreqHz, []float64{1e9, 2e9}) {
			t.Errorf("%s: read %v at %v, want %v", name, f.Sweep.Data, f.Sweep.FreqHz, want)
		}
		if strings.HasSuffix(name, ".s1p") && !slices.Contains(f.Comments, " one port") && !slices.Contains(f.Comments, "one port") {
			t.Errorf("%s: comments %q", name, f.Comments)
		}
	}
	for _, name := range []string{"a.txt", "a", "a.s1", "a.csv.bak"} {
		_, err := ReadNamed(strings.NewReader(files["a.s1p"]), name, Limits{})
		if err == nil || !strings.Contains(err.Error(), name+": the name must end in .sNp") {
			t.Errorf("%s: error %v, want one naming the file and the endings", name, err)
		}
	}
	// A bad CSV keeps the reader's own error, naming the file.
	if _, err := ReadNamedBytes("b.csv", []byte("freq_hz,re_s11,im_s11\nx,1,2\n"), Limits{}); err == nil || !strings.Contains(err.Error(), "b.csv") {
		t.Errorf("bad CSV: %v", err)
	}
	var pe *ParseError
	if _, err := ReadNamedBytes("b.s1p", []byte("# Hz S RI R 50\n1e9 x 0\n"), Limits{}); !errors.As(err, &pe) {
		t.Errorf("bad Touchstone: %v, want a *ParseError", err)
	}
}

// TestCommentLines checks that cleaned comments are what Write accepts and
// keep their meaning (Touchstone comments are printable ASCII, IBIS
// Touchstone specification 2.0 § 3).
func TestCommentLines(t *testing.T) {
	t.Parallel()
	in := []string{"Z0 50 Ω, L 12 µH and 3 μH", "line\nbreak\ttab", "é ok ~", "", "RL ≥ 10 dB, 863–870 MHz, εr 4.4, Q · f"}
	want := []string{"Z0 50 ohm, L 12 uH and 3 uH", "line break tab", "? ok ~", "", "RL >= 10 dB, 863-870 MHz, eps_r 4.4, Q - f"}
	got := CommentLines(in)
	if !slices.Equal(got, want) {
		t.Errorf("CommentLines(%q) = %q, want %q", in, got, want)
	}
	sw := rfmath.NewSweep(1, 1, 50)
	sw.FreqHz[0], sw.Data[0] = 1e9, 0.5
	var b strings.Builder
	if err := Write(&b, sw, WriteOptions{Comments: got}); err != nil {
		t.Errorf("Write refused the cleaned comments: %v", err)
	}
}
