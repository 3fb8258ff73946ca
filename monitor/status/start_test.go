package status

import (
	"context"
	"net"
	"net/http"
	"sync/atomic"
	"testing"
)

// TestServer_StartWait: Wait returns only after Start's server has shut down: the
// stopped callback has run, every stream has ended and the port is closed. A daemon
// relies on this to close its log and journal only afterwards.
func TestServer_StartWait(t *testing.T) {
	s := New(testConfig(), Options{})
	if err := s.Wait(); err != nil {
		t.Fatalf("Wait before Start: %v; want nil at once", err)
	}
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	var stopped atomic.Int32
	var stoppedErr error
	if err := s.Start(ctx, ln, func(err error) { stoppedErr = err; stopped.Add(1) }); err != nil {
		t.Fatal(err)
	}
	if err := s.Start(ctx, ln, nil); err == nil {
		t.Error("second Start: nil error; want one server, one Start")
	}
	url := "http://" + ln.Addr().String()
	r, _, closeStream := openStream(t, url)
	defer closeStream()
	cancel()
	if err := s.Wait(); err != nil {
		t.Fatalf("Wait: %v; want a clean shutdown", err)
	}
	if n := stopped.Load(); n != 1 || stoppedErr != nil {
		t.Errorf("stopped callback ran %d times with %v before Wait returned; want once with nil", n, stoppedErr)
	}
	if _, err := r.next(); err == nil {
		t.Error("event stream still open after Wait")
	}
	if resp, err := http.Get(url + "/healthz"); err == nil {
		resp.Body.Close()
		t.Error("server still accepts connections after Wait")
	}
	if err := s.Wait(); err != nil {
		t.Errorf("second Wait: %v", err)
	}
}
