package server

// queueUpdate queues the update of version v for c's page unless an update
// of that version or a newer one has been queued already. A page that
// (re)connects is caught up with the whole state at the session's current
// version while its room may still hold older events to deliver; without
// this the page would apply those after the catch-up, showing stale
// fragments and a version that goes back. Updates of one connection thus
// carry strictly increasing versions.
func (c *conn) queueUpdate(v int64, b []byte) {
	c.sendMu.Lock()
	defer c.sendMu.Unlock()
	if v <= c.sentV {
		return
	}
	c.sentV = v
	c.queue(b)
}

// queueRedraw queues a full update at version v that redraws the page at
// its own version or a newer one: like queueUpdate, but a page already at
// v gets it too (it brings results that were computing).
func (c *conn) queueRedraw(v int64, b []byte) {
	c.sendMu.Lock()
	defer c.sendMu.Unlock()
	if v < c.sentV {
		return
	}
	c.sentV = v
	c.queue(b)
}
