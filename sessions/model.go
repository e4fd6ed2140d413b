package sessions

import (
	"maps"
	"slices"
	"time"

	"matchbench/rfmath"
)

// Session describes a session as listed. The tokens are filled only by
// [Store.Create] and [Store.ReissueTokens], the two calls that make them;
// the store keeps only their SHA-256 hashes.
type Session struct {
	ID        string    `json:"id"`
	Name      string    `json:"name"`
	CreatedAt time.Time `json:"createdAt"`
	// Version counts committed changes: it bumps on every Apply, undo and
	// redo included, and never goes back.
	Version   int64  `json:"version"`
	EditToken string `json:"editToken,omitempty"`
	ViewToken string `json:"viewToken,omitempty"`
}

// State is everything a session shows and edits, apart from the sweeps'
// numbers, which are immutable and stored once (see [Store.Sweep]).
//
// A State obtained from the store (from [Store.State], [Event] or
// [Catchup]) is a snapshot shared with other readers: treat it as read-only.
// The store never modifies a state it has handed out; each change builds a
// new one.
type State struct {
	Name    string        `json:"name"`
	Sweeps  []SweepRef    `json:"sweeps"`
	Markers []Marker      `json:"markers"`
	Bands   []Band        `json:"bands"`
	Chart   ChartSettings `json:"chart"`

	// Search holds the latest broadband search's best designs, if any.
	Search *SearchResult `json:"search,omitempty"`

	// TimeDomain holds the time-domain view's settings.
	TimeDomain TimeDomain `json:"timeDomain"`

	// Networks are the candidate matching networks; ActiveNetwork names the
	// one drawn and edited.
	Networks      []Network `json:"networks,omitempty"`
	ActiveNetwork string    `json:"activeNetwork,omitempty"`

	// LoadSets group sweeps that a network must match at once.
	LoadSets []LoadSet `json:"loadSets,omitempty"`

	// Tuning holds the rounds of bench tuning, oldest first: each a
	// re-measured board, the fit of it and the swaps it suggested.
	Tuning []TuneRound `json:"tuning,omitempty"`
	// Amp is the amplifier view of a 2-port sweep, and Stage a transistor
	// stage with its two networks (see stage.go); nil for none. Both are
	// replaced whole by their ops, never changed in place.
	Amp   *AmpView `json:"amp,omitempty"`
	Stage *Stage   `json:"stage,omitempty"`
}

// LoadSet groups sweeps of one load: the same device in several conditions
// (Kind "conditions": a design must hold in every one) or several boards
// of a lot (Kind "lot": the yield draws a board at random for each build).
type LoadSet struct {
	ID      string      `json:"id"`
	Name    string      `json:"name"`
	Kind    string      `json:"kind"`
	Members []SetMember `json:"members"`
}

// Kinds of load set.
const (
	SetConditions = "conditions"
	SetLot        = "lot"
)

// SetMember is one sweep of a set: the reflection S(Port,Port) of sweep
// SweepID, its weight in a lot's draws (0 means 1), and whether it is only
// judged and shown (Advisory) rather than required to pass.
type SetMember struct {
	SweepID  string  `json:"sweepId"`
	Port     int     `json:"port,omitempty"`
	Weight   float64 `json:"weight,omitempty"`
	Advisory bool    `json:"advisory,omitempty"`
}

// LoadSetIndex returns the index of set id in s.LoadSets, or −1.
func (s *State) LoadSetIndex(id string) int {
	return slices.IndexFunc(s.LoadSets, func(l LoadSet) bool { return l.ID == id })
}

// SweepRef is a sweep as the session lists it. The numbers are read with
// [Store.Sweep] and the file as uploaded with [Store.Raw].
type SweepRef struct {
	ID       string  `json:"id"`
	Name     string  `json:"name"`
	FileName string  `json:"fileName"`
	Color    string  `json:"color"` // "#rrggbb"
	Visible  bool    `json:"visible"`
	Ports    int     `json:"ports"`
	Points   int     `json:"points"`
	FminHz   float64 `json:"fminHz"`
	FmaxHz   float64 `json:"fmaxHz"`

	// RefPlane moves the sweep's reference plane; nil means as measured.
	// No op sets it yet (a later issue does).
	RefPlane *RefPlane `json:"refPlane,omitempty"`
}

// DataBytes is the size of the sweep's numbers in memory: 8 bytes a
// frequency, 8 a reference impedance and 16 a complex value, of which
// there are Ports² a point.
func (r SweepRef) DataBytes() int64 {
	p, n := int64(r.Ports), int64(r.Points)
	return 8*n + 8*p + 16*p*p*n
}

// Marker is a point on one trace of a sweep, held by frequency. The trace is
// the reflection at port Port: 1 → S11, 2 → S22. FreqHz may lie between
// measured points; the value there is interpolated as
// [rfmath.Sweep.InterpAt] does.
type Marker struct {
	ID      string  `json:"id"`
	SweepID string  `json:"sweepId"`
	Port    int     `json:"port"`
	FreqHz  float64 `json:"freqHz"`
	Label   string  `json:"label,omitempty"`
}

// Band is a frequency range of interest with its requirements: a least
// return loss in dB and a least share of the available power at the load
// (0 < MinPowerToLoad ≤ 1). Zero means no requirement.
type Band struct {
	ID              string  `json:"id"`
	Name            string  `json:"name"`
	LoHz            float64 `json:"loHz"`
	HiHz            float64 `json:"hiHz"`
	MinReturnLossDB float64 `json:"minReturnLossDB"`
	MinPowerToLoad  float64 `json:"minPowerToLoad,omitempty"`
}

// HasRequirement reports whether the band asks anything of a match.
func (b Band) HasRequirement() bool { return b.MinReturnLossDB > 0 || b.MinPowerToLoad > 0 }

// ChartSettings are the chart's grids, overlays and zoom.
type ChartSettings struct {
	ImpedanceGrid  bool    `json:"impedanceGrid"`
	AdmittanceGrid bool    `json:"admittanceGrid"`
	Zoom           float64 `json:"zoom"`       // 1 = whole chart, 1…MaxZoom
	VSWRCircle     float64 `json:"vswrCircle"` // 0 = off, else > 1
	// ReturnLossCircleDB draws the circle |Γ| = 10^(−RL/20); 0 = off.
	ReturnLossCircleDB  float64   `json:"returnLossCircleDB"`
	QArcs               []float64 `json:"qArcs,omitempty"` // loaded-Q arcs, each > 0
	ShowAngleScale      bool      `json:"showAngleScale"`
	ShowWavelengthScale bool      `json:"showWavelengthScale"`
}

// DefaultChart is the chart of a new session: the impedance grid, whole
// chart, no overlays.
var DefaultChart = ChartSettings{ImpedanceGrid: true, Zoom: 1}

// RefPlane describes how a sweep's reference plane is moved: a 2-port
// fixture removed at the analyser side, then a port extension (delay and
// loss), then a change of reference impedance. The raw sweep is never
// changed; the corrected one is computed from it.
type RefPlane struct {
	DelayS     float64 `json:"delayS,omitempty"`     // one-way electrical delay
	LossDB     float64 `json:"lossDB,omitempty"`     // loss at LossRefHz, scaling as √f
	LossRefHz  float64 `json:"lossRefHz,omitempty"`  //
	FlatLossDB float64 `json:"flatLossDB,omitempty"` // frequency-independent loss
	// FixtureSweepID names a 2-port sweep of the fixture to de-embed;
	// FixturePortFacingAnalyser is its port (1 or 2) on the analyser side.
	FixtureSweepID            string `json:"fixtureSweepId,omitempty"`
	FixturePortFacingAnalyser int    `json:"fixturePortFacingAnalyser,omitempty"`
	// RenormOhm, when positive, shows the sweep in this real reference
	// impedance instead of the file's.
	RenormOhm float64 `json:"renormOhm,omitempty"`
}

// Network is a named candidate matching network placed between the load
// (the trace S(Port,Port) of sweep SweepID) and the source. Parts are in
// order from the load toward the source. DesignHz is the frequency whose
// point the chart follows along the matching path; PowerW is the source's
// available power for the voltage and current figures.
type Network struct {
	ID       string  `json:"id"`
	Name     string  `json:"name"`
	SweepID  string  `json:"sweepId,omitempty"`
	Port     int     `json:"port,omitempty"`
	DesignHz float64 `json:"designHz,omitempty"`
	PowerW   float64 `json:"powerW,omitempty"`
	Parts    []Part  `json:"parts"`
	// YieldBuilds, when positive, asks for a Monte Carlo of that many
	// builds over the parts' tolerances (seed YieldSeed, 0 meaning 1).
	YieldBuilds int    `json:"yieldBuilds,omitempty"`
	YieldSeed   uint64 `json:"yieldSeed,omitempty"`
	// ChuRadiusM, when positive, is the radius of the sphere enclosing the
	// antenna, for the Chu limit on its Q.
	ChuRadiusM float64 `json:"chuRadiusM,omitempty"`
	// SetID, when set, names a load set the network is judged across; the
	// chart follows SweepID's point, which is one of its members.
	SetID string `json:"setId,omitempty"`
	// Layout, when set, is the board the network is built on: its parts'
	// pads and the traces between them, which the panel's figures, the
	// chart and the exports then include.
	Layout *Layout `json:"layout,omitempty"`
}

// Layout is the board a network is built on (rfmath/match.Layout):
// Footprint names the parts' land pattern ("0402", "0603" or "" for none),
// PadCF each pad's capacitance to ground (0: the footprint's typical
// figure), Traces the traces in the gaps between parts.
type Layout struct {
	Footprint string  `json:"footprint,omitempty"`
	PadCF     float64 `json:"padCF,omitempty"`
	Traces    []Trace `json:"traces,omitempty"`
}

// Trace is a trace in gap Gap of a network (0 between the load and the
// first part, g between parts g and g+1 counted from the load): LengthM
// long, of characteristic impedance Z0Ohm and effective permittivity
// EpsEff.
type Trace struct {
	Gap     int     `json:"gap"`
	LengthM float64 `json:"lengthM"`
	Z0Ohm   float64 `json:"z0Ohm"`
	EpsEff  float64 `json:"epsEff"`
}

// clone returns a deep copy of l (nil for nil).
func (l *Layout) clone() *Layout {
	if l == nil {
		return nil
	}
	c := *l
	c.Traces = slices.Clone(l.Traces)
	return &c
}

// TuneRound is one round of bench tuning: a sweep of the board as built
// with network NetworkID fitted (its parts and layout as they were then),
// the fit of the board and the swaps it suggested, each with its predicted
// figures as computed when the round was fitted, and the swap chosen, if
// any. The server fits; pages do not send rounds.
type TuneRound struct {
	ID           string     `json:"id"`
	NetworkID    string     `json:"networkId"`
	NetworkName  string     `json:"networkName"`
	LoadSweepID  string     `json:"loadSweepId"`
	Port         int        `json:"port"`
	BuiltSweepID string     `json:"builtSweepId"`
	BuiltName    string     `json:"builtName"`
	Parts        []Part     `json:"parts"`
	Layout       *Layout    `json:"layout,omitempty"`
	Bands        string     `json:"bands"` // the bands judged, in words
	Fit          TuneFit    `json:"fit"`
	AsBuilt      TuneFigs   `json:"asBuilt"`
	Suggestions  []TuneSwap `json:"suggestions"`
	// Best is the suggestion to try first, −1 for none; Chosen the one
	// made a network (−1 for none yet) and ChosenNetworkID that network.
	Best            int    `json:"best"`
	Chosen          int    `json:"chosen"`
	ChosenNetworkID string `json:"chosenNetworkId,omitempty"`
}

// TuneFit is a fit of the board as built, as the round shows it.
type TuneFit struct {
	Points             int         `json:"points"`
	LoHz               float64     `json:"loHz"`
	HiHz               float64     `json:"hiHz"`
	RMSResidual        float64     `json:"rmsResidual"`
	NominalRMSResidual float64     `json:"nominalRmsResidual"`
	Condition          float64     `json:"condition"` // 0 when singular
	Params             []TuneParam `json:"params"`
	Warnings           []string    `json:"warnings,omitempty"`
}

// TuneParam is one fitted number of the board: Sigma is its 1σ
// uncertainty, with Unknown set when the data do not determine it at all.
type TuneParam struct {
	Name         string  `json:"name"`
	Kind         string  `json:"kind"` // part, pads, trace
	Unit         string  `json:"unit"`
	Nominal      float64 `json:"nominal"`
	Value        float64 `json:"value"`
	Sigma        float64 `json:"sigma"`
	Unknown      bool    `json:"unknown,omitempty"`
	Held         bool    `json:"held,omitempty"`
	Undetermined bool    `json:"undetermined,omitempty"`
	AtBound      bool    `json:"atBound,omitempty"`
}

// TuneFigs are a board's figures across the round's bands.
type TuneFigs struct {
	WorstRLdB        float64 `json:"worstRLdB"`
	WorstPowerToLoad float64 `json:"worstPowerToLoad"`
	MarginDB         float64 `json:"marginDB"`
	Meets            bool    `json:"meets"`
}

// TuneSwap is a suggested swap: Change says it in words, Parts is the next
// candidate network, Yield the share of builds of the new parts that meet
// every band (−1 when not computed).
type TuneSwap struct {
	Change string   `json:"change"`
	Parts  []Part   `json:"parts"`
	Figs   TuneFigs `json:"figs"`
	Yield  float64  `json:"yield"`
}

// Part kinds, as [rfmath.PartKind] spells them. Lumped parts sit in series
// with the line or shunt across it.
const (
	PartSeriesL = rfmath.PartSeriesL
	PartSeriesC = rfmath.PartSeriesC
	PartSeriesR = rfmath.PartSeriesR
	PartShuntL  = rfmath.PartShuntL
	PartShuntC  = rfmath.PartShuntC
	PartShuntR  = rfmath.PartShuntR
	// PartLine is a section of transmission line in series: Value is its
	// length in metres; Params "z0Ohm", "vf", "lossDBPerM", "lossRefHz".
	PartLine = rfmath.PartLine
	// PartStubOpen and PartStubShort are shunt stubs: Value is the length in
	// metres; Params "z0Ohm", "vf", "lossDBPerM", "lossRefHz".
	PartStubOpen  = rfmath.PartStubOpen
	PartStubShort = rfmath.PartStubShort
	// PartTransformer is an ideal transformer: Value is the turns ratio n,
	// so an impedance Z on the load side is seen as n²·Z.
	PartTransformer = rfmath.PartTransformer
)

// PartKinds lists the kinds a part may have, in the order the page offers
// them.
var PartKinds = rfmath.PartKinds

// Part is one part of a [Network]. Value is in SI units: henries, farads,
// ohms, metres (lines and stubs) or a plain ratio (transformer). Model names
// the part model of a lumped part: "" or "ideal", a typical chip family
// such as "0402" or "0603", or "constq" for what-if parts of a constant Q
// (rfmath/parts.LookupModel); Params may override a model's
// figures ("q", "qRefHz", "srfHz", "esrOhm") and hold a line's figures.
// ESeries names the IEC 60063 series the value is snapped to ("" for none).
// Tolerance overrides (relative "tolRel", absolute "tolAbs") and ratings
// ("maxV", "maxA") also go in Params.
type Part struct {
	ID      string             `json:"id"`
	Kind    rfmath.PartKind    `json:"kind"`
	Value   float64            `json:"value"`
	Model   string             `json:"model,omitempty"`
	ESeries string             `json:"series,omitempty"`
	Params  map[string]float64 `json:"params,omitempty"`
}

// SearchResult is what a broadband search of standard values found for a
// load: the settings it ran with and its best designs, best first.
type SearchResult struct {
	SweepID  string `json:"sweepId"`
	SetID    string `json:"setId,omitempty"` // the search ran across this load set
	Port     int    `json:"port"`
	Settings string `json:"settings"` // as the engineer chose them, in words
	Exact    bool   `json:"exact"`    // every combination in the ranges was searched
	// Objective is what the designs are best by: "power" (power to the
	// load) or "rl" (return loss only); "" for results stored before it.
	Objective string   `json:"objective,omitempty"`
	Designs   []Design `json:"designs"`
	Note      string   `json:"note,omitempty"` // e.g. the Bode–Fano figure when nothing meets the bands
	// Layout, when set, is the board the designs were judged on (the
	// searched network's); a design made a network takes it.
	Layout *Layout `json:"layout,omitempty"`
	// StageSide is "source" or "load" when the search matched a network of
	// the transistor stage (its load was the device's port with the other
	// network in place); its designs then go into that network.
	StageSide string `json:"stageSide,omitempty"`
}

// Design is one network a search found, with its figures when it was
// found (the page judges it again on the current load and bands).
type Design struct {
	Parts            []Part        `json:"parts"`
	WorstRLdB        float64       `json:"worstRLdB"`
	MarginDB         float64       `json:"marginDB"`
	WorstPowerToLoad float64       `json:"worstPowerToLoad,omitempty"`
	Bands            []BandFigures `json:"bands"`
}

// BandFigures are a design's worst and mean return loss in one band.
type BandFigures struct {
	LoHz      float64 `json:"loHz"`
	HiHz      float64 `json:"hiHz"`
	WorstRLdB float64 `json:"worstRLdB"`
	MeanRLdB  float64 `json:"meanRLdB"`
}

// TimeDomain are the settings of the time-domain view of one sweep's
// reflection. Mode is "step" (low-pass step response as an impedance
// profile), "impulse" (low-pass) or "bandpass" (impulse magnitude);
// Window is "rect", "hann" or "kaiser" with Beta; VF converts the round
// trip into one-way distance; GateCentreS and GateSpanS (seconds, round
// trip) set the gate, a zero span meaning none.
type TimeDomain struct {
	SweepID     string  `json:"sweepId,omitempty"`
	Mode        string  `json:"mode,omitempty"`
	Window      string  `json:"window,omitempty"`
	Beta        float64 `json:"beta,omitempty"`
	VF          float64 `json:"vf,omitempty"`
	GateCentreS float64 `json:"gateCentreS,omitempty"`
	GateSpanS   float64 `json:"gateSpanS,omitempty"`
}

// NetworkIndex returns the index of network id in s.Networks, or −1.
func (s *State) NetworkIndex(id string) int {
	return slices.IndexFunc(s.Networks, func(n Network) bool { return n.ID == id })
}

// Active returns the active network, or nil.
func (s *State) Active() *Network {
	if i := s.NetworkIndex(s.ActiveNetwork); i >= 0 {
		return &s.Networks[i]
	}
	return nil
}

// clone returns a deep copy of s, so that a new state can be built without
// touching a published one.
func (s *State) clone() *State {
	c := *s
	c.Sweeps = slices.Clone(s.Sweeps)
	for i := range c.Sweeps {
		if rp := c.Sweeps[i].RefPlane; rp != nil {
			cp := *rp
			c.Sweeps[i].RefPlane = &cp
		}
	}
	c.Markers = slices.Clone(s.Markers)
	c.LoadSets = slices.Clone(s.LoadSets)
	for i := range c.LoadSets {
		c.LoadSets[i].Members = slices.Clone(c.LoadSets[i].Members)
	}
	c.Bands = slices.Clone(s.Bands)
	c.Chart.QArcs = slices.Clone(s.Chart.QArcs)
	// Search results are replaced whole, never changed in place.
	if s.Networks != nil {
		c.Networks = make([]Network, len(s.Networks))
		for i, n := range s.Networks {
			n.Parts = slices.Clone(n.Parts)
			for j := range n.Parts {
				n.Parts[j].Params = maps.Clone(n.Parts[j].Params)
			}
			n.Layout = n.Layout.clone()
			c.Networks[i] = n
		}
	}
	// A round is stored whole; only its Chosen fields change, so a shallow
	// copy of each keeps published rounds untouched.
	c.Tuning = slices.Clone(s.Tuning)
	return &c
}

// TuneIndex returns the index of tuning round id in s.Tuning, or −1.
func (s *State) TuneIndex(id string) int {
	return slices.IndexFunc(s.Tuning, func(r TuneRound) bool { return r.ID == id })
}

// SweepIndex returns the index of sweep id in s.Sweeps, or −1.
func (s *State) SweepIndex(id string) int {
	return slices.IndexFunc(s.Sweeps, func(r SweepRef) bool { return r.ID == id })
}

// MarkerIndex returns the index of marker id in s.Markers, or −1.
func (s *State) MarkerIndex(id string) int {
	return slices.IndexFunc(s.Markers, func(m Marker) bool { return m.ID == id })
}

// BandIndex returns the index of band id in s.Bands, or −1.
func (s *State) BandIndex(id string) int {
	return slices.IndexFunc(s.Bands, func(b Band) bool { return b.ID == id })
}
