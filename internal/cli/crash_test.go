package cli

// Faults of the real server process: killed with SIGKILL in the middle of
// a stream of changes and restarted on the same data folder, a second
// server on a folder in use, a data folder that cannot be used.

import (
	"bufio"
	"bytes"
	"context"
	"database/sql"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"mime/multipart"
	"net/http"
	"net/url"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"slices"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"github.com/gorilla/websocket"

	"matchbench/rfmath"
	"matchbench/rfmath/touchstone"
	"matchbench/sessions"
)

var (
	crashRounds = flag.Int("crash.rounds", 5, "kill-restart rounds of TestServeFaults")
	crashSeed   = flag.Uint64("crash.seed", 1, "seed of the first kill-restart round (round r uses seed+r)")
)

// TestServeFaults builds the real binary once and runs the fault tests on
// it as a crashChild process.
func TestServeFaults(t *testing.T) {
	if testing.Short() {
		t.Skip("builds and runs the server binary")
	}
	bin := buildCrashServer(t)
	t.Run("kill and restart", func(t *testing.T) { testKillRestart(t, bin) })
	t.Run("second server on the folder", func(t *testing.T) { testSecondServer(t, bin) })
	t.Run("unusable data folder", func(t *testing.T) { testUnusableFolder(t, bin) })
}

// buildCrashServer builds this package's binary into a temporary folder (with
// the race detector when the test has it, so its packages come from the
// same build cache).
func buildCrashServer(t *testing.T) string {
	t.Helper()
	bin := filepath.Join(t.TempDir(), "matchbench")
	args := []string{"build", "-o", bin}
	if crashRace {
		args = append(args, "-race")
	}
	t0 := time.Now()
	out, err := exec.Command("go", append(args, ".")...).CombinedOutput()
	if err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	t.Logf("built the server in %v (race detector: %v)", time.Since(t0).Round(time.Millisecond), crashRace)
	return bin
}

// crashChild is a running server process.
type crashChild struct {
	cmd    *exec.Cmd
	url    string // http://127.0.0.1:PORT/
	stdout chan string
	stderr *crashBuffer
	done   chan struct{}
	err    error // of Wait, once done is closed
}

type crashBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (l *crashBuffer) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.Write(p)
}

func (l *crashBuffer) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.String()
}

var crashServingRE = regexp.MustCompile(`serving at (http://127\.0\.0\.1:\d+/)`)

// startCrashChild runs bin with args and returns once it has exited or printed
// the address it serves at.
func startCrashChild(t *testing.T, bin string, args ...string) *crashChild {
	t.Helper()
	c := &crashChild{cmd: exec.Command(bin, args...), stdout: make(chan string, 64), stderr: &crashBuffer{}, done: make(chan struct{})}
	c.cmd.Stderr = c.stderr
	out, err := c.cmd.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	if err := c.cmd.Start(); err != nil {
		t.Fatal(err)
	}
	go func() {
		sc := bufio.NewScanner(out)
		for sc.Scan() {
			select {
			case c.stdout <- sc.Text():
			default:
			}
		}
		c.err = c.cmd.Wait()
		close(c.done)
	}()
	t.Cleanup(func() { c.cmd.Process.Kill(); <-c.done })
	deadline := time.After(60 * time.Second)
	for {
		select {
		case line := <-c.stdout:
			if m := crashServingRE.FindStringSubmatch(line); m != nil {
				c.url = m[1]
				return c
			}
		case <-c.done:
			return c
		case <-deadline:
			t.Fatalf("the server printed no address within 60 s; stderr:\n%s", c.stderr)
		}
	}
}

// stop ends the crashChild with SIGTERM and checks that it shuts down cleanly.
func (c *crashChild) stop(t *testing.T) {
	t.Helper()
	c.cmd.Process.Signal(syscall.SIGTERM)
	select {
	case <-c.done:
	case <-time.After(20 * time.Second):
		t.Fatal("the server did not stop within 20 s of SIGTERM")
	}
	if c.err != nil {
		t.Fatalf("the server stopped with %v; stderr:\n%s", c.err, c.stderr)
	}
}

// kill ends the crashChild with SIGKILL.
func (c *crashChild) kill() {
	c.cmd.Process.Kill()
	<-c.done
}

// crashModel is what a session must hold after a given version, as far as
// the stream of changes decides it.
type crashModel struct {
	name    string
	zoom    float64
	band    [4]float64 // lo, hi, rl and the band's number in its name
	markers map[string]crashMarker
}

type crashMarker struct {
	label string
	freq  float64
}

func (m *crashModel) clone() *crashModel {
	c := *m
	c.markers = map[string]crashMarker{}
	for k, v := range m.markers {
		c.markers[k] = v
	}
	return &c
}

// summary writes a model or a stored state in one comparable form.
func crashSummary(name string, zoom float64, bandName string, lo, hi, rl float64, markers []crashMarker) string {
	ms := make([]string, len(markers))
	for i, m := range markers {
		ms[i] = fmt.Sprintf("%s@%g", m.label, m.freq)
	}
	slices.Sort(ms)
	return fmt.Sprintf("name=%s zoom=%g band=%s[%g,%g,%g] markers=%v", name, zoom, bandName, lo, hi, rl, ms)
}

func (m *crashModel) summary() string {
	var ms []crashMarker
	for _, mk := range m.markers {
		ms = append(ms, mk)
	}
	return crashSummary(m.name, m.zoom, "b"+strconv.Itoa(int(m.band[3])), m.band[0], m.band[1], m.band[2], ms)
}

func crashStateSummary(st *sessions.State) string {
	var ms []crashMarker
	for _, m := range st.Markers {
		ms = append(ms, crashMarker{m.Label, m.FreqHz})
	}
	if len(st.Bands) != 1 {
		return fmt.Sprintf("%d bands", len(st.Bands))
	}
	b := st.Bands[0]
	return crashSummary(st.Name, st.Chart.Zoom, b.Name, b.LoHz, b.HiHz, b.MinReturnLossDB, ms)
}

// crashSession is what a round leaves for later rounds to check.
type crashSession struct {
	edit    string
	version int64
	summary string
}

// testKillRestart streams changes to the server, kills it at a random
// moment, restarts it on the same folder and checks that every
// acknowledged change is there, the state is exactly what the changes
// committed made it, earlier rounds' sessions are intact and the database
// passes PRAGMA integrity_check.
func testKillRestart(t *testing.T, bin string) {
	dir := t.TempDir()
	var done []crashSession
	for r := range *crashRounds {
		seed := *crashSeed + uint64(r)
		s := crashRound(t, bin, dir, seed)
		done = append(done, s)

		st, err := sessions.Open(dir)
		if err != nil {
			t.Fatalf("round %d: opening the folder after the server stopped: %v", r, err)
		}
		for i, s := range done {
			sid, _, err := st.ByToken(context.Background(), s.edit)
			if err != nil {
				t.Fatalf("round %d: the session of round %d is gone: %v", r, i, err)
			}
			state, v, err := st.State(context.Background(), sid)
			if err != nil {
				t.Fatal(err)
			}
			if got := crashStateSummary(state); v != s.version || got != s.summary {
				t.Fatalf("round %d: the session of round %d changed:\nversion %d, want %d\n got %s\nwant %s", r, i, v, s.version, got, s.summary)
			}
		}
		st.Close()
		crashCheckIntegrity(t, filepath.Join(dir, sessions.DBFile))
	}
	t.Logf("%d kill-restart rounds survived (seeds %d…%d)", *crashRounds, *crashSeed, *crashSeed+uint64(*crashRounds)-1)
}

// crashCheckIntegrity runs SQLite's integrity and foreign-key checks on the
// database file.
func crashCheckIntegrity(t *testing.T, path string) {
	t.Helper()
	db, err := sql.Open("sqlite", "file:"+path+"?mode=ro")
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	var res string
	if err := db.QueryRow("PRAGMA integrity_check").Scan(&res); err != nil || res != "ok" {
		t.Fatalf("PRAGMA integrity_check: %q, %v", res, err)
	}
	rows, err := db.Query("PRAGMA foreign_key_check")
	if err != nil {
		t.Fatal(err)
	}
	defer rows.Close()
	if rows.Next() {
		t.Fatal("PRAGMA foreign_key_check reports a row")
	}
}

// crashSweep is the series RLC of REFERENCE-CHECKS R-1 (R = 5 Ω,
// L = 100 nH, C = 10 pF) in 50 Ω, 100–250 MHz, as a Touchstone file.
func crashSweep(t *testing.T) []byte {
	t.Helper()
	const n = 151
	s := rfmath.NewSweep(n, 1, 50)
	for k := range n {
		f := 100e6 + 1e6*float64(k)
		w := 2 * math.Pi * f
		s.FreqHz[k] = f
		s.Data[k] = rfmath.GammaFromZ(complex(5, w*100e-9-1/(w*10e-12)), 50)
	}
	var b bytes.Buffer
	if err := touchstone.Write(&b, s, touchstone.WriteOptions{}); err != nil {
		t.Fatal(err)
	}
	return b.Bytes()
}

type crashWSMsg struct {
	Type string `json:"type"`
	ID   int64  `json:"id"`
	V    int64  `json:"v"`
	Msg  string `json:"msg"`
}

// crashRound runs one round and returns the session it made, as stored.
func crashRound(t *testing.T, bin, dir string, seed uint64) crashSession {
	t.Helper()
	rng := rand.New(rand.NewPCG(seed, 0x6d61746368))
	c := startCrashChild(t, bin, "serve", "--data", dir, "--listen", "127.0.0.1:0", "--no-demo")
	if c.url == "" {
		t.Fatalf("seed %d: the server did not start: %v\n%s", seed, c.err, c.stderr)
	}
	base := strings.TrimSuffix(c.url, "/")

	// A session made from this computer, as the start page does.
	res, err := crashNoFollow.PostForm(base+"/sessions", url.Values{"name": {"crash " + strconv.FormatUint(seed, 10)}})
	if err != nil {
		t.Fatal(err)
	}
	res.Body.Close()
	m := regexp.MustCompile(`^/s/([A-Za-z0-9_-]{22})/$`).FindStringSubmatch(res.Header.Get("Location"))
	if res.StatusCode != http.StatusSeeOther || m == nil {
		t.Fatalf("POST /sessions: %d to %q", res.StatusCode, res.Header.Get("Location"))
	}
	edit := m[1]
	sweepID := crashUpload(t, base+"/s/"+edit+"/upload", crashSweep(t))

	ws, _, err := websocket.DefaultDialer.Dial("ws"+strings.TrimPrefix(base, "http")+"/s/"+edit+"/ws", http.Header{"Origin": {base}})
	if err != nil {
		t.Fatal(err)
	}
	defer ws.Close()
	// Setup, one change at a time: three markers and a band.
	model := &crashModel{name: "crash " + strconv.FormatUint(seed, 10), zoom: 1, markers: map[string]crashMarker{}}
	send := func(id int64, ch sessions.Change) {
		if err := ws.WriteJSON(map[string]any{"type": "change", "id": id, "change": ch}); err != nil {
			t.Fatal(err)
		}
	}
	ackOf := func(id int64) int64 {
		ws.SetReadDeadline(time.Now().Add(10 * time.Second))
		for {
			var o crashWSMsg
			if err := ws.ReadJSON(&o); err != nil {
				t.Fatalf("setup change %d: %v", id, err)
			}
			if o.ID == id && o.Type == "ack" {
				return o.V
			}
			if o.ID == id {
				t.Fatalf("setup change %d: %+v", id, o)
			}
		}
	}
	for i := range 3 {
		f := 150e6 + 20e6*float64(i)
		send(int64(i+1), sessions.Change{Op: sessions.OpMarkerAdd, SweepID: sweepID, Port: 1, FreqHz: f, Label: "seed-" + strconv.Itoa(i)})
		ackOf(int64(i + 1))
	}
	send(4, sessions.Change{Op: sessions.OpBandSet, Name: "b0", LoHz: 120e6, HiHz: 140e6, MinReturnLossDB: 10})
	v0 := ackOf(4)
	model.band = [4]float64{120e6, 140e6, 10, 0}

	// The markers' and the band's ids, from the page.
	_, page := crashGet(t, base+"/s/"+edit+"/")
	var mids []string
	for _, row := range regexp.MustCompile(`(?s)<tr id="ro-([a-z0-9]+)"[^>]*>(.*?)</tr>`).FindAllStringSubmatch(page, -1) {
		for i := range 3 {
			if strings.Contains(row[2], "seed-"+strconv.Itoa(i)) {
				for len(mids) <= i {
					mids = append(mids, "")
				}
				mids[i] = row[1]
				model.markers[row[1]] = crashMarker{"seed-" + strconv.Itoa(i), 150e6 + 20e6*float64(i)}
			}
		}
	}
	bm := regexp.MustCompile(`data-band="([a-z0-9]+)"`).FindStringSubmatch(page)
	if len(mids) != 3 || slices.Contains(mids, "") || bm == nil {
		t.Fatalf("could not find the markers %v and the band in the page", mids)
	}
	bandID := bm[1]

	// The stream: every change valid and changing the state, so change n
	// commits as version v0+n; up to four in flight.
	const maxChanges = 200 // under the server's burst of 240 messages per connection
	snapshots := []string{model.summary()}
	changes := make([]sessions.Change, 0, maxChanges)
	adds := 0
	for n := 1; n <= maxChanges; n++ {
		var ch sessions.Change
		mk := mids[(n/5)%3]
		switch n % 5 {
		case 0:
			ch = sessions.Change{Op: sessions.OpMarkerMove, MarkerID: mk, FreqHz: 101e6 + 1e3*float64(n)}
			model.markers[mk] = crashMarker{model.markers[mk].label, ch.FreqHz}
		case 1:
			ch = sessions.Change{Op: sessions.OpBandSet, BandID: bandID, Name: "b" + strconv.Itoa(n), LoHz: 120e6 + float64(n), HiHz: 140e6, MinReturnLossDB: 10}
			model.band = [4]float64{ch.LoHz, ch.HiHz, 10, float64(n)}
		case 2:
			ch = sessions.Change{Op: sessions.OpMarkerLabel, MarkerID: mk, Label: "L" + strconv.Itoa(n)}
			model.markers[mk] = crashMarker{ch.Label, model.markers[mk].freq}
		case 3:
			ch = sessions.Change{Op: sessions.OpSessionRename, Name: "S" + strconv.Itoa(n)}
			model.name = ch.Name
		case 4:
			if n%10 == 4 && adds < 10 {
				adds++
				ch = sessions.Change{Op: sessions.OpMarkerAdd, SweepID: sweepID, Port: 1, FreqHz: 200e6 + 1e3*float64(n), Label: "a" + strconv.Itoa(n)}
				model.markers["new"+strconv.Itoa(n)] = crashMarker{ch.Label, ch.FreqHz}
			} else {
				z := 1 + float64(n)/1000
				ch = sessions.Change{Op: sessions.OpChartSet, Chart: &sessions.ChartPatch{Zoom: &z}}
				model.zoom = z
			}
		}
		changes = append(changes, ch)
		snapshots = append(snapshots, model.clone().summary())
	}

	var mu sync.Mutex
	lastAck := v0
	inflight := make(chan struct{}, 4)
	readerDone := make(chan error, 1)
	go func() {
		ws.SetReadDeadline(time.Time{})
		for {
			var o crashWSMsg
			if err := ws.ReadJSON(&o); err != nil {
				readerDone <- nil
				return
			}
			switch {
			case o.Type == "ack":
				if o.V != v0+o.ID-100 {
					readerDone <- fmt.Errorf("change %d acknowledged at version %d, want %d", o.ID-100, o.V, v0+o.ID-100)
					return
				}
				mu.Lock()
				lastAck = o.V
				mu.Unlock()
				<-inflight
			case o.Type == "error":
				readerDone <- fmt.Errorf("change %d refused: %s", o.ID-100, o.Msg)
				return
			}
		}
	}()
	killAfter := time.Duration(5+rng.IntN(245)) * time.Millisecond // the stream of 200 takes some 250 ms here
	killed := time.After(killAfter)
	sent, fired := 0, false
stream:
	for i, ch := range changes {
		select {
		case inflight <- struct{}{}:
		case <-killed:
			fired = true
			break stream
		}
		send(int64(100+i+1), ch)
		sent++
	}
	if !fired {
		<-killed
	}
	c.kill()
	if err := <-readerDone; err != nil {
		t.Fatalf("seed %d: %v", seed, err)
	}
	mu.Lock()
	acked := lastAck
	mu.Unlock()

	// Restarted on the same folder, the server serves the session at a
	// version no older than the last acknowledged.
	c = startCrashChild(t, bin, "serve", "--data", dir, "--listen", "127.0.0.1:0", "--no-demo")
	if c.url == "" {
		t.Fatalf("seed %d: the server did not restart after the kill: %v\n%s", seed, c.err, c.stderr)
	}
	base = strings.TrimSuffix(c.url, "/")
	status, page := crashGet(t, base+"/s/"+edit+"/")
	vm := regexp.MustCompile(`data-version="(\d+)"`).FindStringSubmatch(page)
	if status != 200 || vm == nil {
		t.Fatalf("seed %d: the session page after the restart: %d", seed, status)
	}
	served, _ := strconv.ParseInt(vm[1], 10, 64)
	c.stop(t)

	st, err := sessions.Open(dir)
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	sid, _, err := st.ByToken(context.Background(), edit)
	if err != nil {
		t.Fatal(err)
	}
	state, v, err := st.State(context.Background(), sid)
	if err != nil {
		t.Fatal(err)
	}
	t.Logf("seed %d: killed after %v with %d changes sent, %d acknowledged; version %d on restart", seed, killAfter, sent, acked-v0, v-v0)
	if v < acked || v > v0+int64(sent) || served != v {
		t.Fatalf("seed %d: version %d after the restart (page %d); acknowledged %d, sent up to %d", seed, v, served, acked, v0+int64(sent))
	}
	if got, want := crashStateSummary(state), snapshots[v-v0]; got != want {
		t.Fatalf("seed %d: the state at version %d is not what the changes up to it made:\n got %s\nwant %s", seed, v, got, want)
	}
	return crashSession{edit: edit, version: v, summary: crashStateSummary(state)}
}

var crashNoFollow = &http.Client{CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse }}

func crashGet(t *testing.T, u string) (int, string) {
	t.Helper()
	res, err := http.Get(u)
	if err != nil {
		t.Fatal(err)
	}
	defer res.Body.Close()
	b, _ := io.ReadAll(res.Body)
	return res.StatusCode, string(b)
}

func crashUpload(t *testing.T, u string, file []byte) string {
	t.Helper()
	var b bytes.Buffer
	mw := multipart.NewWriter(&b)
	fw, _ := mw.CreateFormFile("file", "rlc.s1p")
	fw.Write(file)
	mw.Close()
	res, err := http.Post(u, mw.FormDataContentType(), &b)
	if err != nil {
		t.Fatal(err)
	}
	defer res.Body.Close()
	var r struct {
		SweepID string `json:"sweepId"`
		Error   string `json:"error"`
	}
	json.NewDecoder(res.Body).Decode(&r)
	if res.StatusCode != 200 || r.SweepID == "" {
		t.Fatalf("upload: %d %q", res.StatusCode, r.Error)
	}
	return r.SweepID
}

// A second server on a data folder in use is refused with a message that
// says so and exit code 1; the first carries on.
func testSecondServer(t *testing.T, bin string) {
	dir := t.TempDir()
	first := startCrashChild(t, bin, "serve", "--data", dir, "--listen", "127.0.0.1:0", "--no-demo")
	if first.url == "" {
		t.Fatalf("first server: %v\n%s", first.err, first.stderr)
	}
	second := startCrashChild(t, bin, "serve", "--data", dir, "--listen", "127.0.0.1:0", "--no-demo")
	<-second.done
	var ee *exec.ExitError
	if second.url != "" || !errors.As(second.err, &ee) || ee.ExitCode() != 1 {
		t.Fatalf("second server: url %q, %v; want exit code 1", second.url, second.err)
	}
	if msg := second.stderr.String(); !strings.Contains(msg, "another matchbench server is using the data folder") || !strings.Contains(msg, "--data") {
		t.Errorf("second server's message: %q", msg)
	}
	if status, _ := crashGet(t, first.url); status != 200 {
		t.Errorf("first server after the second was refused: %d", status)
	}
	first.stop(t)
}

// A data folder that cannot be made or written is reported at start with
// its path and exit code 1. As root, permission bits do not stop writes, so
// the read-only case runs only for other users; a path under a regular file
// fails for everyone.
func testUnusableFolder(t *testing.T, bin string) {
	tmp := t.TempDir()
	file := filepath.Join(tmp, "plain-file")
	if err := os.WriteFile(file, []byte("x"), 0o600); err != nil {
		t.Fatal(err)
	}
	cases := map[string]string{"under a file": filepath.Join(file, "data")}
	if os.Geteuid() != 0 {
		ro := filepath.Join(tmp, "read-only")
		if err := os.Mkdir(ro, 0o500); err != nil {
			t.Fatal(err)
		}
		cases["read-only"] = ro
	} else {
		t.Log("running as root: the read-only folder case is skipped (root writes anyway)")
	}
	for name, dir := range cases {
		c := startCrashChild(t, bin, "serve", "--data", dir, "--listen", "127.0.0.1:0", "--no-demo")
		<-c.done
		var ee *exec.ExitError
		if c.url != "" || !errors.As(c.err, &ee) || ee.ExitCode() != 1 {
			t.Errorf("%s: url %q, %v; want exit code 1", name, c.url, c.err)
		}
		if msg := c.stderr.String(); !strings.Contains(msg, "opening the data folder "+dir) {
			t.Errorf("%s: message %q does not name the folder", name, msg)
		}
	}
}
