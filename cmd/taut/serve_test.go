package main

import (
	"bufio"
	"bytes"
	"context"
	"errors"
	"io"
	"net/http"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/rs/zerolog"

	"taut/monitor/instrument"
	"taut/monitor/status"
)

func TestBindAddr(t *testing.T) {
	tests := []struct {
		addr, want, err string
	}{
		{addr: "9440", want: "127.0.0.1:9440"},
		{addr: "127.0.0.1:9440", want: "127.0.0.1:9440"},
		{addr: "localhost:9440", want: "localhost:9440"},
		{addr: "[::1]:9440", want: "[::1]:9440"},
		{addr: "0.0.0.0:9440", want: "0.0.0.0:9440"}, // explicit: allowed
		{addr: "[::]:9440", want: "[::]:9440"},
		{addr: "192.168.5.20:9440", want: "192.168.5.20:9440"},
		{addr: ":9440", err: `would serve every network interface without saying so: write 127.0.0.1:9440 for this machine only, or 0.0.0.0:9440`},
		{addr: "status", err: `want HOST:PORT`},
		{addr: "127.0.0.1:http", err: `port "http" is not a number`},
		{addr: "127.0.0.1:70000", err: `port "70000" is not a number from 0 to 65535`},
	}
	for _, tt := range tests {
		t.Run(tt.addr, func(t *testing.T) {
			got, err := bindAddr(tt.addr)
			if tt.err != "" {
				var u usageError
				if err == nil || !strings.Contains(err.Error(), tt.err) || !errors.As(err, &u) {
					t.Fatalf("error %v, want a usage error containing %q", err, tt.err)
				}
				return
			}
			if err != nil || got != tt.want {
				t.Fatalf("got %q, %v; want %q", got, err, tt.want)
			}
		})
	}
}

// TestStartStatus serves on a system-chosen loopback port, answers /healthz from the
// stats function, and shuts down cleanly with an event stream open; Wait returns only
// after that shutdown has finished.
func TestStartStatus(t *testing.T) {
	cfg := &instrument.Config{Instrument: instrument.Instrument{Name: "bench harp (demo)",
		Strings: []instrument.String{{ID: "C4", Note: "C4", TargetHz: 261.63}}}}
	stats := func() status.Stats { return status.Stats{LastFrame: time.Now(), FramesRead: 48000} }
	var logBuf lockedBuffer
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	srv, err := startStatus(ctx, "127.0.0.1:0", cfg, stats, zerolog.New(&logBuf))
	if err != nil {
		t.Fatal(err)
	}
	waitUntil(t, func() bool { return srv.Addr() != nil })
	base := "http://" + srv.Addr().String()

	resp, err := http.Get(base + "/healthz")
	if err != nil {
		t.Fatal(err)
	}
	body, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	if resp.StatusCode != 200 || !strings.HasPrefix(string(body), "ok") {
		t.Errorf("/healthz: %s %q", resp.Status, body)
	}

	stream, err := http.Get(base + "/api/events")
	if err != nil {
		t.Fatal(err)
	}
	defer stream.Body.Close()
	r := bufio.NewReader(stream.Body)
	if line, err := r.ReadString('\n'); err != nil || !strings.HasPrefix(line, "retry:") {
		t.Fatalf("stream starts with %q, %v", line, err)
	}
	cancel()
	// Wait returns once the shutdown is complete: the stream is closed and the last
	// log line written, so the listener may close its log right after. A nil result
	// means the open stream did not hold the shutdown past status.ShutdownTimeout.
	if err := srv.Wait(); err != nil {
		t.Fatalf("Wait: %v", err)
	}
	if !strings.Contains(logBuf.String(), "status page stopped") {
		t.Errorf("log after Wait lacks the stop line:\n%s", logBuf.String())
	}
	if _, err := io.Copy(io.Discard, r); err != nil && !errors.Is(err, io.ErrUnexpectedEOF) {
		t.Logf("stream ended with %v", err)
	}
}

func TestStartStatus_refusesImplicitAllInterfaces(t *testing.T) {
	_, err := startStatus(context.Background(), ":0", &instrument.Config{}, nil, zerolog.Nop())
	if err == nil || !strings.Contains(err.Error(), "without saying so") {
		t.Fatalf("error %v", err)
	}
}

// lockedBuffer is a bytes.Buffer that the server goroutine may log into while the
// test reads it.
type lockedBuffer struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (l *lockedBuffer) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.Write(p)
}

func (l *lockedBuffer) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.String()
}
