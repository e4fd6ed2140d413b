package server

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"mime"
	"net/http"
	"path"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"github.com/a-h/templ"
	"github.com/go-chi/chi/v5"

	"matchbench/rfmath"
	"matchbench/rfmath/touchstone"
	"matchbench/sessions"
	"matchbench/web"
)

// ctxKey is the type of the server's context keys.
type ctxKey int

const sessionKey ctxKey = iota

// access is what a request's token grants.
type access struct {
	Token     string
	SessionID string
	Cap       sessions.Capability
}

// accessFrom returns the session access of a request that went through
// withSession.
func accessFrom(ctx context.Context) access {
	a, _ := ctx.Value(sessionKey).(access)
	return a
}

// withSession resolves the token in the path. An unknown token gets a 404
// that does not say whether such a session ever existed.
func (s *Server) withSession(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		tok := chi.URLParam(r, "token")
		sid, c, err := s.store.ByToken(r.Context(), tok)
		if err != nil {
			if !errors.Is(err, sessions.ErrNotFound) {
				s.log.Error("token lookup", "err", err)
			}
			http.Error(w, "No session answers to this link. It may have been re-issued; ask for a new one.", http.StatusNotFound)
			return
		}
		ctx := context.WithValue(r.Context(), sessionKey, access{Token: tok, SessionID: sid, Cap: c})
		next.ServeHTTP(w, r.WithContext(ctx))
	})
}

func (s *Server) render(w http.ResponseWriter, r *http.Request, status int, c templ.Component) {
	w.Header().Set("Content-Type", "text/html; charset=utf-8")
	w.WriteHeader(status)
	if err := c.Render(r.Context(), w); err != nil {
		s.log.Error("render", "err", err)
	}
}

func (s *Server) start(w http.ResponseWriter, r *http.Request) {
	s.render(w, r, http.StatusOK, web.StartPage(s.startView(r, "")))
}

// startView builds the start page, with msg as its error when not empty.
func (s *Server) startView(r *http.Request, msg string) web.StartView {
	v := web.StartView{Local: isLoopback(r), Error: msg}
	if s.cfg.LAN {
		v.LAN = s.cfg.ShareHosts
	}
	if v.Local {
		list, err := s.store.List(r.Context())
		if err != nil {
			s.log.Error("list sessions", "err", err)
			v.Error = "The session list could not be read; see the server log."
		}
		for _, se := range list {
			st, _, err := s.store.State(r.Context(), se.ID)
			n := 0
			if err == nil {
				n = len(st.Sweeps)
			}
			v.Sessions = append(v.Sessions, web.SessionRow{
				Name: se.Name, Version: se.Version, Sweeps: n,
				Created:  se.CreatedAt.Local().Format("2006-01-02 15:04"),
				EditHref: "/open/" + se.ID, ViewHref: "/open/" + se.ID + "?view=1",
			})
		}
	}
	return v
}

// openLocal sends the bench computer's own user to a session by its id
// (the start page lists sessions by id, not by token).
func (s *Server) openLocal(w http.ResponseWriter, r *http.Request) {
	if !isLoopback(r) {
		http.Error(w, "Sessions are opened by id only on the bench computer itself; ask for a link.", http.StatusForbidden)
		return
	}
	edit, view, err := s.store.Tokens(r.Context(), chi.URLParam(r, "id"))
	if err != nil {
		s.fail(w, r, err)
		return
	}
	tok := edit
	if r.URL.Query().Get("view") != "" {
		tok = view
	}
	http.Redirect(w, r, "/s/"+tok+"/", http.StatusSeeOther)
}

func (s *Server) createSession(w http.ResponseWriter, r *http.Request) {
	if !isLoopback(r) {
		http.Error(w, "New sessions can be started only on the bench computer itself.", http.StatusForbidden)
		return
	}
	r.Body = http.MaxBytesReader(w, r.Body, 4096)
	name := strings.TrimSpace(r.PostFormValue("name"))
	if name == "" {
		name = "Bench session"
	}
	se, err := s.store.Create(r.Context(), name)
	if err != nil {
		s.fail(w, r, err)
		return
	}
	http.Redirect(w, r, "/s/"+se.EditToken+"/", http.StatusSeeOther)
}

func (s *Server) page(w http.ResponseWriter, r *http.Request) {
	a := accessFrom(r.Context())
	st, ver, err := s.store.State(r.Context(), a.SessionID)
	if err != nil {
		s.fail(w, r, err)
		return
	}
	sc := s.scene(a.SessionID, st)
	v := s.sessionView(r, a, sc, ver)
	if sc.derivedPending() {
		// A result still computing: the page says it is one version behind,
		// so that its websocket's hello asks for a catch-up, which brings
		// the result if it came meanwhile (later ones come as redraws).
		v.Version = ver - 1
	}
	s.render(w, r, http.StatusOK, web.SessionPage(v))
}

// uploadReply is the JSON answer to an upload.
type uploadReply struct {
	SweepID string `json:"sweepId,omitempty"`
	Version int64  `json:"version,omitempty"`
	Error   string `json:"error,omitempty"`
}

func writeJSON(w http.ResponseWriter, status int, v any) {
	if r, ok := v.(uploadReply); ok {
		r.Error = clip(r.Error, maxReplyText)
		v = r
	}
	w.Header().Set("Content-Type", "application/json")
	w.WriteHeader(status)
	json.NewEncoder(w).Encode(v)
}

// upload takes one file (multipart field "file"), reads it as Touchstone or
// CSV by its name and adds it as a sweep. Nothing is kept of a file that
// does not read whole.
func (s *Server) upload(w http.ResponseWriter, r *http.Request) {
	a := accessFrom(r.Context())
	if a.Cap != sessions.Edit {
		writeJSON(w, http.StatusForbidden, uploadReply{Error: "this is a view-only link: uploads are refused"})
		return
	}
	limit := s.cfg.MaxUploadBytes
	r.Body = http.MaxBytesReader(w, r.Body, limit+64<<10)
	f, hdr, err := r.FormFile("file")
	if err != nil {
		if errors.Is(err, errTooSlow) {
			writeJSON(w, http.StatusRequestTimeout, uploadReply{Error: tooSlowMsg(s.cfg)})
			return
		}
		var mbe *http.MaxBytesError
		if errors.As(err, &mbe) {
			writeJSON(w, http.StatusRequestEntityTooLarge, uploadReply{Error: fmt.Sprintf("the file is larger than the upload limit of %d MB", limit>>20)})
			return
		}
		writeJSON(w, http.StatusBadRequest, uploadReply{Error: "send the sweep as a multipart form field named \"file\""})
		return
	}
	defer f.Close()
	raw, err := io.ReadAll(io.LimitReader(f, limit+1))
	if errors.Is(err, errTooSlow) {
		writeJSON(w, http.StatusRequestTimeout, uploadReply{Error: tooSlowMsg(s.cfg)})
		return
	}
	if err != nil {
		writeJSON(w, http.StatusBadRequest, uploadReply{Error: "the upload was cut off: " + err.Error()})
		return
	}
	if int64(len(raw)) > limit {
		writeJSON(w, http.StatusRequestEntityTooLarge, uploadReply{Error: fmt.Sprintf("the file is larger than the upload limit of %d MB", limit>>20)})
		return
	}
	name := path.Base(strings.ReplaceAll(hdr.Filename, "\\", "/"))
	if n := utf8.RuneCountInString(name); n > maxFileNameRunes {
		writeJSON(w, http.StatusUnprocessableEntity, uploadReply{Error: fmt.Sprintf("the file name %s has %d characters; rename the file to at most %d", quoteClipped(name, maxEcho), n, maxFileNameRunes)})
		return
	}
	sw, err := parseSweep(name, raw, s.cfg.FileLimits)
	if err != nil {
		writeJSON(w, http.StatusUnprocessableEntity, uploadReply{Error: plainWords(err.Error())})
		return
	}
	ev, err := s.store.ApplyAs(r.Context(), a.Cap, a.SessionID, sessions.Change{
		Op: sessions.OpSweepAdd, Name: strings.TrimSuffix(name, path.Ext(name)), FileName: name, Raw: raw, Sweep: sw,
	})
	if err != nil {
		status, msg := errorStatus(err)
		if status >= 500 {
			s.log.Error("upload", "err", err)
		}
		writeJSON(w, status, uploadReply{Error: plainWords(msg)})
		return
	}
	writeJSON(w, http.StatusOK, uploadReply{SweepID: ev.SweepID, Version: ev.Version})
}

// maxFileNameRunes bounds an uploaded file's name, as the store bounds
// every name it keeps.
const maxFileNameRunes = 200

// tooSlowMsg says why an upload was cut off.
func tooSlowMsg(cfg Config) string {
	return fmt.Sprintf("the upload arrived too slowly and was cut off: after the first %v a file must arrive at %d kB/s or more, without pauses longer than %v",
		cfg.BodyGrace, cfg.BodyMinRate>>10, cfg.BodyGrace)
}

// parseSweep reads an uploaded file by the ending of its name
// (touchstone.ReadNamed, as the command line reads files). Zero fields of
// lim take touchstone's defaults.
func parseSweep(name string, raw []byte, lim touchstone.Limits) (*rfmath.Sweep, error) {
	return touchstone.ReadNamedBytes(name, raw, lim)
}

// errorStatus maps a store error to a status and a message for the client.
func errorStatus(err error) (int, string) {
	var oe *sessions.OpError
	switch {
	case errors.Is(err, sessions.ErrForbidden):
		return http.StatusForbidden, "this is a view-only link: changes are refused"
	case errors.Is(err, sessions.ErrNotFound):
		if errors.As(err, &oe) {
			return http.StatusNotFound, oe.Error()
		}
		return http.StatusNotFound, "not found"
	case errors.Is(err, sessions.ErrInvalid), errors.Is(err, sessions.ErrConflict):
		return http.StatusUnprocessableEntity, err.Error()
	case errors.Is(err, sessions.ErrDiskFull):
		return http.StatusInsufficientStorage, "the change was not stored: the disk of the computer running matchbench is full. Free some space there and try again; nothing stored before was lost"
	}
	return http.StatusInternalServerError, "the server could not store the change; see its log"
}

func (s *Server) fail(w http.ResponseWriter, r *http.Request, err error) {
	status, msg := errorStatus(err)
	if status >= 500 {
		s.log.Error("request failed", "route", chi.RouteContext(r.Context()).RoutePattern(), "err", err)
	}
	http.Error(w, msg, status)
}

// attachment marks the answer as a download named name. Control and
// bidirectional control characters are left out of the name (names stored
// by older builds may hold them), so the saved file's name reads as it is.
func attachment(w http.ResponseWriter, name, ctype string) {
	name = strings.Map(func(r rune) rune {
		if unicode.IsControl(r) || unicode.Is(unicode.Bidi_Control, r) {
			return -1
		}
		return r
	}, name)
	if name == "" {
		name = "download"
	}
	w.Header().Set("Content-Type", ctype)
	w.Header().Set("Content-Disposition", mime.FormatMediaType("attachment", map[string]string{"filename": name}))
}

func (s *Server) exportChart(w http.ResponseWriter, r *http.Request) {
	sc, ok := s.requestScene(w, r)
	if !ok {
		return
	}
	var b bytes.Buffer
	if err := sc.renderChartView(&b, viewFromQuery(r.URL.Query())); err != nil {
		s.exportFailed(w, "chart", err)
		return
	}
	send(w, safeName(sc.st.Name)+"-chart.svg", "image/svg+xml", b.Bytes())
}

func (s *Server) exportPlot(w http.ResponseWriter, r *http.Request) {
	sc, ok := s.requestScene(w, r)
	if !ok {
		return
	}
	id := chi.URLParam(r, "plot")
	for _, p := range sc.plotsFor(viewFromQuery(r.URL.Query())) {
		if p.id == id {
			var b bytes.Buffer
			if err := p.render(&b, sc.plotMarkers()); err != nil {
				s.exportFailed(w, "plot", err)
				return
			}
			send(w, safeName(sc.st.Name)+"-"+id+".svg", "image/svg+xml", b.Bytes())
			return
		}
	}
	http.Error(w, "no such plot", http.StatusNotFound)
}

// exportMarkers sends the markers' readouts as CSV. Labels and sweep
// names are the user's text: a cell that a spreadsheet would run as a
// formula is neutralised (safeCell); the numbers are written as they are.
func (s *Server) exportMarkers(w http.ResponseWriter, r *http.Request) {
	sc, ok := s.requestScene(w, r)
	if !ok {
		return
	}
	rows := [][]string{{"marker", "label", "sweep", "param", "freq_hz", "r_ohm", "x_ohm", "gamma_mag", "gamma_deg",
		"return_loss_db", "vswr", "mismatch_loss_db", "q", "equiv_kind", "equiv_value"}}
	for _, m := range sc.readouts() {
		ro := m.ro
		rows = append(rows, []string{
			fmt.Sprint(m.num), m.label, m.sweepName, fmt.Sprintf("S%d%d", m.port, m.port),
			g(ro.FreqHz), g(real(ro.Z)), g(imag(ro.Z)), g(ro.GammaMag), g(ro.GammaDeg),
			g(ro.ReturnLossDB), g(ro.VSWR), g(ro.MismatchLossDB), g(ro.Q), ro.Equiv.Kind, g(ro.Equiv.Value),
		})
	}
	b, err := csvBytes(rows, func(col int) bool { return col >= 4 && col != 13 })
	if err != nil {
		s.exportFailed(w, "markers list", err)
		return
	}
	send(w, safeName(sc.st.Name)+"-markers.csv", "text/csv; charset=utf-8", b)
}

// requestScene builds the scene of the request's session, answering the
// request itself when the session cannot be read.
func (s *Server) requestScene(w http.ResponseWriter, r *http.Request) (*scene, bool) {
	a := accessFrom(r.Context())
	st, _, err := s.store.State(r.Context(), a.SessionID)
	if err != nil {
		s.fail(w, r, err)
		return nil, false
	}
	return s.scene(a.SessionID, st), true
}

// g writes a number for a CSV cell: decimal (digits, point, exponent) to
// ten figures, as a spreadsheet reads it; a figure that is not finite (the
// VSWR or Q of a point on the rim) is an empty cell, never "+Inf" or "NaN",
// which a spreadsheet would take for text or a formula.
func g(v float64) string {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return ""
	}
	return strconv.FormatFloat(v, 'g', 10, 64)
}

func (s *Server) rawFile(w http.ResponseWriter, r *http.Request) {
	a := accessFrom(r.Context())
	raw, name, err := s.store.Raw(r.Context(), a.SessionID, chi.URLParam(r, "sweep"))
	if err != nil {
		s.fail(w, r, err)
		return
	}
	attachment(w, name, "text/plain; charset=utf-8")
	w.Write(raw)
}

// safeName keeps letters, digits, '-' and '_' for a download's file name.
func safeName(s string) string {
	var b strings.Builder
	for _, c := range s {
		switch {
		case c >= 'a' && c <= 'z', c >= 'A' && c <= 'Z', c >= '0' && c <= '9', c == '-', c == '_':
			b.WriteRune(c)
		case c == ' ' || c == '.':
			b.WriteByte('-')
		}
		if b.Len() >= 60 {
			break
		}
	}
	if b.Len() == 0 {
		return "session"
	}
	return b.String()
}
