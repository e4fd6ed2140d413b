package server

import (
	"context"
	"io"
	"net"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"

	"github.com/gorilla/websocket"

	"matchbench/sessions"
)

// requestAs sends method path to the fixture's server with the Host header
// set to host, not following redirects.
func requestAs(t *testing.T, f *fixture, method, path, host string, body io.Reader) (*http.Response, string) {
	t.Helper()
	req, err := http.NewRequest(method, f.ts.URL+path, body)
	if err != nil {
		t.Fatal(err)
	}
	req.Host = host
	if body != nil {
		req.Header.Set("Content-Type", "application/x-www-form-urlencoded")
	}
	cl := &http.Client{CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse }}
	res, err := cl.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer res.Body.Close()
	b, _ := io.ReadAll(res.Body)
	return res, string(b)
}

// A page whose own name was made to resolve to 127.0.0.1 (DNS rebinding)
// sends its own name as Host. Every route refuses it with 421 and says why,
// and nothing of a session leaks: no list, no redirect with a token, no
// websocket.
func TestForgedHostRefused(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 11)
	port := f.ts.Listener.Addr().(*net.TCPAddr).Port
	rebound := "rebind.example:" + itoa(port) // the attacker's name, on our port
	cases := []struct {
		name, method, path string
		body               string
	}{
		{"start page", "GET", "/", ""},
		{"session page", "GET", "/s/" + f.sess.EditToken + "/", ""},
		{"open by id (redirect to the edit link)", "GET", "/open/" + f.sess.ID, ""},
		{"open by id, view", "GET", "/open/" + f.sess.ID + "?view=1", ""},
		{"new session", "POST", "/sessions", "name=x"},
		{"re-issue", "POST", "/s/" + f.sess.EditToken + "/reissue", "confirm=1"},
		{"raw file", "GET", "/s/" + f.sess.EditToken + "/sweeps/" + f.sweep + "/file", ""},
		{"corrected sweep", "GET", "/s/" + f.sess.EditToken + "/sweeps/" + f.sweep + "/corrected.csv", ""},
		{"session archive", "GET", "/s/" + f.sess.EditToken + "/export/session.zip", ""},
		{"import an archive", "POST", "/sessions/import", "archive=x"},
		{"report", "GET", "/s/" + f.sess.EditToken + "/report", ""},
		{"parts list", "GET", "/s/" + f.sess.EditToken + "/export/parts.json", ""},
		{"schematic", "GET", "/s/" + f.sess.EditToken + "/export/schematic.svg", ""},
		{"static", "GET", "/static/app.js", ""},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			var body io.Reader
			if tc.body != "" {
				body = strings.NewReader(tc.body)
			}
			res, text := requestAs(t, f, tc.method, tc.path, rebound, body)
			if res.StatusCode != http.StatusMisdirectedRequest {
				t.Fatalf("status %d, want 421", res.StatusCode)
			}
			if loc := res.Header.Get("Location"); loc != "" {
				t.Errorf("redirected to %q", loc)
			}
			for _, secret := range []string{f.sess.EditToken, f.sess.ViewToken, "bench test"} {
				if strings.Contains(text, secret) {
					t.Errorf("the refusal shows %q", secret)
				}
			}
			if !strings.Contains(text, `"rebind.example:`) || !strings.Contains(text, "not a name this server answers to") {
				t.Errorf("the refusal does not say why: %q", text)
			}
		})
	}
	// The session and its links are as they were.
	if _, err := f.store.Get(context.Background(), f.sess.ID); err != nil {
		t.Fatal(err)
	}
	if code, _ := get(t, f.ts.URL+"/s/"+f.sess.EditToken+"/"); code != 200 {
		t.Errorf("the edit link answers %d after the refusals", code)
	}
}

// The websocket upgrade with a forged Host is refused too, even with the
// Origin that a rebound page sends (its own name, equal to the Host).
func TestForgedHostWebsocket(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 11)
	rebound := "rebind.example:" + itoa(f.ts.Listener.Addr().(*net.TCPAddr).Port)
	url := "ws" + strings.TrimPrefix(f.ts.URL, "http") + "/s/" + f.sess.EditToken + "/ws"
	c, res, err := websocket.DefaultDialer.Dial(url, http.Header{"Host": {rebound}, "Origin": {"http://" + rebound}})
	if err == nil {
		c.Close()
		t.Fatal("websocket opened with a forged Host")
	}
	if res == nil || res.StatusCode != http.StatusMisdirectedRequest {
		t.Errorf("websocket with a forged Host: %v, %v; want 421", err, res)
	}
}

// The names the server does answer to.
func TestHostAllowList(t *testing.T) {
	t.Parallel()
	f := newFixtureOpts(t, 11, sessions.Options{}, func(c *Config) {
		c.ShareHosts = []string{"192.0.2.7:8080"} // TEST-NET-1 (RFC 5737)
		c.Hosts = []string{"Bench-PC.lab.example:8080"}
	})
	port := itoa(f.ts.Listener.Addr().(*net.TCPAddr).Port)
	cases := []struct {
		host string
		ok   bool
	}{
		{"127.0.0.1:" + port, true},
		{"localhost:" + port, true},
		{"LOCALHOST.:" + port, true},
		{"[::1]:" + port, true},
		{"127.1.2.3:" + port, true},         // all of 127.0.0.0/8 is loopback
		{"192.0.2.7:8080", true},            // a printed share address
		{"bench-pc.lab.example:8080", true}, // --host, any case
		{"localhost", false},                // port 80 is not ours
		{"localhost:1", false},
		{"127.0.0.1:" + port + "0", false},
		{"192.0.2.7:" + port, false}, // a share address on another port
		{"bench-pc.lab.example:" + port, false},
		{"localhost.rebind.example:" + port, false},
		{"127.0.0.1.rebind.example:" + port, false},
		{"0x7f000001:" + port, false}, // not an IP literal Go parses; a DNS name
		{"[::1:" + port, false},
	}
	for _, tc := range cases {
		res, _ := requestAs(t, f, "GET", "/static/app.css", tc.host, nil)
		if got := res.StatusCode == http.StatusOK; got != tc.ok {
			t.Errorf("Host %q: status %d, want served %v", tc.host, res.StatusCode, tc.ok)
		}
	}
}

// A request that did not arrive through net/http's server has no local
// address to check its port against: it is refused.
func TestHostWithoutLocalAddress(t *testing.T) {
	t.Parallel()
	f := newFixture(t, 11)
	req := httptest.NewRequest("GET", "/", nil)
	req.Host = "127.0.0.1:8080"
	rec := httptest.NewRecorder()
	f.srv.ServeHTTP(rec, req)
	if rec.Code != http.StatusMisdirectedRequest {
		t.Errorf("status %d, want 421", rec.Code)
	}
}
