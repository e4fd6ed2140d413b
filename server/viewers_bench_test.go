package server

import (
	"bytes"
	"fmt"
	"io"
	"strconv"
	"testing"
	"time"

	"github.com/gorilla/websocket"

	"matchbench/sessions"
)

// BenchmarkDragViewers measures one marker drag on a 10,001-point sweep
// over real websockets on the loopback interface, with 0 or 20 viewers
// subscribed: from the editor sending the move until the editor has its
// acknowledgement AND every viewer has received the update. It includes
// the server's whole work (read, decode, snap, commit, render once per
// capability, encode, fan-out to every connection's writer) and the
// loopback round trips; the clients only look at the head of each message.
func BenchmarkDragViewers(b *testing.B) {
	for _, nv := range []int{0, 20} {
		b.Run(fmt.Sprintf("viewers=%d", nv), func(b *testing.B) {
			f := newFixture(b, 10001)
			// The token bucket guards against a flooding page; the benchmark
			// is that page on purpose.
			f.srv.cfg.MsgPerSecond, f.srv.cfg.MsgBurst = 1e9, 1e9
			f.srv.cfg.SessionMsgPerSecond, f.srv.cfg.SessionMsgBurst = 1e9, 1e9
			f.srv.cfg.MaxConnsPerToken = 1000
			ed := wsDial(b, f, f.sess.EditToken)
			benchHello(b, ed)
			seen := make([]chan int64, nv)
			for i := range nv {
				c := wsDial(b, f, f.sess.ViewToken)
				benchHello(b, c)
				seen[i] = make(chan int64, 1<<16)
				go benchWatch(c, seen[i])
			}
			b.ReportAllocs()
			b.ResetTimer()
			var id int64
			for b.Loop() {
				id++
				g := sessions.Point{Re: -0.5 - 0.3*float64(id%2), Im: -0.1}
				msg := inMsg{Type: "change", ID: id, Change: &sessions.Change{Op: sessions.OpMarkerMove, MarkerID: f.mk, Gamma: &g, Gesture: "g"}}
				if err := ed.WriteJSON(msg); err != nil {
					b.Fatal(err)
				}
				v := benchAwaitAck(b, ed, id)
				for _, ch := range seen {
					benchAwaitVersion(b, ch, v)
				}
			}
		})
	}
}

// benchHello subscribes c and waits until the server has answered its catch-up.
func benchHello(b *testing.B, c *websocket.Conn) {
	b.Helper()
	if err := c.WriteJSON(inMsg{Type: "hello", V: 0}); err != nil {
		b.Fatal(err)
	}
	readUntil(b, c, func(m outMsg) bool { return m.Type == "update" && m.Op == "catchup" })
}

// benchWatch reads c until it closes and sends the version of every update.
// It lifts the read deadline that readUntil left on c: the benchmark may
// run for longer than that.
func benchWatch(c *websocket.Conn, ch chan<- int64) {
	defer close(ch)
	c.SetReadDeadline(time.Time{})
	// A browser on another computer does this reading; here it shares the
	// server's two cores, so it reads only the head of each message into a
	// reused buffer and discards the rest without keeping a copy.
	head := make([]byte, 64)
	for {
		_, r, err := c.NextReader()
		if err != nil {
			return
		}
		n, _ := io.ReadFull(r, head)
		if _, err := io.Copy(io.Discard, r); err != nil {
			return
		}
		if typ, _, v := benchHead(head[:n]); typ == "update" {
			ch <- v
		}
	}
}

func benchAwaitAck(b *testing.B, c *websocket.Conn, id int64) int64 {
	c.SetReadDeadline(time.Now().Add(10 * time.Second))
	for {
		_, data, err := c.ReadMessage()
		if err != nil {
			b.Fatalf("no ack of %d: %v", id, err)
		}
		switch typ, got, v := benchHead(data); typ {
		case "ack":
			if got == id {
				return v
			}
		case "error":
			b.Fatalf("drag %d: %s", id, data)
		}
	}
}

func benchAwaitVersion(b *testing.B, ch <-chan int64, v int64) {
	t := time.NewTimer(10 * time.Second)
	defer t.Stop()
	for {
		select {
		case got, ok := <-ch:
			if !ok {
				b.Fatal("a viewer's connection closed")
			}
			if got >= v {
				return
			}
		case <-t.C:
			b.Fatalf("a viewer did not get version %d", v)
		}
	}
}

// benchHead reads the type, id and version at the start of an outMsg without
// decoding its fragments: the encoder writes "type" first, then "id" and
// "v" when set, before any fragment.
func benchHead(data []byte) (typ string, id, v int64) {
	rest, ok := bytes.CutPrefix(data, []byte(`{"type":"`))
	if !ok {
		return "", 0, 0
	}
	end := bytes.IndexByte(rest, '"')
	if end < 0 {
		return "", 0, 0
	}
	typ, rest = string(rest[:end]), rest[end+1:]
	num := func(key string) int64 {
		k := []byte(`,"` + key + `":`)
		if !bytes.HasPrefix(rest, k) {
			return 0
		}
		rest = rest[len(k):]
		n := 0
		for n < len(rest) && rest[n] >= '0' && rest[n] <= '9' {
			n++
		}
		x, _ := strconv.ParseInt(string(rest[:n]), 10, 64)
		rest = rest[n:]
		return x
	}
	id = num("id")
	v = num("v")
	return typ, id, v
}
