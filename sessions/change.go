package sessions

import "matchbench/rfmath"

// Op names. The doc comment of [Change] lists each op's payload.
const (
	OpSessionRename = "session.rename"
	OpSweepAdd      = "sweep.add"
	OpSweepRename   = "sweep.rename"
	OpSweepColor    = "sweep.color"
	OpSweepVisible  = "sweep.visible"
	OpSweepRemove   = "sweep.remove"
	OpMarkerAdd     = "marker.add"
	OpMarkerMove    = "marker.move"
	OpMarkerStep    = "marker.step"
	OpMarkerLabel   = "marker.label"
	OpMarkerRemove  = "marker.remove"
	OpMarkerToDip   = "marker.to_dip"
	OpBandSet       = "band.set"
	OpBandRemove    = "band.remove"
	OpChartSet      = "chart.set"
	OpUndo          = "undo"
	OpRedo          = "redo"

	OpNetworkAdd    = "network.add"
	OpNetworkSet    = "network.set"
	OpNetworkSelect = "network.select"
	OpNetworkRemove = "network.remove"
	OpPartAdd       = "part.add"
	OpPartSet       = "part.set"
	OpPartRemove    = "part.remove"
	OpPartMove      = "part.move"
	OpSweepRefPlane = "sweep.refplane"
	OpTDRSet        = "tdr.set"
	OpSearchStore   = "search.store"
	OpSetSave       = "set.save"
	OpSetRemove     = "set.remove"
	OpSearchClear   = "search.clear"

	OpNetworkLayout = "network.layout"
	OpTuneStore     = "tune.store"
	OpTuneUse       = "tune.use"
)

// coalescible ops form one undo step per gesture (see Change.Gesture).
var coalescible = map[string]bool{OpMarkerMove: true, OpPartSet: true, OpAmpPoint: true}

// Ops lists every op [Store.Apply] accepts, in a stable order.
var Ops = []string{
	OpSessionRename,
	OpSweepAdd, OpSweepRename, OpSweepColor, OpSweepVisible, OpSweepRemove,
	OpMarkerAdd, OpMarkerMove, OpMarkerStep, OpMarkerLabel, OpMarkerRemove, OpMarkerToDip,
	OpBandSet, OpBandRemove,
	OpChartSet,
	OpNetworkAdd, OpNetworkSet, OpNetworkSelect, OpNetworkRemove,
	OpPartAdd, OpPartSet, OpPartRemove, OpPartMove,
	OpSweepRefPlane, OpTDRSet,
	OpSearchStore, OpSearchClear,
	OpSetSave, OpSetRemove,
	OpNetworkLayout, OpTuneStore, OpTuneUse,
	OpAmpSet, OpAmpPoint, OpAmpClear, OpStageSet, OpStageRemove, OpStageStore, OpStageUse, OpStageParts,
	OpUndo, OpRedo,
}

// Change is one operation on a session, passed to [Store.Apply]. Op selects
// the operation and the other fields are its payload; fields an op does not
// use are ignored. A Change decodes from JSON as written below, so a
// websocket message's payload can be passed straight through (sweep.add is
// the exception: its numbers come from an upload, not from JSON).
//
// Every op may carry:
//
//	ifVersion  refuse with ErrConflict unless the session is at this version (0: don't check)
//
// The ops and their payloads (JSON names):
//
//	session.rename  name                        rename the session
//	sweep.add       name, fileName, color,      add a sweep (Go fields Raw and Sweep, not JSON);
//	                visible is set true         name defaults to the file name, color to the
//	                                            first palette colour not in use
//	sweep.rename    sweepId, name
//	sweep.color     sweepId, color              "#rrggbb"
//	sweep.visible   sweepId, visible
//	sweep.remove    sweepId                     also removes its markers; undo brings both back
//	marker.add      sweepId, port, freqHz,      add a marker on the trace S(port,port) (port 0
//	                or gamma; label             means 1); by frequency, pinned into the sweep's
//	                                            range, or by a Γ-plane point, snapped to the
//	                                            nearest point of the whole trace
//	marker.move     markerId, freqHz or gamma,  move by frequency (pinned into the range) or by
//	                window, gesture             Γ point snapped near the marker's current index
//	                                            (see Window); moves with the same gesture on the
//	                                            same marker are one undo step
//	marker.step     markerId, steps             move ±steps measured points (from between two
//	                                            points, +1 goes to the next point above)
//	marker.label    markerId, label             "" clears
//	marker.remove   markerId
//	marker.to_dip   markerId, loHz, hiHz        move to the measured point of least |Γ| (deepest
//	                                            return loss) of the marker's trace within
//	                                            loHz…hiHz (both 0: the whole sweep)
//	band.set        bandId, name, loHz, hiHz,   edit band bandId, or add one when bandId is ""
//	                minReturnLossDB
//	band.remove     bandId
//	chart.set       chart                       set the chart fields present in chart (a
//	                                            [ChartPatch]); absent fields keep their value
//	network.add     name, sweepId, port,        add a matching network on the trace S(port,port)
//	                designHz, parts, setId,     of sweepId (default: the first sweep) and make it
//	                layout                      active; designHz defaults to the band centre;
//	                                            parts (optional) are its first parts; setId
//	                                            (optional) a load set it is judged across, layout
//	                                            (optional) its board
//	network.set     networkId, name, sweepId,   change the fields given (zero values keep theirs);
//	                port, designHz, powerW,     yieldBuilds −1 turns the Monte Carlo off, chuRadiusM
//	                yieldBuilds, chuRadiusM,    −1 forgets the radius; setId judges the network
//	                setId                       across a load set ("none": its sweep only)
//	network.select  networkId                   make it the active network
//	network.remove  networkId
//	part.add        networkId, kind, value,     add a part to the network (networkId "" = the
//	                model, series, params,      active one) at index (from the load; absent =
//	                index                       nearest the source)
//	part.set        networkId, partId, value,   change the fields given; part.set with a gesture
//	                model, series, params,      is a drag: consecutive ones with the same
//	                gesture                     gesture are one undo step
//	part.remove     networkId, partId
//	part.move       networkId, partId, index    move the part to place index (0 = at the load)
//	sweep.refplane  sweepId, refPlane           set the sweep's reference plane (a [RefPlane];
//	                                            absent or all zero: as measured)
//	tdr.set         timeDomain                  set the time-domain view (a [TimeDomain])
//	search.store    search                      keep a broadband search's result (a [SearchResult];
//	                                            the server runs searches, pages do not send this)
//	search.clear                                forget it
//	set.save        setId, name, setKind,       add a load set (setId "") or replace set setId:
//	                members                     setKind "conditions" or "lot", members the sweeps
//	                                            (a [SetMember] each)
//	set.remove      setId                       remove it; networks judged across it go back to
//	                                            their own sweep
//	network.layout  networkId, layout           set the board the network is built on (a [Layout];
//	                                            absent or empty: none)
//	tune.store      tune                        keep a round of bench tuning (a [TuneRound]; the
//	                                            server fits, pages do not send this)
//	tune.use        tuneId, index               make suggestion index of round tuneId the next
//	                                            candidate network (with the round's layout), active,
//	                                            and mark it chosen
//	amp.set         sweepId, freqHz,            open or change the amplifier view of a 2-port sweep
//	                gainStepsDB, nfStepsDB      (an [AmpView]): the frequency (default: the band
//	                                            centre), the gain circles in dB below the maximum
//	                                            gain and the noise circles in dB above NFmin
//	                                            (each positive, at most 8; absent keeps them)
//	amp.point       plane, gamma, gesture       place the source ("source") or load ("load")
//	                                            termination; |Γ| is held below 1; moves with the
//	                                            same gesture are one undo step
//	amp.clear                                   close the amplifier view
//	stage.set       sweepId, sourceNetworkId,   set up the transistor stage (a [Stage]) on a 2-port
//	                loadNetworkId, stageReqs    sweep (default: the amplifier view's): its source and
//	                                            load networks (absent: new empty ones on ports 1
//	                                            and 2) and its requirement per band (a [StageReq]
//	                                            each; absent keeps them)
//	stage.remove                                forget the stage (its networks stay)
//	stage.store     stageSearch                 keep a stage search's designs (the server sends it)
//	stage.use       index                       put design index's parts into the stage's networks
//	stage.parts     plane, parts                replace the parts of the stage's "source" or "load"
//	                                            network (a network search's design for that side)
//	undo                                        undo the latest step still applied
//	redo                                        redo the step undone last
//
// Frequencies are in hertz, return losses in dB (positive), Γ as
// {"re": …, "im": …}.
type Change struct {
	Op        string `json:"op"`
	IfVersion int64  `json:"ifVersion,omitempty"`

	SweepID  string `json:"sweepId,omitempty"`
	MarkerID string `json:"markerId,omitempty"`
	BandID   string `json:"bandId,omitempty"`

	Name     string `json:"name,omitempty"`
	FileName string `json:"fileName,omitempty"`
	Color    string `json:"color,omitempty"`
	Visible  bool   `json:"visible,omitempty"`
	Label    string `json:"label,omitempty"`

	Port   int     `json:"port,omitempty"`
	FreqHz float64 `json:"freqHz,omitempty"`
	Gamma  *Point  `json:"gamma,omitempty"`
	// Window is how many measured points either side of the marker's
	// current point a marker.move by Γ searches; 0 means the default
	// max(MinSnapWindow, points/SnapWindowDivisor). See [rfmath.SnapToTrace].
	Window int `json:"window,omitempty"`
	// Gesture identifies one drag. Consecutive marker.move changes with the
	// same non-empty Gesture on the same marker form one undo step (each is
	// still committed and versioned).
	Gesture string `json:"gesture,omitempty"`
	Steps   int    `json:"steps,omitempty"`

	LoHz            float64 `json:"loHz,omitempty"`
	HiHz            float64 `json:"hiHz,omitempty"`
	MinReturnLossDB float64 `json:"minReturnLossDB,omitempty"`
	MinPowerToLoad  float64 `json:"minPowerToLoad,omitempty"`

	Chart *ChartPatch `json:"chart,omitempty"`

	// Networks and parts (see the ops above). Pointers tell "absent" from
	// zero for the fields part.set and network.set may leave alone.
	NetworkID string             `json:"networkId,omitempty"`
	PartID    string             `json:"partId,omitempty"`
	Kind      rfmath.PartKind    `json:"kind,omitempty"`
	Value     *float64           `json:"value,omitempty"`
	Model     *string            `json:"model,omitempty"`
	ESeries   *string            `json:"series,omitempty"`
	Params    map[string]float64 `json:"params,omitempty"`
	Index     *int               `json:"index,omitempty"`
	DesignHz  float64            `json:"designHz,omitempty"`
	PowerW    *float64           `json:"powerW,omitempty"`
	// YieldBuilds and ChuRadiusM are for network.set (see there).
	YieldBuilds int     `json:"yieldBuilds,omitempty"`
	ChuRadiusM  float64 `json:"chuRadiusM,omitempty"`
	Parts       []Part  `json:"parts,omitempty"`

	// Load sets: set.save creates (no SetID) or replaces set SetID with
	// Name, SetKind and Members; set.remove removes SetID; network.set with
	// SetID judges the network across that set ("none" for its sweep only).
	SetID   string      `json:"setId,omitempty"`
	SetKind string      `json:"setKind,omitempty"`
	Members []SetMember `json:"members,omitempty"`

	// AmpChange is the payload of the amplifier and stage ops.
	AmpChange

	RefPlane   *RefPlane     `json:"refPlane,omitempty"`
	Search     *SearchResult `json:"search,omitempty"`
	TimeDomain *TimeDomain   `json:"timeDomain,omitempty"`

	// Layout is for network.add and network.layout; Tune and TuneID for
	// tune.store and tune.use (see there).
	Layout *Layout    `json:"layout,omitempty"`
	Tune   *TuneRound `json:"tune,omitempty"`
	TuneID string     `json:"tuneId,omitempty"`

	// Raw is the uploaded file as received and Sweep its parsed form, for
	// sweep.add. The store keeps a copy of both; the caller keeps ownership.
	Raw   []byte        `json:"-"`
	Sweep *rfmath.Sweep `json:"-"`
}

// Point is a point of the Γ plane.
type Point struct {
	Re float64 `json:"re"`
	Im float64 `json:"im"`
}

// ChartPatch changes some chart settings: nil fields are left as they are.
type ChartPatch struct {
	ImpedanceGrid       *bool      `json:"impedanceGrid,omitempty"`
	AdmittanceGrid      *bool      `json:"admittanceGrid,omitempty"`
	Zoom                *float64   `json:"zoom,omitempty"`
	VSWRCircle          *float64   `json:"vswrCircle,omitempty"`
	ReturnLossCircleDB  *float64   `json:"returnLossCircleDB,omitempty"`
	QArcs               *[]float64 `json:"qArcs,omitempty"`
	ShowAngleScale      *bool      `json:"showAngleScale,omitempty"`
	ShowWavelengthScale *bool      `json:"showWavelengthScale,omitempty"`
}

// Snap window defaults for marker.move by Γ (see Change.Window).
const (
	MinSnapWindow     = 16
	SnapWindowDivisor = 50
)

// MaxZoom is the largest chart zoom accepted.
const MaxZoom = 1000

// Limits bound what one session may hold. Zero fields take the defaults in
// [DefaultLimits].
type Limits struct {
	SweepsPerSession int // sweeps listed at once
	MarkersPerTrace  int // markers on one (sweep, port)
	Bands            int
	QArcs            int
	TextRunes        int // names, file names and labels
	HistorySteps     int // undo steps kept per session
	Networks         int // matching networks per session
	LoadSets         int // load sets per session
	SetMembers       int // sweeps in one load set
	PartsPerNetwork  int
	TuneRounds       int // rounds of bench tuning kept per session
	ReplayEvents     int // at least this many recent events are kept per session for [Store.Since]
	// SweepBytes bounds the numbers of the sweeps listed in a session at
	// once, as [SweepRef.DataBytes] counts them: what drawing the session
	// holds in memory.
	SweepBytes int64
}

// DefaultLimits are the limits used where [Options.Limits] leaves a zero.
var DefaultLimits = Limits{
	SweepsPerSession: 64,
	MarkersPerTrace:  16,
	Bands:            32,
	QArcs:            8,
	TextRunes:        200,
	HistorySteps:     1000,
	Networks:         16,
	LoadSets:         8,
	SetMembers:       16,
	PartsPerNetwork:  8,
	TuneRounds:       32,
	ReplayEvents:     256,
	SweepBytes:       128 << 20,
}

func (l Limits) withDefaults() Limits {
	d := DefaultLimits
	pick := func(v *int, def int) {
		if *v <= 0 {
			*v = def
		}
	}
	pick(&l.SweepsPerSession, d.SweepsPerSession)
	pick(&l.MarkersPerTrace, d.MarkersPerTrace)
	pick(&l.Bands, d.Bands)
	pick(&l.QArcs, d.QArcs)
	pick(&l.TextRunes, d.TextRunes)
	pick(&l.HistorySteps, d.HistorySteps)
	pick(&l.Networks, d.Networks)
	pick(&l.PartsPerNetwork, d.PartsPerNetwork)
	pick(&l.LoadSets, d.LoadSets)
	pick(&l.SetMembers, d.SetMembers)
	pick(&l.TuneRounds, d.TuneRounds)
	pick(&l.ReplayEvents, d.ReplayEvents)
	if l.SweepBytes <= 0 {
		l.SweepBytes = d.SweepBytes
	}
	return l
}

// Palette holds the colours given to sweeps added without one, in order.
var Palette = []string{
	"#1f5fa8", // blue
	"#c8501e", // burnt orange
	"#2a8a4a", // green
	"#8e3b8f", // plum
	"#b8860b", // dark gold
	"#178a8a", // teal
	"#a8324a", // crimson
	"#555555", // grey
}
