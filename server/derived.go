package server

import (
	"container/list"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"runtime"
	"sync"
)

// Bounds of the derived-results cache.
const (
	derivedMaxEntries = 256
	derivedMaxBytes   = 64 << 20
)

// derivedKey names one derived result: its session, its kind ("yield",
// "limits") and a digest of exactly the inputs it is computed from, so
// that a change which leaves them alone (a marker moved, a sweep
// recoloured) finds the result already there, and one that changes them
// asks for a new one.
type derivedKey struct {
	sid, kind, inputs string
}

// digest returns the hex SHA-256 of v's JSON: the inputs part of a key.
func digest(v any) string {
	b, err := json.Marshal(v)
	if err != nil {
		panic("server: digest of unencodable inputs: " + err.Error())
	}
	h := sha256.Sum256(b)
	return hex.EncodeToString(h[:])
}

// derivedJob computes one derived result under ctx and returns it with an
// estimate of its size in bytes.
type derivedJob func(ctx context.Context) (val any, bytes int64)

// derivedCache computes a session's heavy derived results (the Monte Carlo
// of the active network, the Bode–Fano and Chu limits) once per change of
// their inputs, in a fixed pool of workers, and keeps them for every
// reader. A read never computes: it gets the result when it is ready, or
// else queues the job (once) and shows that it is computing; when the job
// is done the session's pages are redrawn with it (notify).
//
// Jobs are taken round robin by session, so one session's queue never
// holds another's back by more than the job in hand. A session keeps at
// most one queued and one running job of each kind: a newer job of the
// same kind (a part dragged through many values) replaces the queued one
// and cancels the running one, whose result nobody will read. Finished
// results are kept within maxEntries and maxBytes (derivedMaxEntries and
// derivedMaxBytes), least recently read out first.
type derivedCache struct {
	notify     func(sid string) // called, without d.mu, when a result of sid is ready
	maxEntries int
	maxBytes   int64

	mu       sync.Mutex
	entries  map[derivedKey]*derivedEntry
	lru      list.List // finished entries, most recently read at the front
	bytes    int64
	queues   map[string][]*derivedEntry // queued jobs by session, oldest first
	order    []string                   // sessions with queued jobs, in turn
	running  map[[2]string]*derivedEntry
	wake     chan struct{}
	ctx      context.Context
	stop     context.CancelFunc
	workers  sync.WaitGroup
	computed int // jobs finished, for tests and logs
}

// derivedEntry is one result, queued, running or finished.
type derivedEntry struct {
	key    derivedKey
	job    derivedJob
	done   bool
	val    any
	bytes  int64
	el     *list.Element // in lru once done
	cancel context.CancelFunc
}

// newDerivedCache starts workers workers (at least one); notify is told
// when a session's result is ready.
func newDerivedCache(workers int, notify func(sid string)) *derivedCache {
	ctx, stop := context.WithCancel(context.Background())
	d := &derivedCache{
		notify: notify, maxEntries: derivedMaxEntries, maxBytes: derivedMaxBytes, entries: map[derivedKey]*derivedEntry{}, queues: map[string][]*derivedEntry{},
		running: map[[2]string]*derivedEntry{}, wake: make(chan struct{}, 1), ctx: ctx, stop: stop,
	}
	for range max(workers, 1) {
		d.workers.Add(1)
		go d.work()
	}
	return d
}

// defaultDerivedWorkers leaves a core for the pages: one worker on two
// cores.
func defaultDerivedWorkers() int { return max(1, runtime.NumCPU()-1) }

// get returns the result of key when it is ready. Otherwise it queues job
// for key (unless it is queued or running already) and reports false.
func (d *derivedCache) get(key derivedKey, job derivedJob) (any, bool) {
	d.mu.Lock()
	defer d.mu.Unlock()
	if e := d.entries[key]; e != nil {
		if e.done {
			d.lru.MoveToFront(e.el)
			return e.val, true
		}
		return nil, false
	}
	if d.ctx.Err() != nil {
		return nil, false // closed
	}
	kind := [2]string{key.sid, key.kind}
	// The session's queued job of this kind is stale now, and so is the
	// running one.
	q := d.queues[key.sid]
	for i, e := range q {
		if e.key.kind == key.kind {
			delete(d.entries, e.key)
			q = append(q[:i:i], q[i+1:]...)
			break
		}
	}
	if r := d.running[kind]; r != nil {
		r.cancel()
	}
	e := &derivedEntry{key: key, job: job}
	d.entries[key] = e
	if !containsString(d.order, key.sid) {
		d.order = append(d.order, key.sid)
	}
	d.queues[key.sid] = append(q, e)
	select {
	case d.wake <- struct{}{}:
	default:
	}
	return nil, false
}

func containsString(s []string, v string) bool {
	for _, x := range s {
		if x == v {
			return true
		}
	}
	return false
}

// next takes the next job, round robin by session, or nil.
func (d *derivedCache) next() *derivedEntry {
	for len(d.order) > 0 {
		sid := d.order[0]
		d.order = d.order[1:]
		q := d.queues[sid]
		if len(q) == 0 {
			delete(d.queues, sid)
			continue
		}
		e := q[0]
		if len(q) > 1 {
			d.queues[sid] = q[1:]
			d.order = append(d.order, sid) // its turn comes again
		} else {
			delete(d.queues, sid)
		}
		return e
	}
	return nil
}

func (d *derivedCache) work() {
	defer d.workers.Done()
	for {
		d.mu.Lock()
		e := d.next()
		if e == nil {
			d.mu.Unlock()
			select {
			case <-d.wake:
				continue
			case <-d.ctx.Done():
				return
			}
		}
		kind := [2]string{e.key.sid, e.key.kind}
		ctx, cancel := context.WithCancel(d.ctx)
		e.cancel = cancel
		d.running[kind] = e
		d.mu.Unlock()
		// More jobs may be waiting: let another worker look.
		select {
		case d.wake <- struct{}{}:
		default:
		}

		val, n := e.job(ctx)
		stale := ctx.Err() != nil
		cancel()

		d.mu.Lock()
		if d.running[kind] == e {
			delete(d.running, kind)
		}
		if stale || d.entries[e.key] != e {
			// Replaced or closed meanwhile: the result is not wanted.
			if d.entries[e.key] == e {
				delete(d.entries, e.key)
			}
			d.mu.Unlock()
			continue
		}
		e.done, e.val, e.bytes, e.job = true, val, n, nil
		e.el = d.lru.PushFront(e)
		d.bytes += n
		d.computed++
		d.evict()
		d.mu.Unlock()
		if d.notify != nil {
			d.notify(e.key.sid)
		}
	}
}

// evict drops the least recently read finished results while the cache
// is over its bounds. d.mu is held.
func (d *derivedCache) evict() {
	for d.lru.Len() > 0 && (d.lru.Len() > d.maxEntries || d.bytes > d.maxBytes) {
		e := d.lru.Remove(d.lru.Back()).(*derivedEntry)
		delete(d.entries, e.key)
		d.bytes -= e.bytes
	}
}

// forget drops every result and job of session sid (its links were
// re-issued, or it was deleted).
func (d *derivedCache) forget(sid string) {
	d.mu.Lock()
	defer d.mu.Unlock()
	for k, e := range d.entries {
		if k.sid != sid {
			continue
		}
		if e.done {
			d.lru.Remove(e.el)
			d.bytes -= e.bytes
		}
		delete(d.entries, k)
	}
	delete(d.queues, sid)
	for k, e := range d.running {
		if k[0] == sid {
			e.cancel()
		}
	}
}

// close cancels the running jobs, drops the queued ones and waits for the
// workers to stop.
func (d *derivedCache) close() {
	d.stop()
	d.workers.Wait()
}
