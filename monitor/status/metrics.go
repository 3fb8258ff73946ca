package status

import (
	"runtime"
	"time"

	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/collectors"

	"taut/monitor"
)

// Metric names follow the Prometheus naming guide: the taut_ prefix, base units
// (hertz, newtons, seconds, ratio 0..1), _total on counters. The drift rate is
// exported per second (taut_string_drift_cents_per_second) and not per hour as the
// page shows it: promlint rejects "hours" ("use base unit seconds"), and a
// per-second gauge composes with PromQL's own rates; multiply by 3600 for the
// page's cents per hour. Cents have no SI base; the suffix names the unit.
func desc(name, help string, labels ...string) *prometheus.Desc {
	return prometheus.NewDesc(name, help, labels, nil)
}

var (
	descFrequency = desc("taut_string_frequency_hertz", "Fitted fundamental f0 of the string's latest reading.", "string")
	descTension   = desc("taut_string_tension_newtons", "Tension computed from the string's latest reading.", "string")
	descMargin    = desc("taut_string_margin_ratio", "Tension of the latest reading over the estimated breaking load.", "string")
	descCents     = desc("taut_string_deviation_cents", "Latest reading's distance from the target pitch, in cents.", "string")
	descDrift     = desc("taut_string_drift_cents_per_second", "Robust drift rate of the string's pitch (page shows it per hour).", "string")
	descStringTS  = desc("taut_string_last_reading_timestamp_seconds", "Time of the string's latest reading (journal clock).", "string")
	descState     = desc("taut_string_state", "1 for the string's current state, 0 for the others.", "string", "state")
	descLastTS    = desc("taut_last_reading_timestamp_seconds", "Time of the latest reading of any string (journal clock).")
	descUnknown   = desc("taut_status_unknown_string_entries_total", "Entries naming a string that is not in the config.")
	descClients   = desc("taut_status_event_streams", "Open /api/events streams.")
	descDropped   = desc("taut_status_event_streams_dropped_total", "Event streams dropped because the client fell behind.")

	descFrames        = desc("taut_audio_frames_total", "Audio frames read from the source.")
	descDroppedFrames = desc("taut_audio_dropped_frames_total", "Audio frames dropped because analysis fell behind.")
	descOverflows     = desc("taut_audio_input_overflows_total", "Input overflows reported by the audio device.")
	descGaps          = desc("taut_audio_gaps_total", "Discontinuities in the audio stream.")
	descLastFrame     = desc("taut_audio_last_frame_timestamp_seconds", "When the latest audio frame arrived.")
	descReadings      = desc("taut_readings_total", "Notes matched to a string.")
	descUnmatched     = desc("taut_unmatched_notes_total", "Notes that no string could claim.")
	descFsyncs        = desc("taut_journal_fsyncs_total", "Successful fsyncs of the journal.")
	descFsyncErrors   = desc("taut_journal_fsync_errors_total", "Failed fsyncs of the journal.")
	descWriteErrors   = desc("taut_journal_write_errors_total", "Failed writes to the journal.")
	descBacklog       = desc("taut_journal_backlog_entries", "Journal entries held in memory, not yet written.")
)

var allStates = []monitor.State{monitor.Quiet, monitor.Settling, monitor.Steady, monitor.OffTarget, monitor.Alarm}

// newRegistry builds the server's private registry.
func (s *Server) newRegistry() (*prometheus.Registry, prometheus.Histogram) {
	reg := prometheus.NewRegistry()
	build := prometheus.NewGaugeVec(prometheus.GaugeOpts{
		Name: "taut_build_info",
		Help: "Always 1; the labels name the build.",
	}, []string{"version", "goversion"})
	build.WithLabelValues(s.opts.Version, runtime.Version()).Set(1)
	fsync := prometheus.NewHistogram(prometheus.HistogramOpts{
		Name: "taut_journal_fsync_duration_seconds",
		Help: "Duration of journal fsyncs, failed ones included.",
		// SD cards take from a millisecond to seconds under write pressure.
		Buckets: []float64{.001, .0025, .005, .01, .025, .05, .1, .25, .5, 1, 2.5, 5, 10},
	})
	reg.MustRegister(build, fsync, stringsCollector{s}, statsCollector{s},
		collectors.NewGoCollector(),
		collectors.NewProcessCollector(collectors.ProcessCollectorOpts{}))
	return reg, fsync
}

// stringsCollector exports the per-string figures from the snapshot at scrape
// time, so Publish pays nothing for metrics. The string label takes only the
// configured string ids.
type stringsCollector struct{ s *Server }

func (c stringsCollector) Describe(ch chan<- *prometheus.Desc) {
	for _, d := range []*prometheus.Desc{descFrequency, descTension, descMargin, descCents, descDrift,
		descStringTS, descState, descLastTS, descUnknown, descClients, descDropped} {
		ch <- d
	}
}

func (c stringsCollector) Collect(ch chan<- prometheus.Metric) {
	s := c.s
	s.mu.Lock()
	rows := append([]StringStatus(nil), s.rows...)
	lastTime, unknown, clients, dropped := s.lastTime, s.unknown, len(s.clients), s.dropped
	s.mu.Unlock()

	gauge := func(d *prometheus.Desc, v float64, labels ...string) {
		ch <- prometheus.MustNewConstMetric(d, prometheus.GaugeValue, v, labels...)
	}
	for _, r := range rows {
		for _, st := range allStates {
			gauge(descState, boolFloat(r.State == st), r.ID, st.String())
		}
		if !r.Heard {
			continue // no reading yet: no figures rather than made-up zeros
		}
		gauge(descFrequency, r.F0Hz, r.ID)
		gauge(descTension, r.TensionN, r.ID)
		gauge(descMargin, r.Margin, r.ID)
		gauge(descCents, r.Cents, r.ID)
		gauge(descDrift, r.RateCentsHour/3600, r.ID)
		gauge(descStringTS, unixSeconds(r.Time), r.ID)
	}
	if !lastTime.IsZero() {
		gauge(descLastTS, unixSeconds(lastTime))
	}
	ch <- prometheus.MustNewConstMetric(descUnknown, prometheus.CounterValue, float64(unknown))
	gauge(descClients, float64(clients))
	ch <- prometheus.MustNewConstMetric(descDropped, prometheus.CounterValue, float64(dropped))
}

// statsCollector exports the listener's counters, read once per scrape.
type statsCollector struct{ s *Server }

func (c statsCollector) Describe(ch chan<- *prometheus.Desc) {
	for _, d := range []*prometheus.Desc{descFrames, descDroppedFrames, descOverflows, descGaps, descLastFrame,
		descReadings, descUnmatched, descFsyncs, descFsyncErrors, descWriteErrors, descBacklog} {
		ch <- d
	}
}

func (c statsCollector) Collect(ch chan<- prometheus.Metric) {
	if c.s.opts.Stats == nil {
		return
	}
	st := c.s.opts.Stats()
	counter := func(d *prometheus.Desc, v uint64) {
		ch <- prometheus.MustNewConstMetric(d, prometheus.CounterValue, float64(v))
	}
	counter(descFrames, st.FramesRead)
	counter(descDroppedFrames, st.FramesDropped)
	counter(descOverflows, st.Overflows)
	counter(descGaps, st.Gaps)
	counter(descReadings, st.Readings)
	counter(descUnmatched, st.Unmatched)
	counter(descFsyncs, st.JournalFsyncs)
	counter(descFsyncErrors, st.JournalFsyncErrors)
	counter(descWriteErrors, st.JournalWriteErrors)
	ch <- prometheus.MustNewConstMetric(descBacklog, prometheus.GaugeValue, float64(st.JournalBacklog))
	if !st.LastFrame.IsZero() {
		ch <- prometheus.MustNewConstMetric(descLastFrame, prometheus.GaugeValue, unixSeconds(st.LastFrame))
	}
}

func boolFloat(b bool) float64 {
	if b {
		return 1
	}
	return 0
}

func unixSeconds(t time.Time) float64 { return float64(t.UnixNano()) / 1e9 }

// Registry returns the server's private Prometheus registry (for tests and for
// adding the listener's own collectors).
func (s *Server) Registry() *prometheus.Registry { return s.reg }
