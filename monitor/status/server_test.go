package status

import (
	"encoding/json"
	"html"
	"io"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"
	"time"

	"github.com/jonboulle/clockwork"

	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/tension"
)

func TestServer_Publish(t *testing.T) {
	fc := clockwork.NewFakeClockAt(t0)
	s := New(testConfig(), Options{Clock: fc, StaleAfter: 10 * time.Minute})
	s.Publish(monitor.Entry{Seq: 1, Kind: monitor.KindStart, Time: t0, Detail: "resumed"})
	s.Publish(readingEntry(2, "D3", monitor.Settling, -14.2))
	fc.Advance(time.Minute)
	s.Publish(stateChange(3, "D3", monitor.Settling, monitor.Alarm, "margin"))
	s.Publish(monitor.Entry{Seq: 4, Kind: monitor.KindUnmatched, FundamentalHz: 999})
	s.Publish(readingEntry(5, "Z9", monitor.Steady, 0)) // not in the config
	fc.Advance(2 * time.Minute)

	snap := s.Snapshot()
	if snap.Rev != 5 || snap.Seq != 5 || snap.Unmatched != 1 {
		t.Errorf("rev %d seq %d unmatched %d, want 5 5 1", snap.Rev, snap.Seq, snap.Unmatched)
	}
	var ids []string
	for _, r := range snap.Strings {
		ids = append(ids, r.ID)
	}
	if got := strings.Join(ids, " "); got != "C3 C#3 D3 D#3 E3" {
		t.Errorf("rows %q, want the config's scale order", got)
	}
	d3 := snap.Strings[2]
	if !d3.Heard || d3.State != monitor.Alarm || d3.Reason != "margin" || d3.Cents != -2 || d3.Seq != 3 {
		t.Errorf("D3 = %+v", d3)
	}
	if d3.AgeS != 180 { // reading arrived 3 min ago; the state entry does not reset the age
		t.Errorf("D3 age %v s, want 180", d3.AgeS)
	}
	if c3 := snap.Strings[0]; c3.Heard || c3.State != monitor.Quiet || c3.Material != "music_wire" {
		t.Errorf("C3 = %+v, want unheard, quiet, with its material", c3)
	}
	// Z9's reading (a string not in the config) still proves readings arrive.
	if !snap.Heard || snap.SinceReadingS != 120 || snap.Stale {
		t.Errorf("heard %v since %v stale %v", snap.Heard, snap.SinceReadingS, snap.Stale)
	}
	if len(snap.Events) != 2 || snap.Events[0].Kind != monitor.KindStart || snap.Events[1].Kind != monitor.KindState {
		t.Fatalf("events %+v, want start and state", snap.Events)
	}
	if ev := snap.Events[1]; *ev.State != monitor.Alarm || *ev.Prev != monitor.Settling || ev.String != "D3" {
		t.Errorf("state event %+v", ev)
	}
	fc.Advance(7*time.Minute + 59*time.Second)
	if snap := s.Snapshot(); snap.Stale {
		t.Error("stale before 10 min without a reading")
	}
	fc.Advance(time.Second)
	if snap := s.Snapshot(); !snap.Stale {
		t.Error("not stale 10 min after the last reading")
	}
}

func TestRing(t *testing.T) {
	r := newRing(3)
	for i := uint64(1); i <= 5; i++ {
		r.push(Event{Seq: i})
	}
	var got []uint64
	for _, e := range r.list() {
		got = append(got, e.Seq)
	}
	if len(got) != 3 || got[0] != 3 || got[2] != 5 {
		t.Errorf("ring %v, want [3 4 5]", got)
	}
}

func get(t *testing.T, h http.Handler, method, target string) *http.Response {
	t.Helper()
	w := httptest.NewRecorder()
	h.ServeHTTP(w, httptest.NewRequest(method, target, nil))
	return w.Result()
}

func body(t *testing.T, r *http.Response) string {
	t.Helper()
	b, err := io.ReadAll(r.Body)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

func TestHandler_page(t *testing.T) {
	h := New(testConfig(), Options{Version: "v1.2.3"}).Handler()
	tests := []struct {
		target   string
		wantBody []string
		notBody  []string
	}{
		{"/", []string{"<title>Workshop upright, tenor (demo) · taut</title>", `<html lang="en">`, `href="/?display=wall"`, "taut v1.2.3", "Caution: high tension", html.EscapeString(tension.Caution)}, []string{"display-wall"}},
		{"/?display=wall", []string{`<html lang="en" class="display-wall">`, `href="/">normal view`}, nil},
		{"/?display=<script>", []string{`<html lang="en">`}, []string{"<script>\""}},
	}
	for _, tt := range tests {
		t.Run(tt.target, func(t *testing.T) {
			r := get(t, h, "GET", tt.target)
			b := body(t, r)
			if r.StatusCode != 200 || !strings.HasPrefix(r.Header.Get("Content-Type"), "text/html") {
				t.Fatalf("%s %q", r.Status, r.Header.Get("Content-Type"))
			}
			if csp := r.Header.Get("Content-Security-Policy"); !strings.Contains(csp, "default-src 'self'") {
				t.Errorf("CSP %q", csp)
			}
			for _, w := range tt.wantBody {
				if !strings.Contains(b, w) {
					t.Errorf("page lacks %q", w)
				}
			}
			for _, w := range tt.notBody {
				if strings.Contains(b, w) {
					t.Errorf("page contains %q", w)
				}
			}
		})
	}
}

// TestHandler_assetsOffline: the page loads nothing from the network.
func TestHandler_assetsOffline(t *testing.T) {
	h := New(testConfig(), Options{}).Handler()
	for _, a := range []struct{ path, ctype string }{
		{"/", "text/html"}, {"/assets/app.js", "text/javascript"}, {"/assets/style.css", "text/css"},
	} {
		r := get(t, h, "GET", a.path)
		b := body(t, r)
		if r.StatusCode != 200 || !strings.HasPrefix(r.Header.Get("Content-Type"), a.ctype) {
			t.Errorf("%s: %s %q", a.path, r.Status, r.Header.Get("Content-Type"))
		}
		// The SVG namespace URI is an identifier, not a fetch.
		b = strings.ReplaceAll(b, `"http://www.w3.org/2000/svg"`, "")
		for _, bad := range []string{"http://", "https://", "//cdn", "@import"} {
			if strings.Contains(b, bad) {
				t.Errorf("%s refers to %q", a.path, bad)
			}
		}
	}
}

// TestHandler_readOnly: no endpoint accepts a method that could change state.
func TestHandler_readOnly(t *testing.T) {
	h := New(testConfig(), Options{}).Handler()
	for _, path := range []string{"/", "/api/strings", "/api/events", "/metrics", "/healthz", "/assets/app.js"} {
		for _, m := range []string{"POST", "PUT", "DELETE", "PATCH"} {
			if r := get(t, h, m, path); r.StatusCode != http.StatusMethodNotAllowed {
				t.Errorf("%s %s: %s, want 405", m, path, r.Status)
			}
		}
	}
	if r := get(t, h, "GET", "/nothing-here"); r.StatusCode != 404 {
		t.Errorf("unknown path: %s", r.Status)
	}
}

func TestHandler_strings(t *testing.T) {
	s := New(testConfig(), Options{Clock: clockwork.NewFakeClockAt(t0)})
	s.Publish(readingEntry(7, "E3", monitor.OffTarget, 6.5))
	r := get(t, s.Handler(), "GET", "/api/strings")
	if r.StatusCode != 200 || r.Header.Get("Content-Type") != "application/json" {
		t.Fatalf("%s %q", r.Status, r.Header.Get("Content-Type"))
	}
	var raw map[string]any
	b := body(t, r)
	if err := json.Unmarshal([]byte(b), &raw); err != nil {
		t.Fatal(err)
	}
	for _, k := range []string{"rev", "seq", "instrument", "strings", "events", "stale", "margin_warn"} {
		if _, ok := raw[k]; !ok {
			t.Errorf("snapshot JSON lacks %q", k)
		}
	}
	snap := decode[Snapshot](t, b)
	e3 := snap.Strings[4]
	if e3.ID != "E3" || e3.State != monitor.OffTarget || e3.Cents != 6.5 || e3.TensionN != 606.5 || e3.Time != t0.Add(7*time.Second) {
		t.Errorf("E3 = %+v", e3)
	}
	if !strings.Contains(b, `"state": "off-target"`) {
		t.Error("states are not encoded by name")
	}
}

func TestServer_Health(t *testing.T) {
	fc := clockwork.NewFakeClockAt(t0)
	ok := Stats{LastFrame: t0.Add(-2 * time.Second), FramesRead: 96000}
	tests := []struct {
		name   string
		stats  func() Stats
		code   int
		reason string
	}{
		{"ok", func() Stats { return ok }, 200, "ok: audio frames flowing, journal written"},
		{"not wired", nil, 503, "no listener statistics: the status server is not wired to a listener"},
		{"no frames yet", func() Stats { return Stats{} }, 503, "audio: no frames received yet"},
		{"frames stopped", func() Stats { return Stats{LastFrame: t0.Add(-42 * time.Second)} }, 503, "audio: no frames for 42s (limit 10s)"},
		{"journal failing", func() Stats {
			s := ok
			s.JournalLastError = "write journal-0001.jsonl: no space left on device"
			return s
		}, 503,
			"journal: write journal-0001.jsonl: no space left on device"},
		{"journal backlog", func() Stats { s := ok; s.JournalBacklog = 12; return s }, 503, "journal: 12 entries waiting to be written"},
		{"past errors only", func() Stats { s := ok; s.JournalWriteErrors = 3; return s }, 200, "ok: audio frames flowing, journal written"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			h := New(testConfig(), Options{Clock: fc, Stats: tt.stats}).Handler()
			r := get(t, h, "GET", "/healthz")
			if got := strings.TrimSpace(body(t, r)); r.StatusCode != tt.code || got != tt.reason {
				t.Errorf("got %d %q, want %d %q", r.StatusCode, got, tt.code, tt.reason)
			}
		})
	}
}

// TestHandler_pageCarriesSnapshot: the page holds the state it was served with, as
// JSON the script can parse, so it is complete before the event stream connects.
func TestHandler_pageCarriesSnapshot(t *testing.T) {
	s := New(testConfig(), Options{Clock: clockwork.NewFakeClockAt(t0)})
	s.Publish(readingEntry(9, "D3", monitor.Alarm, -30))
	s.Publish(monitor.Entry{Seq: 10, Kind: monitor.KindFault, Reason: "journal", Detail: `disk </script><b>full</b>`})
	b := body(t, get(t, s.Handler(), "GET", "/"))
	const open = `<script type="application/json" id="initial">`
	i := strings.Index(b, open)
	j := strings.Index(b[i+len(open):], "</script>")
	if i < 0 || j < 0 {
		t.Fatal("no initial snapshot in the page")
	}
	snap := decode[Snapshot](t, b[i+len(open):i+len(open)+j])
	if snap.Rev != 2 || snap.Strings[2].State != monitor.Alarm || snap.Events[0].Detail != `disk </script><b>full</b>` {
		t.Errorf("embedded snapshot rev %d, D3 %v, event %+v", snap.Rev, snap.Strings[2].State, snap.Events)
	}
}

// TestHandler_emptyLists: a fresh server sends [] (not null) for the lists the page
// iterates over.
func TestHandler_emptyLists(t *testing.T) {
	b := body(t, get(t, New(testConfig(), Options{}).Handler(), "GET", "/api/strings"))
	if !strings.Contains(b, `"events": []`) {
		t.Errorf("events are not an empty list in %s", b)
	}
	b = body(t, get(t, New(&instrument.Config{}, Options{}).Handler(), "GET", "/api/strings"))
	if !strings.Contains(b, `"strings": []`) {
		t.Errorf("strings are not an empty list in %s", b)
	}
}

// TestServer_cautionFloor: the page's high-margin badge and caution start at the
// config's margin_warn, never later than tension.CautionFloor (70 %, reference-values
// §4.1 trade figure): a config may warn earlier, never later.
func TestServer_cautionFloor(t *testing.T) {
	for _, c := range []struct {
		name       string
		configWarn float64
		want       float64
	}{
		{"LateConfigCapped", 0.80, tension.CautionFloor},
		{"EarlyConfigKept", 0.60, 0.60},
		{"UnsetIsFloor", 0, tension.CautionFloor},
	} {
		t.Run(c.name, func(t *testing.T) {
			cfg := testConfig()
			cfg.Listen.MarginWarn, cfg.Listen.MarginAlarm = c.configWarn, 0.90
			s := New(cfg, Options{})
			if got := s.Snapshot().MarginWarn; got != c.want {
				t.Errorf("snapshot margin_warn %g, want %g", got, c.want)
			}
		})
	}
}
