package server

import (
	"context"
	"fmt"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
)

// TestBrowserReissue re-issues a session's links from the edit page in
// headless Chromium: the editor lands on the new edit link, live, and a
// viewer's page open on the old view link reloads to the 404 that says
// the link may have been re-issued.
func TestBrowserReissue(t *testing.T) {
	needBrowser(t)
	f := newFixture(t, 101)
	dir := shotDir(t)
	ctx := browser(t)
	ectx, cancel := context.WithTimeout(ctx, 90*time.Second)
	defer cancel()
	oldEdit := "/s/" + f.sess.EditToken + "/"
	if err := chromedp.Do(ectx,
		chromedp.EmulateViewport(1400, 1000),
		chromedp.Navigate(f.ts.URL+oldEdit),
		chromedp.Poll[chromedp.Void](liveJS),
	); err != nil {
		t.Fatal(err)
	}
	vtab, vcancel := chromedp.NewContext(ctx, chromedp.WithNewBrowserContext())
	defer vcancel()
	vctx, vcancel2 := context.WithTimeout(vtab, 60*time.Second)
	defer vcancel2()
	if err := chromedp.Do(vctx,
		chromedp.Navigate(f.ts.URL+"/s/"+f.sess.ViewToken+"/"),
		chromedp.Poll[chromedp.Void](liveJS),
	); err != nil {
		t.Fatal(err)
	}

	// Without the box ticked the browser does not submit (required).
	if err := chromedp.Do(ectx,
		chromedp.Click(chromedp.CSS(`[data-testid="reissue"] button`)),
		chromedp.Sleep(300*time.Millisecond),
	); err != nil {
		t.Fatal(err)
	}
	if p, _ := chromedp.Run(ectx, chromedp.Evaluate[string](`location.pathname`)); p != oldEdit {
		t.Fatalf("the form went off without its confirmation: now at %q", p)
	}
	if err := chromedp.Do(ectx,
		chromedp.Click(chromedp.CSS(`[data-testid="reissue"] input[name="confirm"]`)),
		chromedp.Click(chromedp.CSS(`[data-testid="reissue"] button`)),
	); err != nil {
		t.Fatal(err)
	}
	// The page navigates: a poll running then is cut off, so poll again.
	var err error
	for range 10 {
		pctx, pcancel := context.WithTimeout(ectx, 2*time.Second)
		err = chromedp.Do(pctx, chromedp.Poll[chromedp.Void](fmt.Sprintf(`location.pathname !== %q && location.pathname.startsWith("/s/") && (%s)`, oldEdit, liveJS)))
		pcancel()
		if err == nil {
			break
		}
	}
	if err != nil {
		p, _ := chromedp.Run(ectx, chromedp.Evaluate[string](`location.href + " | " + (document.body ? document.body.innerText.slice(0, 300) : "")`))
		t.Logf("page: %s", p)
		t.Fatalf("after re-issuing, the editor is not live on a new link: %v", err)
	}
	newEdit, newView, err := f.store.Tokens(context.Background(), f.sess.ID)
	if err != nil {
		t.Fatal(err)
	}
	if p, _ := chromedp.Run(ectx, chromedp.Evaluate[string](`location.pathname`)); p != "/s/"+newEdit+"/" {
		t.Errorf("the editor is at %q, not the new edit link", p)
	}
	links, _ := textIn(ectx, `#share-panel`)
	if !strings.Contains(links, newView) || strings.Contains(links, f.sess.ViewToken) {
		t.Errorf("the share panel does not show the new view link only")
	}
	shot(t, ectx, filepath.Join(dir, "editor-after-reissue.png"))

	// The viewer's page was told to reload and now shows why.
	wctx, wcancel := context.WithTimeout(vctx, 15*time.Second)
	defer wcancel()
	if err := chromedp.Do(wctx, chromedp.Poll[chromedp.Void](`document.body && document.body.innerText.includes("may have been re-issued")`)); err != nil {
		txt, _ := chromedp.Run(vctx, chromedp.Evaluate[string](`document.body ? document.body.innerText.slice(0, 200) : ""`))
		t.Fatalf("the viewer's page on the old link shows %q: %v", txt, err)
	}
}
