// Package browsertest starts Debian's headless Chromium for the project's
// real-browser tests, with the flags this workplace needs, and decides
// whether a test without a browser skips or fails.
package browsertest

import (
	"context"
	"os"
	"testing"

	"github.com/chromedp/chromedp"
)

// ChromiumPath is where Debian's chromium package puts the browser.
const ChromiumPath = "/usr/bin/chromium"

// Need skips the test when Chromium is missing, unless
// MATCHBENCH_REQUIRE_BROWSER=1 (as CI sets it), when it fails instead; it
// also skips in -short mode unless the browser is required.
func Need(t testing.TB) {
	t.Helper()
	required := os.Getenv("MATCHBENCH_REQUIRE_BROWSER") == "1"
	if _, err := os.Stat(ChromiumPath); err != nil {
		if required {
			t.Fatalf("MATCHBENCH_REQUIRE_BROWSER=1 but %s is missing: %v", ChromiumPath, err)
		}
		t.Skipf("skipping the real-browser test: %s not found (apt-get install chromium fonts-liberation; "+
			"set MATCHBENCH_REQUIRE_BROWSER=1 to make this a failure)", ChromiumPath)
	}
	if testing.Short() && !required {
		t.Skip("skipping the real-browser test in -short mode")
	}
}

// Start starts headless Chromium with a fresh profile and returns a tab's
// context. The browser is started here, without a timeout (a timeout on the
// first action's context would kill the browser); callers derive per-step
// timeouts from the returned context.
func Start(t testing.TB) context.Context {
	t.Helper()
	opts := append(chromedp.DefaultExecAllocatorOptions[:],
		chromedp.ExecPath(ChromiumPath),
		chromedp.Flag("no-sandbox", true),
		chromedp.Flag("disable-gpu", true),
		chromedp.Flag("disable-quic", true),
		chromedp.Flag("disable-component-update", true),
		chromedp.Flag("disable-dev-shm-usage", true),
		chromedp.UserDataDir(t.TempDir()),
	)
	allocCtx, cancelAlloc := chromedp.NewExecAllocator(context.Background(), opts...)
	t.Cleanup(cancelAlloc)
	ctx, cancel := chromedp.NewContext(allocCtx)
	t.Cleanup(cancel)
	if err := chromedp.Do(ctx); err != nil {
		t.Fatalf("starting Chromium: %v", err)
	}
	return ctx
}
