// Package server is matchbench's HTTP side: the chi router, thin handlers,
// the websocket endpoint and its message protocol, uploads, limits and
// middleware. It renders with web (templ) and chartsvg and changes sessions
// only through the store's one change path.
package server

import (
	"context"
	"io"
	"io/fs"
	"log/slog"
	"net"
	"net/http"
	"strings"
	"sync"
	"time"

	"github.com/go-chi/chi/v5"
	"github.com/go-chi/chi/v5/middleware"

	"matchbench/rfmath"
	"matchbench/rfmath/touchstone"
	"matchbench/sessions"
	"matchbench/web"
)

// Store is what the server needs of the session store.
type Store interface {
	Create(ctx context.Context, name string) (*sessions.Session, error)
	List(ctx context.Context) ([]sessions.Session, error)
	Get(ctx context.Context, id string) (*sessions.Session, error)
	ByToken(ctx context.Context, token string) (string, sessions.Capability, error)
	State(ctx context.Context, id string) (*sessions.State, int64, error)
	ApplyAs(ctx context.Context, c sessions.Capability, sessionID string, ch sessions.Change) (sessions.Event, error)
	Subscribe(sessionID string, buf int) (*sessions.Subscription, error)
	Since(ctx context.Context, sessionID string, v int64) (sessions.Catchup, error)
	Sweep(sessionID, sweepID string) (*rfmath.Sweep, error)
	Raw(ctx context.Context, sessionID, sweepID string) ([]byte, string, error)
	ExportArchive(ctx context.Context, id string, w io.Writer) error
	ImportArchive(ctx context.Context, r io.ReaderAt, size, maxFileBytes int64, parse sessions.ParseFunc) (*sessions.Session, error)
	Tokens(ctx context.Context, id string) (edit, view string, err error)
	ReissueTokens(ctx context.Context, id string) (*sessions.Session, error)
}

var _ Store = (*sessions.Store)(nil)

// Config holds the server's dependencies and limits.
type Config struct {
	Store Store
	Log   *slog.Logger
	// MaxUploadBytes bounds one uploaded file; zero means 20 MiB.
	MaxUploadBytes int64
	// ShareHosts are the host:port pairs a colleague can reach the server
	// at; the page builds its share links from them. Empty means the
	// request's own host.
	ShareHosts []string
	// Hosts are further host names (NAME or NAME:PORT, the port taken as
	// 80 when absent) that requests may address the server by, such as the
	// bench computer's name on the lab network. Requests naming any other
	// host than these, ShareHosts and the loopback names are refused (see
	// hostGuard).
	Hosts []string
	// LAN reports that the server listens beyond the loopback address.
	LAN bool
	// FileLimits bound what one uploaded file may hold (bytes, ports,
	// points); zero fields take touchstone.DefaultLimits.
	FileLimits touchstone.Limits
	// MsgPerSecond and MsgBurst bound websocket messages per connection;
	// zero means 120 and 240.
	MsgPerSecond, MsgBurst float64
	// SessionMsgPerSecond and SessionMsgBurst bound the messages into one
	// session from all its pages together (its fair share; see
	// sessionShare); zero means DefaultSessionMsgPerSec and
	// DefaultSessionMsgBurst.
	SessionMsgPerSecond, SessionMsgBurst float64
	// MaxConnsPerSession, MaxConnsPerToken and MaxConnsPerAddr bound the
	// live pages (websockets) of one session, of one link and from one
	// remote address; MaxRequestsPerAddr the other requests in progress
	// from one remote address. Zero means the Default… constants.
	MaxConnsPerSession, MaxConnsPerToken, MaxConnsPerAddr, MaxRequestsPerAddr int
	// BodyGrace and BodyMinRate are the pace a request body must keep (see
	// paceBodies); zero means DefaultBodyGrace and DefaultBodyMinRate.
	BodyGrace   time.Duration
	BodyMinRate int
	// DerivedWorkers is the size of the pool that computes the heavy
	// derived results (Monte Carlo, limits) and runs the searches; zero
	// means one less than the CPUs, at least one.
	DerivedWorkers int

	// now is the clock the message buckets read (time.Now when nil); a
	// test sets it to a fake one.
	now func() time.Time
}

// Server serves the app. Create it with New.
type Server struct {
	cfg    Config
	store  Store
	log    *slog.Logger
	router http.Handler

	mu     sync.Mutex
	rooms  map[string]*room
	closed bool
	corr   corrections
	search searchJobs
	limits connLimits

	derived  *derivedCache // heavy results by session and inputs (derived.go)
	searches chan struct{} // slots of the searches running
	noise    noiseCache    // amp.go

	// appliers counts the connections' appliers still running (a test
	// waits on it for the changes a closed connection had queued).
	appliers sync.WaitGroup
}

// DefaultMaxUploadBytes is the upload limit used when Config leaves it zero.
const DefaultMaxUploadBytes = 20 << 20

// New builds the server and its router.
func New(cfg Config) *Server {
	if cfg.Log == nil {
		cfg.Log = slog.Default()
	}
	if cfg.MaxUploadBytes <= 0 {
		cfg.MaxUploadBytes = DefaultMaxUploadBytes
	}
	if cfg.MsgPerSecond <= 0 {
		cfg.MsgPerSecond = 120
	}
	if cfg.MsgBurst <= 0 {
		cfg.MsgBurst = 240
	}
	if cfg.SessionMsgPerSecond <= 0 {
		cfg.SessionMsgPerSecond = DefaultSessionMsgPerSec
	}
	if cfg.SessionMsgBurst <= 0 {
		cfg.SessionMsgBurst = DefaultSessionMsgBurst
	}
	if cfg.BodyGrace <= 0 {
		cfg.BodyGrace = DefaultBodyGrace
	}
	if cfg.BodyMinRate <= 0 {
		cfg.BodyMinRate = DefaultBodyMinRate
	}
	for _, l := range []struct {
		v   *int
		def int
	}{
		{&cfg.MaxConnsPerSession, DefaultConnsPerSession}, {&cfg.MaxConnsPerToken, DefaultConnsPerToken},
		{&cfg.MaxConnsPerAddr, DefaultConnsPerAddr}, {&cfg.MaxRequestsPerAddr, DefaultRequestsPerAddr},
	} {
		if *l.v <= 0 {
			*l.v = l.def
		}
	}
	if cfg.DerivedWorkers <= 0 {
		cfg.DerivedWorkers = defaultDerivedWorkers()
	}
	s := &Server{cfg: cfg, store: cfg.Store, log: cfg.Log, rooms: map[string]*room{}, searches: make(chan struct{}, cfg.DerivedWorkers)}
	s.derived = newDerivedCache(cfg.DerivedWorkers, s.derivedReady)
	s.router = s.routes()
	return s
}

// ServeHTTP implements http.Handler.
func (s *Server) ServeHTTP(w http.ResponseWriter, r *http.Request) { s.router.ServeHTTP(w, r) }

func (s *Server) routes() http.Handler {
	r := chi.NewRouter()
	r.Use(middleware.Recoverer)
	r.Use(s.logRequests)
	r.Use(s.limitRequests)
	r.Use(s.paceBodies)
	r.Use(securityHeaders)
	r.Handle("/static/*", http.StripPrefix("/static/", staticFiles()))
	r.Get("/", s.start)
	r.Post("/sessions", s.createSession)
	r.Post("/sessions/import", s.importArchive)
	r.Get("/open/{id}", s.openLocal)
	r.Route("/s/{token}", func(r chi.Router) {
		r.Use(s.withSession)
		r.Get("/ws", s.websocket)
		r.Post("/upload", s.upload)
		r.Post("/reissue", s.reissue)
		r.Get("/sweeps/{sweep}/file", s.rawFile)
		// The archive is read from the store, not drawn: like the raw
		// files it runs outside the drawing slot.
		r.Get("/export/session.zip", s.exportArchive)
		// What draws the session runs in its drawing slot (see sessionShare).
		r.Group(func(r chi.Router) {
			r.Use(s.drawn)
			r.Get("/", s.page)
			r.Get("/export/chart.svg", s.exportChart)
			r.Get("/export/plot-{plot}.svg", s.exportPlot)
			r.Get("/export/markers.csv", s.exportMarkers)
			r.Get("/export/matched.s1p", s.exportMatched)
			r.Get("/export/network.s2p", s.exportNetwork2)
			r.Get("/export/network.cir", s.exportNetlist)
			r.Get("/export/parts.csv", s.exportParts)
			r.Get("/export/parts.json", s.exportPartsJSON)
			r.Get("/export/schematic.svg", s.exportSchematic)
			r.Get("/export/network.json", s.exportNetworkFile)
			r.Get("/sweeps/{sweep}/corrected.{ext}", s.exportCorrected)
			r.Get("/report", s.report)
		})
	})
	// State-changing requests from other sites are refused (Go's
	// CrossOriginProtection checks Sec-Fetch-Site and Origin), and before
	// anything else a request must name this server (hostGuard).
	return s.hostGuard(http.NewCrossOriginProtection().Handler(r))
}

// staticFiles serves the app's script and styles. Folders answer 404: the
// files are listed nowhere.
func staticFiles() http.Handler {
	files := web.Static()
	srv := http.FileServerFS(files)
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		name := strings.Trim(r.URL.Path, "/")
		if name == "" {
			name = "."
		}
		if st, err := fs.Stat(files, name); err != nil || st.IsDir() {
			http.NotFound(w, r)
			return
		}
		w.Header().Set("Cache-Control", "no-cache")
		srv.ServeHTTP(w, r)
	})
}

// contentSecurityPolicy allows only the app's own script and styles; the
// SVG drawn inline uses presentation attributes, not style attributes.
const contentSecurityPolicy = "default-src 'self'; script-src 'self'; style-src 'self'; img-src 'self' data:; " +
	"connect-src 'self'; object-src 'none'; base-uri 'none'; form-action 'self'; frame-ancestors 'none'"

func securityHeaders(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		h := w.Header()
		h.Set("Content-Security-Policy", contentSecurityPolicy)
		h.Set("X-Content-Type-Options", "nosniff")
		h.Set("Referrer-Policy", "no-referrer")
		h.Set("X-Frame-Options", "DENY")
		next.ServeHTTP(w, r)
	})
}

// logRequests logs method, route pattern, status and duration, never the
// path itself, which carries a session token.
func (s *Server) logRequests(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		ww := middleware.NewWrapResponseWriter(w, r.ProtoMajor)
		t0 := time.Now()
		next.ServeHTTP(ww, r)
		route := chi.RouteContext(r.Context()).RoutePattern()
		s.log.Debug("request", "method", r.Method, "route", route, "status", ww.Status(), "dur", time.Since(t0))
	})
}

// isLoopback reports whether the request comes from this computer.
func isLoopback(r *http.Request) bool {
	host, _, err := net.SplitHostPort(r.RemoteAddr)
	if err != nil {
		host = r.RemoteAddr
	}
	ip := net.ParseIP(host)
	return ip != nil && ip.IsLoopback()
}

// Shutdown closes every websocket with a going-away message. Call it after
// http.Server.Shutdown, which does not touch hijacked connections.
func (s *Server) Shutdown() {
	s.mu.Lock()
	s.closed = true
	rooms := make([]*room, 0, len(s.rooms))
	for _, rm := range s.rooms {
		rooms = append(rooms, rm)
	}
	s.mu.Unlock()
	for _, rm := range rooms {
		rm.closeAll("server shutting down")
	}
	s.derived.close()
}
