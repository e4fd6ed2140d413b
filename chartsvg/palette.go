package chartsvg

// Palette is the default sequence of trace colours. It is the colour set of
// Okabe and Ito, chosen to stay distinguishable for readers with the common
// forms of colour-vision deficiency:
//
//	M. Okabe and K. Ito, "Color Universal Design (CUD): how to make figures
//	and presentations that are friendly to colorblind people", J*Fly, 2008.
//
// The order is ours (the two strongest contrasts first), black is left out
// because markers and the matching path are drawn in near-black, and the yellow
// is left out because it is too faint on white. Traces beyond the sixth cycle
// through the list again; give them Dashed to tell them apart.
var Palette = []string{
	"#0072B2", // blue
	"#D55E00", // vermillion
	"#009E73", // bluish green
	"#CC79A7", // reddish purple
	"#E69F00", // orange
	"#56B4E9", // sky blue
}

// Colours of the drawing. They are ours: neutral greys for the impedance grid,
// a light warm brown for the admittance grid, so that neither competes with
// the trace colours.
const (
	colInk       = "#1f2328" // markers, path, text
	colMuted     = "#5c6470" // secondary text
	colRim       = "#3e4652"
	colDisc      = "#fcfcfd"
	colZMinor    = "#c9ced6"
	colZMajor    = "#98a1ad"
	colZLabel    = "#4d5663"
	colYMinor    = "#e6d3bb"
	colYMajor    = "#c8a37a"
	colYLabel    = "#8a5d2c"
	colOverlay   = "#2f6f64" // VSWR, return-loss circles
	colQ         = "#7b6aa6" // constant-Q arcs
	colScale     = "#6b7380" // rim scales
	colPath      = "#1f2328"
	colBandFill  = "#e8f1ec"
	colLimit     = "#b03a2e"
	colPlotGrid  = "#e3e6ea"
	colPlotFrame = "#8b939e"
	fontFamily   = "'Liberation Sans',Arial,Helvetica,sans-serif"
)

// traceColour returns the colour of trace i: its own if set, else the palette's.
func traceColour(own string, i int) string {
	if own != "" {
		return own
	}
	return Palette[i%len(Palette)]
}
