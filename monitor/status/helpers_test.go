package status

import (
	"bufio"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"net/http"
	"strconv"
	"strings"
	"testing"
	"time"

	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/tension"
)

// Invented demo instrument: the tenor section of a workshop upright being re-strung.
// Only the fields the status server reads matter here.
func testConfig(ids ...string) *instrument.Config {
	wire := &tension.Material{Name: "music_wire", Basis: "invented test figure"}
	notes := []string{"C3", "C#3", "D3", "D#3", "E3", "F3", "F#3", "G3", "G#3", "A3", "A#3", "B3", "C4"}
	if len(ids) == 0 {
		ids = []string{"C3", "C#3", "D3", "D#3", "E3"}
	}
	cfg := &instrument.Config{Instrument: instrument.Instrument{Name: "Workshop upright, tenor (demo)", ReferenceHz: 440}}
	cfg.Listen.MarginWarn, cfg.Listen.MarginAlarm = 0.70, 0.85
	for i, id := range ids {
		cfg.Instrument.Strings = append(cfg.Instrument.Strings, instrument.String{
			ID: id, Note: notes[i%len(notes)], Section: "tenor",
			TargetHz: 130.81 * math.Pow(2, float64(i)/12), // 12-TET from C3, only displayed
			Phys:     tension.String{LengthM: 1, Core: tension.Layer{Material: wire, DiameterM: 0.001}},
		})
	}
	return cfg
}

var t0 = time.Date(2031, 3, 14, 22, 0, 0, 0, time.UTC) // an invented night

func readingEntry(seq uint64, id string, s monitor.State, cents float64) monitor.Entry {
	return monitor.Entry{
		Seq: seq, Kind: monitor.KindReading, Time: t0.Add(time.Duration(seq) * time.Second), String: id,
		F0Hz: 130.81, FundamentalHz: 130.9, Cents: cents, TensionN: 600 + cents, Margin: 0.55,
		RateCentsHour: -1.5, State: s, Inharmonicity: 2e-4,
	}
}

func stateChange(seq uint64, id string, prev, s monitor.State, reason string) monitor.Entry {
	e := readingEntry(seq, id, s, -2)
	e.Kind, e.Prev, e.Reason = monitor.KindState, &prev, reason
	return e
}

// sseEvent is one parsed server-sent event.
type sseEvent struct {
	ID    uint64
	Event string
	Data  string
}

// sseReader parses an event stream; comment lines are counted, not returned.
type sseReader struct {
	r        *bufio.Reader
	comments int
}

func newSSEReader(r io.Reader) *sseReader { return &sseReader{r: bufio.NewReaderSize(r, 1<<16)} }

func (s *sseReader) next() (sseEvent, error) {
	var ev sseEvent
	for {
		line, err := s.r.ReadString('\n')
		if err != nil {
			return ev, err
		}
		line = strings.TrimSuffix(line, "\n")
		switch {
		case line == "":
			if ev.Event != "" || ev.Data != "" {
				return ev, nil
			}
		case strings.HasPrefix(line, ":"):
			s.comments++
		case strings.HasPrefix(line, "id: "):
			ev.ID, err = strconv.ParseUint(line[4:], 10, 64)
			if err != nil {
				return ev, fmt.Errorf("bad id line %q", line)
			}
		case strings.HasPrefix(line, "event: "):
			ev.Event = line[7:]
		case strings.HasPrefix(line, "data: "):
			ev.Data += line[6:]
		case strings.HasPrefix(line, "retry: "):
		default:
			return ev, fmt.Errorf("unexpected line %q", line)
		}
	}
}

func decode[T any](t testing.TB, data string) T {
	t.Helper()
	var v T
	if err := json.Unmarshal([]byte(data), &v); err != nil {
		t.Fatalf("decode %T: %v in %s", v, err, data)
	}
	return v
}

// openStream connects to /api/events and returns the reader and the snapshot.
func openStream(t testing.TB, url string) (*sseReader, Snapshot, func()) {
	t.Helper()
	req, err := http.NewRequest("GET", url+"/api/events", nil)
	if err != nil {
		t.Fatal(err)
	}
	resp, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	if resp.StatusCode != 200 || resp.Header.Get("Content-Type") != "text/event-stream" {
		t.Fatalf("events: %s %q", resp.Status, resp.Header.Get("Content-Type"))
	}
	r := newSSEReader(resp.Body)
	ev, err := r.next()
	if err != nil || ev.Event != "snapshot" {
		t.Fatalf("first event %+v, %v; want the snapshot", ev, err)
	}
	snap := decode[Snapshot](t, ev.Data)
	if ev.ID != snap.Rev {
		t.Fatalf("snapshot id %d, rev %d", ev.ID, snap.Rev)
	}
	return r, snap, func() { resp.Body.Close() }
}
