package cli

import (
	"bytes"
	"context"
	"net"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// A server that cannot listen (the port is taken) stops before it touches
// the data folder: no folder, no database, no demo sessions are left behind.
func TestServeBusyPortCreatesNothing(t *testing.T) {
	t.Parallel()
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	defer ln.Close()
	data := filepath.Join(t.TempDir(), "data")
	var out, errb bytes.Buffer
	code := Run(context.Background(), []string{"serve", "--listen", ln.Addr().String(), "--data", data}, &out, &errb)
	if code != exitInput {
		t.Fatalf("exit code %d, want %d; stderr %q", code, exitInput, errb.String())
	}
	if msg := errb.String(); !strings.Contains(msg, "already in use") || !strings.Contains(msg, "--listen") {
		t.Errorf("message %q does not say the port is busy and what to do", msg)
	}
	if _, err := os.Stat(data); !os.IsNotExist(err) {
		t.Errorf("the data folder exists after the failed start (stat: %v)", err)
	}
}

// --host takes host names only.
func TestServeHostFlag(t *testing.T) {
	t.Parallel()
	for _, bad := range []string{"", "http://bench-pc", "bench pc", "user@bench-pc"} {
		var out, errb bytes.Buffer
		code := Run(context.Background(), []string{"serve", "--host", bad, "--data", t.TempDir()}, &out, &errb)
		if code != exitUsage || !strings.Contains(errb.String(), "--host") {
			t.Errorf("--host %q: exit %d, stderr %q; want a usage error naming --host", bad, code, errb.String())
		}
	}
	for _, tc := range []struct{ in, want string }{
		{"bench-pc.lab", "bench-pc.lab:8080"},
		{"bench-pc.lab:9000", "bench-pc.lab:9000"},
		{"[fd00::5]", "[fd00::5]:8080"},
	} {
		if got := withPort(tc.in, 8080); got != tc.want {
			t.Errorf("withPort(%q) = %q, want %q", tc.in, got, tc.want)
		}
	}
}
