package chartsvg

import (
	"bytes"
	"context"
	"image"
	"image/png"
	"io"
	"matchbench/internal/browsertest"
	"math"
	"math/cmplx"
	"net/http"
	"net/http/httptest"
	"os"
	"strconv"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
)

func needBrowser(t *testing.T) { browsertest.Need(t) }

func browser(t *testing.T) context.Context { return browsertest.Start(t) }

// TestChartInBrowser renders the demo chart in headless Chromium, takes a
// screenshot and checks it is the expected size and not blank; it also
// inverts a marker's position in the page the way the documentation says
// the page's script should. MATCHBENCH_CHART_PNG=path keeps the picture.
func TestChartInBrowser(t *testing.T) {
	needBrowser(t)
	c, tr, mk, path := fullChart(10001)
	var svg bytes.Buffer
	if err := c.Render(&svg, tr, mk, path); err != nil {
		t.Fatal(err)
	}
	root := parseSVG(t, svg.String())
	width, _ := strconv.Atoi(root.attr["width"])
	height, _ := strconv.Atoi(root.attr["height"])
	if width != 700 || height < 700 {
		t.Fatalf("svg size %s × %s", root.attr["width"], root.attr["height"])
	}
	page := "<!doctype html><html><head><meta charset=\"utf-8\"><style>html,body{margin:0;background:#fff}" +
		"svg{display:block}</style></head><body>" + svg.String() + "</body></html>"
	srv := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		w.Header().Set("Content-Type", "text/html; charset=utf-8")
		io.WriteString(w, page)
	}))
	defer srv.Close()

	ctx := browser(t)
	tctx, cancel := context.WithTimeout(ctx, 60*time.Second)
	defer cancel()
	if err := chromedp.Do(tctx,
		chromedp.EmulateViewport(int64(width), int64(height)),
		chromedp.Navigate(srv.URL),
		chromedp.WaitReady(chromedp.ID("legend")),
	); err != nil {
		t.Fatal(err)
	}
	shot, err := chromedp.Run(tctx, chromedp.CaptureScreenshot())
	if err != nil {
		t.Fatal(err)
	}
	if p := os.Getenv("MATCHBENCH_CHART_PNG"); p != "" {
		if err := os.WriteFile(p, shot, 0o644); err != nil {
			t.Fatal(err)
		}
		t.Logf("screenshot written to %s", p)
	}
	img, err := png.Decode(bytes.NewReader(shot))
	if err != nil {
		t.Fatal(err)
	}
	if b := img.Bounds(); b.Dx() != width || b.Dy() != height {
		t.Errorf("screenshot is %d × %d, want %d × %d", b.Dx(), b.Dy(), width, height)
	}
	mean, variance, inked := pixelStats(img)
	t.Logf("luminance mean %.1f, variance %.1f, %.1f %% of pixels inked", mean, variance, 100*inked)
	// A blank page has zero variance; a chart with its grids and four
	// traces inks a good share of the picture but leaves it mostly light.
	if variance < 300 || inked < 0.05 || inked > 0.6 {
		t.Errorf("screenshot looks blank or wrong: variance %.1f, %.1f %% inked", variance, 100*inked)
	}

	// The page's script inverts a position as Γ = (x, −y)/K with K from
	// data-gamma-scale; do it in the browser for marker m1.
	got, err := chromedp.Run(tctx, chromedp.Evaluate[[]float64](`(() => {
		const s = document.querySelector("svg");
		const k = Number(s.dataset.gammaScale);
		const m = document.getElementById("mk-m1").transform.baseVal.consolidate().matrix;
		return [m.e / k, -m.f / k];
	})()`))
	if err != nil {
		t.Fatal(err)
	}
	if len(got) != 2 || cmplx.Abs(complex(got[0], got[1])-mk[0].Gamma) > 0.06/c.Scale() {
		t.Errorf("marker m1 inverted in the page to %v, want %v", got, mk[0].Gamma)
	}
	// SVG text is read with TextContent (Text reads innerText, empty for SVG).
	legend, err := chromedp.Run(tctx, chromedp.TextContent(chromedp.ID("legend")))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Contains([]byte(legend), []byte(tr[0].Name)) {
		t.Errorf("legend text %q lacks %q", legend, tr[0].Name)
	}
}

// pixelStats returns the mean and variance of luminance (0–255) and the
// share of pixels darker than 200.
func pixelStats(img image.Image) (mean, variance, inked float64) {
	b := img.Bounds()
	var sum, sum2 float64
	dark := 0
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r, g, bl, _ := img.At(x, y).RGBA()
			l := (0.2126*float64(r) + 0.7152*float64(g) + 0.0722*float64(bl)) / 257
			sum += l
			sum2 += l * l
			if l < 200 {
				dark++
			}
		}
	}
	n := float64(b.Dx() * b.Dy())
	mean = sum / n
	return mean, math.Max(0, sum2/n-mean*mean), float64(dark) / n
}
