package status

import (
	"context"
	"fmt"
	"net"
	"net/http"
	"net/http/httptest"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"taut/monitor"
)

// nightEntry is the i-th entry of a scripted night: readings round the strings,
// with a state change every seventh entry.
func nightEntry(cfgIDs []string, i int) monitor.Entry {
	id := cfgIDs[i%len(cfgIDs)]
	seq := uint64(i + 1)
	if i%7 == 6 {
		return stateChange(seq, id, monitor.Settling, monitor.State(1+i%4), "drift")
	}
	return readingEntry(seq, id, monitor.Settling, float64(i%40)-20)
}

var fiveIDs = []string{"C3", "C#3", "D3", "D#3", "E3"}

// TestEvents_midNight: a client that connects while entries are being published
// gets a snapshot and then exactly the later updates, without gaps, and ends with
// the server's own state. The publisher stays at most midNightWindow updates ahead of
// the client, well inside the client's queue (DefaultClientBuffer), so a busy machine
// that runs the client slowly cannot get it dropped as slow: the test depends on
// counts, not on scheduling.
func TestEvents_midNight(t *testing.T) {
	const total, connectBy, midNightWindow = 3000, 2000, 64
	s := New(testConfig(), Options{ClientBuffer: DefaultClientBuffer})
	ts := httptest.NewServer(s.Handler())
	defer ts.Close()
	defer s.StopStreams()

	var seen atomic.Uint64 // the last rev the client has read; 0 until its snapshot
	quit := make(chan struct{})
	defer close(quit)
	published := make(chan error, 1)
	go func() {
		published <- publishPaced(s, total, connectBy, midNightWindow, &seen, quit)
	}()
	waitFor(t, func() bool { return s.Snapshot().Rev >= 500 }, "the night under way")
	r, snap, closeStream := openStream(t, ts.URL)
	defer closeStream()
	seen.Store(snap.Rev)
	if snap.Rev >= total {
		t.Fatalf("snapshot at rev %d: the publisher did not wait for the client", snap.Rev)
	}
	rows := slices.Clone(snap.Strings)
	index := map[string]int{}
	for i, row := range rows {
		index[row.ID] = i
	}
	rev, lastSeq := snap.Rev, snap.Seq
	for rev < total {
		ev, err := r.next()
		if err != nil {
			t.Fatalf("after rev %d: %v", rev, err)
		}
		u := decode[Update](t, ev.Data)
		if ev.Event != "update" || u.Rev != rev+1 || ev.ID != u.Rev {
			t.Fatalf("after rev %d got %s id %d rev %d: a gap or a repeat", rev, ev.Event, ev.ID, u.Rev)
		}
		if u.Seq <= lastSeq {
			t.Fatalf("seq %d after %d: an entry older than the snapshot", u.Seq, lastSeq)
		}
		rev, lastSeq = u.Rev, u.Seq
		seen.Store(rev)
		if u.String != nil {
			rows[index[u.String.ID]] = *u.String
		}
	}
	if err := <-published; err != nil {
		t.Fatal(err)
	}
	s.mu.Lock()
	dropped := s.dropped
	s.mu.Unlock()
	if dropped != 0 {
		t.Errorf("%d clients dropped as slow; the paced client must never be", dropped)
	}
	final := s.Snapshot()
	for i := range rows {
		got, want := rows[i], final.Strings[i]
		got.AgeS, want.AgeS = 0, 0
		if got.ID != want.ID || got.State != want.State || got.Cents != want.Cents || got.Seq != want.Seq {
			t.Errorf("client's %s = %+v, server's %+v", got.ID, got, want)
		}
	}
	t.Logf("client joined at rev %d of %d and followed every later update", snap.Rev, total)
}

// publishPaced publishes total night entries. Until a client subscribes it runs
// freely, but not past connectBy; once a client is subscribed it stays at most window
// updates ahead of seen. It gives up (with an error) after a generous minute without
// progress, or when quit is closed.
func publishPaced(s *Server, total, connectBy int, window uint64, seen *atomic.Uint64, quit <-chan struct{}) error {
	for i := range total {
		stuck := time.Now().Add(time.Minute)
		for (i >= connectBy && s.clientCount() == 0) || (s.clientCount() > 0 && uint64(i)-min(uint64(i), seen.Load()) > window) {
			select {
			case <-quit:
				return fmt.Errorf("publisher stopped at entry %d", i)
			default:
			}
			if time.Now().After(stuck) {
				return fmt.Errorf("publisher waited a minute at entry %d for the client (it saw rev %d)", i, seen.Load())
			}
			time.Sleep(50 * time.Microsecond)
		}
		s.Publish(nightEntry(fiveIDs, i))
	}
	return nil
}

// stalledWriter is a ResponseWriter whose client never reads: Write blocks until
// release is closed, as a TCP connection with a full window would.
type stalledWriter struct {
	h       http.Header
	release <-chan struct{}
}

func (w *stalledWriter) Header() http.Header { return w.h }
func (w *stalledWriter) WriteHeader(int)     {}
func (w *stalledWriter) Write(b []byte) (int, error) {
	<-w.release
	return 0, net.ErrClosed
}

// TestEvents_slowClients: 50 stalled clients do not slow Publish, are dropped, and
// 5 fast clients still receive every one of 10 000 updates in order.
func TestEvents_slowClients(t *testing.T) {
	const total, slow, fast, burst = 10_000, 50, 5, 100
	s := New(testConfig(), Options{})
	ts := httptest.NewServer(s.Handler())
	defer ts.Close()
	defer s.StopStreams()

	release := make(chan struct{})
	var stalled sync.WaitGroup
	for range slow {
		stalled.Add(1)
		go func() {
			defer stalled.Done()
			w := &stalledWriter{h: http.Header{}, release: release}
			s.serveEvents(w, httptest.NewRequest("GET", "/api/events", nil))
		}()
	}
	var received [fast]atomic.Uint64 // last rev each fast client saw
	var fastErr [fast]error
	var fastDone sync.WaitGroup
	for i := range fast {
		r, snap, closeStream := openStream(t, ts.URL)
		received[i].Store(snap.Rev)
		fastDone.Add(1)
		go func() {
			defer fastDone.Done()
			defer closeStream()
			for rev := snap.Rev; rev < total; {
				ev, err := r.next()
				if err != nil {
					fastErr[i] = fmt.Errorf("after rev %d: %w", rev, err)
					return
				}
				if ev.ID != rev+1 {
					fastErr[i] = fmt.Errorf("rev %d after %d", ev.ID, rev)
					return
				}
				rev = ev.ID
				received[i].Store(rev)
			}
		}()
	}
	waitFor(t, func() bool { return s.clientCount() == slow+fast }, "every client subscribed")

	// Publish must never wait for a client: every stalled handler stays blocked in
	// Write until release is closed, so all 10 000 publishes must finish before that.
	// The watchdog only catches a hang (a Publish that waits), with a generous limit.
	var releaseOnce sync.Once
	releaseAll := func() { releaseOnce.Do(func() { close(release) }) }
	watchdog := time.AfterFunc(2*time.Minute, releaseAll)
	var spent time.Duration
	took := make([]time.Duration, 0, total)
	for i := range total {
		e := nightEntry(fiveIDs, i)
		start := time.Now()
		s.Publish(e)
		d := time.Since(start)
		spent += d
		took = append(took, d)
		if (i+1)%burst == 0 { // bursts far faster than a listener ever publishes
			waitFor(t, func() bool {
				for j := range fast {
					if received[j].Load() < uint64(i+1) && fastErr[j] == nil {
						return false
					}
				}
				return true
			}, "fast clients caught up")
		}
	}
	if !watchdog.Stop() {
		t.Error("the stalled clients were released by the watchdog: Publish waited for them")
	}
	fastDone.Wait()
	for i, err := range fastErr {
		if err != nil {
			t.Errorf("fast client %d: %v", i, err)
		}
	}
	s.mu.Lock()
	dropped := s.dropped
	s.mu.Unlock()
	if dropped != slow {
		t.Errorf("%d clients dropped, want the %d stalled ones", dropped, slow)
	}
	releaseAll()
	stalled.Wait()
	slices.Sort(took)
	// Durations are logged, not asserted: BenchmarkPublish50Clients measures the cost.
	t.Logf("%d publishes with %d stalled and %d fast clients: total %v, mean %v, median %v, p99 %v, worst %v; %d stalled dropped",
		total, slow, fast, spent, spent/total, took[total/2], took[total*99/100], took[total-1], dropped)
}

func (s *Server) clientCount() int {
	s.mu.Lock()
	defer s.mu.Unlock()
	return len(s.clients)
}

func waitFor(t testing.TB, cond func() bool, what string) {
	t.Helper()
	deadline := time.Now().Add(30 * time.Second) // a hang detector, generous for -race on a loaded 2-core box
	for !cond() {
		if time.Now().After(deadline) {
			t.Fatalf("timed out waiting: %s", what)
		}
		time.Sleep(100 * time.Microsecond)
	}
}

// TestEvents_heartbeatAndWriteTimeout: comment heartbeats flow and the stream
// outlives a server-wide WriteTimeout because each write sets its own deadline. The
// test reads heartbeats until three have come and twice the WriteTimeout has passed,
// then expects an update on the same stream: it counts, it does not time.
func TestEvents_heartbeatAndWriteTimeout(t *testing.T) {
	const writeTimeout = 150 * time.Millisecond
	s := New(testConfig(), Options{Heartbeat: 30 * time.Millisecond, WriteTimeout: 10 * time.Second})
	ts := httptest.NewUnstartedServer(s.Handler())
	ts.Config.WriteTimeout = writeTimeout
	ts.Start()
	defer ts.Close()
	defer s.StopStreams()
	r, _, closeStream := openStream(t, ts.URL)
	defer closeStream()
	opened := time.Now()
	done := make(chan error, 1)
	go func() {
		for r.comments < 3 || time.Since(opened) < 2*writeTimeout {
			line, err := r.r.ReadString('\n')
			if err != nil {
				done <- fmt.Errorf("after %d heartbeats: %w", r.comments, err)
				return
			}
			if strings.HasPrefix(line, ":") {
				r.comments++
			}
		}
		done <- nil
	}()
	select {
	case err := <-done:
		if err != nil {
			t.Fatal(err)
		}
	case <-time.After(time.Minute): // a hang detector only
		closeStream()
		t.Fatalf("no three heartbeats in a minute at a 30 ms interval (%v)", <-done)
	}
	s.Publish(readingEntry(1, "C3", monitor.Steady, 1))
	ev, err := r.next()
	if err != nil || ev.Event != "update" {
		t.Fatalf("after the WriteTimeout: %+v %v", ev, err)
	}
}

// TestServeListener_shutdownWithOpenStreams: cancelling Serve's context returns
// promptly even with event streams open.
func TestServeListener_shutdownWithOpenStreams(t *testing.T) {
	s := New(testConfig(), Options{})
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan error, 1)
	go func() { done <- s.ServeListener(ctx, ln) }()
	url := "http://" + ln.Addr().String()
	var streams []*sseReader
	for range 10 {
		r, _, closeStream := openStream(t, url)
		defer closeStream()
		streams = append(streams, r)
	}
	start := time.Now()
	cancel()
	// A clean return (nil) means every stream ended before ShutdownTimeout: had one
	// held its handler, Shutdown would have run out of time and reported it. The
	// select only catches a hang.
	select {
	case err := <-done:
		if err != nil {
			t.Fatalf("ServeListener: %v (streams held the shutdown past %v)", err, ShutdownTimeout)
		}
	case <-time.After(ShutdownTimeout + time.Minute):
		t.Fatal("shutdown hung on open event streams")
	}
	t.Logf("shutdown with 10 open streams took %v", time.Since(start))
	for i, r := range streams {
		if _, err := r.next(); err == nil {
			t.Errorf("stream %d still open after shutdown", i)
		}
	}
	if resp, err := http.Get(url + "/api/events"); err == nil {
		resp.Body.Close()
		t.Error("server still accepts connections after shutdown")
	}
}

// BenchmarkPublish50Clients is the monitor's cost per entry with 50 live streams
// that keep up (their handlers write to a discarding writer).
func BenchmarkPublish50Clients(b *testing.B) { benchmarkPublish(b, 50) }

// BenchmarkPublishNoClients is the same without streams, for comparison.
func BenchmarkPublishNoClients(b *testing.B) { benchmarkPublish(b, 0) }

type discardWriter struct{ h http.Header }

func (w *discardWriter) Header() http.Header         { return w.h }
func (w *discardWriter) WriteHeader(int)             {}
func (w *discardWriter) Write(b []byte) (int, error) { return len(b), nil }

func benchmarkPublish(b *testing.B, clients int) {
	ids := make([]string, 230) // a whole piano
	for i := range ids {
		ids[i] = fmt.Sprintf("S%03d", i)
	}
	s := New(testConfig(ids...), Options{ClientBuffer: 1 << 16})
	ctx, cancel := context.WithCancel(context.Background())
	var wg sync.WaitGroup
	for range clients {
		wg.Add(1)
		go func() {
			defer wg.Done()
			s.serveEvents(&discardWriter{h: http.Header{}}, httptest.NewRequest("GET", "/api/events", nil).WithContext(ctx))
		}()
	}
	waitFor(b, func() bool { return s.clientCount() == clients }, "clients subscribed")
	entries := make([]monitor.Entry, 1024)
	for i := range entries {
		entries[i] = nightEntry(ids, i)
	}
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; b.Loop(); i++ {
		s.Publish(entries[i%len(entries)])
	}
	b.StopTimer()
	cancel()
	wg.Wait()
	if s.dropped != 0 {
		b.Errorf("%d clients dropped", s.dropped)
	}
}
