// Package web holds matchbench's pages and panels as templ components, and
// the static assets (one stylesheet and one small hand-written JS module)
// embedded with go:embed. Components take view models built by the server
// and call no services; charts arrive as SVG text already drawn by chartsvg.
package web

import (
	"embed"
	"io/fs"
)

//go:embed static
var static embed.FS

// Static returns the static assets, rooted so that "app.js" is at the top.
func Static() fs.FS {
	sub, err := fs.Sub(static, "static")
	if err != nil {
		panic("web: " + err.Error())
	}
	return sub
}

// StartView is the start page.
type StartView struct {
	// Local is true for a visitor on the loopback address: only they see the
	// list of sessions and may create one.
	Local    bool
	Sessions []SessionRow
	Error    string
	LAN      []string // addresses the server answers on, when it serves the LAN
}

// SessionRow is one session in the start page's list.
type SessionRow struct {
	Name     string
	EditHref string
	ViewHref string
	Sweeps   int
	Created  string
	Version  int64
}

// SessionView is the session page.
type SessionView struct {
	ID       string
	Name     string
	Version  int64
	CanEdit  bool
	Token    string // the token in the page's address, used by the websocket
	Share    ShareView
	Chart    ChartView
	Plots    []PlotView
	Sweeps   []SweepRow
	Markers  []ReadoutRow
	Bands    []BandRow
	Options  ChartOptions
	Network  NetworkView
	Sets     SetsView
	Tuning   TuningView
	RefPlane RefPlaneView
	Amp      AmpPanelView // ampview.go
	// Upload limits shown beside the drop zone.
	MaxUploadMB int
	// What the page's own view shows (the page changes it without
	// changing the session): the plots' span, the chart's controls and
	// the resonance table.
	Span       SpanView
	ChartBar   ChartBar
	Resonances ResonanceView
}

// SpanView is the plots' shared frequency span.
type SpanView struct {
	Lo, Hi   string // as shown, with SI prefixes
	Zoomed   bool   // narrower than the sweeps
	Fit      bool   // fitted to the bands
	HasBands bool
}

// ChartBar holds the chart's view controls.
type ChartBar struct {
	Z0       string // the chart's reference impedance, ohms
	Param    string // "", "S11" or "S22"
	Has2Port bool
	Zoomed   bool
}

// OptGroup is a labelled group of a select's choices.
type OptGroup struct {
	Label   string
	Options []Option
}

// ResonanceView is the table of dips, bands and resonances of each
// visible trace.
type ResonanceView struct {
	Threshold string // dB
	Traces    []ResonanceTrace
}

// ResonanceTrace is one trace's rows.
type ResonanceTrace struct {
	Name, Color string
	Rows        []ResonanceRow
	More        []string // notes: rows left out, nothing found
}

// ResonanceRow is one dip, band or resonance; clicking it places a marker
// at FreqHz on the trace (SweepID, Port).
type ResonanceRow struct {
	Kind, What                 string
	Freq                       string
	FreqHz                     float64
	SweepID                    string
	Port                       int
	RL, Lo, Hi, BW, Frac, R, Q string
	Note                       string
}

// ShareView holds the links a colleague can open.
type ShareView struct {
	EditLinks []string
	ViewLinks []string
	LAN       bool // the server listens beyond the loopback address
}

// ChartView is the drawn reflection chart.
type ChartView struct {
	SVG string // trusted: written by chartsvg from numbers
}

// PlotView is one drawn rectangular plot.
type PlotView struct {
	ID    string
	Title string
	SVG   string // trusted: written by chartsvg from numbers
	// Selectable plots have a selector of what they show (Groups) and a y
	// range, fixed or as scaled (YMin, YMax); GD marks a group delay,
	// which has an aperture.
	Selectable bool
	Groups     []OptGroup
	Fixed      bool
	YMin, YMax string
	GD         bool
}

// SweepRow is one sweep in the sweeps panel.
type SweepRow struct {
	ID       string
	Name     string
	FileName string
	Color    string
	Visible  bool
	Summary  string // "1-port, 401 points, 700 MHz – 1.1 GHz"
	RawHref  string
	Plane    string // what its reference plane does, "" as measured
}

// ReadoutRow is one marker's readout.
type ReadoutRow struct {
	MarkerID string
	Num      int
	Label    string
	Trace    string // "Fieldnode · S11"
	Color    string
	Freq     string
	FreqHz   float64
	Z        string
	Gamma    string
	RL       string
	VSWR     string
	ML       string
	Q        string
	Equiv    string
	Warning  string
	Selected bool
}

// BandRow is one band of interest.
type BandRow struct {
	ID    string
	Name  string
	Lo    string
	Hi    string
	LoHz  float64
	HiHz  float64
	MinRL string
	// MinPower is the least share of the power at the load asked, "—" for
	// none; MinRLValue and MinPowerValue are the requirements as the band
	// form takes them back ("" for none).
	MinPower                  string
	MinRLValue, MinPowerValue string
	// Worst is the worst return loss and power to the load of each visible
	// sweep in the band (the load alone, no network), with a pass/fail mark
	// against the requirements.
	Worst []BandResult
}

// BandResult is one sweep's figures in one band.
type BandResult struct {
	Sweep string
	Color string
	Worst string // worst return loss
	Power string // worst share of the available power the load takes
	Pass  bool
	Has   bool // a requirement is set and the sweep covers the band
}

// ChartOptions are the chart settings as the settings panel shows them.
type ChartOptions struct {
	ImpedanceGrid, AdmittanceGrid bool
	Zoom                          string
	VSWRCircle                    string
	ReturnLossCircleDB            string
	QArcs                         string
	AngleScale, WavelengthScale   bool
}

// Option is one choice of a select.
type Option struct {
	Value, Label string
	Selected     bool
}

// NetworkView is the matching-network panel.
type NetworkView struct {
	Active     bool // a network exists and is shown
	ID, Name   string
	Networks   []Option
	Loads      []Option
	Kinds      []Option
	DesignFreq string
	PowerW     string
	Parts      []PartRow
	Metrics    []NetMetricRow
	HasBuy     bool
	Error      string
	Power      []PowerRow
	PowerNote  string
	Search     SearchView
	Limits     LimitsView
	Yield      YieldView
	// Schematic is the network drawn from the source to the load (trusted
	// SVG from chartsvg).
	Schematic string
	// Set is the load set the network is judged across (Name "" for none),
	// and Sets every set of the session as a choice.
	Set  NetSetView
	Sets []Option
	// StageNote says what a network of the transistor stage matches.
	StageNote string
}

// NetSetView shows the active network on each member of its load set.
type NetSetView struct {
	Name, Kind string
	Members    []MemberRow
}

// MemberRow is the network's figures on one member of its set.
type MemberRow struct {
	Name, Color, Margin string
	Bands               []string
	Pass, Worst         bool
	Advisory            bool
}

// SetsView is the load sets panel: the sets and the sweeps to group.
type SetsView struct {
	Sets   []SetRow
	Sweeps []Option
}

// SetRow is one load set.
type SetRow struct {
	ID, Name, Kind string
	Members        []SetMemberRow
}

// SetMemberRow is one sweep of a set.
type SetMemberRow struct {
	SweepID, Name, Color, Weight string
	Must                         bool
}

// PartRow is one part of the network, in order from the load.
type PartRow struct {
	ID, Designator, Kind, Color string
	Index                       int
	Value                       string // as typed, with prefix and unit
	Buy                         string // standard value, when the part has a series
	Model, Series               string
	Lumped                      bool
	SliderMin, SliderMax        string // log10 of the value
	SliderVal                   string
	LogValue                    string // log10 of the value, in full, for the fine slider
	First, Last                 bool
	// The part's own figures, overriding its model's ("" = the model's).
	Q, QRef, SRF, ESR, Tol, MaxV, MaxA string
	ModelNote                          string // what the model gives, in words
	// A line section's or stub's figures: its characteristic impedance,
	// velocity factor (VF, with the effective permittivity it means), loss
	// in dB/m at a frequency (growing as √f), and its length in mm and in
	// wavelengths on the line at the design frequency.
	Line                                 bool
	Z0, VF, EEff, Loss, LossRef          string
	LengthMM, LengthWL, DesignAt, LineDB string
}

// NetMetricRow is one band's figures with the network (parts as built) and
// with the load alone. Power figures are shares of the power the source
// makes available that reach the load (the antenna terminals), not what
// the network accepts.
type NetMetricRow struct {
	Band                    string
	Req                     string // what the band asks, in words
	Before, Worst, Mean     string // worst RL alone, worst and mean RL with the network
	PowerBefore, PowerWorst string // worst power to the load alone and with the network
	PowerMean               string
	ML, NetLoss             string // the split of the loss at the worst-power point
	Margin, Note            string
	HasReq, Pass            bool
	Over, Worse             bool     // most accepted power burnt; less power than no network
	Notes                   []string // the loss warnings in words
}

// PowerRow is one part's worst voltage, current and dissipation over the
// bands at the network's input power.
type PowerRow struct {
	Designator, VPeak, IRMS, Heat, Rating, At string
	Over                                      bool
}

// ReportView is the design-review report of a matching network: what was
// measured and how its reference plane was moved, the schematic, how the
// network does in each band, its yield over the parts' tolerances, the
// stress on its parts at power, the parts list and the cautions.
type ReportView struct {
	Title, Session, Network, Load, Design, Generated, Z0 string
	// Plane lists the reference-plane steps taken on the load sweep, in
	// order; empty when the load is as measured. PlaneError says why a
	// plane could not be applied.
	Plane      []string
	PlaneError string
	// Captions of the load's chart before and after the network: they say
	// at which reference plane the load is.
	CaptionBefore, CaptionAfter   string
	Schematic                     string // trusted SVG from chartsvg
	ChartBefore, ChartAfter, Plot string // trusted SVG from chartsvg
	PowerPlot                     string // trusted SVG from chartsvg
	Metrics                       []NetMetricRow
	HasBuy                        bool
	Yield                         YieldView
	Power                         []PowerRow
	PowerW, PowerNote             string
	PartsHeader                   []string
	Parts                         [][]string
	Netlist                       string     // how closely the SPICE netlist follows the part models
	Set                           NetSetView // the network on each member of its load set, if any
	Board                         string     // the board the figures include, in words; "" for none
	// StageNote says what a network of the transistor stage matches; ""
	// for any other network.
	StageNote string
}

// RefPlaneView is the reference-plane panel and the time-domain settings.
type RefPlaneView struct {
	Sweeps []RefPlaneRow
	TDR    TDRView
}

// RefPlaneRow is one sweep's reference plane.
type RefPlaneRow struct {
	ID, Name, Summary, Error                    string
	Ports                                       int
	Delay, Loss, LossRef, Flat, Fixture, Renorm string
	// Exports are the sweep at its corrected plane: Value is the path
	// under the session's address, Label the format.
	Exports []Option
}

// TDRView holds the time-domain view's settings as the panel shows them.
type TDRView struct {
	SweepID, Mode, Window, Beta, VF string
	GateCentre, GateSpan            string
	HasGate                         bool
	Note                            string
}

// SearchView is the broadband search's result and the single-frequency
// solutions, shown in the network panel.
type SearchView struct {
	Has            bool
	Settings, Note string
	Exact          bool
	Designs        []DesignRow
	SynthAt        string
	SynthLoad      string
	LNets, Stubs   []SynthRow
	Quarters       []SynthRow
	NoL            []string
	SynthNote      string
	Line           LineSettings
}

// DesignRow is one design a search found, judged on the current load.
type DesignRow struct {
	Index                       int
	Parts, Bands, Worst, Margin string
	Power, PowerBefore          string // worst power to the load with the design and with no network
	Pass, Over, Worse           bool
}

// SynthRow is one single-frequency solution.
type SynthRow struct {
	Index        int
	Label, Parts string
	CanUse       bool
}

// LineSettings are the figures of the line that the stub and quarter-wave
// solutions are built from when used (their impedance is the reference's).
type LineSettings struct {
	Z0, VF, Loss, LossRef string
}

// LimitsView holds the limits no network can beat, in words. FitPoor,
// when set, says why the Bode–Fano limit's RLC fit is too poor to trust.
type LimitsView struct {
	BodeFano, Chu, Radius string
	FitPoor               string
	Feasible              bool
}

// YieldView is the Monte Carlo over the parts' tolerances.
type YieldView struct {
	On            bool
	Summary, Note string
	Parts         []SensRow
}

// SensRow is what one part's tolerance alone costs.
type SensRow struct {
	Designator, Tol, Low, High, Share string
	Most                              bool
}

// TuningView is the bench-tuning panel: the active network's board, the
// form that fits a re-measured board, and every round so far.
type TuningView struct {
	Active    bool   // a network is active and can be fitted
	Network   string // its name
	Board     string // its board in words
	BoardNote string // why a stored board is left out, if it is
	// The form's defaults: the network's board.
	Footprint, Pad, Traces string
	Sweeps                 []Option // sweeps that may be the board as built
	Rounds                 []TuneRoundRow
}

// TuneRoundRow is one round of tuning as stored.
type TuneRoundRow struct {
	ID          string
	Num         int
	Network     string
	Built       string
	Parts       string
	Board       string
	Bands       string
	Fit         string
	Params      []TuneParamRow
	Warnings    []string
	AsBuilt     string
	AsBuiltPass bool
	Swaps       []TuneSwapRow
	Chosen      string
}

// TuneParamRow is one fitted number of the board.
type TuneParamRow struct {
	Name, Nominal, Value, Sigma, Note string
}

// TuneSwapRow is one suggested swap with its predicted figures.
type TuneSwapRow struct {
	Index                               int
	Change, Worst, Power, Margin, Yield string
	Pass, Best, Chosen                  bool
}
