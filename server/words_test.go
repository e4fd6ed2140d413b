package server

import "testing"

// TestPlainWords checks the page's wording of errors: no package prefixes
// or field names of the store, frequencies with SI prefixes (a value
// from a message the store really writes, e.g. a design frequency outside a
// 2–3 GHz sweep), and a reader's file position kept.
func TestPlainWords(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct{ in, want string }{
		{"network.set: designHz: sessions: invalid: 2.9e+09 Hz is outside the sweep (2e+09–3e+09 Hz)",
			"Design frequency: 2.9 GHz is outside the sweep (2 GHz – 3 GHz)"},
		{"band.set: hiHz: sessions: invalid: the range 9.28e+08–9.02e+08 Hz is empty: lo must be below hi",
			"To: the range 928 MHz – 902 MHz is empty: the start must be below the end"},
		{"match: cannot fit an RC, RL or RLC model to the load between 9e+07 and 1.1e+08 Hz",
			"Cannot fit an RC, RL or RLC model to the load between 90 MHz and 110 MHz"},
		{"undo: sessions: invalid: nothing to undo", "Undo: nothing to undo"},
		{`marker.add: sessions: invalid: trace S11 of sweep "x" already has 2 markers, the limit`,
			`Marker: trace S11 of sweep "x" already has 2 markers, the limit`},
		{"part.set: params.vf: sessions: invalid: 1.5 is out of range", "Velocity factor: 1.5 is out of range"},
		{"bad.s1p:4: want 3 numbers, found 2", "bad.s1p:4: want 3 numbers, found 2"},
		{"rfmath: half-power edge outside the sweep: above 2.3328177109592986e+09 Hz",
			"Half-power edge outside the sweep: above 2.33282 GHz"},
		// A message that starts with a symbol keeps it whole and in its
		// case (μ is not Μ, ω is not Ω); a Latin letter is capitalised.
		{"Γs lies outside the chart", "Γs lies outside the chart"},
		{"μ is below 1 at 1.5e+09 Hz", "μ is below 1 at 1.5 GHz"},
		{"ω below the sweep", "ω below the sweep"},
		{"set up a stage on a 2-port sweep first", "Set up a stage on a 2-port sweep first"},
	} {
		if got := plainWords(tc.in); got != tc.want {
			t.Errorf("plainWords(%q)\n  = %q\nwant %q", tc.in, got, tc.want)
		}
	}
}
