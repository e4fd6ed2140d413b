package server

import (
	"fmt"
	"net"
	"net/http"
	"strings"
)

// hostGuard refuses every request (pages, forms, uploads, exports, static
// files and the websocket upgrade alike) whose Host header does not name
// this server. It is the defence against DNS rebinding: a web page whose
// own host name has been made to resolve to this computer reaches the
// server from the user's browser as a "same-origin" page, with its own
// name in the Host header. Such a request is answered 421 (Misdirected
// Request) before any handler runs, so it can read no session list, no
// redirect with a token and no page, and cannot open a websocket.
//
// A request is served when its Host, with the port taken as 80 when it has
// none, is
//
//	localhost, or a loopback IP literal (127.0.0.0/8, ::1), with the port
//	    the connection arrived on;
//	the IP literal of the local address the connection arrived on, with its
//	    port (an IP literal cannot be rebound to another computer);
//	one of Config.ShareHosts (the addresses the server prints for the lab
//	    network) or Config.Hosts, compared without regard to case.
//
// A request without the local address in its context (one that did not
// come through net/http's server) is refused.
func (s *Server) hostGuard(next http.Handler) http.Handler {
	extra := map[string]bool{}
	for _, h := range append(append([]string(nil), s.cfg.ShareHosts...), s.cfg.Hosts...) {
		if name, port, ok := splitHost(h); ok {
			extra[name+":"+port] = true
		}
	}
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if !s.hostAllowed(r, extra) {
			refuseHost(w, r.Host)
			return
		}
		next.ServeHTTP(w, r)
	})
}

// hostAllowed applies hostGuard's rule; extra holds the configured
// "name:port" pairs, lower case.
func (s *Server) hostAllowed(r *http.Request, extra map[string]bool) bool {
	name, port, ok := splitHost(r.Host)
	if !ok {
		return false
	}
	if extra[name+":"+port] {
		return true
	}
	local, _ := r.Context().Value(http.LocalAddrContextKey).(net.Addr)
	if local == nil {
		return false
	}
	lhost, lport, err := net.SplitHostPort(local.String())
	if err != nil || lport != port {
		return false
	}
	if name == "localhost" {
		return true
	}
	ip := net.ParseIP(strings.Trim(name, "[]"))
	if ip == nil {
		return false // a DNS name other than localhost
	}
	return ip.IsLoopback() || ip.Equal(net.ParseIP(lhost))
}

// splitHost splits a Host header (or a configured host) into a lower-case
// name, brackets kept off IPv6 literals, and a port ("80" when absent). A
// trailing dot on the name is dropped ("localhost." is localhost).
func splitHost(h string) (name, port string, ok bool) {
	if h == "" || len(h) > 300 {
		return "", "", false
	}
	name, port = h, "80"
	if strings.HasPrefix(h, "[") || strings.Count(h, ":") == 1 {
		if n, p, err := net.SplitHostPort(h); err == nil {
			name, port = n, p
		} else if !strings.HasPrefix(h, "[") || !strings.HasSuffix(h, "]") {
			return "", "", false
		} else {
			name = strings.Trim(h, "[]")
		}
	}
	name = strings.TrimSuffix(strings.ToLower(name), ".")
	if name == "" || port == "" {
		return "", "", false
	}
	if ip := net.ParseIP(name); ip != nil {
		name = ip.String() // one spelling of each address
	}
	return name, port, true
}

// refuseHost answers a request for a host this server is not.
func refuseHost(w http.ResponseWriter, host string) {
	w.Header().Set("Content-Type", "text/plain; charset=utf-8")
	w.Header().Set("X-Content-Type-Options", "nosniff")
	w.Header().Set("Cache-Control", "no-store")
	w.WriteHeader(http.StatusMisdirectedRequest)
	fmt.Fprintf(w, "matchbench refused this request: it was addressed to %s, which is not a name this server answers to.\n\n"+
		"It answers to localhost, 127.0.0.1 and [::1] on its own port, and to the addresses it printed for the lab network when it started. "+
		"A web page that makes its own name point at this computer could otherwise read and change the bench sessions.\n\n"+
		"Open the server at an address it printed, or start it with --host NAME to answer to another name too.\n",
		quoteClipped(host, 100))
}
