package chartsvg

import (
	"bytes"
	"context"
	"image/png"
	"io"
	"math"
	"math/cmplx"
	"net/http"
	"net/http/httptest"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
)

// pathPoints reads path data of M, L, A and z commands (absolute) and
// returns each subpath's vertices, an arc contributing its end point and
// its centre (arcs of equal radii, no rotation, per SVG 1.1 F.6.5).
func pathPoints(t *testing.T, d string) (subpaths [][]pt, arcs []arcSeg) {
	t.Helper()
	tok := tokenize(t, d)
	var cur pt
	for i := 0; i < len(tok); {
		switch tok[i].cmd {
		case 'M':
			cur = pt{tok[i+1].num, tok[i+2].num}
			subpaths = append(subpaths, []pt{cur})
			i += 3
		case 'L':
			cur = pt{tok[i+1].num, tok[i+2].num}
			subpaths[len(subpaths)-1] = append(subpaths[len(subpaths)-1], cur)
			i += 3
		case 'A':
			a := arcSeg{p0: cur, r: tok[i+1].num, large: tok[i+4].num == 1, sweep: tok[i+5].num == 1, p1: pt{tok[i+6].num, tok[i+7].num}}
			arcs = append(arcs, a)
			cur = a.p1
			subpaths[len(subpaths)-1] = append(subpaths[len(subpaths)-1], cur)
			i += 8
		case 'z':
			i++
		default:
			t.Fatalf("unexpected token %+v in %q", tok[i], d)
		}
	}
	return subpaths, arcs
}

func regionChart() Chart {
	return Chart{SizePx: 500, NoLegend: true, Regions: []Region{
		{ID: "in", Center: complex(0.3, 0.2), Radius: 0.4, Shade: ShadeInside, Label: "inside"},
		{ID: "out", Center: complex(1.3, 0.9), Radius: 0.6, Shade: ShadeOutside, Label: "far"},
		{ID: "line", Center: complex(0.2, 0), Line: true, Normal: complex(0, 1), Shade: ShadeAgainst},
		{ID: "dot", Center: complex(-0.5, 0.1)},
		{ID: "all", Center: 2, Radius: 0.1, Shade: ShadeAll},
		{ID: "nan", Center: complex(math.NaN(), 0), Radius: 0.2, Shade: ShadeInside},
		{ID: "huge", Center: cmplx.Rect(57.34, 43.2*math.Pi/180), Radius: 56.2257, Shade: ShadeInside},
	}, Spots: []Spot{{ID: "gs", Gamma: complex(0.2, 0.5), Label: "Γs", Handle: true}, {ID: "opt", Gamma: complex(-0.1, 0.3), Label: "Γopt"}}}
}

// Each region is drawn where its numbers say: the outline circle's centre
// and radius map back through Γ = (x, −y)/K (the package's chart
// coordinates), the shading's arcs lie on that circle or on the rim, a
// line's outline and shaded polygon lie on the line and on the shaded
// side, and a spot sits at its Γ.
func TestRegionsGeometry(t *testing.T) {
	t.Parallel()
	c := regionChart()
	var b bytes.Buffer
	if err := c.Render(&b, nil, nil, nil); err != nil {
		t.Fatal(err)
	}
	root := parseSVG(t, b.String())
	k := c.Scale()
	toG := func(p pt) complex128 { return complex(p.x/k, -p.y/k) }
	tol := 0.06 / k // written to a tenth of a unit
	for _, r := range c.Regions[:2] {
		g := root.byID("region-" + r.ID)
		if g == nil {
			t.Fatalf("no group for region %s", r.ID)
		}
		var outline *element
		var shade *element
		g.walk(func(e *element) {
			switch {
			case e.name == "circle" && e.attr["fill"] == "none":
				outline = e
			case e.name == "path" && e.attr["fill-opacity"] != "":
				shade = e
			}
		})
		if outline == nil || shade == nil {
			t.Fatalf("region %s: outline %v, shading %v", r.ID, outline, shade)
		}
		cx, _ := strconv.ParseFloat(outline.attr["cx"], 64)
		cy, _ := strconv.ParseFloat(outline.attr["cy"], 64)
		rr, _ := strconv.ParseFloat(outline.attr["r"], 64)
		if cmplx.Abs(toG(pt{cx, cy})-r.Center) > tol || math.Abs(rr/k-r.Radius) > tol {
			t.Errorf("region %s drawn at %v radius %g, want %v radius %g", r.ID, toG(pt{cx, cy}), rr/k, r.Center, r.Radius)
		}
		subs, arcs := pathPoints(t, shade.attr["d"])
		wantSubs := 1
		if r.Shade == ShadeOutside {
			wantSubs = 2 // the disc, and the circle cut out of it (even-odd)
			if shade.attr["fill-rule"] != "evenodd" {
				t.Errorf("outside shading without the even-odd rule")
			}
		}
		if len(subs) != wantSubs {
			t.Errorf("region %s: %d subpaths of shading, want %d", r.ID, len(subs), wantSubs)
		}
		for _, a := range arcs {
			o, mid := a.centre()
			onCircle := cmplx.Abs(toG(o)-r.Center) < 5*tol && math.Abs(a.r/k-r.Radius) < 5*tol
			onRim := cmplx.Abs(toG(o)) < 5*tol && math.Abs(a.r/k-1) < 5*tol
			if !onCircle && !onRim {
				t.Errorf("region %s: a shading arc about %v of radius %g is neither the circle nor the rim", r.ID, toG(o), a.r/k)
			}
			if onCircle && math.Abs(cmplx.Abs(toG(mid)-r.Center)-r.Radius) > 5*tol {
				t.Errorf("region %s: arc midpoint %v off the circle", r.ID, toG(mid))
			}
		}
	}
	// The line Im Γ = 0 shaded below (against its normal +j).
	g := root.byID("region-line")
	var paths []*element
	g.walk(func(e *element) {
		if e.name == "path" {
			paths = append(paths, e)
		}
	})
	if len(paths) != 2 {
		t.Fatalf("line region: %d paths, want shading and outline", len(paths))
	}
	subs, _ := pathPoints(t, paths[0].attr["d"])
	for _, p := range subs[0] {
		if imag(toG(p)) > tol {
			t.Errorf("shaded polygon vertex %v above the line", toG(p))
		}
	}
	subs, _ = pathPoints(t, paths[1].attr["d"])
	for _, p := range subs[0] {
		if math.Abs(imag(toG(p))) > tol {
			t.Errorf("line outline point %v off the line", toG(p))
		}
	}
	// A region of radius zero is a dot, one of ShadeAll shades the disc,
	// a region that is not finite draws nothing.
	if d := root.byID("region-dot"); d == nil || len(d.children) != 1 || d.children[0].name != "circle" {
		t.Errorf("zero-radius region: %+v", d)
	}
	if a := root.byID("region-all"); a == nil || len(a.children) < 2 {
		t.Errorf("ShadeAll region has no shading")
	}
	if n := root.byID("region-nan"); n == nil || len(n.children) != 0 {
		t.Errorf("a region that is not finite drew %+v", n)
	}
	// Labels: the inside circle's at its point nearest the centre; the far
	// circle's nearest point lies outside the disc, so it has none.
	if !strings.Contains(root.byID("region-in").allText(), "inside") || strings.Contains(root.byID("region-out").allText(), "far") {
		t.Errorf("labels: %q, %q", root.byID("region-in").allText(), root.byID("region-out").allText())
	}
	// Spots at their Γ, the handle marked as one.
	for _, s := range c.Spots {
		e := root.byID("spot-" + s.ID)
		if e == nil {
			t.Fatalf("no spot %s", s.ID)
		}
		var x, y float64
		if _, err := fmtSscanTranslate(e.attr["transform"], &x, &y); err != nil {
			t.Fatal(err)
		}
		if cmplx.Abs(toG(pt{x, y})-s.Gamma) > tol {
			t.Errorf("spot %s at %v, want %v", s.ID, toG(pt{x, y}), s.Gamma)
		}
		re, _ := strconv.ParseFloat(e.attr["data-re"], 64)
		im, _ := strconv.ParseFloat(e.attr["data-im"], 64)
		if complex(re, im) != s.Gamma || (e.attr["class"] == "handle") != s.Handle {
			t.Errorf("spot %s: data %v, class %q", s.ID, complex(re, im), e.attr["class"])
		}
	}
	// The layers order: regions above the grid, below the traces; spots last.
	var order []string
	for _, ch := range root.children {
		if id := ch.attr["id"]; id != "" {
			order = append(order, id)
		}
	}
	if strings.Join(order, ",") != "grid,regions,traces,match-path,markers,spots" {
		t.Errorf("layers %v", order)
	}
}

// On a chart zoomed off Γ = 0 (Chart.Centre) the regions are drawn for
// the disc shown: a label whose point lies in that disc is written though
// it is far from Γ = 0, the whole-disc shading is the unit disc (arcs
// about Γ = 0 of radius 1, not the zoom's radius about Γ = 0, which would
// miss most of the disc shown), and the layer is clipped to the unit disc
// inside the chart's clip of the shown disc.
func TestRegionsOffCentre(t *testing.T) {
	t.Parallel()
	c := Chart{SizePx: 500, NoLegend: true, Zoom: 0.3, Centre: 0.6, Regions: []Region{
		{ID: "near", Center: 0.6, Radius: 0.1, Shade: ShadeInside, Label: "near"},
		{ID: "far", Center: complex(-0.6, 0), Radius: 0.1, Label: "far"},
		{ID: "all", Center: 0.6, Radius: 0.05, Shade: ShadeAll},
	}}
	var b bytes.Buffer
	if err := c.Render(&b, nil, nil, nil); err != nil {
		t.Fatal(err)
	}
	root := parseSVG(t, b.String())
	k, ctr := c.Scale(), c.ShownCentre()
	toG := func(p pt) complex128 { return complex(p.x/k, -p.y/k) + ctr }
	tol := 0.06 / k
	if !strings.Contains(root.byID("region-near").allText(), "near") {
		t.Error("the label of a region inside the shown disc is missing")
	}
	if strings.Contains(root.byID("region-far").allText(), "far") {
		t.Error("a region outside the shown disc is labelled")
	}
	var shade *element
	root.byID("region-all").walk(func(e *element) {
		if e.name == "path" && e.attr["fill-opacity"] != "" {
			shade = e
		}
	})
	if shade == nil {
		t.Fatal("ShadeAll drew no shading")
	}
	_, arcs := pathPoints(t, shade.attr["d"])
	if len(arcs) == 0 {
		t.Fatal("the shading has no arcs")
	}
	for _, a := range arcs {
		o, _ := a.centre()
		if cmplx.Abs(toG(o)) > 5*tol || math.Abs(a.r/k-1) > 5*tol {
			t.Errorf("whole-disc shading arc about %v of radius %g, want the unit circle", toG(o), a.r/k)
		}
	}
	var clip *element
	root.byID("rclip").walk(func(e *element) {
		if e.name == "circle" {
			clip = e
		}
	})
	if clip == nil {
		t.Fatal("no clip circle for the regions")
	}
	cx, _ := strconv.ParseFloat(clip.attr["cx"], 64)
	cy, _ := strconv.ParseFloat(clip.attr["cy"], 64)
	r, _ := strconv.ParseFloat(clip.attr["r"], 64)
	if cmplx.Abs(toG(pt{cx, cy})) > tol || math.Abs(r/k-1) > tol {
		t.Errorf("regions clipped to the circle about %v of radius %g, want the unit circle", toG(pt{cx, cy}), r/k)
	}
	if !strings.Contains(b.String(), `<g clip-path="url(#clip)"><g id="region-near"`) {
		t.Error("the regions are not inside the chart's clip of the shown disc")
	}
}

// fmtSscanTranslate reads "translate(x y)".
func fmtSscanTranslate(s string, x, y *float64) (int, error) {
	s = strings.TrimSuffix(strings.TrimPrefix(s, "translate("), ")")
	f := strings.Fields(s)
	if len(f) != 2 {
		return 0, io.ErrUnexpectedEOF
	}
	var err error
	if *x, err = strconv.ParseFloat(f[0], 64); err != nil {
		return 0, err
	}
	*y, err = strconv.ParseFloat(f[1], 64)
	return 2, err
}

// A chart without regions or spots has neither layer (the session chart's
// drawing is unchanged), and the layers render alone for a page to swap.
func TestRegionLayersAlone(t *testing.T) {
	t.Parallel()
	var b bytes.Buffer
	c := Chart{SizePx: 400}
	if err := c.Render(&b, nil, nil, nil); err != nil {
		t.Fatal(err)
	}
	if strings.Contains(b.String(), `id="regions"`) || strings.Contains(b.String(), `id="spots"`) {
		t.Error("a chart without regions draws their layers")
	}
	c = regionChart()
	c.IDPrefix = "src-"
	b.Reset()
	if err := c.RenderSpot(&b, c.Spots[0]); err != nil {
		t.Fatal(err)
	}
	if !strings.HasPrefix(b.String(), `<g id="src-spot-gs"`) {
		t.Errorf("RenderSpot wrote %.60q", b.String())
	}
	b.Reset()
	if err := c.RenderRegions(&b); err != nil {
		t.Fatal(err)
	}
	if !strings.HasPrefix(b.String(), `<g id="src-regions" clip-path="url(#src-rclip)">`) || !strings.Contains(b.String(), `id="src-region-in"`) {
		t.Errorf("RenderRegions wrote %.90q", b.String())
	}
}

// In a browser the shading lands on the right side: a circle shaded
// outside leaves its inside the disc's colour and tints the rest of the
// disc, and nothing beyond the rim (the clip).
func TestRegionShadingInBrowser(t *testing.T) {
	needBrowser(t)
	c := Chart{SizePx: 400, NoLegend: true, Regions: []Region{{ID: "u", Center: 0.5, Radius: 0.3, Shade: ShadeOutside, Color: "#ff0000"}}}
	var svg bytes.Buffer
	if err := c.Render(&svg, nil, nil, nil); err != nil {
		t.Fatal(err)
	}
	page := "<!doctype html><html><head><style>html,body{margin:0;background:#fff}svg{display:block}</style></head><body>" + svg.String() + "</body></html>"
	srv := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		w.Header().Set("Content-Type", "text/html; charset=utf-8")
		io.WriteString(w, page)
	}))
	defer srv.Close()
	ctx := browser(t)
	tctx, cancel := context.WithTimeout(ctx, 60*time.Second)
	defer cancel()
	if err := chromedp.Do(tctx, chromedp.EmulateViewport(400, 400), chromedp.Navigate(srv.URL), chromedp.WaitReady(chromedp.ID("regions"))); err != nil {
		t.Fatal(err)
	}
	shot, err := chromedp.Run(tctx, chromedp.CaptureScreenshot())
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(shot))
	if err != nil {
		t.Fatal(err)
	}
	px := func(g complex128) (r, gr, b uint32) {
		x, y := c.GammaToXY(g)
		r, gr, b, _ = img.At(int(x+200), int(y+200)).RGBA()
		return r >> 8, gr >> 8, b >> 8
	}
	red := func(g complex128) bool { r, gg, b := px(g); return r > gg+15 && r > b+15 }
	if red(0.5) {
		t.Error("the inside of a circle shaded outside is tinted")
	}
	if !red(-0.5) || !red(complex(0, 0.6)) {
		t.Error("the outside of a circle shaded outside is not tinted inside the disc")
	}
	if red(complex(0.99, 0.99)) { // beyond the rim: the page's white
		t.Error("shading beyond the rim")
	}
}
