package sessions

import (
	"archive/zip"
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"slices"
	"strings"
	"time"

	"matchbench/rfmath"
)

// A session archive is one zip file that carries a session to another
// matchbench:
//
//	session.json         the manifest (an [ArchiveManifest])
//	sweeps/NN-NAME       each sweep's file as it was uploaded, byte for byte
//
// The manifest holds the session's whole [State] as its JSON (the same
// field names as the state the store keeps: sweeps with their reference
// planes, markers, bands, chart, time domain, load sets, networks with
// their parts, boards and sets, the active network, the latest search, the
// rounds of bench tuning, the amplifier view and the transistor stage) and,
// per sweep, which file of the archive is its upload with the file's
// SHA-256. [Store.ImportArchive]
// makes a new session with the same state from it.
const (
	ArchiveFormat   = "matchbench session archive"
	ArchiveVersion  = 1
	archiveManifest = "session.json"
	// maxManifestBytes bounds session.json; a state is far smaller.
	maxManifestBytes = 16 << 20
)

// ArchiveManifest is session.json of a session archive.
type ArchiveManifest struct {
	Format     string        `json:"format"`  // ArchiveFormat
	Version    int           `json:"version"` // ArchiveVersion
	ExportedAt time.Time     `json:"exportedAt"`
	State      State         `json:"state"`
	Files      []ArchiveFile `json:"files"`
}

// ArchiveFile names the file of the archive that holds one sweep's upload.
type ArchiveFile struct {
	SweepID  string `json:"sweepId"`
	Path     string `json:"path"`     // "sweeps/01-antenna.s1p"
	FileName string `json:"fileName"` // the name it was uploaded under
	SHA256   string `json:"sha256"`   // of its bytes, hex
	Bytes    int    `json:"bytes"`
}

// ErrArchive reports a file that is not a session archive this program can
// read, or one that is damaged. The wrapping error says what and where.
var ErrArchive = errors.New("sessions: not a readable session archive")

// ExportArchive writes session id as a session archive to w: the state as
// it is now and each listed sweep's file as it was uploaded (sweeps
// removed but still in the undo history are left out, and so is the
// history). It writes as it reads, so an error may leave w with part of an
// archive: write to a buffer or a temporary file when a half-written
// archive must not reach anyone (the server does).
func (st *Store) ExportArchive(ctx context.Context, id string, w io.Writer) error {
	state, _, err := st.State(ctx, id)
	if err != nil {
		return err
	}
	m := ArchiveManifest{Format: ArchiveFormat, Version: ArchiveVersion, ExportedAt: time.Now().UTC().Truncate(time.Second), State: *state}
	raws := make([][]byte, len(state.Sweeps))
	for i, ref := range state.Sweeps {
		raw, name, err := st.Raw(ctx, id, ref.ID)
		if err != nil {
			return fmt.Errorf("sweep %q: %w", ref.Name, err)
		}
		sum := sha256.Sum256(raw)
		raws[i] = raw
		m.Files = append(m.Files, ArchiveFile{
			SweepID: ref.ID, Path: fmt.Sprintf("sweeps/%02d-%s", i+1, archiveName(name)), FileName: name,
			SHA256: hex.EncodeToString(sum[:]), Bytes: len(raw),
		})
	}
	js, err := json.MarshalIndent(m, "", "  ")
	if err != nil {
		return err
	}
	zw := zip.NewWriter(w)
	zw.SetComment(ArchiveFormat)
	put := func(name string, b []byte) error {
		f, err := zw.CreateHeader(&zip.FileHeader{Name: name, Method: zip.Deflate, Modified: m.ExportedAt})
		if err != nil {
			return err
		}
		_, err = f.Write(b)
		return err
	}
	if err := put(archiveManifest, append(js, '\n')); err != nil {
		return err
	}
	for i, f := range m.Files {
		if err := put(f.Path, raws[i]); err != nil {
			return err
		}
	}
	return zw.Close()
}

// archiveName keeps a file name's letters, digits, '.', '-' and '_' for a
// path inside the archive.
func archiveName(name string) string {
	var b strings.Builder
	for _, r := range name {
		switch {
		case r >= 'a' && r <= 'z', r >= 'A' && r <= 'Z', r >= '0' && r <= '9', r == '.', r == '-', r == '_':
			b.WriteRune(r)
		default:
			b.WriteByte('_')
		}
	}
	if b.Len() == 0 {
		return "sweep"
	}
	return b.String()
}

// ParseFunc reads an uploaded sweep file by its name, as an upload is read.
type ParseFunc func(fileName string, raw []byte) (*rfmath.Sweep, error)

// ImportArchive reads a session archive of size bytes from r and makes a
// new session with the same state: the same sweeps (each file read again
// by parse, as an upload is), reference planes, markers, bands, chart,
// time domain, load sets, networks (with their boards and sets), search,
// tuning rounds, amplifier view and stage. Ids are new (the session's, its
// tokens, and those of its sweeps, markers, bands, sets, networks, parts
// and rounds, every reference to them following);
// the history starts empty. Every part of the state is checked by the same
// rules as the change that would make it, and the session and its sweeps
// are stored in one transaction: an archive that is damaged, foreign, made
// by a newer matchbench or breaks a rule is refused with an error wrapping
// [ErrArchive] (or [ErrInvalid] for a rule) that names what is wrong, and
// nothing of it is kept. maxFileBytes bounds each sweep file.
func (st *Store) ImportArchive(ctx context.Context, r io.ReaderAt, size int64, maxFileBytes int64, parse ParseFunc) (*Session, error) {
	if err := st.open(); err != nil {
		return nil, err
	}
	files, m, err := readArchiveManifest(r, size)
	if err != nil {
		return nil, err
	}
	if len(m.State.Sweeps) > st.lim.SweepsPerSession {
		return nil, fmt.Errorf("%w: %d sweeps; a session holds at most %d", ErrInvalid, len(m.State.Sweeps), st.lim.SweepsPerSession)
	}
	// Replay the state through the change rules, on a fresh state, so
	// that what is imported is what the store would accept one change at a
	// time.
	name, err := text("import", "state.name", m.State.Name, false, st.lim.TextRunes)
	if err != nil {
		return nil, err
	}
	if name == "" {
		name = "Imported session"
	}
	im := &importer{st: st, m: m, files: files, maxFileBytes: maxFileBytes, parse: parse,
		cur:     &State{Name: name, Sweeps: []SweepRef{}, Markers: []Marker{}, Bands: []Band{}, Chart: DefaultChart},
		byID:    map[string]ArchiveFile{},
		sweepID: map[string]string{}, bandID: map[string]string{}, setID: map[string]string{}, netID: map[string]string{}}
	for _, f := range m.Files {
		im.byID[f.SweepID] = f
	}
	for _, part := range []func() error{im.sweeps, im.planes, im.markers, im.bands, im.chart, im.timeDomain,
		im.loadSets, im.networks, im.search, im.tuning, im.amp, im.stage, im.active} {
		if err := part(); err != nil {
			return nil, err
		}
	}
	return st.insertImported(ctx, im.cur, im.rows)
}

// readArchiveManifest opens the zip and reads and checks its manifest: a
// matchbench session archive of a version this build reads.
func readArchiveManifest(r io.ReaderAt, size int64) (map[string]*zip.File, *ArchiveManifest, error) {
	zr, err := zip.NewReader(r, size)
	if err != nil {
		return nil, nil, fmt.Errorf("%w: not a zip file (%v)", ErrArchive, err)
	}
	files := map[string]*zip.File{}
	for _, f := range zr.File {
		files[f.Name] = f
	}
	mf := files[archiveManifest]
	if mf == nil {
		return nil, nil, fmt.Errorf("%w: the zip file has no %s, so it is not a matchbench session archive", ErrArchive, archiveManifest)
	}
	js, err := readZipFile(mf, maxManifestBytes)
	if err != nil {
		return nil, nil, err
	}
	var m ArchiveManifest
	dec := json.NewDecoder(bytes.NewReader(js))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&m); err != nil {
		return nil, nil, fmt.Errorf("%w: %s: %v", ErrArchive, archiveManifest, err)
	}
	switch {
	case m.Format != ArchiveFormat:
		return nil, nil, fmt.Errorf("%w: %s says format %q, not %q", ErrArchive, archiveManifest, m.Format, ArchiveFormat)
	case m.Version > ArchiveVersion:
		return nil, nil, fmt.Errorf("%w: archive version %d was written by a newer matchbench (this one reads version %d)", ErrArchive, m.Version, ArchiveVersion)
	case m.Version < 1:
		return nil, nil, fmt.Errorf("%w: archive version %d", ErrArchive, m.Version)
	}
	return files, &m, nil
}

// importer replays an archive's state through the change rules: cur is
// the state built so far, rows the sweeps to store with it, and the maps
// take the archive's ids of sweeps, bands, load sets and networks to the
// new session's.
type importer struct {
	st           *Store
	m            *ArchiveManifest
	files        map[string]*zip.File
	byID         map[string]ArchiveFile
	maxFileBytes int64
	parse        ParseFunc
	cur          *State
	rows         []*newSweep
	sweepID      map[string]string
	bandID       map[string]string
	setID        map[string]string
	netID        map[string]string
}

// step applies one change to the state being built, by the store's rules;
// its error names what of the archive it was.
func (im *importer) step(what string, ch Change) (result, error) {
	r, err := im.st.compute("", im.cur, &ch)
	if err != nil {
		return r, fmt.Errorf("%w: %s: %v", ErrInvalid, what, err)
	}
	im.cur = r.next
	return r, nil
}

// mapSweep maps a sweep id of the archive to the new session's ("" stays
// "").
func (im *importer) mapSweep(what, id string) (string, error) {
	if id == "" {
		return "", nil
	}
	n, ok := im.sweepID[id]
	if !ok {
		return "", fmt.Errorf("%w: %s names sweep %q, which the archive does not hold", ErrArchive, what, id)
	}
	return n, nil
}

// mapSet maps a load set id of the archive to the new session's.
func (im *importer) mapSet(what, id string) (string, error) {
	if id == "" {
		return "", nil
	}
	n, ok := im.setID[id]
	if !ok {
		return "", fmt.Errorf("%w: %s names load set %q, which the archive does not hold", ErrArchive, what, id)
	}
	return n, nil
}

// mapNet maps a network id; one the archive does not hold (a round's
// network since removed) maps to "", as the store keeps such ids.
func (im *importer) mapNet(id string) string { return im.netID[id] }

// sweeps adds each sweep from its file, checked against its SHA-256 and read
// again as an upload is, hidden where it was hidden.
func (im *importer) sweeps() error {
	for i, ref := range im.m.State.Sweeps {
		what := fmt.Sprintf("sweep %d (%q)", i+1, ref.Name)
		af, ok := im.byID[ref.ID]
		if !ok {
			return fmt.Errorf("%w: %s has no file in %s", ErrArchive, what, archiveManifest)
		}
		zf := im.files[af.Path]
		if zf == nil {
			return fmt.Errorf("%w: %s: the file %s is missing from the archive", ErrArchive, what, af.Path)
		}
		raw, err := readZipFile(zf, im.maxFileBytes)
		if err != nil {
			return err
		}
		if sum := sha256.Sum256(raw); hex.EncodeToString(sum[:]) != strings.ToLower(af.SHA256) {
			return fmt.Errorf("%w: %s: %s is damaged (its SHA-256 differs from the manifest's)", ErrArchive, what, af.Path)
		}
		sw, err := im.parse(af.FileName, raw)
		if err != nil {
			return fmt.Errorf("%w: %s: %v", ErrArchive, what, err)
		}
		r, err := im.step(what, Change{Op: OpSweepAdd, Name: ref.Name, FileName: af.FileName, Color: ref.Color, Raw: raw, Sweep: sw})
		if err != nil {
			return err
		}
		im.rows = append(im.rows, r.newSweep)
		im.sweepID[ref.ID] = r.ev.SweepID
		if !ref.Visible {
			if _, err := im.step(what, Change{Op: OpSweepVisible, SweepID: r.ev.SweepID, Visible: false}); err != nil {
				return err
			}
		}
	}
	return nil
}

// planes sets each sweep's reference plane, its fixture sweep mapped.
func (im *importer) planes() error {
	var err error
	for i, ref := range im.m.State.Sweeps {
		if ref.RefPlane == nil {
			continue
		}
		rp := *ref.RefPlane
		what := fmt.Sprintf("the reference plane of sweep %d (%q)", i+1, ref.Name)
		if rp.FixtureSweepID, err = im.mapSweep(what, rp.FixtureSweepID); err != nil {
			return err
		}
		if _, err := im.step(what, Change{Op: OpSweepRefPlane, SweepID: im.sweepID[ref.ID], RefPlane: &rp}); err != nil {
			return err
		}
	}
	return nil
}

// markers adds the markers.
func (im *importer) markers() error {
	for i, mk := range im.m.State.Markers {
		what := fmt.Sprintf("marker %d", i+1)
		sid, err := im.mapSweep(what, mk.SweepID)
		if err != nil {
			return err
		}
		if sid == "" {
			return fmt.Errorf("%w: %s names no sweep", ErrArchive, what)
		}
		if _, err := im.step(what, Change{Op: OpMarkerAdd, SweepID: sid, Port: mk.Port, FreqHz: mk.FreqHz, Label: mk.Label}); err != nil {
			return err
		}
	}
	return nil
}

// bands adds the bands.
func (im *importer) bands() error {
	for i, b := range im.m.State.Bands {
		r, err := im.step(fmt.Sprintf("band %d (%q)", i+1, b.Name), Change{Op: OpBandSet, Name: b.Name, LoHz: b.LoHz, HiHz: b.HiHz,
			MinReturnLossDB: b.MinReturnLossDB, MinPowerToLoad: b.MinPowerToLoad})
		if err != nil {
			return err
		}
		im.bandID[b.ID] = r.ev.BandID
	}
	return nil
}

// chart sets the chart's settings.
func (im *importer) chart() error {
	c := im.m.State.Chart
	qarcs := c.QArcs
	if _, err := im.step("the chart", Change{Op: OpChartSet, Chart: &ChartPatch{
		ImpedanceGrid: &c.ImpedanceGrid, AdmittanceGrid: &c.AdmittanceGrid, Zoom: &c.Zoom, VSWRCircle: &c.VSWRCircle,
		ReturnLossCircleDB: &c.ReturnLossCircleDB, QArcs: &qarcs, ShowAngleScale: &c.ShowAngleScale, ShowWavelengthScale: &c.ShowWavelengthScale,
	}}); err != nil {
		return err
	}
	return nil
}

// timeDomain sets the time-domain view.
func (im *importer) timeDomain() error {
	var err error
	if td := im.m.State.TimeDomain; td != (TimeDomain{}) {
		if td.SweepID, err = im.mapSweep("the time-domain view", td.SweepID); err != nil {
			return err
		}
		if _, err := im.step("the time-domain view", Change{Op: OpTDRSet, TimeDomain: &td}); err != nil {
			return err
		}
	}
	return nil
}

// loadSets saves the load sets, before the networks judged across them.
func (im *importer) loadSets() error {
	var err error
	// Load sets before the networks judged across them.
	for i, ls := range im.m.State.LoadSets {
		what := fmt.Sprintf("load set %d (%q)", i+1, ls.Name)
		ms := make([]SetMember, len(ls.Members))
		for k, mb := range ls.Members {
			mb.SweepID, err = im.mapSweep(what, mb.SweepID)
			if err != nil {
				return err
			}
			ms[k] = mb
		}
		r, err := im.step(what, Change{Op: OpSetSave, Name: ls.Name, SetKind: ls.Kind, Members: ms})
		if err != nil {
			return err
		}
		im.setID[ls.ID] = r.ev.SetID
	}
	return nil
}

// networks adds the networks with their parts, boards and sets, then their
// power, yield and Chu settings; the Monte Carlo seed, which has no change of
// its own, is copied.
func (im *importer) networks() error {
	for i, n := range im.m.State.Networks {
		what := fmt.Sprintf("network %d (%q)", i+1, n.Name)
		sid, err := im.mapSweep(what, n.SweepID)
		if err != nil {
			return err
		}
		set, err := im.mapSet(what, n.SetID)
		if err != nil {
			return err
		}
		ps := make([]Part, len(n.Parts))
		copy(ps, n.Parts)
		r, err := im.step(what, Change{Op: OpNetworkAdd, Name: n.Name, SweepID: sid, Port: n.Port, DesignHz: n.DesignHz, Parts: ps,
			SetID: set, Layout: n.Layout.clone()})
		if err != nil {
			return err
		}
		im.netID[n.ID] = r.ev.NetworkID
		power := n.PowerW
		ch := Change{Op: OpNetworkSet, NetworkID: r.ev.NetworkID, PowerW: &power, YieldBuilds: n.YieldBuilds, ChuRadiusM: n.ChuRadiusM}
		if _, err := im.step(what, ch); err != nil {
			return err
		}
		// The Monte Carlo's seed has no change of its own: any number is a
		// seed.
		im.cur.Networks[im.cur.NetworkIndex(r.ev.NetworkID)].YieldSeed = n.YieldSeed
	}
	return nil
}

// search stores the search result.
func (im *importer) search() error {
	var err error
	if s := im.m.State.Search; s != nil {
		res := *s
		if res.SweepID, err = im.mapSweep("the search", res.SweepID); err != nil {
			return err
		}
		if res.SetID, err = im.mapSet("the search", res.SetID); err != nil {
			return err
		}
		res.Layout = res.Layout.clone()
		if _, err := im.step("the search", Change{Op: OpSearchStore, Search: &res}); err != nil {
			return err
		}
	}
	return nil
}

// tuning stores the tuning rounds with the suggestion chosen.
func (im *importer) tuning() error {
	var err error
	for i, t := range im.m.State.Tuning {
		what := fmt.Sprintf("tuning round %d", i+1)
		t.Layout = t.Layout.clone()
		if t.LoadSweepID, err = im.mapSweep(what, t.LoadSweepID); err != nil {
			return err
		}
		if t.BuiltSweepID, err = im.mapSweep(what, t.BuiltSweepID); err != nil {
			return err
		}
		t.NetworkID = im.mapNet(t.NetworkID)
		if _, err := im.step(what, Change{Op: OpTuneStore, Tune: &t}); err != nil {
			return err
		}
		// Which suggestion was made a network has no change of its own
		// (tune.use makes a new network; the archive holds it already).
		if t.Chosen < -1 || t.Chosen >= len(t.Suggestions) {
			return fmt.Errorf("%w: %s: tune.chosen %d is not a suggestion", ErrInvalid, what, t.Chosen)
		}
		last := &im.cur.Tuning[len(im.cur.Tuning)-1]
		last.Chosen, last.ChosenNetworkID = t.Chosen, im.mapNet(t.ChosenNetworkID)
	}
	return nil
}

// amp sets the amplifier view and its terminations.
func (im *importer) amp() error {
	if a := im.m.State.Amp; a != nil {
		sid, err := im.mapSweep("the amplifier view", a.SweepID)
		if err != nil {
			return err
		}
		gs, ns := slices.Clone(a.GainStepsDB), slices.Clone(a.NFStepsDB)
		if _, err := im.step("the amplifier view", Change{Op: OpAmpSet, SweepID: sid, FreqHz: a.FreqHz,
			AmpChange: AmpChange{GainStepsDB: &gs, NFStepsDB: &ns}}); err != nil {
			return err
		}
		for _, tp := range []struct {
			plane string
			g     *Point
		}{{"source", a.GammaS}, {"load", a.GammaL}} {
			if tp.g == nil {
				continue
			}
			g := *tp.g
			if _, err := im.step("the amplifier view", Change{Op: OpAmpPoint, Gamma: &g, AmpChange: AmpChange{Plane: tp.plane}}); err != nil {
				return err
			}
		}
	}
	return nil
}

// stage sets the transistor stage with its requirements, networks and search.
func (im *importer) stage() error {
	if sg := im.m.State.Stage; sg != nil {
		what := "the transistor stage"
		sid, err := im.mapSweep(what, sg.SweepID)
		if err != nil {
			return err
		}
		reqs := make([]StageReq, 0, len(sg.Reqs))
		for _, q := range sg.Reqs {
			b, ok := im.bandID[q.BandID]
			if !ok {
				return fmt.Errorf("%w: %s names band %q, which the archive does not hold", ErrArchive, what, q.BandID)
			}
			q.BandID = b
			reqs = append(reqs, q)
		}
		ac := AmpChange{StageReqs: reqs}
		for _, side := range []struct {
			id  string
			dst *string
		}{{sg.SourceNetworkID, &ac.SourceNetworkID}, {sg.LoadNetworkID, &ac.LoadNetworkID}} {
			if side.id == "" {
				continue
			}
			n, ok := im.netID[side.id]
			if !ok {
				return fmt.Errorf("%w: %s names network %q, which the archive does not hold", ErrArchive, what, side.id)
			}
			*side.dst = n
		}
		nets := len(im.cur.Networks)
		if _, err := im.step(what, Change{Op: OpStageSet, SweepID: sid, AmpChange: ac}); err != nil {
			return err
		}
		// A side without a network (its network was removed) stays without
		// one: stage.set gave it a new empty network, which the archive
		// does not hold.
		if len(im.cur.Networks) > nets {
			im.cur.Networks = im.cur.Networks[:nets]
			st := *im.cur.Stage
			st.SourceNetworkID, st.LoadNetworkID = ac.SourceNetworkID, ac.LoadNetworkID
			im.cur.Stage = &st
		}
		if sg.Search != nil {
			res := *sg.Search
			if _, err := im.step(what, Change{Op: OpStageStore, AmpChange: AmpChange{StageSearch: &res}}); err != nil {
				return err
			}
		}
	}
	return nil
}

// active selects the active network, last: a stage and a tuning round choose
// one of their own as they are made.
func (im *importer) active() error {
	// The active network last: a stage and a tuning round choose one of
	// their own as they are made.
	if a := im.m.State.ActiveNetwork; a != "" {
		id, ok := im.netID[a]
		if !ok {
			return fmt.Errorf("%w: the active network %q is not among the archive's networks", ErrArchive, a)
		}
		if _, err := im.step("the active network", Change{Op: OpNetworkSelect, NetworkID: id}); err != nil {
			return err
		}
	} else {
		im.cur.ActiveNetwork = "" // as in the archive: none active
	}
	return nil
}

// insertImported stores a new session with state s and its sweeps in one
// transaction.
func (st *Store) insertImported(ctx context.Context, s *State, rows []*newSweep) (*Session, error) {
	js, err := json.Marshal(s)
	if err != nil {
		return nil, err
	}
	edit, view, err := newTokenPair()
	if err != nil {
		return nil, err
	}
	se := &Session{Name: s.Name, CreatedAt: time.Now().UTC().Truncate(time.Millisecond), EditToken: edit, ViewToken: view}
	if se.ID, err = newID(6); err != nil {
		return nil, err
	}
	sealed, err := sealTokens(st.aead, se.ID, edit, view)
	if err != nil {
		return nil, err
	}
	st.writeMu.Lock()
	defer st.writeMu.Unlock()
	tx, err := st.wdb.BeginTx(context.WithoutCancel(ctx), nil)
	if err != nil {
		return nil, st.dbErr("importing a session", err)
	}
	defer tx.Rollback()
	if _, err := tx.ExecContext(ctx,
		`INSERT INTO sessions (id, name, created_at, version, state, edit_hash, view_hash, tokens_sealed) VALUES (?, ?, ?, 0, ?, ?, ?, ?)`,
		se.ID, se.Name, se.CreatedAt.UnixMilli(), string(js), tokenHash(edit), tokenHash(view), sealed); err != nil {
		return nil, st.dbErr("importing a session", err)
	}
	for _, r := range rows {
		if _, err := tx.ExecContext(ctx,
			`INSERT INTO sweeps (session_id, id, file_name, created_at, parsed, raw) VALUES (?, ?, ?, ?, ?, ?)`,
			se.ID, r.id, r.fileName, time.Now().UnixMilli(), r.parsed, r.raw); err != nil {
			return nil, st.dbErr("importing a session's sweeps", err)
		}
	}
	if err := tx.Commit(); err != nil {
		return nil, st.dbErr("importing a session", err)
	}
	return se, nil
}

// readZipFile reads one file of an archive, at most limit bytes, checking
// its checksum (archive/zip does so at the end of the file).
func readZipFile(f *zip.File, limit int64) ([]byte, error) {
	if f.UncompressedSize64 > uint64(limit) {
		return nil, fmt.Errorf("%w: %s holds %d bytes, more than the limit of %d", ErrArchive, f.Name, f.UncompressedSize64, limit)
	}
	rc, err := f.Open()
	if err != nil {
		return nil, fmt.Errorf("%w: %s: %v", ErrArchive, f.Name, err)
	}
	defer rc.Close()
	b, err := io.ReadAll(io.LimitReader(rc, limit+1))
	if err != nil {
		return nil, fmt.Errorf("%w: %s is damaged: %v", ErrArchive, f.Name, err)
	}
	if int64(len(b)) > limit {
		return nil, fmt.Errorf("%w: %s holds more than the limit of %d bytes", ErrArchive, f.Name, limit)
	}
	return b, nil
}
