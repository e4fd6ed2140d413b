package server

import (
	"context"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
)

// pageDiag is what a failed wait reports of the page: the notice, the part
// values, the focused element and any script errors the page caught.
const pageDiag = `(document.querySelector("#notice")||{}).textContent + " | " + [...document.querySelectorAll('[data-testid="part-value"]')].map(e => e.value).join(", ") + " | active: " + (document.activeElement && document.activeElement.outerHTML.slice(0, 120)) + " | errors: " + (window.__errs || []).join("; ")`

// steps returns a must (fails t on an error) and a waitFor (polls the page
// for js to be true, within d, and fails t with the page's state if not)
// for the browser tab ctx.
func steps(t *testing.T, ctx context.Context, d time.Duration) (must func(error), waitFor func(js string)) {
	must = func(err error) {
		t.Helper()
		if err != nil {
			t.Fatal(err)
		}
	}
	waitFor = func(js string) {
		t.Helper()
		wctx, c := context.WithTimeout(ctx, d)
		defer c()
		if err := chromedp.Do(wctx, chromedp.Poll[chromedp.Void](js)); err != nil {
			state, _ := chromedp.Run(ctx, chromedp.Evaluate[string](pageDiag))
			t.Fatalf("waiting for %s: %v (page: %s)", js, err, state)
		}
	}
	return must, waitFor
}
