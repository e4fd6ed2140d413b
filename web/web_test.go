package web

import (
	"bytes"
	"context"
	"strings"
	"testing"

	"golang.org/x/net/html"
)

func parse(t *testing.T, b []byte) *html.Node {
	t.Helper()
	doc, err := html.Parse(bytes.NewReader(b))
	if err != nil {
		t.Fatal(err)
	}
	return doc
}

// byTestID returns the elements with data-testid id.
func byTestID(n *html.Node, id string) []*html.Node {
	var out []*html.Node
	var walk func(*html.Node)
	walk = func(n *html.Node) {
		if n.Type == html.ElementNode {
			for _, a := range n.Attr {
				if a.Key == "data-testid" && a.Val == id {
					out = append(out, n)
				}
			}
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			walk(c)
		}
	}
	walk(n)
	return out
}

func text(n *html.Node) string {
	var b strings.Builder
	var walk func(*html.Node)
	walk = func(n *html.Node) {
		if n.Type == html.TextNode {
			b.WriteString(n.Data)
		}
		for c := n.FirstChild; c != nil; c = c.NextSibling {
			walk(c)
		}
	}
	walk(n)
	return b.String()
}

func view(canEdit bool) SessionView {
	return SessionView{
		ID: "s1", Name: `<b>Bench</b> & "co"`, Version: 3, CanEdit: canEdit, Token: "tok",
		Chart:   ChartView{SVG: `<svg data-testid="the-chart"></svg>`},
		Sweeps:  []SweepRow{{ID: "w1", Name: `<script>alert(1)</script>`, Color: "#1f5fa8", Visible: true, Summary: "1-port", RawHref: "/s/tok/sweeps/w1/file"}},
		Markers: []ReadoutRow{{MarkerID: "m1", Num: 1, Label: `<i>x</i>`, Trace: "w1 · S11", Freq: "868 MHz", Z: "50 + j0 Ω", RL: "∞ dB"}},
		Bands:   []BandRow{{ID: "b1", Name: "ISM", Lo: "2.4 GHz", Hi: "2.4835 GHz", MinRL: "10 dB"}},
		Network: NetworkView{Loads: []Option{{Value: "w1", Label: "w1"}}},
		Share:   ShareView{EditLinks: []string{"http://h/s/e/"}, ViewLinks: []string{"http://h/s/v/"}},
	}
}

func TestSessionPageEditAndView(t *testing.T) {
	t.Parallel()
	for _, canEdit := range []bool{true, false} {
		var b bytes.Buffer
		if err := SessionPage(view(canEdit)).Render(context.Background(), &b); err != nil {
			t.Fatal(err)
		}
		doc := parse(t, b.Bytes())
		// Text a user supplied is text, never markup.
		if strings.Contains(b.String(), "<script>alert") || strings.Contains(b.String(), "<b>Bench") || strings.Contains(b.String(), "<i>x") {
			t.Errorf("edit=%v: user text rendered as markup", canEdit)
		}
		if got := text(byTestID(doc, "session-name")[0]); got != `<b>Bench</b> & "co"` {
			t.Errorf("session name reads %q", got)
		}
		if n := len(byTestID(doc, "the-chart")); n != 1 {
			t.Errorf("edit=%v: %d charts", canEdit, n)
		}
		if got := text(byTestID(doc, "ro-freq")[0]); got != "868 MHz" {
			t.Errorf("readout frequency %q", got)
		}
		controls := len(byTestID(doc, "drop")) + len(byTestID(doc, "band-add")) + len(byTestID(doc, "marker-add")) + len(byTestID(doc, "network-add")) + len(byTestID(doc, "edit-link"))
		if canEdit && controls != 5 {
			t.Errorf("editor sees %d of the 5 editing controls", controls)
		}
		if !canEdit && (controls != 0 || len(byTestID(doc, "view-only")) != 1) {
			t.Errorf("viewer sees %d editing controls", controls)
		}
		if len(byTestID(doc, "cautions")) != 1 {
			t.Error("no cautions on the page")
		}
	}
}

func TestStartPage(t *testing.T) {
	t.Parallel()
	var b bytes.Buffer
	if err := StartPage(StartView{Local: true, Sessions: []SessionRow{{Name: "<x>", EditHref: "/open/a", ViewHref: "/open/a?view=1"}}}).Render(context.Background(), &b); err != nil {
		t.Fatal(err)
	}
	doc := parse(t, b.Bytes())
	if len(byTestID(doc, "session-list")) != 1 || len(byTestID(doc, "new-session")) != 1 || strings.Contains(b.String(), "<x>") {
		t.Errorf("local start page:\n%s", b.String())
	}
	b.Reset()
	if err := StartPage(StartView{Local: false}).Render(context.Background(), &b); err != nil {
		t.Fatal(err)
	}
	doc = parse(t, b.Bytes())
	if len(byTestID(doc, "session-list")) != 0 || len(byTestID(doc, "new-session")) != 0 {
		t.Error("a visitor from the network sees the session list")
	}
}
