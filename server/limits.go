package server

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io"
	"net"
	"net/http"
	"os"
	"sync"
	"time"

	"github.com/gorilla/websocket"
	"golang.org/x/time/rate"
)

// Defaults of the limits that Config leaves zero.
const (
	DefaultConnsPerSession  = 64  // live pages (websockets) of one session
	DefaultConnsPerToken    = 16  // live pages opened with one link
	DefaultConnsPerAddr     = 32  // live pages from one computer
	DefaultRequestsPerAddr  = 16  // other requests in progress from one computer
	DefaultSessionMsgPerSec = 240 // messages a second into one session, all its pages together
	DefaultSessionMsgBurst  = 480
	catchUpCost             = 8 // a hello may redraw the whole page: it counts as this many messages
)

// connLimits counts the live websockets by session, by link (token) and by
// remote address, and the other requests in progress by remote address;
// it holds each session's share.
type connLimits struct {
	mu       sync.Mutex
	session  map[string]int
	token    map[string]int
	addr     map[string]int
	requests map[string]int
	shares   map[string]*sessionShare
}

// limitError is a refusal for going over a limit, with its status.
type limitError struct {
	status int
	msg    string
}

func (e *limitError) Error() string { return e.msg }

// remoteIP is the address a request came from, without its port.
func remoteIP(r *http.Request) string {
	host, _, err := net.SplitHostPort(r.RemoteAddr)
	if err != nil {
		return r.RemoteAddr
	}
	return host
}

// admitConn counts a new websocket of session sid opened with token from
// addr, or refuses it when one of the three caps is reached. The returned
// function uncounts it.
func (s *Server) admitConn(sid, token, addr string) (release func(), err error) {
	l := &s.limits
	l.mu.Lock()
	defer l.mu.Unlock()
	if l.session == nil {
		l.session, l.token, l.addr = map[string]int{}, map[string]int{}, map[string]int{}
	}
	switch {
	case l.session[sid] >= s.cfg.MaxConnsPerSession:
		return nil, &limitError{http.StatusTooManyRequests, fmt.Sprintf(
			"This session already has %d live pages open, its limit; close some of its pages or tabs and reload.", s.cfg.MaxConnsPerSession)}
	case l.token[token] >= s.cfg.MaxConnsPerToken:
		return nil, &limitError{http.StatusTooManyRequests, fmt.Sprintf(
			"This link already has %d live pages open, its limit; close some of its pages or tabs and reload.", s.cfg.MaxConnsPerToken)}
	case l.addr[addr] >= s.cfg.MaxConnsPerAddr:
		return nil, &limitError{http.StatusTooManyRequests, fmt.Sprintf(
			"Your computer already has %d live pages of this server open, its limit; close some of them and reload.", s.cfg.MaxConnsPerAddr)}
	}
	l.session[sid]++
	l.token[token]++
	l.addr[addr]++
	var once sync.Once
	return func() {
		once.Do(func() {
			l.mu.Lock()
			defer l.mu.Unlock()
			dec(l.session, sid)
			dec(l.token, token)
			dec(l.addr, addr)
		})
	}, nil
}

// dec lowers m[k] by one, deleting it at zero.
func dec(m map[string]int, k string) {
	if m[k] <= 1 {
		delete(m, k)
	} else {
		m[k]--
	}
}

// limitRequests refuses a request (other than a websocket upgrade, which
// admitConn counts) when its remote address already has
// Config.MaxRequestsPerAddr requests in progress: slow uploads from one
// computer cannot take every handler.
func (s *Server) limitRequests(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if websocket.IsWebSocketUpgrade(r) {
			next.ServeHTTP(w, r)
			return
		}
		addr := remoteIP(r)
		l := &s.limits
		l.mu.Lock()
		if l.requests == nil {
			l.requests = map[string]int{}
		}
		if l.requests[addr] >= s.cfg.MaxRequestsPerAddr {
			l.mu.Unlock()
			w.Header().Set("Retry-After", "1")
			http.Error(w, fmt.Sprintf("Your computer already has %d requests in progress here, the limit; wait for them to finish.", s.cfg.MaxRequestsPerAddr), http.StatusTooManyRequests)
			return
		}
		l.requests[addr]++
		l.mu.Unlock()
		defer func() {
			l.mu.Lock()
			dec(l.requests, addr)
			l.mu.Unlock()
		}()
		next.ServeHTTP(w, r)
	})
}

// sessionShare is one session's fair share of the server: every session
// gets the same, however many pages its links open.
//
//   - msgs: a token bucket of Config.SessionMsgPerSecond (bursts of
//     SessionMsgBurst) that every page of the session draws from, on top of
//     each page's own. Messages over it are refused at the cost of decoding
//     them.
//   - draw: one slot for the session's drawing (building a scene and
//     rendering it: the room's updates, catch-ups, page loads, exports and
//     the forms that need the scene). A session's drawing runs one at a time,
//     so a session flooded with requests to redraw keeps at most one core
//     busy with them and the other sessions keep the rest.
type sessionShare struct {
	mu   sync.Mutex
	msgs *rate.Limiter
	draw chan struct{}
}

// share returns session sid's share, created on first use. Sessions are
// only ever those the store knows (a token was resolved), so the map stays
// as small as the store.
func (s *Server) share(sid string) *sessionShare {
	l := &s.limits
	l.mu.Lock()
	defer l.mu.Unlock()
	if l.shares == nil {
		l.shares = map[string]*sessionShare{}
	}
	sh := l.shares[sid]
	if sh == nil {
		sh = &sessionShare{msgs: newLimiter(s.cfg.SessionMsgPerSecond, s.cfg.SessionMsgBurst), draw: make(chan struct{}, 1)}
		l.shares[sid] = sh
	}
	return sh
}

// take takes n message tokens at time now, or none and reports false.
func (sh *sessionShare) take(now time.Time, n int) bool {
	sh.mu.Lock()
	defer sh.mu.Unlock()
	return sh.msgs.AllowN(now, n)
}

// drawing waits for the session's drawing slot, or for ctx to end (then it
// reports false). The caller calls done when it has drawn.
func (sh *sessionShare) drawing(ctx context.Context) bool {
	select {
	case sh.draw <- struct{}{}:
		return true
	case <-ctx.Done():
		return false
	}
}

func (sh *sessionShare) done() { <-sh.draw }

// drawn runs the handler of a drawing request (a session page, an export,
// the report) in its session's drawing slot, with the answer collected in
// memory and sent once the slot is free again: a client that reads slowly
// does not hold the session's drawing.
func (s *Server) drawn(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		sh := s.share(accessFrom(r.Context()).SessionID)
		if !sh.drawing(r.Context()) {
			return // the client went away
		}
		var buf bufferedResponse
		buf.header = w.Header()
		func() {
			defer sh.done()
			next.ServeHTTP(&buf, r)
		}()
		if buf.status == 0 {
			buf.status = http.StatusOK
		}
		w.WriteHeader(buf.status)
		w.Write(buf.body.Bytes())
	})
}

// bufferedResponse is an http.ResponseWriter that keeps the answer.
type bufferedResponse struct {
	header http.Header
	status int
	body   bytes.Buffer
}

func (b *bufferedResponse) Header() http.Header { return b.header }
func (b *bufferedResponse) WriteHeader(status int) {
	if b.status == 0 {
		b.status = status
	}
}
func (b *bufferedResponse) Write(p []byte) (int, error) {
	if b.status == 0 {
		b.status = http.StatusOK
	}
	return b.body.Write(p)
}

// Defaults of the pace a request body must keep.
const (
	DefaultBodyGrace   = 10 * time.Second
	DefaultBodyMinRate = 16 << 10 // bytes a second
)

// errTooSlow is the read error of a request body that fell below its pace.
var errTooSlow = errors.New("the request body arrived too slowly")

// paceBodies holds every request body (an upload, a form) to a pace: after
// Config.BodyGrace it must have averaged Config.BodyMinRate bytes a second
// since the request began, and it may never pause for longer than
// BodyGrace. A body that falls behind is cut off (its reads fail with
// errTooSlow), so trickling uploads cannot hold handlers and connections
// open. The pace is kept with the connection's read deadline, moved on at
// every read.
func (s *Server) paceBodies(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if r.Body == nil || r.Body == http.NoBody || r.ContentLength == 0 {
			next.ServeHTTP(w, r)
			return
		}
		rc := http.NewResponseController(w)
		p := &pacedBody{body: r.Body, rc: rc, hdr: w.Header(), start: time.Now(), grace: s.cfg.BodyGrace, rate: float64(s.cfg.BodyMinRate)}
		if rc.SetReadDeadline(p.start.Add(p.grace)) != nil {
			next.ServeHTTP(w, r) // no deadlines on this connection: an HTTP/2 stream or a test recorder
			return
		}
		r.Body = p
		next.ServeHTTP(w, r)
		if !p.cut {
			rc.SetReadDeadline(time.Time{})
		}
		// A body cut off stays so: the deadline stays past, and the
		// answer closes the connection instead of waiting for the rest.
	})
}

// pacedBody is a request body held to a pace; see paceBodies.
type pacedBody struct {
	body  io.ReadCloser
	rc    *http.ResponseController
	start time.Time
	grace time.Duration
	rate  float64 // bytes a second
	n     int64
	hdr   http.Header
	cut   bool
}

func (p *pacedBody) Read(b []byte) (int, error) {
	n, err := p.body.Read(b)
	p.n += int64(n)
	if err != nil && errors.Is(err, os.ErrDeadlineExceeded) {
		p.cut = true
		p.hdr.Set("Connection", "close")
		return n, fmt.Errorf("%w: %d bytes in %v", errTooSlow, p.n, time.Since(p.start).Round(time.Millisecond))
	}
	if n > 0 {
		due := p.start.Add(p.grace + time.Duration(float64(p.n)/p.rate*float64(time.Second)))
		p.rc.SetReadDeadline(minTime(due, time.Now().Add(p.grace)))
	}
	return n, err
}

func (p *pacedBody) Close() error { return p.body.Close() }

func minTime(a, b time.Time) time.Time {
	if a.Before(b) {
		return a
	}
	return b
}
