package main

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
	level := slog.LevelInfo
	if *verbose {
		level = slog.LevelDebug
	}
	log := slog.New(slog.NewTextHandler(stderr, &slog.HandlerOptions{Level: level}))

	store, err := sessions.Open(*data)
	if err != nil {
		if errors.Is(err, sessions.ErrLocked) {
			return fmt.Errorf("another matchbench server is using the data folder %s; stop it, or start this one with --data pointing elsewhere", *data)
		}
		return fmt.Errorf("opening the data folder %s: %w", *data, err)
	}
	defer store.Close()

	ln, err := net.Listen("tcp", *listen)
	if err != nil {
		if errors.Is(err, syscall.EADDRINUSE) {
			return fmt.Errorf("%s is already in use (is matchbench already running?); choose another port, e.g. --listen %s", *listen, nextPort(*listen))
		}
		return fmt.Errorf("cannot listen on %s: %w", *listen, err)
	}
	addr := ln.Addr().(*net.TCPAddr)
	lan := !addr.IP.IsLoopback()
	hosts := shareHosts(addr)
	srv := server.New(server.Config{Store: store, Log: log, MaxUploadBytes: int64(*maxMB) << 20, ShareHosts: hosts, LAN: lan})

	var demoLink string
	if !*noDemo {
		if demoLink, err = seedDemo(ctx, store, srv); err != nil {
			ln.Close()
			return fmt.Errorf("creating the demo sessions: %w", err)
		}
	}
	hs := &http.Server{Handler: srv, ReadHeaderTimeout: 10 * time.Second, ErrorLog: slog.NewLogLogger(log.Handler(), slog.LevelWarn)}

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
// the edit token of the first demo session ("" when none was made). Each
// demo shows the whole loop on invented data: the sweep as measured (for
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
		built   string // a sweep among hidden of the network's first board as built, for a round of tuning
	}
	plans := []plan{
		{"Demo · Fieldnode trace antenna (invented data)",
			[]string{"fieldnode-via-cable.s1p"}, []string{"cable-fixture.s2p", "cable-open-end.s1p", "fieldnode-antenna.s1p", "fieldnode-first-build.s1p"}, "cable-fixture.s2p",
			demo.FieldnodeBands, []float64{866.5e6, 915e6}, 3, "fieldnode-first-build.s1p"},
		{"Demo · Wristtag chip antenna (invented data)",
			[]string{"wristtag-antenna.s1p"}, nil, "", demo.WristtagBands, []float64{2.44e9}, 3, ""},
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
		if err := seedSearch(ctx, st, se.ID, ids[loadName], load, bands, p.parts, p.markers[0]); err != nil {
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
	}
	return first, nil
}

// seedSearch runs the loss-aware search of standard E24 values with
// typical 0402 models on the demo's load, stores its designs in the
// session as the panel's search would, and makes the best one the active
// network.
func seedSearch(ctx context.Context, st *sessions.Store, sid, sweepID string, sw *rfmath.Sweep, bands []match.Band, nParts int, designHz float64) error {
	load, err := match.LoadFromSweep(sw, 0)
	if err != nil {
		return err
	}
	res, err := match.Search(ctx, load, bands, &match.Settings{Model: parts.Typical0402, MaxParts: nParts, Top: 6})
	if err != nil {
		return err
	}
	out := &sessions.SearchResult{SweepID: sweepID, Port: 1, Exact: res.Exact, Objective: res.Objective.String(),
		Settings: fmt.Sprintf("up to %d parts, L from E24, C from E24, typical 0402 parts, best by power to the load", nParts)}
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
	_, err = st.Apply(ctx, sid, sessions.Change{Op: sessions.OpNetworkAdd, Name: "Search 1", SweepID: sweepID, Port: 1, DesignHz: designHz, Parts: out.Designs[0].Parts})
	return err
}
