package cli

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"net"
	"net/http"
	"strings"
	"syscall"
	"time"

	"matchbench/internal/demo"
	"matchbench/rfmath"
	"matchbench/rfmath/deembed"
	"matchbench/rfmath/match"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/touchstone"
	"matchbench/server"
	"matchbench/sessions"
)

func runServe(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("serve", "[--listen ADDR] [--data DIR]", stderr)
	listen := fs.String("listen", "127.0.0.1:8080", "`address` to listen on; 0.0.0.0:8080 serves the lab LAN as well")
	data := fs.String("data", defaultDataDir(), "`folder` that holds the session database")
	maxMB := fs.Int("max-upload-mb", 20, "largest sweep file accepted, in `MB`")
	noDemo := fs.Bool("no-demo", false, "do not create the demo sessions on first start")
	verbose := fs.Bool("v", false, "log every request (routes only; never the links' tokens)")
	var extraHosts listFlag
	fs.Var(&extraHosts, "host", "another `name` (NAME or NAME:PORT) requests may address this server by, such as its name on the lab network; repeatable. Requests naming other hosts are refused")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	if len(pos) > 0 {
		return usagef("serve takes no arguments, got %q", pos)
	}
	if *maxMB < 1 || *maxMB > 4096 {
		return usagef("--max-upload-mb %d: use 1 to 4096", *maxMB)
	}
	for _, h := range extraHosts {
		if h == "" || strings.ContainsAny(h, "/ \t@?#") {
			return usagef("--host %q: give a host name, optionally with :PORT (e.g. --host bench-pc.lab)", h)
		}
	}
	level := slog.LevelInfo
	if *verbose {
		level = slog.LevelDebug
	}
	log := slog.New(slog.NewTextHandler(stderr, &slog.HandlerOptions{Level: level}))

	// Listen first: a busy port is refused before the data folder or any
	// demo session exists.
	ln, err := net.Listen("tcp", *listen)
	if err != nil {
		if errors.Is(err, syscall.EADDRINUSE) {
			return fmt.Errorf("%s is already in use (is matchbench already running?); choose another port, e.g. --listen %s", *listen, nextPort(*listen))
		}
		return fmt.Errorf("cannot listen on %s: %w", *listen, err)
	}
	defer ln.Close()
	addr := ln.Addr().(*net.TCPAddr)
	lan := !addr.IP.IsLoopback()
	hosts := shareHosts(addr)
	var names []string
	for _, h := range extraHosts {
		names = append(names, withPort(h, addr.Port))
	}
	if lan {
		hosts = append(hosts, names...)
	}

	store, err := sessions.Open(*data)
	if err != nil {
		if errors.Is(err, sessions.ErrLocked) {
			return fmt.Errorf("another matchbench server is using the data folder %s; stop it, or start this one with --data pointing elsewhere", *data)
		}
		return fmt.Errorf("opening the data folder %s: %w", *data, err)
	}
	defer store.Close()

	srv := server.New(server.Config{Store: store, Log: log, MaxUploadBytes: int64(*maxMB) << 20, ShareHosts: hosts, Hosts: names, LAN: lan})

	var demoLink string
	if !*noDemo {
		if demoLink, err = seedDemo(ctx, store, srv); err != nil {
			return fmt.Errorf("creating the demo sessions: %w", err)
		}
	}
	hs := &http.Server{Handler: srv, ReadHeaderTimeout: 10 * time.Second, IdleTimeout: 2 * time.Minute, ErrorLog: slog.NewLogLogger(log.Handler(), slog.LevelWarn)}

	local := fmt.Sprintf("http://127.0.0.1:%d/", addr.Port)
	if !addr.IP.IsUnspecified() {
		local = fmt.Sprintf("http://%s/", addr.String())
	}
	fmt.Fprintf(stdout, "matchbench is serving at %s (data in %s)\n", local, store.Dir())
	if demoLink != "" {
		fmt.Fprintf(stdout, "demo session (invented data): %ss/%s/\n", local, demoLink)
	}
	if lan {
		fmt.Fprintln(stdout, "LAN: this server also answers colleagues on the lab network at:")
		for _, h := range hosts {
			fmt.Fprintf(stdout, "  http://%s/\n", h)
		}
		fmt.Fprintln(stdout, "Anyone with a session's edit link can change it; share view links where watching is enough.")
	}

	errc := make(chan error, 1)
	go func() { errc <- hs.Serve(ln) }()
	select {
	case err := <-errc:
		return err
	case <-ctx.Done():
	}
	fmt.Fprintln(stdout, "shutting down…")
	sctx, cancel := context.WithTimeout(context.Background(), 10*time.Second)
	defer cancel()
	err = hs.Shutdown(sctx) // waits for in-flight requests (uploads) to finish
	srv.Shutdown()          // closes websockets cleanly
	if err != nil && !errors.Is(err, http.ErrServerClosed) {
		return err
	}
	return nil
}

// withPort adds port to a host name given without one.
func withPort(h string, port int) string {
	if _, _, err := net.SplitHostPort(h); err == nil {
		return h
	}
	return net.JoinHostPort(strings.Trim(h, "[]"), fmt.Sprint(port))
}

// nextPort suggests the same address with the port one higher.
func nextPort(addr string) string {
	host, port, err := net.SplitHostPort(addr)
	if err != nil {
		return "127.0.0.1:8081"
	}
	var p int
	fmt.Sscan(port, &p)
	return net.JoinHostPort(host, fmt.Sprint(p+1))
}

// shareHosts lists host:port pairs at which colleagues can reach addr: the
// address itself, or every non-loopback interface address when it listens
// on all of them. A loopback listener gives its own address only.
func shareHosts(addr *net.TCPAddr) []string {
	port := fmt.Sprint(addr.Port)
	if !addr.IP.IsUnspecified() {
		return []string{net.JoinHostPort(addr.IP.String(), port)}
	}
	var out []string
	ifs, _ := net.InterfaceAddrs()
	for _, a := range ifs {
		ipn, ok := a.(*net.IPNet)
		if !ok || ipn.IP.IsLoopback() || ipn.IP.IsLinkLocalUnicast() || ipn.IP.To4() == nil {
			continue
		}
		out = append(out, net.JoinHostPort(ipn.IP.String(), port))
	}
	if len(out) == 0 {
		out = []string{net.JoinHostPort("127.0.0.1", port)}
	}
	return out
}

// seedDemo creates the demo sessions when the store has none, and returns
// the edit token of the first demo session ("" when none was made). The
// third is the transistor stage (seedStageDemo). The first two show the
// whole loop on invented data: the sweep as measured (for
// the Fieldnode, through its cable, with the cable's fixture removed as a
// reference-plane step), the bands, markers, and a network of standard
// 0402 values chosen by the loss-aware search, with the search's designs
// in the panel. The Fieldnode's also holds its first prototype board as
// built and one round of bench tuning on it, fitted by srv as an editor's
// form would.
func seedDemo(ctx context.Context, st *sessions.Store, srv *server.Server) (string, error) {
	list, err := st.List(ctx)
	if err != nil || len(list) > 0 {
		return "", err
	}
	files := map[string]demo.File{}
	for _, f := range demo.Generate() {
		files[f.Name] = f
	}
	type plan struct {
		name    string
		visible []string
		hidden  []string
		fixture string // a 2-port file among hidden to remove from the first sweep, port 1 at the analyser
		bands   []demo.Band
		markers []float64
		parts   int
		set     []string // sweeps of a load set of conditions, when the demo has one
		setName string
		built   string // a sweep among hidden of the network's first board as built, for a round of tuning
	}
	plans := []plan{
		{"Demo · Fieldnode trace antenna (invented data)",
			[]string{"fieldnode-via-cable.s1p"}, []string{"cable-fixture.s2p", "cable-open-end.s1p", "fieldnode-antenna.s1p", "fieldnode-first-build.s1p"}, "cable-fixture.s2p",
			demo.FieldnodeBands, []float64{866.5e6, 915e6}, 3, nil, "", "fieldnode-first-build.s1p"},
		{"Demo · Wristtag chip antenna (invented data)",
			[]string{"wristtag-antenna.s1p", "wristtag-wrist.s1p", "wristtag-enclosure.s1p"}, nil, "", demo.WristtagBands, []float64{2.44e9}, 3,
			[]string{"wristtag-antenna.s1p", "wristtag-wrist.s1p", "wristtag-enclosure.s1p"}, "Wristtag in free space, on a wrist, in its enclosure", ""},
	}
	first := ""
	for _, p := range plans {
		se, err := st.Create(ctx, p.name)
		if err != nil {
			return "", err
		}
		if first == "" {
			first = se.EditToken
		}
		ids := map[string]string{}
		for i, name := range append(append([]string{}, p.visible...), p.hidden...) {
			f := files[name]
			var b bytes.Buffer
			comments := make([]string, len(f.Note))
			for j, n := range f.Note {
				comments[j] = " " + n
			}
			if err := touchstone.Write(&b, f.Sweep, touchstone.WriteOptions{FreqUnit: "MHz", Digits: 10, Comments: comments}); err != nil {
				return "", err
			}
			ev, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpSweepAdd, Name: strings.TrimSuffix(name, name[strings.LastIndex(name, "."):]), FileName: name, Raw: b.Bytes(), Sweep: f.Sweep})
			if err != nil {
				return "", err
			}
			ids[name] = ev.SweepID
			if i >= len(p.visible) {
				if _, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpSweepVisible, SweepID: ev.SweepID, Visible: false}); err != nil {
					return "", err
				}
			}
		}
		loadName := p.visible[0]
		load := files[loadName].Sweep
		if p.fixture != "" {
			rp := &sessions.RefPlane{FixtureSweepID: ids[p.fixture], FixturePortFacingAnalyser: 1}
			if _, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpSweepRefPlane, SweepID: ids[loadName], RefPlane: rp}); err != nil {
				return "", err
			}
			// The same removal the server applies to show the corrected sweep.
			if load, err = deembed.Remove(load, []deembed.Fixture{{S: files[p.fixture].Sweep, AnalyserPort: 1}}); err != nil {
				return "", err
			}
		}
		var bands []match.Band
		for _, b := range p.bands {
			if _, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpBandSet, Name: b.Name, LoHz: b.LoHz, HiHz: b.HiHz, MinReturnLossDB: b.MinReturnLossDB}); err != nil {
				return "", err
			}
			bands = append(bands, match.Band{LoHz: b.LoHz, HiHz: b.HiHz, MinReturnLossDB: b.MinReturnLossDB})
		}
		for _, f := range p.markers {
			if _, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpMarkerAdd, SweepID: ids[loadName], Port: 1, FreqHz: f}); err != nil {
				return "", err
			}
		}
		if p.set == nil {
			if err := seedSearch(ctx, st, se.ID, ids[loadName], "", []match.Member{{Load: mustLoad(load)}}, bands, p.parts, p.markers[0], "Search 1"); err != nil {
				return "", err
			}
			if p.built != "" {
				_, lay := demoFieldnodeNetwork()
				var traces []string
				for _, t := range lay.Traces {
					traces = append(traces, t.String())
				}
				fields := map[string]string{"builtId": ids[p.built], "footprint": lay.Footprint.Name, "traces": strings.Join(traces, "; ")}
				if err := srv.FitTuneRound(ctx, se.ID, fields); err != nil {
					return "", fmt.Errorf("the demo's round of tuning: %w", err)
				}
			}
			continue
		}
		// A set of conditions: the best network in free space alone and the
		// best across the set, both judged across it, the second active.
		var ms []match.Member
		var members []sessions.SetMember
		for _, name := range p.set {
			ms = append(ms, match.Member{Name: name, Load: mustLoad(files[name].Sweep)})
			members = append(members, sessions.SetMember{SweepID: ids[name]})
		}
		ev, err := st.Apply(ctx, se.ID, sessions.Change{Op: sessions.OpSetSave, Name: p.setName, SetKind: sessions.SetConditions, Members: members})
		if err != nil {
			return "", err
		}
		if err := seedSearch(ctx, st, se.ID, ids[loadName], ev.SetID, ms[:1], bands, p.parts, p.markers[0], "Best in free space alone"); err != nil {
			return "", err
		}
		if err := seedSearch(ctx, st, se.ID, ids[loadName], ev.SetID, ms, bands, p.parts, p.markers[0], "Best across the three conditions"); err != nil {
			return "", err
		}
	}
	if err := seedStageDemo(ctx, st); err != nil { // demo_stage.go
		return "", err
	}
	return first, nil
}

// mustLoad returns port 1 of a demo sweep as a load; the demo's own sweeps
// are valid.
func mustLoad(s *rfmath.Sweep) match.Load {
	l, err := match.LoadFromSweep(s, 0)
	if err != nil {
		panic("demo: " + err.Error())
	}
	return l
}

// seedSearch runs the loss-aware search of standard E24 values with
// typical 0402 models on the demo's members (one load, or a set), stores
// its designs in the session as the panel's search would, and makes the
// best one the active network, judged across set setID when it is not "".
func seedSearch(ctx context.Context, st *sessions.Store, sid, sweepID, setID string, members []match.Member, bands []match.Band, nParts int, designHz float64, name string) error {
	res, err := match.SearchSet(ctx, members, bands, &match.Settings{Model: parts.Typical0402, MaxParts: nParts, Top: 6})
	if err != nil {
		return err
	}
	across := ""
	storeSet := ""
	if len(members) > 1 {
		across, storeSet = fmt.Sprintf(" across %d conditions", len(members)), setID
	}
	out := &sessions.SearchResult{SweepID: sweepID, SetID: storeSet, Port: 1, Exact: res.Exact, Objective: res.Objective.String(),
		Settings: fmt.Sprintf("up to %d parts, L from E24, C from E24, typical 0402 parts, best by power to the load%s", nParts, across)}
	for _, d := range res.Designs {
		sd := sessions.Design{WorstRLdB: d.WorstRLdB, MarginDB: d.MarginDB, WorstPowerToLoad: d.WorstPowerToLoad}
		for _, p := range d.Network {
			sd.Parts = append(sd.Parts, sessions.Part{Kind: p.Kind, Value: p.Value, ESeries: p.Series, Model: "0402"})
		}
		out.Designs = append(out.Designs, sd)
	}
	if _, err := st.Apply(ctx, sid, sessions.Change{Op: sessions.OpSearchStore, Search: out}); err != nil {
		return err
	}
	_, err = st.Apply(ctx, sid, sessions.Change{Op: sessions.OpNetworkAdd, Name: name, SweepID: sweepID, SetID: setID, Port: 1, DesignHz: designHz, Parts: out.Designs[0].Parts})
	return err
}
