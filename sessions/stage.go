package sessions

import (
	"math"
	"math/cmplx"
	"slices"
)

// Ops of the amplifier view and the transistor stage (see [Change]).
const (
	OpAmpSet      = "amp.set"
	OpAmpPoint    = "amp.point"
	OpAmpClear    = "amp.clear"
	OpStageSet    = "stage.set"
	OpStageRemove = "stage.remove"
	OpStageStore  = "stage.store"
	OpStageUse    = "stage.use"
	OpStageParts  = "stage.parts"
)

// AmpView is the amplifier panel of a 2-port sweep: the frequency it is
// read at, the circles it draws and the terminations placed on it.
// GainStepsDB are the gain circles in dB below the device's maximum gain,
// NFStepsDB the noise-figure circles in dB above NFmin; GammaS and GammaL
// are the source and load terminations (nil: none placed yet).
type AmpView struct {
	SweepID     string    `json:"sweepId"`
	FreqHz      float64   `json:"freqHz"`
	GainStepsDB []float64 `json:"gainStepsDB,omitempty"`
	NFStepsDB   []float64 `json:"nfStepsDB,omitempty"`
	GammaS      *Point    `json:"gammaS,omitempty"`
	GammaL      *Point    `json:"gammaL,omitempty"`
}

// Stage is a transistor stage: the device (a 2-port sweep), the source
// network from the source termination to the device's input and the load
// network from its output to the load termination (two of the session's
// networks, each listed from the device outward, on port 1 and port 2 of
// the device's sweep), the requirement per band, and the latest stage
// search's designs. A network ID that no longer names a network is a
// through connection.
type Stage struct {
	SweepID         string             `json:"sweepId"`
	SourceNetworkID string             `json:"sourceNetworkId,omitempty"`
	LoadNetworkID   string             `json:"loadNetworkId,omitempty"`
	Reqs            []StageReq         `json:"reqs,omitempty"`
	Search          *StageSearchResult `json:"search,omitempty"`
}

// StageReq is what the stage must do in band BandID: the least gain, the
// largest noise figure and the least input and output return losses, in
// dB; zero asks nothing.
type StageReq struct {
	BandID        string  `json:"bandId"`
	MinGainDB     float64 `json:"minGainDB,omitempty"`
	MaxNFdB       float64 `json:"maxNFdB,omitempty"`
	MinInputRLdB  float64 `json:"minInputRLdB,omitempty"`
	MinOutputRLdB float64 `json:"minOutputRLdB,omitempty"`
}

// StageSearchResult is what a stage search found: its settings in words,
// whether every one-side search was exact, and its designs, best first.
type StageSearchResult struct {
	Settings   string        `json:"settings"`
	SidesExact bool          `json:"sidesExact"`
	Designs    []StageDesign `json:"designs"`
	Note       string        `json:"note,omitempty"`
}

// StageDesign is one pair of networks a stage search found, with its least
// margin when found (the page judges it again).
type StageDesign struct {
	Source   []Part  `json:"source"`
	Load     []Part  `json:"load"`
	MarginDB float64 `json:"marginDB"`
}

// AmpChange holds the payload of the amplifier and stage ops; it is part
// of [Change].
type AmpChange struct {
	// Plane is "source" or "load" for amp.point.
	Plane string `json:"plane,omitempty"`
	// GainStepsDB and NFStepsDB set the circles of amp.set (nil: as they
	// are; empty: none).
	GainStepsDB *[]float64 `json:"gainStepsDB,omitempty"`
	NFStepsDB   *[]float64 `json:"nfStepsDB,omitempty"`
	// SourceNetworkID and LoadNetworkID choose the stage's networks in
	// stage.set; StageReqs replaces its requirements (nil: as they are).
	SourceNetworkID string     `json:"sourceNetworkId,omitempty"`
	LoadNetworkID   string     `json:"loadNetworkId,omitempty"`
	StageReqs       []StageReq `json:"stageReqs,omitempty"`
	// StageSearch is stage.store's result.
	StageSearch *StageSearchResult `json:"stageSearch,omitempty"`
}

// Limits of the amplifier view.
const (
	maxCircleSteps = 8
	maxGainStepDB  = 40
	maxNFStepDB    = 20
	maxStageDesign = 16
	// maxTermination is the largest |Γ| a placed termination may have:
	// passive, and just inside the rim so that its figures stay finite.
	maxTermination = 0.999
)

// computeAmp applies the amplifier and stage ops to next (a clone of cur),
// each by a function of its own.
func computeAmp(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	switch op {
	case OpAmpSet:
		return computeAmpSet(cur, next, ch, r, lim)
	case OpAmpPoint:
		return computeAmpPoint(cur, next, ch, r, lim)
	case OpAmpClear:
		next.Amp = nil
	case OpStageSet:
		return computeStageSet(cur, next, ch, r, lim)
	case OpStageRemove:
		if cur.Stage == nil {
			return invalid(op, "", "the session has no stage")
		}
		next.Stage = nil
	case OpStageStore:
		return computeStageStore(cur, next, ch, r, lim)
	case OpStageParts:
		return computeStageParts(cur, next, ch, r, lim)
	case OpStageUse:
		return computeStageUse(cur, next, ch, r, lim)
	}
	return nil
}

// twoPortOf returns the sweep id of cur, which op needs to be a 2-port,
// and records it in r's event.
func twoPortOf(cur *State, op string, r *result, id string) (SweepRef, error) {
	i := cur.SweepIndex(id)
	if i < 0 {
		if id == "" {
			return SweepRef{}, invalid(op, "sweepId", "choose a 2-port sweep (a transistor's S-parameters)")
		}
		return SweepRef{}, notFound(op, "sweepId", "sweep", id)
	}
	ref := cur.Sweeps[i]
	if ref.Ports != 2 {
		return SweepRef{}, invalid(op, "sweepId", "sweep %q is a %d-port; the amplifier view reads a 2-port", ref.Name, ref.Ports)
	}
	r.ev.SweepID = ref.ID
	return ref, nil
}

// computeAmpSet applies amp.set: the amplifier view opens on a 2-port
// sweep (the one given, else the one open; another sweep drops the
// terminations placed) at the frequency given, else the one it has, else
// the design frequency, with the circles' steps given.
func computeAmpSet(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	a := AmpView{}
	if cur.Amp != nil {
		a = *cur.Amp
	}
	if ch.SweepID != "" && ch.SweepID != a.SweepID {
		// Another device: the terminations placed on the old one go.
		a = AmpView{SweepID: ch.SweepID, GainStepsDB: a.GainStepsDB, NFStepsDB: a.NFStepsDB}
	}
	ref, err := twoPortOf(cur, op, r, a.SweepID)
	if err != nil {
		return err
	}
	if ch.FreqHz != 0 {
		a.FreqHz = ch.FreqHz
	}
	if a.FreqHz == 0 {
		a.FreqHz = defaultDesignHz(cur, ref)
	}
	if !finite(a.FreqHz) || a.FreqHz < ref.FminHz || a.FreqHz > ref.FmaxHz {
		return invalid(op, "freqHz", "%g Hz is outside the sweep %q (%g–%g Hz)", a.FreqHz, ref.Name, ref.FminHz, ref.FmaxHz)
	}
	if ch.GainStepsDB != nil {
		if a.GainStepsDB, err = steps(op, "gainStepsDB", *ch.GainStepsDB, maxGainStepDB); err != nil {
			return err
		}
	}
	if ch.NFStepsDB != nil {
		if a.NFStepsDB, err = steps(op, "nfStepsDB", *ch.NFStepsDB, maxNFStepDB); err != nil {
			return err
		}
	}
	next.Amp = &a
	return nil
}

// computeAmpPoint applies amp.point: the source or load termination is
// placed at the point given, drawn onto the rim at maxTermination when it
// lies beyond.
func computeAmpPoint(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	if cur.Amp == nil {
		return invalid(op, "", "open the amplifier view on a 2-port sweep first")
	}
	if ch.Gamma == nil || !finite(ch.Gamma.Re) || !finite(ch.Gamma.Im) {
		return invalid(op, "gamma", "a termination needs a finite point {re, im}")
	}
	g := complex(ch.Gamma.Re, ch.Gamma.Im)
	if m := cmplx.Abs(g); m > maxTermination {
		g *= complex(maxTermination/m, 0) // onto the rim: a passive termination
	}
	p := &Point{Re: real(g), Im: imag(g)}
	a := *cur.Amp
	switch ch.Plane {
	case "source":
		a.GammaS = p
	case "load":
		a.GammaL = p
	default:
		return invalid(op, "plane", "%q: want \"source\" or \"load\"", ch.Plane)
	}
	next.Amp = &a
	return nil
}

// computeStageSet applies stage.set: the stage sits on a 2-port sweep (the
// one given, else its own, else the amplifier view's), with the networks
// given on each side (see [stageNetworks]) and the requirements given.
func computeStageSet(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	s := Stage{}
	if cur.Stage != nil {
		s = *cur.Stage
		s.Reqs = slices.Clone(s.Reqs)
	}
	if ch.SweepID != "" {
		s.SweepID = ch.SweepID
	}
	if s.SweepID == "" && cur.Amp != nil {
		s.SweepID = cur.Amp.SweepID
	}
	ref, err := twoPortOf(cur, op, r, s.SweepID)
	if err != nil {
		return err
	}
	if err := stageNetworks(op, cur, next, ch, &s, ref, lim); err != nil {
		return err
	}
	if ch.StageReqs != nil {
		reqs, err := checkStageReqs(op, cur, ch.StageReqs)
		if err != nil {
			return err
		}
		s.Reqs = reqs
	}
	next.Stage = &s
	r.ev.NetworkID = next.ActiveNetwork
	return nil
}

// stageNetworks sets the source and load networks of the stage s on the
// device ref, one side at a time: the network the change asks for, which
// must sit on the device's port of that side; else the side's network as
// it is, while it still sits on the device; else a new empty network on
// that port, added to next (the source side's becomes the active network).
func stageNetworks(op string, cur, next *State, ch *Change, s *Stage, ref SweepRef, lim Limits) error {
	for _, side := range []struct {
		field, name string
		port        int
		asked       string
		id          *string
	}{
		{"sourceNetworkId", "Stage source", 1, ch.SourceNetworkID, &s.SourceNetworkID},
		{"loadNetworkId", "Stage load", 2, ch.LoadNetworkID, &s.LoadNetworkID},
	} {
		if side.asked != "" {
			i := next.NetworkIndex(side.asked)
			if i < 0 {
				return notFound(op, side.field, "network", side.asked)
			}
			n := next.Networks[i]
			if n.SweepID != ref.ID || max(n.Port, 1) != side.port {
				return invalid(op, side.field, "network %q sits on another sweep or port; a stage's %s network sits on port %d of %q", n.Name, side.name[6:], side.port, ref.Name)
			}
			*side.id = side.asked
			continue
		}
		if i := next.NetworkIndex(*side.id); i >= 0 && next.Networks[i].SweepID == ref.ID {
			continue
		}
		// A new empty network on the device's port.
		if len(next.Networks) >= lim.Networks {
			return invalid(op, "", "the session already has %d networks, the limit; remove one for the stage's %s network", len(next.Networks), side.name[6:])
		}
		id, err := uniqueID(func(id string) bool { return next.NetworkIndex(id) >= 0 })
		if err != nil {
			return err
		}
		next.Networks = append(next.Networks, Network{ID: id, Name: side.name, SweepID: ref.ID, Port: side.port,
			DesignHz: defaultDesignHz(cur, ref), PowerW: 0.1, Parts: []Part{}})
		*side.id = id
		if side.port == 1 {
			next.ActiveNetwork = id // the workbench opens on the source side
		}
	}
	return nil
}

// checkStageReqs checks the stage's requirements in: each for a band of
// cur, once, with figures from −100 (gain) or 0 to 100 dB.
func checkStageReqs(op string, cur *State, in []StageReq) ([]StageReq, error) {
	reqs := make([]StageReq, 0, len(in))
	for _, q := range in {
		if cur.BandIndex(q.BandID) < 0 {
			return nil, notFound(op, "stageReqs.bandId", "band", q.BandID)
		}
		if slices.ContainsFunc(reqs, func(o StageReq) bool { return o.BandID == q.BandID }) {
			return nil, invalid(op, "stageReqs", "band %q is given twice", q.BandID)
		}
		for _, v := range []struct {
			field string
			v     float64
			lo    float64
		}{{"minGainDB", q.MinGainDB, -100}, {"maxNFdB", q.MaxNFdB, 0}, {"minInputRLdB", q.MinInputRLdB, 0}, {"minOutputRLdB", q.MinOutputRLdB, 0}} {
			if !finite(v.v) || v.v < v.lo || v.v > 100 {
				return nil, invalid(op, "stageReqs."+v.field, "%g dB is not a requirement from %g to 100 dB", v.v, v.lo)
			}
		}
		reqs = append(reqs, q)
	}
	return reqs, nil
}

// computeStageStore applies stage.store: a stage search's result, each
// design's parts checked and a margin that is not finite held at ±999 dB.
func computeStageStore(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	if cur.Stage == nil {
		return invalid(op, "", "the session has no stage")
	}
	res := ch.StageSearch
	if res == nil {
		return invalid(op, "stageSearch", "missing")
	}
	if len(res.Designs) > maxStageDesign {
		return invalid(op, "stageSearch.designs", "%d designs; at most %d are kept", len(res.Designs), maxStageDesign)
	}
	c := *res
	c.Designs = make([]StageDesign, len(res.Designs))
	for i, d := range res.Designs {
		if len(d.Source) > lim.PartsPerNetwork || len(d.Load) > lim.PartsPerNetwork {
			return invalid(op, "stageSearch.designs", "design %d has more than %d parts on a side", i+1, lim.PartsPerNetwork)
		}
		for _, side := range [][]Part{d.Source, d.Load} {
			for k := range side {
				p := side[k]
				if err := checkPart(op, &p); err != nil {
					return err
				}
			}
		}
		if !finite(d.MarginDB) {
			d.MarginDB = math.Copysign(999, d.MarginDB)
			if math.IsNaN(d.MarginDB) {
				d.MarginDB = -999
			}
		}
		c.Designs[i] = StageDesign{Source: slices.Clone(d.Source), Load: slices.Clone(d.Load), MarginDB: d.MarginDB}
	}
	s := *cur.Stage
	s.Search = &c
	next.Stage = &s
	return nil
}

// computeStageParts applies stage.parts: the parts given replace those of
// the stage's source or load network, which becomes the active one.
func computeStageParts(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	if cur.Stage == nil {
		return invalid(op, "", "the session has no stage")
	}
	id := cur.Stage.SourceNetworkID
	switch ch.Plane {
	case "source":
	case "load":
		id = cur.Stage.LoadNetworkID
	default:
		return invalid(op, "plane", "%q: want \"source\" or \"load\"", ch.Plane)
	}
	if len(ch.Parts) > lim.PartsPerNetwork {
		return invalid(op, "parts", "%d parts; a network holds at most %d", len(ch.Parts), lim.PartsPerNetwork)
	}
	if err := setParts(op, next, id, ch.Parts); err != nil {
		return err
	}
	next.ActiveNetwork = id
	r.ev.NetworkID = id
	return nil
}

// computeStageUse applies stage.use: a design of the stage search replaces
// the parts of both of the stage's networks; the source side becomes the
// active network.
func computeStageUse(cur, next *State, ch *Change, r *result, lim Limits) error {
	op := ch.Op
	if cur.Stage == nil || cur.Stage.Search == nil {
		return invalid(op, "", "the session has no stage search result")
	}
	if ch.Index == nil || *ch.Index < 0 || *ch.Index >= len(cur.Stage.Search.Designs) {
		return invalid(op, "index", "no such design")
	}
	d := cur.Stage.Search.Designs[*ch.Index]
	if err := setParts(op, next, cur.Stage.SourceNetworkID, d.Source); err != nil {
		return err
	}
	if err := setParts(op, next, cur.Stage.LoadNetworkID, d.Load); err != nil {
		return err
	}
	next.ActiveNetwork = cur.Stage.SourceNetworkID
	r.ev.NetworkID = next.ActiveNetwork
	return nil
}

// setParts replaces the parts of network id of next with copies of ps,
// each checked and given a new id.
func setParts(op string, next *State, id string, ps []Part) error {
	i := next.NetworkIndex(id)
	if i < 0 {
		return invalid(op, "", "the stage's network is gone; set the stage up again")
	}
	n := &next.Networks[i]
	n.Parts = make([]Part, 0, len(ps))
	for _, p := range ps {
		p.ID = ""
		p.Params = cloneParams(p.Params)
		if err := checkPart(op, &p); err != nil {
			return err
		}
		pid, err := uniqueID(func(id string) bool { return slices.ContainsFunc(n.Parts, func(q Part) bool { return q.ID == id }) })
		if err != nil {
			return err
		}
		p.ID = pid
		n.Parts = append(n.Parts, p)
	}
	return nil
}

// steps checks a list of circle steps in dB: positive, at most hi, at
// most maxCircleSteps of them; returned sorted without repeats.
func steps(op, field string, in []float64, hi float64) ([]float64, error) {
	if len(in) > maxCircleSteps {
		return nil, invalid(op, field, "%d circles; at most %d", len(in), maxCircleSteps)
	}
	out := make([]float64, 0, len(in))
	for _, v := range in {
		if !finite(v) || v <= 0 || v > hi {
			return nil, invalid(op, field, "%g dB: a circle's step is a number of dB above 0 and at most %g", v, hi)
		}
		if !slices.Contains(out, v) {
			out = append(out, v)
		}
	}
	slices.Sort(out)
	return out, nil
}

func cloneParams(m map[string]float64) map[string]float64 {
	if m == nil {
		return nil
	}
	c := make(map[string]float64, len(m))
	for k, v := range m {
		c[k] = v
	}
	return c
}

// tidyAmp keeps the amplifier view and the stage consistent with the rest
// of next after any op: a view or stage whose sweep is gone goes; a stage
// network that is gone is a through connection; requirements of bands
// that are gone go.
func tidyAmp(next *State) {
	if next.Amp != nil && next.SweepIndex(next.Amp.SweepID) < 0 {
		next.Amp = nil
	}
	s := next.Stage
	if s == nil {
		return
	}
	if next.SweepIndex(s.SweepID) < 0 {
		next.Stage = nil
		return
	}
	src, load := next.NetworkIndex(s.SourceNetworkID) >= 0 || s.SourceNetworkID == "", next.NetworkIndex(s.LoadNetworkID) >= 0 || s.LoadNetworkID == ""
	reqsOK := !slices.ContainsFunc(s.Reqs, func(q StageReq) bool { return next.BandIndex(q.BandID) < 0 })
	if src && load && reqsOK {
		return
	}
	c := *s
	if !src {
		c.SourceNetworkID = ""
	}
	if !load {
		c.LoadNetworkID = ""
	}
	c.Reqs = slices.DeleteFunc(slices.Clone(s.Reqs), func(q StageReq) bool { return next.BandIndex(q.BandID) < 0 })
	next.Stage = &c
}
