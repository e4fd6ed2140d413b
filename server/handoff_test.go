package server

import (
	"bytes"
	"context"
	"encoding/csv"
	"encoding/json"
	"encoding/xml"
	"fmt"
	"io"
	"log/slog"
	"math"
	"math/cmplx"
	"mime/multipart"
	"net"
	"net/http"
	"net/http/httptest"
	"strconv"
	"strings"
	"testing"
	"time"

	"matchbench/internal/demo"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/touchstone"
	"matchbench/sessions"
)

// handoff is a session like the first demo's: the invented Fieldnode
// antenna measured through its cable (internal/demo), the cable removed as
// a reference-plane step, both bands, two markers and a network of typical
// 0402 parts of E24 values.
type handoff struct {
	*fixture
	load, cable string // sweep ids
	net         string
}

func newHandoff(t *testing.T, ps []sessions.Part) *handoff {
	t.Helper()
	st, err := sessions.Open(t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	se, _ := st.Create(ctx, "Fieldnode handoff")
	h := &handoff{}
	for _, f := range demo.Generate() {
		if f.Name != "fieldnode-via-cable.s1p" && f.Name != "cable-fixture.s2p" {
			continue
		}
		var b bytes.Buffer
		if err := touchstone.Write(&b, f.Sweep, touchstone.WriteOptions{FreqUnit: "MHz", Digits: 10, Comments: []string{" invented demo data"}}); err != nil {
			t.Fatal(err)
		}
		sw, err := parseSweep(f.Name, b.Bytes(), touchstone.Limits{})
		if err != nil {
			t.Fatal(err)
		}
		ev, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpSweepAdd, Name: strings.TrimSuffix(f.Name, f.Name[strings.LastIndex(f.Name, "."):]), FileName: f.Name, Raw: b.Bytes(), Sweep: sw})
		if err != nil {
			t.Fatal(err)
		}
		if f.Sweep.Ports == 2 {
			h.cable = ev.SweepID
		} else {
			h.load = ev.SweepID
		}
	}
	mustApply := func(ch sessions.Change) sessions.Event {
		t.Helper()
		ev, err := st.Apply(ctx, se.ID, ch)
		if err != nil {
			t.Fatal(err)
		}
		return ev
	}
	mustApply(sessions.Change{Op: sessions.OpSweepVisible, SweepID: h.cable, Visible: false})
	mustApply(sessions.Change{Op: sessions.OpSweepRefPlane, SweepID: h.load, RefPlane: &sessions.RefPlane{FixtureSweepID: h.cable, FixturePortFacingAnalyser: 1}})
	for _, b := range demo.FieldnodeBands {
		mustApply(sessions.Change{Op: sessions.OpBandSet, Name: b.Name, LoHz: b.LoHz, HiHz: b.HiHz, MinReturnLossDB: b.MinReturnLossDB, MinPowerToLoad: 0.5})
	}
	mustApply(sessions.Change{Op: sessions.OpMarkerAdd, SweepID: h.load, FreqHz: 866.5e6, Label: "EU"})
	mustApply(sessions.Change{Op: sessions.OpMarkerAdd, SweepID: h.load, FreqHz: 915e6, Label: "US"})
	h.net = mustApply(sessions.Change{Op: sessions.OpNetworkAdd, Name: "Search 1", SweepID: h.load, DesignHz: 866.5e6, Parts: ps}).NetworkID
	power := 0.5
	mustApply(sessions.Change{Op: sessions.OpNetworkSet, NetworkID: h.net, PowerW: &power})
	srv := New(Config{Store: st, Log: slog.New(slog.NewTextHandler(io.Discard, nil))})
	ts := httptest.NewServer(srv)
	t.Cleanup(func() { srv.Shutdown(); ts.Close(); st.Close() })
	h.fixture = &fixture{store: st, srv: srv, ts: ts, sess: se, sweep: h.load}
	return h
}

// threeParts is a 3-part ladder of typical 0402 parts of E24 values
// (invented for the tests: not a search's result).
var threeParts = []sessions.Part{
	{Kind: sessions.PartShuntC, Value: 2.2e-12, ESeries: "E24", Model: "0402"},
	{Kind: sessions.PartSeriesL, Value: 12e-9, ESeries: "E24", Model: "0402"},
	{Kind: sessions.PartShuntC, Value: 2.2e-12, ESeries: "E24", Model: "0402"},
}

func getStatus(t *testing.T, url string) (int, string, http.Header) {
	t.Helper()
	res, err := http.Get(url)
	if err != nil {
		t.Fatal(err)
	}
	defer res.Body.Close()
	b, _ := io.ReadAll(res.Body)
	return res.StatusCode, string(b), res.Header
}

// TestExportsNeverSilent: an export that cannot be made says so with an
// error status and a message; a network whose parts give no finite
// response (figures the store now refuses, built here past it) makes no
// file; a session without a network answers 404 with words, not an empty
// 200.
func TestExportsNeverSilent(t *testing.T) {
	t.Parallel()
	h := newHandoff(t, threeParts)
	st, _, _ := h.store.State(context.Background(), h.sess.ID)
	// A copy of the state with absurd figures on the inductor: a Q of
	// 1e-300 at 1e300 Hz makes its loss resistance +Inf.
	bad := *st
	bad.Networks = append([]sessions.Network(nil), st.Networks...)
	bad.Networks[0].Parts = append([]sessions.Part(nil), st.Networks[0].Parts...)
	bad.Networks[0].Parts[1].Params = map[string]float64{"q": 1e-300, "qRefHz": 1e300}
	sc := h.srv.scene(h.sess.ID, &bad)
	if sc.net == nil || sc.net.err != nil {
		t.Fatalf("the network with absurd figures did not build: %+v", sc.net)
	}
	if b, err := sc.matchedFile(); err == nil || b != nil {
		t.Errorf("matched.s1p of a NaN response: %d bytes, %v", len(b), err)
	}
	if b, err := sc.network2File(); err == nil || b != nil {
		t.Errorf("network.s2p of a NaN response: %d bytes, %v", len(b), err)
	}
	if b, _, err := sc.netlist(); err == nil || len(b) != 0 {
		t.Errorf("netlist of an infinite resistance: %v\n%s", err, b)
	}
	// Over HTTP: a session without a network.
	se, _ := h.store.Create(context.Background(), "empty")
	for _, p := range []string{"matched.s1p", "network.s2p", "network.cir", "parts.csv", "parts.json", "schematic.svg"} {
		code, body, _ := getStatus(t, h.ts.URL+"/s/"+se.EditToken+"/export/"+p)
		if code != http.StatusNotFound || !strings.Contains(body, "no matching network") {
			t.Errorf("%s without a network: %d %q", p, code, body)
		}
	}
	code, body, _ := getStatus(t, h.ts.URL+"/s/"+se.EditToken+"/report")
	if code != http.StatusNotFound || body == "" {
		t.Errorf("report without a network: %d %q", code, body)
	}
	// A sweep asked for in a format of the wrong port count.
	code, body, _ = getStatus(t, h.ts.URL+"/s/"+h.sess.EditToken+"/sweeps/"+h.load+"/corrected.s2p")
	if code != http.StatusNotFound || !strings.Contains(body, ".s1p") {
		t.Errorf("a 1-port as .s2p: %d %q", code, body)
	}
}

// TestMarkersCSVNeutralised: labels and sweep names that a spreadsheet
// would run as formulas are written as text (a leading apostrophe, common
// practice against CSV injection); numbers, negative ones included, are
// left alone.
func TestMarkersCSVNeutralised(t *testing.T) {
	t.Parallel()
	h := newHandoff(t, threeParts)
	ctx := context.Background()
	if _, err := h.store.Apply(ctx, h.sess.ID, sessions.Change{Op: sessions.OpSweepRename, SweepID: h.load, Name: "+SUM(1,2)"}); err != nil {
		t.Fatal(err)
	}
	st, _, _ := h.store.State(ctx, h.sess.ID)
	for i, label := range []string{`=HYPERLINK("http://x","y")`, "@cmd"} {
		if _, err := h.store.Apply(ctx, h.sess.ID, sessions.Change{Op: sessions.OpMarkerLabel, MarkerID: st.Markers[i].ID, Label: label}); err != nil {
			t.Fatal(err)
		}
	}
	rows, err := csv.NewReader(strings.NewReader(fetch(t, h.ts.URL+"/s/"+h.sess.ViewToken+"/export/markers.csv"))).ReadAll()
	if err != nil || len(rows) != 3 {
		t.Fatalf("markers.csv: %v %v", rows, err)
	}
	if rows[1][1] != `'=HYPERLINK("http://x","y")` || rows[2][1] != "'@cmd" || rows[1][2] != "'+SUM(1,2)" {
		t.Errorf("text cells %q %q %q", rows[1][1], rows[2][1], rows[1][2])
	}
	negative := false
	for _, r := range rows[1:] {
		for _, c := range r[4:] {
			if strings.HasPrefix(c, "'") {
				t.Errorf("number cell %q was quoted", c)
			}
			negative = negative || strings.HasPrefix(c, "-")
		}
	}
	if !negative {
		t.Error("no negative number to check (the reactance or angle of a marker)")
	}
	// Number cells are decimal numbers (or empty where a figure is not
	// finite): no "+Inf", "NaN" or hexadecimal that a spreadsheet would
	// take for text or a formula.
	for _, r := range rows[1:] {
		for i, c := range r[4:] {
			if i+4 == 13 || c == "" {
				continue
			}
			if strings.Trim(c, "0123456789.eE+-") != "" || strings.HasPrefix(c, "+") {
				t.Errorf("number cell %q is not decimal", c)
			} else if _, err := strconv.ParseFloat(c, 64); err != nil {
				t.Errorf("number cell %q: %v", c, err)
			}
		}
	}
	for _, v := range []float64{math.Inf(1), math.Inf(-1), math.NaN()} {
		if got := g(v); got != "" {
			t.Errorf("g(%v) = %q, want an empty cell", v, got)
		}
	}
	if got := g(-1.5e-12); got != "-1.5e-12" {
		t.Errorf("g(-1.5e-12) = %q", got)
	}
	if got := safeCell("\tx"); got != "'\tx" {
		t.Errorf("safeCell(tab) = %q", got)
	}
	if got := safeCell("\rx"); got != "'\rx" {
		t.Errorf("safeCell(CR) = %q", got)
	}
}

// TestPartsListForPurchasing: parts of the same kind and value are one
// line with their designators and quantity, the value as catalogues write
// it, the dielectric and construction, size, ratings and series; CSV and
// JSON hold the same lines.
func TestPartsListForPurchasing(t *testing.T) {
	t.Parallel()
	h := newHandoff(t, threeParts)
	base := h.ts.URL + "/s/" + h.sess.ViewToken
	rows, err := csv.NewReader(strings.NewReader(fetch(t, base+"/export/parts.csv"))).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	want := [][]string{
		{"Designators", "Quantity", "Part", "Value", "Tolerance", "Dielectric or construction", "Size", "Rated voltage", "Rated current", "Rated power", "Series", "Note"},
		// Typical 0402 figures (rfmath/parts, from memory): C0G ±0.05 pF
		// below 2.5 pF, 50 V; multilayer inductors ±2 %, 12 nH rated at the
		// log interpolation of 0.25 A at 10 nH and 0.20 A at 33 nH:
		// t = ln 1.2 / ln 3.3 = 0.1527, 0.25 A · 0.8^0.1527 = 0.2416 A.
		{"C1, C2", "2", "capacitor", "2.2pF", "±0.05pF (typical)", "C0G (NP0)", "0402", "50 V", "", "", "E24"},
		{"L1", "1", "inductor", "12nH", "±2% (typical)", "multilayer (as the typical model)", "0402", "", "242 mA", "", "E24"},
	}
	if len(rows) != len(want) {
		t.Fatalf("rows %q", rows)
	}
	for i := range want {
		for j := range want[i] {
			if rows[i][j] != want[i][j] {
				t.Errorf("row %d column %q: %q, want %q", i, want[0][j], rows[i][j], want[i][j])
			}
		}
		if i > 0 && !strings.Contains(rows[i][11], "typical 0402 part") {
			t.Errorf("row %d note %q", i, rows[i][11])
		}
	}
	var pj struct {
		Network string    `json:"network"`
		Lines   []bomLine `json:"lines"`
	}
	if err := json.Unmarshal([]byte(fetch(t, base+"/export/parts.json")), &pj); err != nil {
		t.Fatal(err)
	}
	if pj.Network != "Search 1" || len(pj.Lines) != 2 || pj.Lines[0].Quantity != 2 || pj.Lines[0].ValueSI != 2.2e-12 ||
		pj.Lines[0].Unit != "F" || pj.Lines[0].RatedVoltage != 50 || pj.Lines[1].Designators[0] != "L1" || math.Abs(pj.Lines[1].RatedCurrent-0.2416) > 0.0001 {
		t.Errorf("parts.json %+v", pj)
	}
	// The 12 nH current rating by the family's own interpolation.
	if r := parts.Typical0402.Rating(parts.KindL, 12e-9); math.Abs(r.MaxCurrentA-pj.Lines[1].RatedCurrent) > 1e-12 {
		t.Errorf("rating %g, family says %g", pj.Lines[1].RatedCurrent, r.MaxCurrentA)
	}
}

func TestCatalogueValue(t *testing.T) {
	t.Parallel()
	for _, c := range []struct {
		v    float64
		unit string
		want string
	}{
		// How catalogues of chip parts write values (common practice).
		{0.5e-12, "F", "0.5pF"}, {2.2e-12, "F", "2.2pF"}, {820e-12, "F", "820pF"}, {1e-9, "F", "1nF"}, {4.7e-6, "F", "4.7µF"},
		{1e-9, "H", "1nH"}, {12e-9, "H", "12nH"}, {137.83e-9, "H", "138nH"}, {1.2e-6, "H", "1.2µH"},
		{51, "Ω", "51Ω"}, {4700, "Ω", "4.7kΩ"}, {1e6, "Ω", "1MΩ"},
	} {
		if got := catalogueValue(c.v, c.unit); got != c.want {
			t.Errorf("catalogueValue(%g %s) = %q, want %q", c.v, c.unit, got, c.want)
		}
	}
}

// TestCorrectedSweepExport: the corrected sweep, exported as Touchstone
// 1.1, 2.1 and CSV, reads back as the sweep the page shows; for a port
// extension alone the correction is the closed form of REFERENCE-CHECKS
// §10 (removing a one-way delay τ multiplies Γ by e^(+j·2π·f·2τ)).
func TestCorrectedSweepExport(t *testing.T) {
	t.Parallel()
	h := newHandoff(t, threeParts)
	ctx := context.Background()
	base := h.ts.URL + "/s/" + h.sess.ViewToken + "/sweeps/"
	st, _, _ := h.store.State(ctx, h.sess.ID)
	shown := h.srv.scene(h.sess.ID, st).all[h.load]
	for _, ext := range []string{"s1p", "ts", "csv"} {
		body := fetch(t, base+h.load+"/corrected."+ext)
		got, err := parseSweep("x."+ext, []byte(body), touchstone.Limits{})
		if err != nil {
			t.Fatalf("%s: %v\n%.400s", ext, err, body)
		}
		if got.Len() != shown.Len() {
			t.Fatalf("%s: %d points, want %d", ext, got.Len(), shown.Len())
		}
		for k := range got.Data {
			if cmplx.Abs(got.Data[k]-shown.Data[k]) > 1e-9 {
				t.Fatalf("%s point %d: %v, shown %v", ext, k, got.Data[k], shown.Data[k])
			}
		}
		if ext != "csv" && !strings.Contains(body, "fixture cable-fixture removed") {
			t.Errorf("%s header does not say the fixture was removed:\n%.600s", ext, body)
		}
	}
	// A port extension alone, against its closed form.
	const tau = 0.25e-9
	if _, err := h.store.Apply(ctx, h.sess.ID, sessions.Change{Op: sessions.OpSweepRefPlane, SweepID: h.load, RefPlane: &sessions.RefPlane{DelayS: tau}}); err != nil {
		t.Fatal(err)
	}
	raw, _ := h.store.Sweep(h.sess.ID, h.load)
	got, err := parseSweep("x.s1p", []byte(fetch(t, base+h.load+"/corrected.s1p")), touchstone.Limits{})
	if err != nil {
		t.Fatal(err)
	}
	for k, f := range raw.FreqHz {
		want := raw.Data[k] * cmplx.Exp(complex(0, 2*math.Pi*f*2*tau))
		if cmplx.Abs(got.Data[k]-want) > 1e-9 {
			t.Fatalf("%g Hz: %v, want %v", f, got.Data[k], want)
		}
	}
	// The 2-port fixture as CSV reads back as the same 2-port.
	fx, _ := h.store.Sweep(h.sess.ID, h.cable)
	c2, err := touchstone.ReadCSV(strings.NewReader(fetch(t, base+h.cable+"/corrected.csv")), "c.csv", touchstone.Limits{})
	if err != nil || c2.Ports != 2 || c2.Len() != fx.Len() {
		t.Fatalf("2-port CSV: %v", err)
	}
	for k := range fx.Data {
		if c2.Data[k] != fx.Data[k] {
			t.Fatalf("2-port CSV point %d: %v, want %v", k, c2.Data[k], fx.Data[k])
		}
	}
}

// TestReportSaysWhatWasDone: the report names the reference-plane steps,
// captions the load at the corrected plane (never "as measured" for a
// corrected load), draws the schematic and holds the panel's figures.
func TestReportSaysWhatWasDone(t *testing.T) {
	t.Parallel()
	h := newHandoff(t, threeParts)
	page := fetch(t, h.ts.URL+"/s/"+h.sess.ViewToken+"/report")
	for _, want := range []string{
		"fixture cable-fixture removed (its port 1 at the analyser)",
		"The load at the corrected reference plane (fixture cable-fixture removed (its port 1 at the analyser)), solid; as the analyser measured it, dashed.",
		`id="rep-schematic"`, `data-designator="L1"`, "5. Tolerances and yield", "builds made for this report", "At 0.5 W available",
		`data-testid="net-metrics"`, "C1, C2", "The SPICE netlist stands for each lossy part",
	} {
		if !strings.Contains(page, want) {
			t.Errorf("report lacks %q", want)
		}
	}
	for _, bad := range []string{"The load as measured", "value_si", "typed_value_si"} {
		if strings.Contains(page, bad) {
			t.Errorf("report says %q", bad)
		}
	}
	// The band table is the panel's (the same function), digit for digit.
	st, _, _ := h.store.State(context.Background(), h.sess.ID)
	nv := h.srv.scene(h.sess.ID, st).networkView()
	for _, m := range nv.Metrics {
		if !strings.Contains(page, ">"+m.PowerWorst+"<") || !strings.Contains(page, ">"+m.Worst+"<") {
			t.Errorf("band %s: panel figures %q, %q not in the report", m.Band, m.Worst, m.PowerWorst)
		}
	}
	// The schematic is its own export, and in the panel.
	svg := fetch(t, h.ts.URL+"/s/"+h.sess.ViewToken+"/export/schematic.svg")
	if err := xml.Unmarshal([]byte(svg), new(struct{})); err != nil || !strings.Contains(svg, `data-designator="C2"`) {
		t.Errorf("schematic.svg: %v\n%.300s", err, svg)
	}
	if page := fetch(t, h.ts.URL+"/s/"+h.sess.ViewToken+"/"); !strings.Contains(page, `id="net-schematic"`) {
		t.Error("the panel has no schematic")
	}
}

// TestArchiveOverHTTP exports a session as one archive and imports it on
// the start page as a new session with the same state; a damaged archive
// is refused with the reason and no session is added.
func TestArchiveOverHTTP(t *testing.T) {
	t.Parallel()
	h := newHandoff(t, threeParts)
	ctx := context.Background()
	code, arch, hdr := getStatus(t, h.ts.URL+"/s/"+h.sess.ViewToken+"/export/session.zip")
	if code != 200 || hdr.Get("Content-Type") != "application/zip" || !strings.Contains(hdr.Get("Content-Disposition"), ".matchbench.zip") {
		t.Fatalf("export: %d %v", code, hdr)
	}
	post := func(data []byte) (*http.Response, string) {
		var body bytes.Buffer
		mw := multipart.NewWriter(&body)
		fw, _ := mw.CreateFormFile("archive", "s.zip")
		fw.Write(data)
		mw.Close()
		req, _ := http.NewRequest("POST", h.ts.URL+"/sessions/import", &body)
		req.Header.Set("Content-Type", mw.FormDataContentType())
		c := &http.Client{CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse }, Timeout: 30 * time.Second}
		res, err := c.Do(req)
		if err != nil {
			t.Fatal(err)
		}
		defer res.Body.Close()
		b, _ := io.ReadAll(res.Body)
		return res, string(b)
	}
	res, _ := post([]byte(arch))
	loc := res.Header.Get("Location")
	if res.StatusCode != http.StatusSeeOther || !strings.HasPrefix(loc, "/s/") {
		t.Fatalf("import: %d, Location %q", res.StatusCode, loc)
	}
	tok := strings.Trim(strings.TrimPrefix(loc, "/s/"), "/")
	sid, c, err := h.store.ByToken(ctx, tok)
	if err != nil || !c.CanEdit() {
		t.Fatalf("new session's token: %v", err)
	}
	a, _, _ := h.store.State(ctx, h.sess.ID)
	b, _, _ := h.store.State(ctx, sid)
	if len(b.Sweeps) != 2 || len(b.Markers) != 2 || len(b.Bands) != 2 || len(b.Networks) != 1 || b.Sweeps[0].RefPlane == nil ||
		b.Sweeps[0].RefPlane.FixtureSweepID != b.Sweeps[1].ID || b.Networks[0].PowerW != 0.5 {
		t.Errorf("imported state %+v", b)
	}
	// The same figures: the new session's report holds the old one's band table.
	na := h.srv.scene(h.sess.ID, a).networkView()
	nb := h.srv.scene(sid, b).networkView()
	for i := range na.Metrics {
		if !metricsEqual(na.Metrics[i], nb.Metrics[i]) {
			t.Errorf("band %d: %+v, imported %+v", i, na.Metrics[i], nb.Metrics[i])
		}
	}
	before, _ := h.store.List(ctx)
	damaged := []byte(arch)
	damaged = append(damaged[:len(damaged)/2:len(damaged)/2], damaged[len(damaged)/2+40:]...)
	res, page := post(damaged)
	if res.StatusCode != http.StatusUnprocessableEntity || !strings.Contains(page, "The archive was not imported:") {
		t.Errorf("damaged archive: %d\n%.500s", res.StatusCode, page)
	}
	res, page = post([]byte("a plain text file"))
	if res.StatusCode != http.StatusUnprocessableEntity || !strings.Contains(page, "not a zip file") {
		t.Errorf("foreign file: %d\n%.500s", res.StatusCode, page)
	}
	if after, _ := h.store.List(ctx); len(after) != len(before) {
		t.Errorf("refused imports added sessions: %d → %d", len(before), len(after))
	}
}

func metricsEqual(a, b interface{}) bool {
	ja, _ := json.Marshal(a)
	jb, _ := json.Marshal(b)
	return bytes.Equal(ja, jb)
}

// TestHandoffRoutesGuarded: every hand-off export goes the way of the
// other exports. A request naming another host is refused with 421 (the
// Host guard, as TestForgedHostRefused checks for the other routes); each
// export that draws the session waits for the session's drawing slot (the
// archive, read from the store like a raw file, does not); and each answers
// as an attachment.
func TestHandoffRoutesGuarded(t *testing.T) {
	t.Parallel()
	h := newHandoff(t, threeParts)
	port := h.ts.Listener.Addr().(*net.TCPAddr).Port
	base := "/s/" + h.sess.ViewToken
	drawn := []string{
		"/report", "/export/schematic.svg", "/export/parts.csv", "/export/parts.json", "/export/network.cir",
		"/export/network.json", "/export/matched.s1p", "/export/network.s2p", "/export/markers.csv", "/export/chart.svg",
		"/sweeps/" + h.load + "/corrected.s1p", "/sweeps/" + h.load + "/corrected.ts", "/sweeps/" + h.load + "/corrected.csv",
	}
	for _, p := range append(drawn, "/export/session.zip") {
		res, text := requestAs(t, h.fixture, "GET", base+p, "rebind.example:"+itoa(port), nil)
		if res.StatusCode != http.StatusMisdirectedRequest || !strings.Contains(text, "not a name this server answers to") {
			t.Errorf("%s with a forged host: %d %q, want 421", p, res.StatusCode, text)
		}
	}
	res, _ := requestAs(t, h.fixture, "POST", "/sessions/import", "rebind.example:"+itoa(port), strings.NewReader("x"))
	if res.StatusCode != http.StatusMisdirectedRequest {
		t.Errorf("import with a forged host: %d, want 421", res.StatusCode)
	}

	sh := h.srv.share(h.sess.ID)
	sh.drawing(context.Background())
	type answer struct {
		path string
		code int
		hdr  http.Header
	}
	done := make(chan answer, len(drawn)+1)
	for _, p := range append(drawn, "/export/session.zip") {
		go func() {
			code, _, hdr := getStatus(t, h.ts.URL+base+p)
			done <- answer{p, code, hdr}
		}()
	}
	// While the slot is held, only the archive answers.
	select {
	case a := <-done:
		if a.path != "/export/session.zip" {
			t.Errorf("%s answered while the session's drawing slot was held", a.path)
		}
		if a.code != 200 || !strings.HasPrefix(a.hdr.Get("Content-Disposition"), "attachment") {
			t.Errorf("session.zip: %d, %q", a.code, a.hdr.Get("Content-Disposition"))
		}
	case <-time.After(10 * time.Second):
		t.Error("the archive waited for the drawing slot")
	}
	select {
	case a := <-done:
		t.Errorf("%s answered while the session's drawing slot was held", a.path)
	case <-time.After(300 * time.Millisecond):
	}
	sh.done()
	for range drawn {
		select {
		case a := <-done:
			cd := a.hdr.Get("Content-Disposition")
			if a.path == "/report" {
				cd = "attachment" // the report is a page to read and print
			}
			if a.code != 200 || !strings.HasPrefix(cd, "attachment") || a.hdr.Get("X-Content-Type-Options") != "nosniff" {
				t.Errorf("%s: %d, Content-Disposition %q, nosniff %q", a.path, a.code, cd, a.hdr.Get("X-Content-Type-Options"))
			}
		case <-time.After(60 * time.Second):
			t.Fatal("an export did not answer once the slot was free")
		}
	}
}

// TestReportChartAtPageReference: the report's charts are drawn at the
// chart reference of the page that asked for it (the link carries the
// page's view), each trace renormalised for the drawing as the page draws
// it. The load's first point is checked against the change of reference
// written out, Γ' = (Γ − ρ)/(1 − ρΓ) with ρ = (75 − 50)/(75 + 50)
// (REFERENCE-CHECKS §11), placed as chartsvg places a point: (K·Re Γ',
// −K·Im Γ') with K the chart's data-gamma-scale.
func TestReportChartAtPageReference(t *testing.T) {
	t.Parallel()
	h := newHandoff(t, threeParts)
	st, _, err := h.store.State(context.Background(), h.sess.ID)
	if err != nil {
		t.Fatal(err)
	}
	sc := h.srv.scene(h.sess.ID, st)
	first := func(svg, id string) (x, y, k float64) {
		t.Helper()
		i := strings.Index(svg, `data-gamma-scale="`)
		if i < 0 {
			t.Fatalf("no data-gamma-scale in %.200s", svg)
		}
		fmt.Sscanf(svg[i+len(`data-gamma-scale="`):], "%g", &k)
		j := strings.Index(svg, `id="`+id+`"`)
		if j < 0 {
			t.Fatalf("no %s in the chart", id)
		}
		d := svg[j:]
		d = d[strings.Index(d, ` d="`)+4:]
		if _, err := fmt.Sscanf(strings.NewReplacer("M", "", ",", " ").Replace(d[:strings.IndexAny(d[1:], "LMlm\"")+1]), "%g %g", &x, &y); err != nil {
			t.Fatalf("path %.60s: %v", d, err)
		}
		return x, y, k
	}
	g := sc.net.gLoad[0]
	for _, z0 := range []float64{50, 75} {
		v, err := sc.reportView(time.Unix(0, 0), &pageView{Z0: z0})
		if err != nil {
			t.Fatal(err)
		}
		if !strings.Contains(v.ChartBefore, fmt.Sprintf("Z₀ = %g Ω", z0)) || !strings.Contains(v.ChartAfter, fmt.Sprintf("Z₀ = %g Ω", z0)) {
			t.Errorf("z0 %g: the charts do not say their reference", z0)
		}
		rho := complex((z0-50)/(z0+50), 0)
		want := (g - rho) / (1 - rho*g)
		x, y, k := first(v.ChartBefore, "before-trace-load")
		if math.Abs(x-k*real(want)) > 0.2 || math.Abs(y+k*imag(want)) > 0.2 {
			t.Errorf("z0 %g: the load starts at (%g, %g), want (%.2f, %.2f)", z0, x, y, k*real(want), -k*imag(want))
		}
		if renorm := strings.Contains(v.CaptionBefore, "renormalised for the drawing"); renorm != (z0 != 50) {
			t.Errorf("z0 %g: caption %q", z0, v.CaptionBefore)
		}
	}
	// The link carries the view: the report asked at 75 Ω draws at 75 Ω.
	if page := fetch(t, h.ts.URL+"/s/"+h.sess.ViewToken+"/report?z0=75"); !strings.Contains(page, "Z₀ = 75 Ω") {
		t.Error("the report at ?z0=75 is not drawn at 75 Ω")
	}
}
