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
