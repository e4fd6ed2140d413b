package cli

import (
	"bytes"
	"context"
	"encoding/json"
	"io"
	"log/slog"
	"math"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"

	"matchbench/rfmath"
	"matchbench/rfmath/touchstone"
	"matchbench/rfmath/units"
	"matchbench/server"
	"matchbench/sessions"
)

// TestFiguresAgree holds the four places that show a design's band
// figures to the same printed digits: `match --json`, `match`'s table, the
// network panel of the web app and its printable report. The load is not
// flat (an invented small antenna: a series RLC behind a pad capacitance)
// and coarsely swept (4 MHz steps), and both bands' edges fall between
// measured points, where the figures depend on the edges being judged the
// same way everywhere.
func TestFiguresAgree(t *testing.T) {
	t.Parallel()
	s := rfmath.NewSweep(51, 1, 50)
	for k := range s.FreqHz {
		f := 800e6 + 4e6*float64(k)
		w := 2 * math.Pi * f
		zs := complex(3+10*(f/950e6)*(f/950e6), w*30e-9-1/(w*1.0e-12))
		s.FreqHz[k] = f
		s.Data[k] = rfmath.GammaFromZ(1/(1/zs+complex(0, w*0.5e-12)), 50)
	}
	var raw bytes.Buffer
	if err := touchstone.Write(&raw, s, touchstone.WriteOptions{}); err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "antenna.s1p")
	if err := os.WriteFile(path, raw.Bytes(), 0o644); err != nil {
		t.Fatal(err)
	}
	bands := [][2]float64{{863.3e6, 869.9e6}, {902.5e6, 927.3e6}}
	args := []string{"match", path, "--band", "863.3M:869.9M", "--band", "902.5M:927.3M", "--parts", "3", "--top", "1", "--builds", "0"}
	code, out, errOut := runCLI(t, append(args, "--json")...)
	if code != 0 {
		t.Fatalf("exit %d: %s", code, errOut)
	}
	var ds []struct {
		Parts []struct {
			Kind   rfmath.PartKind `json:"kind"`
			Value  float64         `json:"value"`
			Series string          `json:"series"`
		} `json:"parts"`
		RawBands []map[string]float64 `json:"bands"`
	}
	if err := json.Unmarshal([]byte(out), &ds); err != nil {
		t.Fatal(err)
	}
	code, text, _ := runCLI(t, args...)
	if code != 0 {
		t.Fatalf("text: exit %d", code)
	}

	st, err := sessions.Open(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	se, _ := st.Create(ctx, "figures")
	ev, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpSweepAdd, Name: "antenna", FileName: "antenna.s1p", Raw: raw.Bytes(), Sweep: s})
	if err != nil {
		t.Fatal(err)
	}
	for _, b := range bands {
		if _, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpBandSet, LoHz: b[0], HiHz: b[1], MinReturnLossDB: 10}); err != nil {
			t.Fatal(err)
		}
	}
	var ps []sessions.Part
	for _, p := range ds[0].Parts {
		ps = append(ps, sessions.Part{Kind: p.Kind, Value: p.Value, ESeries: p.Series, Model: "0402"})
	}
	if _, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpNetworkAdd, Name: "best", SweepID: ev.SweepID, DesignHz: 866e6, Parts: ps}); err != nil {
		t.Fatal(err)
	}
	srv := server.New(server.Config{Store: st, Log: slog.New(slog.NewTextHandler(io.Discard, nil))})
	ts := httptest.NewServer(srv)
	t.Cleanup(func() { srv.Shutdown(); ts.Close(); st.Close() })
	get := func(p string) string {
		t.Helper()
		r, err := http.Get(ts.URL + "/s/" + se.EditToken + p)
		if err != nil {
			t.Fatal(err)
		}
		defer r.Body.Close()
		b, _ := io.ReadAll(r.Body)
		if r.StatusCode != 200 {
			t.Fatalf("GET %s: %d %s", p, r.StatusCode, b)
		}
		return string(b)
	}
	cells := func(html, id string) []string {
		var out []string
		for _, m := range regexp.MustCompile(`data-testid="`+id+`">([^<]*)<`).FindAllStringSubmatch(html, -1) {
			out = append(out, strings.TrimSpace(m[1]))
		}
		return out
	}
	page, report := get("/"), get("/report")
	for _, id := range []string{"net-worst", "net-power-worst", "net-power-before", "net-power-mean", "net-loss"} {
		p, r := cells(page, id), cells(report, id)
		if len(p) != 2 || strings.Join(p, "|") != strings.Join(r, "|") {
			t.Errorf("%s: page %q, report %q", id, p, r)
		}
	}
	for b, jb := range ds[0].RawBands {
		want := map[string]string{
			"net-worst":        units.FormatDB(jb["worst_rl_db"]),
			"net-power-worst":  units.FormatShare(jb["worst_power_to_load"]),
			"net-power-before": units.FormatShare(jb["unmatched_worst_power_to_load"]),
			"net-power-mean":   units.FormatPercent(jb["mean_power_to_load"], 1),
			"net-loss":         units.FormatDB(jb["network_loss_db"]),
		}
		for id, w := range want {
			if got := cells(page, id); len(got) != 2 || got[b] != w {
				t.Errorf("band %d %s: page %q, JSON gives %q", b, id, got, w)
			}
		}
		for _, w := range []string{units.FormatDB(jb["worst_rl_db"]), units.FormatDB(jb["mean_rl_db"]), units.FormatPercent(jb["worst_power_to_load"], 1)} {
			if !strings.Contains(text, w) {
				t.Errorf("band %d: the text table lacks %q:\n%s", b, w, text)
			}
		}
	}
}

// TestDemoFiguresInREADME opens the first demo session as a new user gets
// it and checks the figures the README quotes for it: the worst power to
// the antenna in each band with no network and through the search's
// network, rounded to whole percent.
func TestDemoFiguresInREADME(t *testing.T) {
	t.Parallel()
	st, err := sessions.Open(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	srv := server.New(server.Config{Store: st, Log: slog.New(slog.NewTextHandler(io.Discard, nil))})
	token, err := seedDemo(context.Background(), st, srv)
	if err != nil {
		t.Fatal(err)
	}
	ts := httptest.NewServer(srv)
	t.Cleanup(func() { srv.Shutdown(); ts.Close(); st.Close() })
	r, err := http.Get(ts.URL + "/s/" + token + "/")
	if err != nil {
		t.Fatal(err)
	}
	page, _ := io.ReadAll(r.Body)
	r.Body.Close()
	pct := func(id string) []string {
		var out []string
		for _, m := range regexp.MustCompile(`data-testid="`+id+`">([0-9.]+) %`).FindAllStringSubmatch(string(page), -1) {
			v, _ := strconv.ParseFloat(m[1], 64)
			out = append(out, strconv.Itoa(int(math.Round(v))))
		}
		return out
	}
	alone, with := pct("net-power-before"), pct("net-power-worst")
	if len(alone) != 2 || len(with) != 2 {
		t.Fatalf("demo page figures: alone %v, with %v", alone, with)
	}
	readme, err := os.ReadFile("README.md")
	if err != nil {
		t.Fatal(err)
	}
	want := "about " + alone[0] + " % and " + alone[1] + " % of the available power reach the antenna at the worst point of each band with no network, " +
		with[0] + " % and " + with[1] + " % through the three parts"
	if !strings.Contains(string(readme), want) {
		t.Errorf("README does not say %q", want)
	}
}
