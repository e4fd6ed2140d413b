package amp

import (
	"math"
	"math/cmplx"
	"math/rand/v2"
	"testing"

	"matchbench/rfmath"
)

// randomLossless returns the S-matrix (50 Ω) of a random lossless ladder:
// a series inductor, a shunt capacitor and a line section at 2 GHz.
func randomLossless(rnd *rand.Rand) [4]complex128 {
	const f = 2e9
	l := rfmath.Ladder{
		rfmath.SeriesL{LH: 0.5e-9 + 10e-9*rnd.Float64()},
		rfmath.ShuntC{CF: 0.2e-12 + 5e-12*rnd.Float64()},
		rfmath.LineFromDegrees(30+70*rnd.Float64(), 180*rnd.Float64(), f, 1),
	}
	return rfmath.ABCDToS(l.ABCD(f), 50, 50)
}

// Circles mapped through a lossless network stay consistent. A lossless
// 2-port N between the source and the device keeps the available power, so
// a source Γ at N's far port acts on the device as Γ′ = Γout_N(Γ), and
// G_A and |Γout| of the cascade at Γ are those of the device at Γ′ (common
// practice: a lossless network changes the reflection a port sees, not the
// power available through it). So the points of the cascade's
// available-gain circle and input stability circle, mapped by Γout_N, lie
// on the device's own circles; the same holds in the load plane with N
// after the device. Random devices and networks, seeded.
func TestCirclesThroughLosslessNetworks(t *testing.T) {
	t.Parallel()
	rnd := rand.New(rand.NewPCG(18, 30))
	onCircle := func(c Circle, g complex128) float64 {
		return math.Abs(cmplx.Abs(g-c.Center)-c.Radius) / math.Max(1, c.Radius)
	}
	checked := map[string]int{}
	for n := range 200 {
		s := random2Port(rnd, 0.95)
		net := randomLossless(rnd)
		// N's power conservation, so the test rests on a lossless network.
		if p := abs2(net[0]) + abs2(net[2]); math.Abs(p-1) > 1e-12 {
			t.Fatalf("network %v: |S11|² + |S21|² = %g", net, p)
		}
		front := rfmath.CascadeS(net, s, 50)
		back := rfmath.CascadeS(s, net, 50)
		toSource := func(g complex128) complex128 { return GammaOut(net, g) }
		toLoad := func(g complex128) complex128 { return GammaIn(net, g) }

		top, _ := MaxGain(s)
		if math.IsInf(top, 0) {
			continue
		}
		gainDB := DB(top) - 1 - 6*rnd.Float64()
		type pair struct {
			name   string
			mapped Circle
			own    Circle
			err    error
			move   func(complex128) complex128
		}
		ca, errA := AvailableGainCircle(front, gainDB)
		da, errDA := AvailableGainCircle(s, gainDB)
		cp, errP := OperatingGainCircle(back, gainDB)
		dp, errDP := OperatingGainCircle(s, gainDB)
		if (errA == nil) != (errDA == nil) || (errP == nil) != (errDP == nil) {
			t.Fatalf("device %d: circle errors differ through the network: %v / %v, %v / %v", n, errA, errDA, errP, errDP)
		}
		pairs := []pair{
			{"input stability", InputStabilityCircle(front).Circle, InputStabilityCircle(s).Circle, nil, toSource},
			{"output stability", OutputStabilityCircle(back).Circle, OutputStabilityCircle(s).Circle, nil, toLoad},
			{"available gain", ca, da, errA, toSource},
			{"operating gain", cp, dp, errP, toLoad},
		}
		for _, p := range pairs {
			if p.err != nil || p.mapped.Line || p.own.Line {
				continue
			}
			for k := range 8 {
				g := p.mapped.Point(2*math.Pi*float64(k)/8 + 0.3)
				m := p.move(g)
				if cmplx.IsInf(m) || cmplx.Abs(m) > 1e6 {
					continue
				}
				if d := onCircle(p.own, m); d > 1e-7*math.Max(1, cmplx.Abs(m)) {
					t.Fatalf("device %d %v, network %v, %s: the mapped point %v is %g off the device's circle %+v", n, s, net, p.name, m, d, p.own)
				}
				checked[p.name]++
			}
		}
		// The stability verdict does not change either.
		if StabilityOf(front).Unconditional != StabilityOf(s).Unconditional && math.Abs(StabilityOf(s).Mu-1) > 1e-9 {
			t.Fatalf("device %d: a lossless network changed the stability verdict", n)
		}
	}
	for _, name := range []string{"input stability", "output stability", "available gain", "operating gain"} {
		if checked[name] < 500 {
			t.Errorf("%s: only %d points checked", name, checked[name])
		}
	}
}
