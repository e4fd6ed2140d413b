// Package chartsvg draws the reflection-plane (Smith) chart and rectangular
// frequency plots as SVG text, from plain numbers: reflection coefficients Γ
// as complex128, frequencies as float64 Hz, plotted values as float64. It
// knows nothing of HTTP, sessions or files; a page embeds what it writes.
//
// # Writers
//
// Every Render method writes to an io.Writer through a buffer and returns
// the first error of that writer, like encoding/csv's Writer; nothing more is
// written after an error. Chart and Plot are option structs that rendering
// does not change, so one value may serve many goroutines. Data slices are
// only read.
//
// Misuse that is a programmer's error panics with a "chartsvg:" message: a
// Trace whose FreqHz and Gamma lengths differ, a Series whose FreqHz and Y
// lengths differ.
//
// # Chart coordinates
//
// The chart's viewBox is centred on Γ = 0, x to the right and y down, in
// units of the chart's pixel width (SizePx). A point Γ is drawn at
//
//	x = K·Re Γ,  y = −K·Im Γ
//
// where K = Chart.Scale(), also written on the root <svg> element as
// data-gamma-scale. A zoomed chart may be centred elsewhere than Γ = 0
// (Chart.Centre): a point Γ is then drawn at (K·Re(Γ − C), −K·Im(Γ − C)),
// C = Chart.ShownCentre(), written as data-gamma-centre="re im", and the
// shown disc's radius in Γ (Zoom, or 1) as data-gamma-radius. A page
// turns a pointer position in user units (from getScreenCTM().inverse())
// back into Γ = C + (x, −y)/K. The legend strip lies below the square
// y ∈ [−SizePx/2, SizePx/2].
//
// The impedance grid's circles and arcs are exact SVG arcs whose centres and
// radii come from the bilinear map Γ = (z − 1)/(z + 1):
//
//	r = const: centre (r/(1+r), 0),  radius 1/(1+r)
//	x = const: centre (1, 1/x),      radius 1/|x|
//
// each cut where it meets a line of the other family (the ends are computed,
// not clipped). The admittance grid is the same drawing turned through 180°
// about the centre, since Γ(y) = −Γ(z = y).
//
// Normalised values are written on the grid; Z0Ohm only labels the chart.
// Conventions follow the project's: e^(+jωt), Γ = (Z − Z0)/(Z + Z0), return
// loss −20·log10|Γ| positive in dB, VSWR (1 + |Γ|)/(1 − |Γ|).
//
// # Element ids
//
// Each layer is one element with a stable id, so that a page can replace a
// layer, or one marker, without redrawing the rest. With Chart.IDPrefix P:
//
//	P+"grid"        grid layer: disc, grids, labels, scales, overlays, caption
//	P+"clip"        the clip path of the shown disc (zoomed charts only)
//	P+"regions"     shaded circles and lines (Chart.Regions, when set);
//	                P+"region-"+Region.ID for each, P+"rclip" its clip
//	P+"traces"      all traces; P+"trace-"+Trace.ID for each
//	P+"match-path"  the matching path
//	P+"markers"     all markers; P+"mk-"+Marker.ID for each
//	P+"spots"       labelled points and handles (Chart.Spots, when set);
//	                P+"spot-"+Spot.ID for each
//	P+"legend"      the legend strip
//
// and for a Plot with Plot.IDPrefix P:
//
//	P+"axes", P+"bands", P+"plegend"
//	P+"area"        the clip path of the plot area
//	P+"bandnames"   the bands' names and the limits' labels, on top
//	P+"series"      all series; P+"series-"+Series.ID for each
//	P+"pmarkers"    all markers; P+"pmk-"+PlotMarker.ID for each
//
// A marker group carries data-f (its frequency) and data-trace when set, and
// is placed by transform="translate(x y)".
//
// # Size
//
// Long sweeps are thinned before they are written: each trace keeps its
// extremes, its point nearest the centre (the dip) and the points of
// Trace.KeepHz, and otherwise only the points needed for every point to lie
// within Chart.TolerancePx (half a unit by default, inside the painted
// stroke) of the drawn curve (Ramer–Douglas–Peucker). Plot series first keep the first, lowest,
// highest and last point of each pixel column. Coordinates are written to a
// tenth of a unit, relative to the previous point. A chart with both grids
// and four 10,001-point sweeps is a few tens of kilobytes.
//
// # Demo files
//
// The tests can write the demo chart and plots (synthetic sweeps) to SVG
// files that a browser opens:
//
//	go test ./chartsvg -run TestWriteDemo -demo-dir=/tmp/matchbench-demo
package chartsvg
