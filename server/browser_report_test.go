package server

import (
	"context"
	"image"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
)

// needPoppler returns the paths of pdftoppm and pdftotext (Debian's
// poppler-utils), skipping the test when they are missing unless a browser
// test is required (MATCHBENCH_REQUIRE_BROWSER=1), when it fails.
func needPoppler(t *testing.T) (toppm, totext string) {
	t.Helper()
	a, err1 := exec.LookPath("pdftoppm")
	b, err2 := exec.LookPath("pdftotext")
	if err1 != nil || err2 != nil {
		if os.Getenv("MATCHBENCH_REQUIRE_BROWSER") == "1" {
			t.Fatalf("MATCHBENCH_REQUIRE_BROWSER=1 but poppler-utils is missing: %v %v", err1, err2)
		}
		t.Skip("skipping the print test: pdftoppm or pdftotext not found (apt-get install poppler-utils)")
	}
	return a, b
}

// TestReportPrints prints the design-review report with headless Chromium
// to PDF on A4 and on Letter, turns the pages into PNG with pdftoppm (to
// look at; they go to $MATCHBENCH_SHOTS when set) and checks the pages'
// text with pdftotext: every section is there once, the sections that
// start a page do, and no page is empty.
func TestReportPrints(t *testing.T) {
	needBrowser(t)
	toppm, totext := needPoppler(t)
	h := newHandoff(t, threeParts)
	dir := shotDir(t)
	ctx := browser(t)
	ectx, cancel := context.WithTimeout(ctx, 120*time.Second)
	defer cancel()
	if err := chromedp.Do(ectx, chromedp.Navigate(h.ts.URL+"/s/"+h.sess.ViewToken+"/report")); err != nil {
		t.Fatal(err)
	}
	if err := chromedp.Do(ectx, chromedp.WaitVisible(`[data-testid="report-parts"]`)); err != nil {
		t.Fatal(err)
	}
	sections := []string{"1. Reference plane", "2. Schematic", "3. Return loss and power to the load in each band", "4. The load before and after",
		"5. Tolerances and yield", "6. Voltage, current and heat at power", "7. Parts list", "8. Cautions"}
	pageStarts := []string{"4. The load before and after", "5. Tolerances and yield"}
	for _, paper := range []struct {
		name string
		size chromedp.PaperSize
	}{{"a4", chromedp.PaperA4}, {"letter", chromedp.PaperLetter}} {
		pdf, err := chromedp.Run(ectx, chromedp.PrintToPDF(chromedp.PDFPaper(paper.size), chromedp.PDFPrintBackground()))
		if err != nil {
			t.Fatal(err)
		}
		file := filepath.Join(dir, "report-"+paper.name+".pdf")
		if err := os.WriteFile(file, pdf, 0o644); err != nil {
			t.Fatal(err)
		}
		if out, err := exec.Command(toppm, "-r", "70", "-png", file, filepath.Join(dir, "report-"+paper.name)).CombinedOutput(); err != nil {
			t.Fatalf("pdftoppm: %v %s", err, out)
		}
		pngs, _ := filepath.Glob(filepath.Join(dir, "report-"+paper.name+"-*.png"))
		if len(pngs) < 3 || len(pngs) > 6 {
			t.Errorf("%s: %d pages, want 3 to 6", paper.name, len(pngs))
		}
		var all []string
		for i := range pngs {
			n := strconv.Itoa(i + 1)
			txt, err := exec.Command(totext, "-layout", "-f", n, "-l", n, file, "-").Output()
			if err != nil {
				t.Fatalf("pdftotext: %v", err)
			}
			page := strings.TrimSpace(string(txt))
			if page == "" {
				t.Errorf("%s page %d is empty", paper.name, i+1)
			}
			all = append(all, page)
			img, err := os.Open(pngs[i])
			if err != nil {
				t.Fatal(err)
			}
			im, err := png.Decode(img)
			img.Close()
			if err != nil {
				t.Fatal(err)
			}
			if inked := inkedShare(im); inked < 0.01 {
				t.Errorf("%s page %d: %.3f of the pixels inked", paper.name, i+1, inked)
			}
		}
		joined := strings.Join(all, "\n")
		for _, s := range sections {
			if c := strings.Count(joined, s); c != 1 {
				t.Errorf("%s: section %q appears %d times", paper.name, s, c)
			}
		}
		for _, s := range pageStarts {
			found := false
			for _, p := range all {
				if strings.HasPrefix(p, s) {
					found = true
				}
			}
			if !found {
				t.Errorf("%s: section %q does not start a page", paper.name, s)
			}
		}
		t.Logf("%s: %d pages in %s", paper.name, len(pngs), dir)
	}
}

// inkedShare returns the share of an image's pixels darker than a light
// grey (luminance below 200 of 255, ITU-R BT.709 weights).
func inkedShare(img image.Image) float64 {
	b := img.Bounds()
	dark := 0
	for y := b.Min.Y; y < b.Max.Y; y++ {
		for x := b.Min.X; x < b.Max.X; x++ {
			r, g, bl, _ := img.At(x, y).RGBA()
			if (0.2126*float64(r)+0.7152*float64(g)+0.0722*float64(bl))/257 < 200 {
				dark++
			}
		}
	}
	return float64(dark) / float64(b.Dx()*b.Dy())
}
