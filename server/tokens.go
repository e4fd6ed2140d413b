package server

import (
	"context"
	"encoding/json"
	"errors"
	"net/http"
	"time"

	"matchbench/sessions"
)

// reissue gives the session new edit and view links; the old ones stop
// working at once (their pages get a 404 and their live connections are
// closed with a "reload" message, so those pages reload to the 404's
// explanation). Only an edit link may do it, and only with the form's
// confirmation box ticked; the request is a POST, so the router's
// cross-origin protection refuses it from other sites. The answer
// redirects to the new edit link.
func (s *Server) reissue(w http.ResponseWriter, r *http.Request) {
	a := accessFrom(r.Context())
	if a.Cap != sessions.Edit {
		http.Error(w, "This is a view-only link: only an edit link can re-issue a session's links.", http.StatusForbidden)
		return
	}
	r.Body = http.MaxBytesReader(w, r.Body, 4096)
	if r.PostFormValue("confirm") == "" {
		http.Error(w, "Tick the confirmation box to re-issue the links: every link to this session given out so far stops working.", http.StatusBadRequest)
		return
	}
	se, err := s.store.ReissueTokens(r.Context(), a.SessionID)
	if err != nil {
		s.fail(w, r, err)
		return
	}
	s.log.Info("share links re-issued", "session", a.SessionID)
	http.Redirect(w, r, "/s/"+se.EditToken+"/", http.StatusSeeOther)
}

// ended runs when the store ends a room's subscription, which happens when
// the room fell behind (ErrOverflow), the session's links were re-issued
// (ErrTokensReissued), the session was deleted (ErrDeleted) or the store
// closed (ErrClosed). The room leaves the server's map first, so a page
// that connects from now on gets a fresh room, and then closes every
// connection it had:
//
//	fell behind       close "fell behind; reloading": the page reconnects
//	                  and catches up from its version
//	links re-issued,  a "reload" message, then close: the page reloads and
//	session deleted   its old link answers 404 with an explanation
//	store closed      close "server shutting down"
//
// A subscription the room closed itself (its last page left) needs nothing.
func (rm *room) ended() {
	reason := rm.sub.Reason()
	if reason == nil {
		return
	}
	rm.s.mu.Lock()
	if rm.s.rooms[rm.sid] == rm {
		delete(rm.s.rooms, rm.sid)
	}
	rm.s.mu.Unlock()
	switch {
	case errors.Is(reason, sessions.ErrOverflow):
		rm.closeAll("fell behind; reloading")
	case errors.Is(reason, sessions.ErrTokensReissued):
		for _, c := range rm.snapshot() {
			c.closeReload("the links of this session were re-issued")
		}
	case errors.Is(reason, sessions.ErrDeleted):
		rm.s.derived.forget(rm.sid)
		for _, c := range rm.snapshot() {
			c.closeReload("this session was deleted")
		}
	default:
		rm.closeAll("server shutting down")
	}
}

// closeReload closes c after sending the page a "reload" message, so that
// the page reloads (and learns from the page load why) instead of
// reconnecting.
func (c *conn) closeReload(reason string) {
	b, _ := json.Marshal(outMsg{Type: "reload", Msg: reason})
	c.mu.Lock()
	if !c.closed {
		c.final = b
	}
	c.mu.Unlock()
	c.close(reason)
}

// tokenRevoked reports whether the token a connection was opened with no
// longer opens its session. The websocket handler asks after joining the
// room: a re-issue that ran between the token's check and the room's
// subscription would otherwise leave a connection on an old link alive.
func (s *Server) tokenRevoked(a access) bool {
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
	defer cancel()
	sid, _, err := s.store.ByToken(ctx, a.Token)
	return errors.Is(err, sessions.ErrNotFound) || (err == nil && sid != a.SessionID)
}
