package cli

import (
	"context"
	"html"
	"io"
	"log/slog"
	"net/http"
	"net/http/httptest"
	"os"
	"regexp"
	"strings"
	"testing"

	"matchbench/internal/demo"
	"matchbench/rfmath/amp"
	"matchbench/rfmath/match"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/units"
	"matchbench/server"
	"matchbench/sessions"
)

// TestStageDemo opens the third demo session as a new user gets it: the
// stage's two networks hold the stage search's best design, it meets the
// demo's requirement (demo.LNAStage) and is stable across the sweep, the
// page shows the figures amp.EvaluateStage gives for those networks, and
// the README quotes them.
func TestStageDemo(t *testing.T) {
	t.Parallel()
	st, err := sessions.Open(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	if _, err := seedDemo(ctx, st, server.New(server.Config{Store: st, Log: slog.New(slog.NewTextHandler(io.Discard, nil))})); err != nil {
		t.Fatal(err)
	}
	list, err := st.List(ctx)
	if err != nil {
		t.Fatal(err)
	}
	var sid string
	for _, s := range list {
		if s.Name == stageDemoName {
			sid = s.ID
		}
	}
	if sid == "" {
		t.Fatalf("no session %q among %d", stageDemoName, len(list))
	}
	state, _, err := st.State(ctx, sid)
	if err != nil {
		t.Fatal(err)
	}
	if state.Stage == nil || state.Amp == nil || state.Stage.Search == nil || state.Amp.GammaS == nil {
		t.Fatalf("stage %+v, view %+v", state.Stage, state.Amp)
	}
	d := demo.Devices()[0]
	netOf := func(id string) match.Network {
		var n match.Network
		for _, p := range state.Networks[state.NetworkIndex(id)].Parts {
			n = append(n, match.Part{Kind: p.Kind, Value: p.Value, Series: p.ESeries, Model: parts.Typical0402})
		}
		return n
	}
	sw, err := st.Sweep(sid, state.Stage.SweepID)
	if err != nil {
		t.Fatal(err)
	}
	src, load := netOf(state.Stage.SourceNetworkID), netOf(state.Stage.LoadNetworkID)
	stage, err := match.StageOf(sw, d.Noise, 50, src, load)
	if err != nil {
		t.Fatal(err)
	}
	spec := demo.LNAStage
	m, err := amp.EvaluateStage(stage, []amp.StageBand{{LoHz: spec.Band.LoHz, HiHz: spec.Band.HiHz, StageRequirement: amp.StageRequirement{
		MinGainDB: spec.MinGainDB, MaxNFdB: spec.MaxNFdB, MinInputRLdB: spec.MinInputRLdB, MinOutputRLdB: spec.MinOutputRLdB}}})
	if err != nil {
		t.Fatal(err)
	}
	if !m.Meets() || len(src) == 0 || len(load) == 0 {
		t.Errorf("the demo stage (source %v, load %v) does not meet its requirement: margin %g dB, unstable at %v", src, load, m.MarginDB, m.UnstableHz)
	}
	edit, _, err := st.Tokens(ctx, sid)
	if err != nil {
		t.Fatal(err)
	}
	srv := server.New(server.Config{Store: st, Log: slog.New(slog.NewTextHandler(io.Discard, nil))})
	ts := httptest.NewServer(srv)
	t.Cleanup(func() { srv.Shutdown(); ts.Close(); st.Close() })
	r, err := http.Get(ts.URL + "/s/" + edit + "/")
	if err != nil {
		t.Fatal(err)
	}
	b, _ := io.ReadAll(r.Body)
	r.Body.Close()
	page := html.UnescapeString(string(b))
	cell := func(id string) string {
		mm := regexp.MustCompile(`data-testid="` + id + `">([^<]*)<`).FindStringSubmatch(page)
		if mm == nil {
			t.Fatalf("no %s on the demo page", id)
		}
		return strings.TrimSpace(mm[1])
	}
	b0 := m.Bands[0]
	fig := map[string]string{
		"gain":   units.FormatDB(b0.MinGainDB) + " – " + units.FormatDB(b0.MaxGainDB),
		"nf":     units.FormatDB(b0.WorstNFdB),
		"in":     units.FormatDB(b0.WorstInputRLdB),
		"out":    units.FormatDB(b0.WorstOutputRLdB),
		"loss":   units.FormatDB(b0.WorstSourceLossDB),
		"margin": units.FormatDB(m.MarginDB),
	}
	if got := cell("stage-gain"); got != fig["gain"] {
		t.Errorf("page gain %q, evaluated %q", got, fig["gain"])
	}
	if got := cell("stage-nf"); got != fig["nf"] {
		t.Errorf("page NF %q, evaluated %q", got, fig["nf"])
	}
	if !strings.Contains(cell("stage-stability"), "stable at every frequency of the sweep") {
		t.Errorf("stability on the page: %q", cell("stage-stability"))
	}
	t.Logf("demo stage: source %v, load %v; %v; least μ %.4f", src, load, fig, m.MinMu)
	readme, err := os.ReadFile("README.md")
	if err != nil {
		t.Fatal(err)
	}
	want := "gain " + fig["gain"] + " across the band, a noise figure of at most " + fig["nf"] + " (of which the source network's own loss is up to " + fig["loss"] +
		"), return loss at least " + fig["in"] + " at the input and " + fig["out"] + " at the output"
	if !strings.Contains(string(readme), want) {
		t.Errorf("README does not say %q", want)
	}
}
