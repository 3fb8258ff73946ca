package monitor_test

import (
	"context"
	"math"
	"strings"
	"sync"
	"testing"
	"time"

	"taut/capture"
	"taut/capture/synth"
	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/monitortest"
)

// unisonConfig is the bench's A3 plus a C#4 unison pair (same note, two strings),
// which prediction cannot tell apart.
func unisonConfig(t *testing.T) *instrument.Config {
	cfg := loadBench(t)
	a3 := cfg.Instrument.Strings[0]
	c4 := cfg.Instrument.Strings[2]
	pair := []instrument.String{c4, c4}
	for i, id := range []string{"C#4a", "C#4b"} {
		pair[i].ID, pair[i].Note, pair[i].TargetHz = id, "C#4", c4.TargetHz*math.Exp2(100.0/1200)
	}
	cfg.Instrument.Strings = append([]instrument.String{a3}, pair...)
	return cfg
}

// unisonTone renders a note of the pair: C#4a sounds 2 cents sharp, C#4b 4 cents flat.
func unisonTone(cfg *instrument.Config, id string) synth.Tone {
	cents := map[string]float64{"A3": 0, "C#4a": 2, "C#4b": -4}[id]
	for _, s := range cfg.Instrument.Strings {
		if s.ID == id {
			f0 := s.TargetHz * math.Exp2(cents/1200)
			return synth.Tone{F0Hz: f0, B: s.Phys.Inharmonicity(s.Phys.Tension(f0)), Level: 0.25, DecayS: 1.2, Seed: 3}
		}
	}
	panic("no string " + id)
}

func checkUnison(t *testing.T, entries []monitor.Entry, by string) {
	t.Helper()
	want := map[string]float64{"C#4a": 2, "C#4b": -4}
	n := 0
	for _, e := range entries {
		if e.Kind != monitor.KindReading || want[e.String] == 0 {
			continue
		}
		n++
		if math.Abs(e.Cents-want[e.String]) > 0.5 || !strings.Contains(e.Detail, "by "+by) {
			t.Errorf("%s read at %.2f cents (%q), want %.0f cents by %s", e.String, e.Cents, e.Detail, want[e.String], by)
		}
	}
	if n < 2 {
		t.Errorf("%d readings of the unison pair, want both strings", n)
	}
}

// TestMonitor_unisonByChannel: contact pickups on channels 1 and 2 tell the pair apart;
// A3 is heard on channel 3, the one channel no pickup is mapped to.
func TestMonitor_unisonByChannel(t *testing.T) {
	cfg := unisonConfig(t)
	cfg.Instrument.Strings[1].Channel, cfg.Instrument.Strings[2].Channel = 1, 2
	src := capture.NewSynthSource(capture.Format{SampleRate: testRate, Channels: 3})
	for _, q := range []struct {
		ch int
		id string
	}{{1, "C#4a"}, {2, "C#4b"}, {3, "A3"}, {2, "C#4b"}} {
		src.QueueChannel(q.ch, unisonTone(cfg, q.id), 1.5)
	}
	src.Close()
	j := &monitortest.Journal{}
	m, err := monitor.New(monitor.Options{Config: cfg, Source: src, Journal: j, Logger: testLogger(t)})
	if err != nil {
		t.Fatal(err)
	}
	if err := m.Run(context.Background()); err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(readings(j.Entries()), ","); got != "C#4a,C#4b,A3,C#4b" {
		t.Errorf("readings %s, want C#4a,C#4b,A3,C#4b", got)
	}
	checkUnison(t, j.Entries(), "channel")
}

func TestMonitor_unisonWithoutHelpIsAmbiguous(t *testing.T) {
	cfg := unisonConfig(t)
	src := capture.NewSynthSource(capture.Format{SampleRate: testRate, Channels: 1})
	src.Queue(unisonTone(cfg, "C#4a"), 1.5)
	src.Close()
	j := &monitortest.Journal{}
	m, err := monitor.New(monitor.Options{Config: cfg, Source: src, Journal: j, Logger: testLogger(t)})
	if err != nil {
		t.Fatal(err)
	}
	if err := m.Run(context.Background()); err != nil {
		t.Fatal(err)
	}
	u := monitortest.Filter(j.Entries(), func(e *monitor.Entry) bool { return e.Kind == monitor.KindUnmatched })
	if len(u) != 1 || u[0].Reason != "ambiguous" || !strings.Contains(u[0].Detail, "pickup channel or the exciter") {
		t.Errorf("unmatched %+v, want one ambiguous entry explaining the fix", u)
	}
}

// TestMonitor_rounds: the round scheduler strikes the strings with exciter pins in
// scale order every Interval on the (fake) clock, and their notes are attributed to
// the struck string even for a unison pair.
func TestMonitor_rounds(t *testing.T) {
	cfg := unisonConfig(t)
	cfg.Instrument.Strings[1].ExciterPin, cfg.Instrument.Strings[2].ExciterPin = "GPIO23", "GPIO24"
	cfg.Exciter = instrument.Exciter{Enabled: true, Interval: 10 * time.Minute, Listen: 3 * time.Second}
	clock := monitortest.Clock()
	src := capture.NewSynthSource(capture.Format{SampleRate: testRate, Channels: 1})
	ex := &strikePlayer{cfg: cfg, src: src}
	rec := &monitortest.Recorder{}
	m, err := monitor.New(monitor.Options{Config: cfg, Source: src, Exciter: ex, Sinks: []monitor.Sink{rec},
		Logger: testLogger(t), Clock: clock})
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan error, 1)
	go func() { done <- m.Run(ctx) }()
	for round := range 2 {
		for k := range 2 {
			n := int64(2*round + k + 1)
			waitFor(t, func() bool { return m.Stats().Readings+m.Stats().Unmatched == n })
			if err := clock.BlockUntilContext(ctx, 1); err != nil {
				t.Fatal(err)
			}
			clock.Advance(3 * time.Second) // the Listen wait after the strike
		}
		if err := clock.BlockUntilContext(ctx, 1); err != nil {
			t.Fatal(err)
		}
		if round == 0 {
			clock.Advance(10*time.Minute - 6*time.Second) // to the next round
		}
	}
	cancel()
	src.Close()
	if err := <-done; err != nil {
		t.Fatal(err)
	}
	if got := strings.Join(ex.struck(), ","); !strings.HasPrefix(got, "C#4a,C#4b,C#4a,C#4b") {
		t.Errorf("strikes %s, want C#4a,C#4b per round", got)
	}
	checkUnison(t, rec.Entries(), "exciter")
}

// strikePlayer is an Exciter whose strike sounds the string on the synthetic source.
type strikePlayer struct {
	cfg     *instrument.Config
	src     *capture.SynthSource
	mu      sync.Mutex
	strikes []string
}

func (p *strikePlayer) Strike(ctx context.Context, id string) error {
	p.mu.Lock()
	p.strikes = append(p.strikes, id)
	p.mu.Unlock()
	p.src.Queue(unisonTone(p.cfg, id), 1.5)
	return nil
}

func (p *strikePlayer) struck() []string {
	p.mu.Lock()
	defer p.mu.Unlock()
	return append([]string(nil), p.strikes...)
}
