package status

import (
	"sync"
	"sync/atomic"
	"time"

	"github.com/jonboulle/clockwork"
	"github.com/prometheus/client_golang/prometheus"

	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/tension"
)

// Defaults for the zero Options.
const (
	DefaultStaleAfter   = 15 * time.Minute
	DefaultFrameTimeout = 10 * time.Second
	DefaultHeartbeat    = 15 * time.Second
	DefaultClientBuffer = 256
	DefaultWriteTimeout = 10 * time.Second
	DefaultEvents       = 50
	defaultMarginAlarm  = 0.85 // same trade figure as the config default
)

// Stats are the listener's counters that /metrics exports and /healthz judges
// (rules in the package doc, "Health rules"). The listener fills them from the
// capture loop, the monitor and the journal writer; every field is cumulative
// since the process started unless noted.
type Stats struct {
	FramesRead    uint64    // audio frames read from the source
	FramesDropped uint64    // frames lost because analysis fell behind
	Overflows     uint64    // input overflows reported by the audio device
	Gaps          uint64    // discontinuities in the audio (overflows, reopened source)
	Readings      uint64    // notes matched to a string
	Unmatched     uint64    // notes no string could claim
	LastFrame     time.Time // when the latest audio frame arrived (zero: none yet)

	JournalFsyncs      uint64
	JournalFsyncErrors uint64
	JournalWriteErrors uint64
	JournalBacklog     int    // entries held in memory, not yet written (a gauge)
	JournalLastError   string // latest write or fsync error; "" once everything is written and synced again
}

// Options configure a Server. Only Stats is needed for /healthz and the counters.
type Options struct {
	Stats        func() Stats    // nil: /healthz reports 503 and the counters are absent
	Version      string          // build version for taut_build_info and the page footer
	Clock        clockwork.Clock // nil = real clock; used for staleness and health
	StaleAfter   time.Duration   // no reading for this long shows "data is stale" (default 15 min)
	FrameTimeout time.Duration   // audio counts as flowing while a frame arrived this recently (default 10 s)
	Heartbeat    time.Duration   // SSE comment line interval (default 15 s)
	ClientBuffer int             // SSE messages queued per client before it is dropped as slow (default 256)
	WriteTimeout time.Duration   // deadline of each SSE write (default 10 s)
}

func (o Options) withDefaults() Options {
	if o.Clock == nil {
		o.Clock = clockwork.NewRealClock()
	}
	setDefault(&o.StaleAfter, DefaultStaleAfter)
	setDefault(&o.FrameTimeout, DefaultFrameTimeout)
	setDefault(&o.Heartbeat, DefaultHeartbeat)
	setDefault(&o.ClientBuffer, DefaultClientBuffer)
	setDefault(&o.WriteTimeout, DefaultWriteTimeout)
	if o.Version == "" {
		o.Version = "unknown"
	}
	return o
}

func setDefault[T int | time.Duration](v *T, def T) {
	if *v <= 0 {
		*v = def
	}
}

// Server keeps the latest state of every string and serves it over HTTP. It is a
// monitor.Sink: Publish updates the state and queues changes for live clients
// without ever waiting for them.
type Server struct {
	cfg         *instrument.Config
	opts        Options
	marginWarn  float64 // the config's margin_warn, never above tension.CautionFloor
	marginAlarm float64

	mu          sync.Mutex
	rows        []StringStatus // scale order
	index       map[string]int // string id → row
	rev         uint64
	seq         uint64
	events      *ring
	lastReading time.Time // server clock
	lastTime    time.Time // the latest reading's own time, for the metric
	unmatched   uint64
	unknown     uint64 // entries for strings not in the config
	clients     map[*client]struct{}
	dropped     uint64 // clients dropped as too slow
	stopped     bool

	stop     chan struct{} // closed by StopStreams
	stopOnce sync.Once
	addr     atomic.Value // net.Addr once serving

	runMu  sync.Mutex    // guards done
	done   chan struct{} // made by Start, closed when its ServeListener has returned
	runErr error         // ServeListener's result, set before done is closed

	reg   *prometheus.Registry
	fsync prometheus.Histogram
}

var _ monitor.Sink = (*Server)(nil)

// New returns a server for the strings of cfg. cfg must not change afterwards.
func New(cfg *instrument.Config, opts Options) *Server {
	rows, index := rowsFromConfig(cfg)
	s := &Server{
		cfg:         cfg,
		opts:        opts.withDefaults(),
		marginWarn:  cautionAt(cfg.Listen.MarginWarn),
		marginAlarm: orDefault(cfg.Listen.MarginAlarm, defaultMarginAlarm),
		rows:        rows,
		index:       index,
		events:      newRing(DefaultEvents),
		clients:     make(map[*client]struct{}),
		stop:        make(chan struct{}),
	}
	s.reg, s.fsync = s.newRegistry()
	return s
}

// cautionAt is the margin from which the page shows the high-tension badge and the
// caution: the config's margin_warn, but never above tension.CautionFloor (a config
// may warn earlier, never later).
func cautionAt(configWarn float64) float64 {
	if configWarn > 0 {
		return min(configWarn, tension.CautionFloor)
	}
	return tension.CautionFloor
}

func orDefault(v, def float64) float64 {
	if v > 0 {
		return v
	}
	return def
}

// Publish records the entry and sends the change to every live client. A client
// whose queue is full is dropped (its browser reconnects and gets a fresh
// snapshot); Publish never waits for a client.
func (s *Server) Publish(e monitor.Entry) {
	now := s.opts.Clock.Now()
	s.mu.Lock()
	defer s.mu.Unlock()
	u := s.apply(&e, now)
	s.rev++
	u.Rev = s.rev
	if len(s.clients) == 0 {
		return
	}
	msg := encodeMessage("update", u.Rev, &u)
	for c := range s.clients {
		select {
		case c.ch <- msg:
		default:
			s.dropLocked(c)
		}
	}
}

// apply folds one entry into the state and says what changed; s.mu is held.
func (s *Server) apply(e *monitor.Entry, now time.Time) Update {
	if e.Seq > s.seq {
		s.seq = e.Seq
	}
	u := Update{Seq: e.Seq}
	switch e.Kind {
	case monitor.KindUnmatched:
		s.unmatched++
	case monitor.KindReading, monitor.KindState:
		if i, ok := s.index[e.String]; ok {
			s.rows[i].apply(e, now)
			row := s.rows[i]
			if !row.arrived.IsZero() {
				row.AgeS = now.Sub(row.arrived).Seconds()
			}
			u.String = &row
		} else if e.String != "" {
			s.unknown++
		}
		if e.Kind == monitor.KindReading {
			s.lastReading, s.lastTime = now, e.Time
			u.Reading = true
		}
	}
	if eventKinds[e.Kind] {
		ev := eventOf(e)
		s.events.push(ev)
		u.Event = &ev
	}
	u.Unmatched = s.unmatched
	return u
}

// Snapshot returns the whole state now.
func (s *Server) Snapshot() Snapshot {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.snapshotLocked()
}

func (s *Server) snapshotLocked() Snapshot {
	now := s.opts.Clock.Now()
	snap := Snapshot{
		Rev: s.rev, Seq: s.seq,
		Instrument: s.cfg.Instrument.Name, ReferenceHz: s.cfg.Instrument.ReferenceHz,
		Version: s.opts.Version, Now: now,
		StaleAfterS: s.opts.StaleAfter.Seconds(),
		MarginWarn:  s.marginWarn, MarginAlarm: s.marginAlarm,
		Unmatched: s.unmatched,
		Strings:   append([]StringStatus{}, s.rows...), // [] not null in JSON
		Events:    s.events.list(),
	}
	if !s.lastReading.IsZero() {
		snap.Heard = true
		since := now.Sub(s.lastReading)
		snap.SinceReadingS = since.Seconds()
		snap.Stale = since >= s.opts.StaleAfter
	}
	for i := range snap.Strings {
		if a := snap.Strings[i].arrived; !a.IsZero() {
			snap.Strings[i].AgeS = now.Sub(a).Seconds()
		}
	}
	return snap
}

// ObserveFsync records one journal fsync for the latency histogram. Its signature
// matches the journal's Options.OnFsync; errors are counted from Stats, so err is
// not counted here (a failed fsync still took time and is observed).
func (s *Server) ObserveFsync(d time.Duration, err error) {
	s.fsync.Observe(d.Seconds())
}
