package web

// AmpPanelView is the amplifier panel: a 2-port sweep's stability, gain
// and noise at one frequency on two reflection charts, the figures at the
// terminations placed on them, and the transistor stage.
type AmpPanelView struct {
	Open     bool     // the view is open on a sweep
	TwoPorts []Option // the session's 2-port sweeps
	Device   string
	Freq     string
	// GainSteps and NFSteps are the circles as the form shows them.
	GainSteps, NFSteps string
	Error              string
	// The drawings: trusted SVG from chartsvg.
	SourceSVG, LoadSVG, StabilitySVG string
	// Stability at the frequency and across the sweep.
	K, Delta, Mu, MuPrime string
	Unconditional         bool
	StableRanges          string
	InCircle, OutCircle   string
	// Gain, the conjugate match (or why there is none) and noise.
	MaxGain, Unilateral string
	Conj, ConjNote      string
	GainCircles         []string
	Noise, NoiseNote    string
	NFCircles           []string
	Readout             AmpReadout
	Stage               StageView
}

// AmpReadout is the figures at the placed terminations Γs and ΓL.
type AmpReadout struct {
	Freq                     string
	GammaS, ZS, GammaL, ZL   string
	GammaIn, GammaOut        string
	NF, GA, GP, GT           string
	InRL, OutRL              string
	SourceStable, LoadStable bool
	Warning                  string
}

// StageView is the transistor stage: its device, its two networks, its
// requirement and figures per band, its stability and its search.
type StageView struct {
	Has      bool
	TwoPorts []Option
	Device   string
	// Networks choose which of the two the workbench edits;
	// SourceChoices and LoadChoices the session's networks on the device's
	// port 1 and port 2 that can be the stage's.
	Networks                   []Option
	SourceChoices, LoadChoices []Option
	Source, Load               string // each network's parts in words
	Reqs                       []StageReqRow
	Bands                      []StageBandRow
	Stability                  string
	Stable                     bool
	NoiseNote                  string
	GainSVG                    string // trusted SVG from chartsvg
	RLSVG                      string
	Search                     StageSearchView
	Error                      string
}

// StageReqRow is one band's requirement as the form takes it ("" for none).
type StageReqRow struct {
	BandID, Band          string
	Gain, NF, InRL, OutRL string
}

// StageBandRow is the stage's figures in one band.
type StageBandRow struct {
	Band, Req                   string
	Gain, NF, InRL, OutRL, Loss string
	Margin                      string
	Has, Pass                   bool
}

// StageSearchView is the stored stage search.
type StageSearchView struct {
	Has        bool
	Settings   string
	Note       string
	SidesExact bool
	Designs    []StageDesignRow
}

// StageDesignRow is one pair of networks a stage search found, judged on
// the current device and bands.
type StageDesignRow struct {
	Index                         int
	Source, Load, Figures, Margin string
	Pass                          bool
}
