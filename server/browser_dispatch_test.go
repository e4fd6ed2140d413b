package server

import (
	"strings"
	"testing"
)

// TestBrowserUnknownAction clicks a button whose data-action has no entry
// in the page's handler table and changes a control whose data-change has
// none: each is reported on the console and sends nothing, while a known
// action clicked after them (redo) is sent. The page's websocket sends are
// counted by wrapping WebSocket.prototype.send, which the page's socket
// uses.
func TestBrowserUnknownAction(t *testing.T) {
	needBrowser(t)
	f := newFixture(t, 101)
	p := openPage(t, f.ts, f.sess, false, 1400, 1000)
	p.do(`(() => {
		window.__sent = [];
		window.__warns = [];
		const send = WebSocket.prototype.send;
		WebSocket.prototype.send = function (d) { window.__sent.push(String(d)); return send.call(this, d); };
		const warn = console.warn;
		console.warn = (...a) => { window.__warns.push(a.join(" ")); warn.apply(console, a); };
		const b = document.createElement("button");
		b.type = "button";
		b.dataset.action = "no-such-action";
		b.dataset.marker = "m1";
		b.id = "test-unknown-action";
		b.textContent = "unknown";
		document.body.append(b);
		const c = document.createElement("input");
		c.type = "checkbox";
		c.dataset.change = "no-such-change";
		c.dataset.sweep = "w1";
		c.id = "test-unknown-change";
		document.body.append(c);
		const r = document.createElement("button");
		r.type = "button";
		r.dataset.action = "redo";
		r.id = "test-known-action";
		document.body.append(r);
	})()`)
	p.do(`document.getElementById("test-unknown-action").click()`)
	p.do(`document.getElementById("test-unknown-change").click()`) // a checkbox's click fires change
	p.do(`document.getElementById("test-known-action").click()`)
	// The known action is sent as the click runs; wait for it all the same.
	p.wait(`window.__sent.some(d => JSON.parse(d).type === "change" && JSON.parse(d).change.op === "redo")`)
	sent := js[[]string](p, `window.__sent`)
	for _, d := range sent {
		if strings.Contains(d, "no-such-") {
			t.Errorf("the page sent %s for a data-action or data-change without a handler", d)
		}
	}
	if len(sent) != 1 {
		t.Errorf("the page sent %d messages, want 1 (the redo): %q", len(sent), sent)
	}
	warns := strings.Join(js[[]string](p, `window.__warns`), "\n")
	for _, w := range []string{`data-action "no-such-action"`, `data-change "no-such-change"`} {
		if !strings.Contains(warns, w) {
			t.Errorf("console warnings %q do not name %s", warns, w)
		}
	}
}
