package rfmath

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"testing"
)

func TestRenormalizeReferenceChecks(t *testing.T) {
	t.Parallel()
	const tol = 1e-12
	tests := []struct {
		name     string
		s        []complex128
		from, to []float64
		want     []complex128
	}{
		// REFERENCE-CHECKS §11 (C): series 50 Ω resistor, 50 Ω → 75 Ω.
		{"series 50 Ω to 75 Ω", []complex128{1.0 / 3, 2.0 / 3, 2.0 / 3, 1.0 / 3}, []float64{50, 50}, []float64{75, 75}, []complex128{0.25, 0.75, 0.75, 0.25}},
		// REFERENCE-CHECKS §11 (C): shunt 50 Ω resistor, 50 Ω → 75 Ω;
		// −0.428571 = −3/7, 0.571429 = 4/7.
		{"shunt 50 Ω to 75 Ω", []complex128{-1.0 / 3, 2.0 / 3, 2.0 / 3, -1.0 / 3}, []float64{50, 50}, []float64{75, 75}, []complex128{-3.0 / 7, 4.0 / 7, 4.0 / 7, -3.0 / 7}},
		// REFERENCE-CHECKS §11 (C): 75 Ω load, Γ = 0.2 in 50 Ω is 0 in 75 Ω.
		{"75 Ω load", []complex128{0.2}, []float64{50}, []float64{75}, []complex128{0}},
		// REFERENCE-CHECKS §11 (C): 100 Ω load, Γ = 1/3 in 50 Ω is 25/175 in 75 Ω.
		{"100 Ω load", []complex128{1.0 / 3}, []float64{50}, []float64{75}, []complex128{25.0 / 175}},
		// An open stays an open in any reference (Γ = 1), where the route
		// through Z would fail (REFERENCE-CHECKS §3: Γ(∞) = +1).
		{"open", []complex128{1}, []float64{50}, []float64{75}, []complex128{1}},
		// A zero-length thru stays S21 = 1 in any reference
		// (REFERENCE-CHECKS §11 property).
		{"thru", []complex128{0, 1, 1, 0}, []float64{50, 50}, []float64{75, 75}, []complex128{0, 1, 1, 0}},
		// Series R = 50 Ω between ports of R1 = 50 Ω and R2 = 75 Ω, by
		// circuit arithmetic (common practice): port 1 sees R + R2 = 125 Ω,
		// so S11 = (125 − 50)/175 = 3/7; port 2 sees R + R1 = 100 Ω, so
		// S22 = (100 − 75)/175 = 1/7; S21 = S12 = 2√(R1·R2)/(R1 + R + R2).
		{"series 50 Ω, 50/75 Ω ports", []complex128{1.0 / 3, 2.0 / 3, 2.0 / 3, 1.0 / 3}, []float64{50, 50}, []float64{50, 75},
			[]complex128{3.0 / 7, complex(2*math.Sqrt(50*75)/175, 0), complex(2*math.Sqrt(50*75)/175, 0), 1.0 / 7}},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			got, err := Renormalize(nil, tc.s, len(tc.from), tc.from, tc.to)
			if err != nil {
				t.Fatal(err)
			}
			checkMatrix(t, "S'", got, tc.want, tol)
		})
	}
}

func TestOnePortConversions(t *testing.T) {
	t.Parallel()
	const tol = 1e-12
	tests := []struct {
		name string
		s    complex128
		z0   float64
		z    complex128 // ohms
	}{
		// REFERENCE-CHECKS TS-4 (C): S11 = 0.2 in 50 Ω is 75 Ω.
		{"TS-4", 0.2, 50, 75},
		// REFERENCE-CHECKS TS-8 (C): Γ = j0.5 in 50 Ω is 30 + j40 Ω.
		{"TS-8 DB", 0.5i, 50, 30 + 40i},
		// REFERENCE-CHECKS TS-8 (C): Γ = 0.2 in 75 Ω is 112.5 Ω.
		{"TS-8 R 75", 0.2, 75, 112.5},
		// REFERENCE-CHECKS §3 N-3 (V): 50 + j50 in 50 Ω is Γ = 0.2 + j0.4.
		{"N-3", 0.2 + 0.4i, 50, 50 + 50i},
		// REFERENCE-CHECKS §3 N-2 (V): 25 + j25 in 50 Ω is Γ = −0.2 + j0.4.
		{"N-2", -0.2 + 0.4i, 50, 25 + 25i},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			ref := []float64{tc.z0}
			z, err := SToZ(nil, []complex128{tc.s}, 1, ref)
			if err != nil || !closeC(z[0], tc.z, tol) {
				t.Errorf("SToZ = %v, %v; want %v", z, err, tc.z)
			}
			s, err := ZToS(nil, []complex128{tc.z}, 1, ref)
			if err != nil || !closeC(s[0], tc.s, tol) {
				t.Errorf("ZToS = %v, %v; want %v", s, err, tc.s)
			}
			y, err := SToY(nil, []complex128{tc.s}, 1, ref)
			if err != nil || !closeC(y[0], 1/tc.z, tol) {
				t.Errorf("SToY = %v, %v; want %v", y, err, 1/tc.z)
			}
			s, err = YToS(nil, []complex128{1 / tc.z}, 1, ref)
			if err != nil || !closeC(s[0], tc.s, tol) {
				t.Errorf("YToS = %v, %v; want %v", s, err, tc.s)
			}
		})
	}
}

// TestZToSAgainstGonum compares the conversions with an independent solve:
// S = (z + I)⁻¹(z − I) and Z = √R(I − S)⁻¹(I + S)√R computed with gonum's
// real LU on the 2n×2n real embedding.
func TestZToSAgainstGonum(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(1, 1))
	for _, n := range []int{1, 2, 3, 4, 5, 9, 12} {
		t.Run(fmt.Sprintf("n=%d", n), func(t *testing.T) {
			for range 20 {
				refs := randRefs(rnd, n)
				s := randPassiveS(rnd, n)
				// Oracle Z.
				a := make([]complex128, n*n)
				b := make([]complex128, n*n)
				for i := range n {
					for j := range n {
						a[i*n+j] = -s[i*n+j]
						b[i*n+j] = s[i*n+j]
					}
					a[i*n+i]++
					b[i*n+i]++
				}
				zn := realSolve(t, a, b, n, n)
				want := make([]complex128, n*n)
				for i := range n {
					for j := range n {
						want[i*n+j] = zn[i*n+j] * complex(math.Sqrt(refs[i]*refs[j]), 0)
					}
				}
				z, err := SToZ(nil, s, n, refs)
				if err != nil {
					t.Fatal(err)
				}
				checkMatrix(t, "Z", z, want, 1e-9)
				// Back to S.
				s2, err := ZToS(nil, z, n, refs)
				if err != nil {
					t.Fatal(err)
				}
				checkMatrix(t, "S→Z→S", s2, s, 1e-9)
				// Through Y.
				y, err := SToY(nil, s, n, refs)
				if err != nil {
					t.Fatal(err)
				}
				s3, err := YToS(nil, y, n, refs)
				if err != nil {
					t.Fatal(err)
				}
				checkMatrix(t, "S→Y→S", s3, s, 1e-9)
				// Y·Z = I.
				for i := range n {
					for j := range n {
						var v complex128
						for l := range n {
							v += y[i*n+l] * z[l*n+j]
						}
						if i == j {
							v--
						}
						if !closeC(v, 0, 1e-9) {
							t.Errorf("(YZ − I)[%d,%d] = %v", i, j, v)
						}
					}
				}
			}
		})
	}
}

// TestRenormalizeThroughZ checks the direct wave transform against the
// route through Z given in REFERENCE-CHECKS §11, for unequal per-port
// references.
func TestRenormalizeThroughZ(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(1, 1))
	for _, n := range []int{1, 2, 3, 4, 10} {
		for range 20 {
			from, to := randRefs(rnd, n), randRefs(rnd, n)
			s := randPassiveS(rnd, n)
			z, err := SToZ(nil, s, n, from)
			if err != nil {
				t.Fatal(err)
			}
			want, err := ZToS(nil, z, n, to)
			if err != nil {
				t.Fatal(err)
			}
			got, err := Renormalize(nil, s, n, from, to)
			if err != nil {
				t.Fatal(err)
			}
			checkMatrix(t, fmt.Sprintf("n=%d S'", n), got, want, 1e-9)
			back, err := Renormalize(nil, got, n, to, from)
			if err != nil {
				t.Fatal(err)
			}
			checkMatrix(t, fmt.Sprintf("n=%d back", n), back, s, 1e-9)
		}
	}
}

func TestNPortAliasing(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(1, 1))
	const n = 3
	refs := randRefs(rnd, n)
	s := randPassiveS(rnd, n)
	want, err := SToZ(nil, s, n, refs)
	if err != nil {
		t.Fatal(err)
	}
	m := append([]complex128(nil), s...)
	if _, err := SToZ(m, m, n, refs); err != nil {
		t.Fatal(err)
	}
	checkMatrix(t, "in place SToZ", m, want, 1e-12)
	if _, err := ZToS(m, m, n, refs); err != nil {
		t.Fatal(err)
	}
	checkMatrix(t, "in place ZToS", m, s, 1e-9)
	to := randRefs(rnd, n)
	want, _ = Renormalize(nil, s, n, refs, to)
	copy(m, s)
	if _, err := Renormalize(m, m, n, refs, to); err != nil {
		t.Fatal(err)
	}
	checkMatrix(t, "in place Renormalize", m, want, 1e-12)
}

func TestNPortErrors(t *testing.T) {
	t.Parallel()
	tests := []struct {
		name string
		f    func() error
		want error
	}{
		// An open has no Z (REFERENCE-CHECKS §3: Γ(∞) = 1).
		{"SToZ open", func() error { _, err := SToZ(nil, []complex128{1}, 1, []float64{50}); return err }, ErrSingular},
		// A short has no Y (Γ(0) = −1).
		{"SToY short", func() error { _, err := SToY(nil, []complex128{-1}, 1, []float64{50}); return err }, ErrSingular},
		// A lossless 2-port thru has I − S singular (no Z-matrix).
		{"SToZ thru", func() error { _, err := SToZ(nil, []complex128{0, 1, 1, 0}, 2, []float64{50, 50}); return err }, ErrSingular},
		// Z = −R is an active load with no S.
		{"ZToS −R", func() error { _, err := ZToS(nil, []complex128{-50}, 1, []float64{50}); return err }, ErrSingular},
		{"YToS −G", func() error { _, err := YToS(nil, []complex128{-0.02}, 1, []float64{50}); return err }, ErrSingular},
		{"zero reference", func() error { _, err := ZToS(nil, []complex128{1}, 1, []float64{0}); return err }, ErrReference},
		{"negative reference", func() error { _, err := SToZ(nil, []complex128{0}, 1, []float64{-50}); return err }, ErrReference},
		{"NaN reference", func() error { _, err := SToY(nil, []complex128{0}, 1, []float64{math.NaN()}); return err }, ErrReference},
		{"Inf reference", func() error { _, err := YToS(nil, []complex128{0}, 1, []float64{math.Inf(1)}); return err }, ErrReference},
		{"Renormalize bad to", func() error {
			_, err := Renormalize(nil, []complex128{0}, 1, []float64{50}, []float64{0})
			return err
		}, ErrReference},
		{"Renormalize bad from", func() error {
			_, err := Renormalize(nil, []complex128{0}, 1, []float64{0}, []float64{50})
			return err
		}, ErrReference},
		// ρ = 1/5 for 50 → 75 Ω; S = 5 makes 1 − ρS zero (active data).
		{"Renormalize singular", func() error {
			_, err := Renormalize(nil, []complex128{5}, 1, []float64{50}, []float64{75})
			return err
		}, ErrSingular},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			if err := tc.f(); !errors.Is(err, tc.want) {
				t.Errorf("err = %v, want %v", err, tc.want)
			}
		})
	}
}

func TestNPortPanics(t *testing.T) {
	t.Parallel()
	one := []complex128{0}
	ref := []float64{50}
	tests := []struct {
		name string
		f    func()
	}{
		{"n = 0", func() { _, _ = ZToS(nil, nil, 0, nil) }},
		{"matrix length", func() { _, _ = SToZ(nil, []complex128{0, 0}, 1, ref) }},
		{"reference count", func() { _, _ = SToY(nil, one, 1, []float64{50, 50}) }},
		{"dst length", func() { _, _ = YToS(make([]complex128, 2), one, 1, ref) }},
		{"Renormalize to count", func() { _, _ = Renormalize(nil, one, 1, ref, nil) }},
		{"Renormalize from count", func() { _, _ = Renormalize(nil, one, 1, nil, ref) }},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			if !panics(tc.f) {
				t.Error("did not panic")
			}
		})
	}
}

func TestNPortAllocs(t *testing.T) {
	rnd := rand.New(rand.NewPCG(1, 1))
	for _, n := range []int{2, 4, 8} {
		refs := randRefs(rnd, n)
		to := randRefs(rnd, n)
		s := randPassiveS(rnd, n)
		dst := make([]complex128, n*n)
		tmp := make([]complex128, n*n)
		allocs := testing.AllocsPerRun(100, func() {
			_, _ = SToZ(tmp, s, n, refs)
			_, _ = ZToS(dst, tmp, n, refs)
			_, _ = SToY(tmp, s, n, refs)
			_, _ = YToS(dst, tmp, n, refs)
			_, _ = Renormalize(dst, s, n, refs, to)
		})
		if allocs != 0 {
			t.Errorf("n=%d: %v allocations per run, want 0", n, allocs)
		}
	}
}

func BenchmarkZToS(b *testing.B) {
	for _, n := range []int{2, 4} {
		b.Run(fmt.Sprintf("n=%d", n), func(b *testing.B) {
			rnd := rand.New(rand.NewPCG(1, 1))
			refs := randRefs(rnd, n)
			s := randPassiveS(rnd, n)
			z, err := SToZ(nil, s, n, refs)
			if err != nil {
				b.Fatal(err)
			}
			dst := make([]complex128, n*n)
			b.ReportAllocs()
			b.ResetTimer()
			for b.Loop() {
				_, _ = ZToS(dst, z, n, refs)
			}
		})
	}
}

// TestZToSPivoting uses a Z whose normalised z + I has a zero in its first
// diagonal entry, so the solver must swap rows; the oracle is gonum's LU on
// the real embedding.
func TestZToSPivoting(t *testing.T) {
	t.Parallel()
	refs := []float64{50, 50, 50}
	// z = [[−1, 1, 0.5], [1, 0, 0.2], [0.5, 0.2, 2]] (normalised).
	zn := []complex128{-1, 1, 0.5, 1, 0, 0.2, 0.5, 0.2, 2}
	z := make([]complex128, 9)
	a := make([]complex128, 9)
	b := make([]complex128, 9)
	for k, v := range zn {
		z[k] = 50 * v
		a[k], b[k] = v, v
	}
	for i := range 3 {
		a[i*3+i]++
		b[i*3+i]--
	}
	want := realSolve(t, a, b, 3, 3)
	got, err := ZToS(nil, z, 3, refs)
	if err != nil {
		t.Fatal(err)
	}
	checkMatrix(t, "S", got, want, 1e-12)
}
