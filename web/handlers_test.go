package web

import (
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"testing"
)

// TestHandlerTables checks that every data-action and data-change a
// component uses has its entry in static/app.js's handler tables (an
// onAction or onChange call), and that every entry is used by some
// component: a button or control without an entry does nothing but warn.
func TestHandlerTables(t *testing.T) {
	t.Parallel()
	js, err := os.ReadFile("static/app.js")
	if err != nil {
		t.Fatal(err)
	}
	templs, err := filepath.Glob("*.templ")
	if err != nil {
		t.Fatal(err)
	}
	if len(templs) == 0 {
		t.Fatal("no .templ files found")
	}
	var src []byte
	for _, p := range templs {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		src = append(src, b...)
	}
	// A computed attribute (data-action={ … }) could not be checked here.
	if m := regexp.MustCompile(`data-(action|change)=\{`).Find(src); m != nil {
		t.Fatalf("a component computes %s…: name its handlers literally so this check can see them", m)
	}
	for _, k := range []struct{ attr, fn string }{{"action", "onAction"}, {"change", "onChange"}} {
		used := names(src, `data-`+k.attr+`="([^"]+)"`)
		have := names(js, k.fn+`\("([^"]+)"`)
		if len(used) == 0 || len(have) == 0 {
			t.Fatalf("data-%s: %d used in components, %d entries in app.js: the patterns no longer match", k.attr, len(used), len(have))
		}
		for _, n := range used {
			if !slices.Contains(have, n) {
				t.Errorf("data-%s=%q is used in a component but app.js has no %s(%q, …)", k.attr, n, k.fn, n)
			}
		}
		for _, n := range have {
			if !slices.Contains(used, n) {
				t.Errorf("app.js has %s(%q, …) but no component uses data-%s=%q", k.fn, n, k.attr, n)
			}
		}
	}
}

// names returns the sorted distinct first submatches of pattern in b.
func names(b []byte, pattern string) []string {
	var out []string
	for _, m := range regexp.MustCompile(pattern).FindAllSubmatch(b, -1) {
		out = append(out, string(m[1]))
	}
	slices.Sort(out)
	return slices.Compact(out)
}
