package status

import (
	"bytes"
	"encoding/json"
	"errors"
	"net/http"
	"strconv"
	"time"
)

// client is one open /api/events stream.
type client struct {
	ch chan []byte // encoded SSE messages; closed when the client is dropped
}

// maxBatch bounds how many queued messages one flush carries.
const maxBatch = 64

// encodeMessage formats one SSE message. v is encoded as one line of JSON
// (encoding/json never emits raw newlines), so a single data: field holds it.
func encodeMessage(event string, id uint64, v any) []byte {
	data, err := json.Marshal(v)
	if err != nil {
		// Our own types always encode; a failure is a programming error, but a
		// broken message must not take the page down: send it as a visible event.
		data, _ = json.Marshal(map[string]string{"error": err.Error()})
		event = "error"
	}
	var b bytes.Buffer
	b.Grow(len(data) + 48)
	b.WriteString("id: ")
	b.WriteString(strconv.FormatUint(id, 10))
	b.WriteString("\nevent: ")
	b.WriteString(event)
	b.WriteString("\ndata: ")
	b.Write(data)
	b.WriteString("\n\n")
	return b.Bytes()
}

// subscribe registers a client and returns the snapshot it starts from, taken
// under the same lock so that the client's first update is exactly rev+1.
func (s *Server) subscribe() (*client, Snapshot, bool) {
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.stopped {
		return nil, Snapshot{}, false
	}
	c := &client{ch: make(chan []byte, s.opts.ClientBuffer)}
	s.clients[c] = struct{}{}
	return c, s.snapshotLocked(), true
}

func (s *Server) unsubscribe(c *client) {
	s.mu.Lock()
	defer s.mu.Unlock()
	if _, ok := s.clients[c]; ok {
		delete(s.clients, c)
		close(c.ch)
	}
}

// dropLocked disconnects a client that fell behind; s.mu is held.
func (s *Server) dropLocked(c *client) {
	delete(s.clients, c)
	close(c.ch)
	s.dropped++
}

// StopStreams ends every open event stream and refuses new ones. Serve calls it
// through http.Server.RegisterOnShutdown, because Shutdown waits for handlers to
// return and an event stream never would; call it yourself when you mount Handler
// in your own http.Server.
func (s *Server) StopStreams() {
	s.stopOnce.Do(func() {
		s.mu.Lock()
		s.stopped = true
		s.mu.Unlock()
		close(s.stop)
	})
}

// serveEvents streams a snapshot, then every change, with comment heartbeats.
func (s *Server) serveEvents(w http.ResponseWriter, r *http.Request) {
	c, snap, ok := s.subscribe()
	if !ok {
		http.Error(w, "shutting down", http.StatusServiceUnavailable)
		return
	}
	defer s.unsubscribe(c)
	h := w.Header()
	h.Set("Content-Type", "text/event-stream")
	h.Set("Cache-Control", "no-cache")
	h.Set("X-Accel-Buffering", "no") // tell a reverse proxy not to hold events back
	sw := &streamWriter{w: w, rc: http.NewResponseController(w), timeout: s.opts.WriteTimeout}
	first := append([]byte("retry: 3000\n"), encodeMessage("snapshot", snap.Rev, &snap)...)
	if !sw.send(first) {
		return
	}
	heartbeat := time.NewTicker(s.opts.Heartbeat)
	defer heartbeat.Stop()
	for {
		select {
		case <-r.Context().Done():
			return
		case <-s.stop:
			return
		case <-heartbeat.C:
			if !sw.send([]byte(": heartbeat\n\n")) {
				return
			}
		case msg, ok := <-c.ch:
			if !ok || !sw.sendBatch(msg, c.ch) {
				return // dropped as too slow, or the connection failed
			}
		}
	}
}

// streamWriter writes SSE messages, each under its own write deadline so that a
// server-wide WriteTimeout does not cut a long-lived stream and a stalled client
// cannot hold its handler forever.
type streamWriter struct {
	w       http.ResponseWriter
	rc      *http.ResponseController
	timeout time.Duration
	buf     []byte
}

func (sw *streamWriter) send(b []byte) bool {
	err := sw.rc.SetWriteDeadline(time.Now().Add(sw.timeout))
	if err != nil && !errors.Is(err, http.ErrNotSupported) {
		return false
	}
	if _, err := sw.w.Write(b); err != nil {
		return false
	}
	err = sw.rc.Flush()
	return err == nil || errors.Is(err, http.ErrNotSupported)
}

// sendBatch sends msg and whatever else is already queued (up to maxBatch) in one
// write and one flush.
func (sw *streamWriter) sendBatch(msg []byte, ch <-chan []byte) bool {
	sw.buf = append(sw.buf[:0], msg...)
	for range maxBatch - 1 {
		select {
		case m, ok := <-ch:
			if !ok {
				sw.send(sw.buf) // deliver what we have, then go
				return false
			}
			sw.buf = append(sw.buf, m...)
			continue
		default:
		}
		break
	}
	return sw.send(sw.buf)
}
