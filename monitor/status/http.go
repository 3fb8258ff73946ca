package status

import (
	"bytes"
	"context"
	"embed"
	"encoding/json"
	"errors"
	"fmt"
	"html/template"
	"io/fs"
	"net"
	"net/http"
	"time"

	"github.com/prometheus/client_golang/prometheus/promhttp"

	"taut/monitor/tension"
)

//go:embed assets
var assets embed.FS

var pageTemplate = template.Must(template.ParseFS(assets, "assets/index.html"))

// ShutdownTimeout bounds Serve's graceful shutdown; connections still open after
// it are closed.
const ShutdownTimeout = 5 * time.Second

// Handler returns the read-only HTTP API: the page, its assets, /api/strings,
// /api/events, /metrics and /healthz. Only GET and HEAD are accepted.
func (s *Server) Handler() http.Handler {
	static, err := fs.Sub(assets, "assets")
	if err != nil {
		panic(err) // the embedded tree is fixed at build time
	}
	mux := http.NewServeMux()
	mux.HandleFunc("GET /{$}", s.servePage)
	mux.Handle("GET /assets/", http.StripPrefix("/assets/", http.FileServerFS(static)))
	mux.HandleFunc("GET /api/strings", s.serveStrings)
	mux.HandleFunc("GET /api/events", s.serveEvents)
	mux.HandleFunc("GET /healthz", s.serveHealth)
	mux.Handle("GET /metrics", promhttp.HandlerFor(s.reg, promhttp.HandlerOpts{Registry: s.reg}))
	return securityHeaders(mux)
}

// securityHeaders forbids anything but our own embedded assets on the page.
func securityHeaders(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		h := w.Header()
		h.Set("Content-Security-Policy", "default-src 'self'; img-src 'self' data:; object-src 'none'; base-uri 'none'; frame-ancestors 'none'")
		h.Set("X-Content-Type-Options", "nosniff")
		h.Set("Referrer-Policy", "no-referrer")
		next.ServeHTTP(w, r)
	})
}

type pageData struct {
	Title    string
	Display  string // "" or "wall"
	Version  string
	Caution  string   // tension.Caution, the one safety wording
	Snapshot Snapshot // rendered at once, so the page is complete before its stream connects
}

func (s *Server) servePage(w http.ResponseWriter, r *http.Request) {
	d := pageData{Title: s.cfg.Instrument.Name, Version: s.opts.Version, Caution: tension.Caution, Snapshot: s.Snapshot()}
	if d.Title == "" {
		d.Title = "taut"
	}
	if r.URL.Query().Get("display") == "wall" {
		d.Display = "wall"
	}
	var b bytes.Buffer
	if err := pageTemplate.Execute(&b, d); err != nil {
		http.Error(w, "render page: "+err.Error(), http.StatusInternalServerError)
		return
	}
	w.Header().Set("Content-Type", "text/html; charset=utf-8")
	w.Header().Set("Cache-Control", "no-cache")
	_, _ = w.Write(b.Bytes())
}

func (s *Server) serveStrings(w http.ResponseWriter, r *http.Request) {
	snap := s.Snapshot()
	w.Header().Set("Content-Type", "application/json")
	w.Header().Set("Cache-Control", "no-store")
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	_ = enc.Encode(&snap)
}

// Health says whether audio frames flow and the journal writes succeed, with a
// one-line reason (see Stats for the rules).
func (s *Server) Health() (ok bool, reason string) {
	if s.opts.Stats == nil {
		return false, "no listener statistics: the status server is not wired to a listener"
	}
	st := s.opts.Stats()
	now := s.opts.Clock.Now()
	switch {
	case st.LastFrame.IsZero():
		return false, "audio: no frames received yet"
	case now.Sub(st.LastFrame) > s.opts.FrameTimeout:
		return false, fmt.Sprintf("audio: no frames for %s (limit %s)", now.Sub(st.LastFrame).Round(time.Second), s.opts.FrameTimeout)
	case st.JournalLastError != "":
		return false, "journal: " + st.JournalLastError
	case st.JournalBacklog > 0:
		return false, fmt.Sprintf("journal: %d entries waiting to be written", st.JournalBacklog)
	}
	return true, "ok: audio frames flowing, journal written"
}

func (s *Server) serveHealth(w http.ResponseWriter, r *http.Request) {
	ok, reason := s.Health()
	w.Header().Set("Content-Type", "text/plain; charset=utf-8")
	w.Header().Set("Cache-Control", "no-store")
	if !ok {
		w.WriteHeader(http.StatusServiceUnavailable)
	}
	fmt.Fprintln(w, reason)
}

// Serve listens on addr and serves until ctx is done, then shuts down gracefully.
// Binding policy (loopback by default) is the caller's: see cmd/taut.
func (s *Server) Serve(ctx context.Context, addr string) error {
	ln, err := net.Listen("tcp", addr)
	if err != nil {
		return fmt.Errorf("status: listen on %s: %w", addr, err)
	}
	return s.ServeListener(ctx, ln)
}

// ServeListener serves on ln until ctx is done. Shutdown first ends every event
// stream (RegisterOnShutdown), then waits at most ShutdownTimeout for other
// requests before closing what is left. It returns nil after a clean shutdown.
func (s *Server) ServeListener(ctx context.Context, ln net.Listener) error {
	srv := &http.Server{
		Handler:           s.Handler(),
		ReadHeaderTimeout: 10 * time.Second,
		ReadTimeout:       30 * time.Second,
		WriteTimeout:      30 * time.Second, // event streams extend their own deadline per write
		IdleTimeout:       2 * time.Minute,
		MaxHeaderBytes:    16 << 10,
	}
	srv.RegisterOnShutdown(s.StopStreams)
	s.addr.Store(ln.Addr())
	errc := make(chan error, 1)
	go func() { errc <- srv.Serve(ln) }()
	select {
	case err := <-errc:
		s.StopStreams()
		return fmt.Errorf("status: serve: %w", err)
	case <-ctx.Done():
	}
	sctx, cancel := context.WithTimeout(context.Background(), ShutdownTimeout)
	defer cancel()
	err := srv.Shutdown(sctx)
	if err != nil {
		err = errors.Join(fmt.Errorf("status: shutdown: %w", err), srv.Close())
	}
	if serr := <-errc; !errors.Is(serr, http.ErrServerClosed) {
		err = errors.Join(err, serr)
	}
	return err
}

// Start serves on ln in the background, as ServeListener does, until ctx is done.
// stopped, when not nil, is called with ServeListener's result once the server has
// shut down and before Wait returns, so a caller can log it while its log is still
// open. A Server starts once: a second Start returns an error and serves nothing.
func (s *Server) Start(ctx context.Context, ln net.Listener, stopped func(error)) error {
	s.runMu.Lock()
	defer s.runMu.Unlock()
	if s.done != nil {
		return errors.New("status: server already started")
	}
	done := make(chan struct{})
	s.done = done
	go func() {
		defer close(done)
		err := s.ServeListener(ctx, ln)
		if stopped != nil {
			stopped(err)
		}
		s.runErr = err
	}()
	return nil
}

// Wait blocks until the server that Start began has shut down completely (every
// handler returned, the listener closed, the stopped callback run) and returns
// ServeListener's result. It returns nil at once when Start was never called. Call it
// after cancelling Start's context, before closing what the server's callbacks use
// (the log file, the journal behind Options.Stats).
func (s *Server) Wait() error {
	s.runMu.Lock()
	done := s.done
	s.runMu.Unlock()
	if done == nil {
		return nil
	}
	<-done
	return s.runErr // written before done was closed
}

// Addr is the address ServeListener serves on (nil before it starts), e.g. to print
// the URL when the port was chosen by the system (":0").
func (s *Server) Addr() net.Addr {
	a, _ := s.addr.Load().(net.Addr)
	return a
}
