package match

import (
	"context"
	"fmt"
	"math"
	"math/cmplx"
	"sort"

	"matchbench/rfmath"
	"matchbench/rfmath/amp"
	"matchbench/rfmath/touchstone"
)

// # Matching both sides of a transistor
//
// A stage ([amp.Stage]) has a source network from the source termination
// to the device's input and a load network from the device's output to the
// load termination. Both are [Network]s listed from the device outward:
// element 0 is next to the device, as a network is listed from its load,
// so [Search] designs either one with the device's port as its load.
//
//   - The source network, with the load network fixed, sees the device's
//     input reflection Γin(ΓL) as its load. The power it delivers into that
//     load is the power entering the device, and the stage's gain is that
//     power times the operating gain of the device with its load network,
//     which the source network does not change; the reflection seen from the
//     termination is the stage's input return loss. So a search for the most
//     power into Γin, with the input return-loss requirement, is a search
//     for the stage's gain.
//   - The load network, with the source network fixed, is driven by the
//     device's output, a source of reflection Γout(Γs) whose available
//     power the load network does not change. Its parts are reciprocal
//     (lumped parts, lines, stubs, ideal transformers), so its transducer
//     gain from that source into the termination equals its transducer gain
//     from the termination into a load of Γout; a search for the most power
//     into Γout, with the output return-loss requirement, is a search for
//     the stage's gain, and the reflection it judges is the stage's output
//     return loss.
//   - Noise depends on the source network alone (the load network's own
//     noise is divided by the device's gain). A lossless network that
//     presents Γs to the device from the termination is the one that
//     matches a load of Γs* to the termination, so a search for the most
//     power into Γt* finds the networks that present Γt. Between the noise
//     match Γopt and the gain match Γin*, the search tries the blends
//     Γt = Γopt + t·(Γin* − Γopt), t in [StageSettings.Blends].
//
// [SearchStage] alternates the two sides, each time keeping the other
// fixed: it starts from through connections, and each round searches the
// source side for the load network of each of the best few stages so far
// (the beam) and the load side for each of their source networks. It
// ranks every stage it builds by its exact figures
// ([amp.EvaluateStage], the one evaluator of a stage): first by the number
// of the sweep's frequencies where the terminations would let the device
// oscillate (fewest first), then by its margins over the bands'
// requirements of gain, noise figure and return losses, worst first (the
// least margin largest, then the next least, and so on), then by the least
// gain in the bands. Each side's search is exact for its
// own objective over its standard values (see [Search]); the stage is not:
// the result is the best stage found among those the alternation builds,
// not a proof that no other pair of networks does better
// ([StageResult.Exact] is always false, and the page and the command line
// say "best found").

// StageSettings tune [SearchStage]. A nil *StageSettings, and every zero
// field, means the default.
type StageSettings struct {
	// Settings are those of each side's [Search]: series, part model,
	// number of parts, value ranges and Top (the candidates each search
	// hands on, the best network of each of the best shapes; zero means
	// every shape). Objective and Progress are set by the stage search.
	Settings
	// Rounds bounds the alternations of the two sides; zero means 4. The
	// search stops sooner when a round leaves the beam as it was.
	Rounds int
	// Beam is the number of best stages whose networks each round
	// searches the other side for; zero means 4.
	Beam int
	// Blends are the points t between the noise match (0) and the gain
	// match (1) that the source side searches for; nil means 0, 0.5 and 1.
	// Only the gain match is searched where the device has no noise
	// parameters across every band.
	Blends []float64
	// Designs is the number of stages returned, best first; zero means 5.
	Designs int
	// Progress, if not nil, is called after each side's search with the
	// searches done and the most there can be.
	Progress func(done, total int)
}

// StageDesign is a pair of networks found by [SearchStage] with the
// stage's figures.
type StageDesign struct {
	Source, Load Network
	amp.StageMetrics
}

// StageResult is what [SearchStage] returns.
type StageResult struct {
	// Designs are the best distinct stages found, best first.
	Designs []StageDesign
	// Exact is false: the alternation finds the best stage among those it
	// builds, not a proven optimum (see the package documentation).
	Exact bool
	// Rounds is the number of alternations run, Searches the number of
	// one-side searches, Stages the number of stages judged.
	Rounds, Searches, Stages int
	// SidesExact reports whether every one-side search was exact over its
	// whole value ranges ([Result.Exact]).
	SidesExact bool
}

// stageKey ranks a stage: fewer unstable frequencies, then its
// requirement margins compared worst first (the least margin, then the
// next least, …: a leximin order, so that among stages that one
// requirement limits alike the others still count), then a larger least
// gain.
type stageKey struct {
	unstable int
	margins  []float64 // ascending
	gain     float64
}

func keyOf(m amp.StageMetrics) stageKey {
	k := stageKey{unstable: len(m.UnstableHz), gain: m.MinGainDB}
	for _, b := range m.Bands {
		k.margins = append(k.margins, b.Margins()...)
	}
	sort.Float64s(k.margins)
	if math.IsNaN(k.gain) {
		k.gain = math.Inf(-1)
	}
	return k
}

func (a stageKey) better(b stageKey) bool {
	if a.unstable != b.unstable {
		return a.unstable < b.unstable
	}
	for i := 0; i < len(a.margins) && i < len(b.margins); i++ {
		if a.margins[i] != b.margins[i] {
			return a.margins[i] > b.margins[i]
		}
	}
	return a.gain > b.gain
}

func (a stageKey) equal(b stageKey) bool { return !a.better(b) && !b.better(a) }

// stageSearch holds one stage search's data.
type stageSearch struct {
	dev    *rfmath.Sweep
	noise  []touchstone.NoisePoint
	z0     float64
	bands  []amp.StageBand
	set    StageSettings
	pool   map[string]StageDesign
	stages int
	exact  bool
}

// SearchStage designs the source and load networks of a stage of the
// device dev (a 2-port sweep, with its noise parameters or nil) between
// terminations of z0Ohm (0 means 50 Ω) for the bands' requirements of
// gain, noise figure and return loss, by alternating exact one-side
// searches (see the package documentation). It starts from through
// connections on both sides. The result is the best found, not proven
// optimal; its figures come from [amp.EvaluateStage].
//
// A band outside the device's sweep, or one with a noise-figure limit
// beyond the device's noise data, is an error that names it. The search
// stops and returns ctx.Err() when ctx is done.
func SearchStage(ctx context.Context, dev *rfmath.Sweep, noise []touchstone.NoisePoint, z0Ohm float64, bands []amp.StageBand, s *StageSettings) (*StageResult, error) {
	if z0Ohm == 0 {
		z0Ohm = 50
	}
	ss := &stageSearch{dev: dev, noise: noise, z0: z0Ohm, bands: bands, pool: map[string]StageDesign{}, exact: true}
	if s != nil {
		ss.set = *s
	}
	if ss.set.Rounds == 0 {
		ss.set.Rounds = 4
	}
	if ss.set.Beam == 0 {
		ss.set.Beam = 4
	}
	if ss.set.Blends == nil {
		ss.set.Blends = []float64{0, 0.5, 1}
	}
	if ss.set.Designs == 0 {
		ss.set.Designs = 5
	}
	if ss.set.Top == 0 {
		ss.set.Top = 64 // more than the 60 shapes of up to four parts
	}
	if ss.set.Rounds < 1 || ss.set.Designs < 1 || ss.set.Beam < 1 {
		return nil, fmt.Errorf("match: stage search of %d rounds, a beam of %d and %d designs; want at least 1 of each", ss.set.Rounds, ss.set.Beam, ss.set.Designs)
	}
	for _, t := range ss.set.Blends {
		if !(t >= 0 && t <= 1) {
			return nil, fmt.Errorf("match: blend %g between the noise and the gain match; want 0 to 1", t)
		}
	}
	if len(bands) == 0 {
		return nil, fmt.Errorf("%w: a stage search needs at least one band", ErrBand)
	}
	// The bands must lie in the sweep, and a noise limit in the noise data.
	base, err := ss.judge(nil, nil)
	if err != nil {
		return nil, err
	}
	for i, b := range base.Bands {
		if b.Band.MaxNFdB != 0 && b.NoNoise > 0 {
			return nil, fmt.Errorf("match: band %d (%g–%g Hz) limits the noise figure, but the device has no noise parameters at %d of its points (noise parameters are not extrapolated)", i+1, b.Band.LoHz, b.Band.HiHz, b.NoNoise)
		}
	}
	noiseOK := len(noise) > 0
	for _, b := range base.Bands {
		noiseOK = noiseOK && b.NoNoise == 0
	}

	res := &StageResult{}
	searchesPerLoad := 1
	if noiseOK {
		searchesPerLoad = len(ss.set.Blends)
	}
	total := ss.set.Rounds * ss.set.Beam * (searchesPerLoad + 1)
	progress := func() {
		if ss.set.Progress != nil {
			ss.set.Progress(min(res.Searches, total), total)
		}
	}
	// A beam of the best stages so far: each round searches the source
	// side for each load network in it and the load side for each source
	// network in it, each side once per network of the other.
	searchedFor := map[string]bool{} // "s|"+load or "l|"+source: done
	beam := ss.top(ss.set.Beam)
	for round := 0; round < ss.set.Rounds; round++ {
		res.Rounds++
		before := beamKey(beam)
		for _, d := range beam {
			k := "s|" + d.Load.String()
			if searchedFor[k] {
				continue
			}
			searchedFor[k] = true
			cands, n, err := ss.sourceCandidates(ctx, d.Load, noiseOK)
			res.Searches += n
			progress()
			if err != nil {
				return nil, err
			}
			for _, c := range cands {
				if _, err := ss.judge(c, d.Load); err != nil {
					return nil, err
				}
			}
		}
		for _, d := range ss.top(ss.set.Beam) {
			k := "l|" + d.Source.String()
			if searchedFor[k] {
				continue
			}
			searchedFor[k] = true
			cands, n, err := ss.loadCandidates(ctx, d.Source)
			res.Searches += n
			progress()
			if err != nil {
				return nil, err
			}
			for _, c := range cands {
				if _, err := ss.judge(d.Source, c); err != nil {
					return nil, err
				}
			}
		}
		beam = ss.top(ss.set.Beam)
		if beamKey(beam) == before {
			break
		}
	}
	res.Designs = ss.top(ss.set.Designs)
	res.Stages, res.SidesExact = ss.stages, ss.exact
	return res, nil
}

// top returns the n best stages judged so far, best first (ties by the
// networks' names, so the order does not depend on the map).
func (ss *stageSearch) top(n int) []StageDesign {
	out := make([]StageDesign, 0, len(ss.pool))
	for _, d := range ss.pool {
		out = append(out, d)
	}
	sort.Slice(out, func(i, j int) bool {
		a, b := keyOf(out[i].StageMetrics), keyOf(out[j].StageMetrics)
		if a.better(b) {
			return true
		}
		if b.better(a) {
			return false
		}
		return designKey(out[i]) < designKey(out[j])
	})
	if len(out) > n {
		out = out[:n]
	}
	return out
}

func designKey(d StageDesign) string { return d.Source.String() + "|" + d.Load.String() }

// beamKey names the stages of a beam.
func beamKey(b []StageDesign) string {
	s := ""
	for _, d := range b {
		s += designKey(d) + ";"
	}
	return s
}

// judge evaluates the stage with networks src and load (as built) and
// keeps it in the pool.
func (ss *stageSearch) judge(src, load Network) (amp.StageMetrics, error) {
	st, err := StageOf(ss.dev, ss.noise, ss.z0, src, load)
	if err != nil {
		return amp.StageMetrics{}, err
	}
	m, err := amp.EvaluateStage(st, ss.bands)
	if err != nil {
		return amp.StageMetrics{}, err
	}
	ss.stages++
	key := src.String() + "|" + load.String()
	if _, ok := ss.pool[key]; !ok {
		ss.pool[key] = StageDesign{Source: src.Clone(), Load: load.Clone(), StageMetrics: m}
	}
	return m, nil
}

// StageOf returns the stage of device dev (with its noise parameters)
// between terminations of z0Ohm with the networks src and load, each
// listed from the device outward and built at its standard values
// ([Network.Built]). A nil or empty network is a through connection.
func StageOf(dev *rfmath.Sweep, noise []touchstone.NoisePoint, z0Ohm float64, src, load Network) (*amp.Stage, error) {
	st := &amp.Stage{Device: dev, Noise: noise, Z0Ohm: z0Ohm}
	if len(src) > 0 {
		l, err := src.Built().Ladder()
		if err != nil {
			return nil, fmt.Errorf("source network: %w", err)
		}
		st.Source = l
	}
	if len(load) > 0 {
		l, err := load.Built().Ladder()
		if err != nil {
			return nil, fmt.Errorf("load network: %w", err)
		}
		st.Load = l
	}
	return st, nil
}

// StageLoads returns what each network of a stage matches, as [Search]
// and [Evaluate] take a load: the device's input reflection Γin with the
// load network in place (the source network's load), and its output
// reflection Γout with the source network in place (the load network's),
// at every frequency of the device's sweep, each against the
// terminations' z0Ohm (0 means 50 Ω). Power into the first is the power
// into the device; for the second see the package documentation
// (reciprocity).
func StageLoads(dev *rfmath.Sweep, noise []touchstone.NoisePoint, z0Ohm float64, src, load Network) (in, out Load, err error) {
	st, err := StageOf(dev, noise, z0Ohm, src, load)
	if err != nil {
		return Load{}, Load{}, err
	}
	pts, err := st.SweepTo(nil)
	if err != nil {
		return Load{}, Load{}, err
	}
	if z0Ohm == 0 {
		z0Ohm = 50
	}
	in = Load{FreqHz: dev.FreqHz, Gamma: make([]complex128, len(pts)), Z0Ohm: z0Ohm}
	out = Load{FreqHz: dev.FreqHz, Gamma: make([]complex128, len(pts)), Z0Ohm: z0Ohm}
	for k, p := range pts {
		in.Gamma[k] = renorm(p.GammaIn, dev.Z0[0], z0Ohm)
		out.Gamma[k] = renorm(p.GammaOut, dev.Z0[1], z0Ohm)
	}
	return in, out, nil
}

// renorm returns the reflection g against from as one against to: the
// same impedance (REFERENCE-CHECKS §11).
func renorm(g complex128, from, to float64) complex128 {
	if from == to {
		return g
	}
	rho := complex((to-from)/(to+from), 0)
	return (g - rho) / (1 - rho*g)
}

// sideSettings returns the one-side search settings.
func (ss *stageSearch) sideSettings() *Settings {
	s := ss.set.Settings
	s.Objective = PowerToLoad
	s.Progress = nil
	return &s
}

// search runs one side's search and returns its networks.
func (ss *stageSearch) search(ctx context.Context, l Load, bands []Band) ([]Network, error) {
	res, err := Search(ctx, l, bands, ss.sideSettings())
	if err != nil {
		return nil, err
	}
	ss.exact = ss.exact && res.Exact
	out := make([]Network, len(res.Designs))
	for i, d := range res.Designs {
		out[i] = d.Network
	}
	return out, nil
}

// sourceCandidates searches the source side with the load network fixed:
// for the gain match, and for each blend toward the noise match when
// noiseOK. It returns the candidates and the number of searches run.
func (ss *stageSearch) sourceCandidates(ctx context.Context, load Network, noiseOK bool) ([]Network, int, error) {
	in, _, err := StageLoads(ss.dev, ss.noise, ss.z0, nil, load)
	if err != nil {
		return nil, 0, err
	}
	bands := make([]Band, len(ss.bands))
	for i, b := range ss.bands {
		bands[i] = Band{LoHz: b.LoHz, HiHz: b.HiHz, MinReturnLossDB: b.MinInputRLdB}
	}
	pts, err := bandPoints(in, bands)
	if err != nil {
		return nil, 0, err
	}
	for _, g := range pts.gamma {
		if !(cmplx.Abs(g) < 1) {
			return nil, 0, nil // the device oscillates in the band with this load network
		}
	}
	var out []Network
	n := 0
	blends := []float64{1}
	if noiseOK {
		blends = ss.set.Blends
	}
	z1 := ss.dev.Z0[0]
	for _, t := range blends {
		if err := ctx.Err(); err != nil {
			return nil, n, err
		}
		l, bs := in, bands
		if t < 1 {
			// A load of Γt* at the band points, with no return-loss
			// requirement: the networks that present Γt.
			l = Load{FreqHz: pts.freqHz, Gamma: make([]complex128, len(pts.freqHz)), Z0Ohm: ss.z0}
			for k, f := range pts.freqHz {
				np, err := amp.NoiseAt(ss.noise, f)
				if err != nil {
					return nil, n, err
				}
				gin := renorm(pts.gamma[k], ss.z0, z1) // against the device's reference
				gt := rfmath.Lerp(amp.GammaOpt(np), cmplx.Conj(gin), t)
				zt := rfmath.ZFromGamma(gt, complex(z1, 0))
				l.Gamma[k] = rfmath.GammaFromZ(cmplx.Conj(zt), complex(ss.z0, 0))
			}
			bs = make([]Band, len(bands))
			for i, b := range bands {
				bs[i] = Band{LoHz: b.LoHz, HiHz: b.HiHz}
			}
		}
		cs, err := ss.search(ctx, l, bs)
		n++
		if err != nil {
			return nil, n, err
		}
		out = append(out, cs...)
	}
	return out, n, nil
}

// loadCandidates searches the load side with the source network fixed.
func (ss *stageSearch) loadCandidates(ctx context.Context, src Network) ([]Network, int, error) {
	_, out, err := StageLoads(ss.dev, ss.noise, ss.z0, src, nil)
	if err != nil {
		return nil, 0, err
	}
	bands := make([]Band, len(ss.bands))
	for i, b := range ss.bands {
		bands[i] = Band{LoHz: b.LoHz, HiHz: b.HiHz, MinReturnLossDB: b.MinOutputRLdB}
	}
	pts, err := bandPoints(out, bands)
	if err != nil {
		return nil, 0, err
	}
	for _, g := range pts.gamma {
		if !(cmplx.Abs(g) < 1) {
			return nil, 0, nil // the device oscillates in the band with this source network
		}
	}
	if err := ctx.Err(); err != nil {
		return nil, 0, err
	}
	cs, err := ss.search(ctx, out, bands)
	return cs, 1, err
}
