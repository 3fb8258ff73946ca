package main

import (
	"bufio"
	"context"
	"errors"
	"flag"
	"fmt"
	"net/http"
	"os"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/rs/zerolog"

	"taut/capture"
	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/journal"
	"taut/monitor/sim"
)

var soakLong = flag.Bool("soak", false, "TestSoak: the whole 8-hour night of the 230-string piano (also TAUT_SOAK=1)")

// soakPlan is one soak: which keys, how many simulated hours, how often to sample.
type soakPlan struct {
	lowMIDI, highMIDI int
	hours             float64
	sampleEvery       time.Duration // simulated time between samples
}

// TestSoak plays a simulated night of settling (monitor/sim: every string struck by
// the exciter every ten minutes, rendered at 16 kHz, the time between rounds skipped)
// through the whole daemon: synthetic source → pitch → monitor → the real journal →
// lamps on gpiotest pins → the status server with a live SSE client reading every
// event. At each sample it forces a GC and records the live heap, the goroutines and
// the RSS; every reading's latency is measured from the source handing over the
// block with its onset to the reading reaching the sinks (this includes the up to 4 s
// of audio queued between capture and analysis). It fails if the heap or the
// goroutines grow, the latency drifts, an entry is lost or the SSE client is dropped.
//
// By default a shortened night: one simulated hour of 41 strings (E2–G3), sampled
// every ten minutes. With -soak (or TAUT_SOAK=1): eight hours of the 230-string piano,
// sampled every hour: go test ./cmd/taut -run TestSoak -soak -v -timeout 30m.
func TestSoak(t *testing.T) {
	if testing.Short() {
		t.Skip("soak")
	}
	plan := soakPlan{lowMIDI: 40, highMIDI: 55, hours: 1, sampleEvery: 10 * time.Minute}
	if *soakLong || os.Getenv("TAUT_SOAK") != "" {
		plan = soakPlan{lowMIDI: pianoLowMIDI, highMIDI: pianoHighMIDI, hours: 8, sampleEvery: time.Hour}
	}
	runSoak(t, plan)
}

func runSoak(t *testing.T, plan soakPlan) {
	registerSoakPins(t)
	t.Setenv("NOTIFY_SOCKET", "")
	tmp := t.TempDir()
	cfgPath, nStrings := writePianoConfig(t, tmp, plan.lowMIDI, plan.highMIDI)
	cfg, err := instrument.Load(cfgPath)
	if err != nil {
		t.Fatal(err)
	}
	night, err := sim.NewNight(cfg, sim.Options{Seed: 7, Hours: plan.hours, Interval: 10 * time.Minute, RateHz: 16000})
	if err != nil {
		t.Fatal(err)
	}
	synth := capture.NewSynthSource(capture.Format{SampleRate: night.Options.RateHz, Channels: 1})
	src := &timedSource{SynthSource: synth, rateHz: float64(night.Options.RateHz)}
	probe := &soakProbe{src: src, every: plan.sampleEvery.Seconds(), next: plan.sampleEvery.Seconds()}
	ctx, cancel := context.WithTimeout(context.Background(), 25*time.Minute)
	defer cancel()
	var stderr syncBuilder
	log := zerolog.New(&stderr).Level(zerolog.WarnLevel)
	l := &listener{
		flags: &listenFlags{journal: tmp + "/journal", lamps: "on", http: "127.0.0.1:0"}, cfg: night.Config, log: log,
		notify: newNotifier(log), extraSinks: []monitor.Sink{probe},
		in: &input{src: src, name: "simulated night"},
	}
	fed := make(chan error, 1)
	var sse sseClient
	l.started = func(m *monitor.Monitor) {
		go func() { fed <- sim.Feed(ctx, night, synth, m, 48) }()
		go sse.run(ctx, l)
	}
	start := time.Now()
	if err := l.run(ctx); err != nil {
		t.Fatalf("listen: %v\n%s", err, stderr.String())
	}
	if err := <-fed; err != nil {
		t.Fatalf("feed: %v", err)
	}
	wall := time.Since(start)
	t.Logf("%d readings after the last sample point", probe.final())
	checkSoak(t, plan, probe, &sse, tmp+"/journal", night, nStrings, wall)
}

// timedSource is the synthetic source with a record of when each block was handed
// over: the last reads' end frames on the sample clock and their wall times.
type timedSource struct {
	*capture.SynthSource
	rateHz float64
	mu     sync.Mutex
	frame  int64
	marks  [4096]readMark // ring: about 80 s of 20 ms reads, well past the 4 s queue
	n      int
}

type readMark struct {
	end int64 // sample frame after the read
	at  time.Time
}

func (s *timedSource) Read(ctx context.Context, dst []float32) (int, error) {
	n, err := s.SynthSource.Read(ctx, dst)
	var g *capture.Gap
	s.mu.Lock()
	defer s.mu.Unlock()
	if errors.As(err, &g) && g.Frames > 0 {
		s.frame += g.Frames
	}
	if n > 0 {
		s.frame += int64(n)
		s.marks[s.n%len(s.marks)] = readMark{end: s.frame, at: time.Now()}
		s.n++
	}
	return n, err
}

// handedAt returns when the read holding sample frame f was handed over.
func (s *timedSource) handedAt(f int64) (time.Time, bool) {
	s.mu.Lock()
	defer s.mu.Unlock()
	for i := max(0, s.n-len(s.marks)); i < s.n; i++ {
		if m := s.marks[i%len(s.marks)]; m.end > f {
			return m.at, true
		}
	}
	return time.Time{}, false
}

// soakSample is what the probe saw at one sample point.
type soakSample struct {
	simS       float64
	heapMB     float64 // live heap after a forced GC
	goroutines int
	rssMB      float64
	latency    time.Duration // median over the readings since the previous sample
	readings   int
}

// soakProbe is a sink that samples the process every `every` simulated seconds and
// measures each reading's latency.
type soakProbe struct {
	src         *timedSource
	every, next float64
	lat         []time.Duration
	samples     []soakSample
	lost        int // readings whose onset block was no longer in the ring
}

func (p *soakProbe) Publish(e monitor.Entry) {
	for e.MonoS >= p.next {
		p.sample(p.next)
		p.next += p.every
	}
	if e.Kind != monitor.KindReading {
		return
	}
	at, ok := p.src.handedAt(int64(e.MonoS * p.src.rateHz))
	if !ok {
		p.lost++
		return
	}
	p.lat = append(p.lat, time.Since(at))
}

func (p *soakProbe) sample(simS float64) {
	runtime.GC()
	var ms runtime.MemStats
	runtime.ReadMemStats(&ms)
	s := soakSample{simS: simS, heapMB: float64(ms.HeapAlloc) / (1 << 20), goroutines: runtime.NumGoroutine(),
		rssMB: rssMB(), readings: len(p.lat)}
	if len(p.lat) > 0 {
		slices.Sort(p.lat)
		s.latency = p.lat[len(p.lat)/2]
	}
	p.samples = append(p.samples, s)
	p.lat = p.lat[:0]
}

// final counts the readings after the last sample point (the last round, past the
// planned hours): they are not sampled, since by now the daemon has shut down.
func (p *soakProbe) final() int { return len(p.lat) }

// rssMB reads the resident set size from /proc (0 where there is none).
func rssMB() float64 {
	f, err := os.Open("/proc/self/status")
	if err != nil {
		return 0
	}
	defer f.Close()
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		if rest, ok := strings.CutPrefix(sc.Text(), "VmRSS:"); ok {
			kb, _ := strconv.ParseFloat(strings.TrimSuffix(strings.TrimSpace(rest), " kB"), 64)
			return kb / 1024
		}
	}
	return 0
}

// sseClient follows /api/events like a status page left open all night, reconnecting
// if the server drops it.
type sseClient struct {
	events, connects, drops atomic.Int64
}

func (c *sseClient) run(ctx context.Context, l *listener) {
	for ctx.Err() == nil {
		srv := l.status.Load()
		if srv == nil || srv.Addr() == nil {
			time.Sleep(5 * time.Millisecond)
			continue
		}
		req, _ := http.NewRequestWithContext(ctx, http.MethodGet, "http://"+srv.Addr().String()+"/api/events", nil)
		resp, err := http.DefaultClient.Do(req)
		if err != nil {
			return // the server has shut down
		}
		c.connects.Add(1)
		sc := bufio.NewScanner(resp.Body)
		sc.Buffer(make([]byte, 64<<10), 4<<20)
		for sc.Scan() {
			if strings.HasPrefix(sc.Text(), "event: ") {
				c.events.Add(1)
			}
		}
		resp.Body.Close()
		if ctx.Err() == nil && resp.StatusCode == http.StatusOK {
			c.drops.Add(1) // the stream ended while the daemon ran (or at its shutdown)
		}
		if resp.StatusCode != http.StatusOK {
			return
		}
	}
}

func checkSoak(t *testing.T, plan soakPlan, p *soakProbe, sse *sseClient, jdir string, night *sim.Night,
	nStrings int, wall time.Duration) {
	t.Helper()
	entries, report, err := journal.Load(jdir)
	if err != nil || !report.Clean() {
		t.Fatalf("journal: %v, %v", err, report)
	}
	var readings, unmatched int
	for _, e := range entries {
		switch e.Kind {
		case monitor.KindReading:
			readings++
		case monitor.KindUnmatched:
			unmatched++
		}
	}
	audioS := float64(night.Strikes()) * float64(night.SlotFrames()) / float64(night.Options.RateHz)
	t.Logf("%d strings, %.0f simulated hours, %d strikes: %d readings, %d unmatched, %d journal entries; "+
		"%.0f s of audio in %v wall (%.0f× real time)", nStrings, plan.hours, night.Strikes(), readings, unmatched,
		len(entries), audioS, wall.Round(time.Millisecond), audioS/wall.Seconds())
	t.Logf("SSE client: %d events over %d connection(s)", sse.events.Load(), sse.connects.Load())
	for _, s := range p.samples {
		t.Logf("  at %5.2f h: heap %6.2f MB, goroutines %3d, RSS %6.1f MB, %4d readings, median latency %v",
			s.simS/3600, s.heapMB, s.goroutines, s.rssMB, s.readings, s.latency.Round(10*time.Microsecond))
	}
	if readings != night.Strikes() {
		t.Errorf("%d readings for %d strikes: every strike must be read", readings, night.Strikes())
	}
	if want := int(plan.hours*3600/p.every + 0.5); len(p.samples) < want {
		t.Fatalf("%d samples, want %d", len(p.samples), want)
	}
	if p.lost > 0 {
		t.Errorf("%d readings whose onset block had left the latency ring", p.lost)
	}
	checkFlat(t, p.samples)
	if sse.connects.Load() != 1 || sse.events.Load() < int64(readings) {
		t.Errorf("SSE client: %d connections, %d events for %d readings; want one connection that saw every reading",
			sse.connects.Load(), sse.events.Load(), readings)
	}
}

// checkFlat asserts that the live heap and the goroutines stay flat after the first
// sample (the first interval fills every string's fixed-size history and the queues)
// and that the median reading latency of the last interval is not worse than the
// first's beyond noise.
func checkFlat(t *testing.T, s []soakSample) {
	t.Helper()
	base := s[0]
	var maxHeap float64
	minG, maxG := base.goroutines, base.goroutines
	for _, x := range s[1:] {
		maxHeap = max(maxHeap, x.heapMB)
		minG, maxG = min(minG, x.goroutines), max(maxG, x.goroutines)
	}
	if growth := maxHeap - base.heapMB; growth > 2 {
		t.Errorf("live heap grew %.2f MB after the first sample (%.2f MB), want flat (< 2 MB)", growth, base.heapMB)
	}
	if maxG-minG > 2 {
		t.Errorf("goroutines between %d and %d, want flat", minG, maxG)
	}
	first, last := s[0].latency, s[len(s)-1].latency
	if last > 2*first+20*time.Millisecond {
		t.Errorf("median latency %v in the last interval against %v in the first: it drifts", last, first)
	}
	t.Logf("heap %s; goroutines %d..%d; median latency first %v, last %v", fmt.Sprintf("%.2f → max %.2f MB", base.heapMB, maxHeap),
		minG, maxG, first.Round(10*time.Microsecond), last.Round(10*time.Microsecond))
}
