package report

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"math"
	"math/rand/v2"
	"slices"
	"strings"
	"testing"
	"time"

	"taut/monitor"
)

var night0 = time.Date(2031, 3, 14, 21, 0, 0, 0, time.UTC)

// fakeNight makes the entries of a 10-hour night, rounds every 20 minutes, for five
// strings: A settles by log creep; B also slips 30 cents at 5 h; C runs at 90 % of its
// breaking load; D's partials shift at 6 h (the listener alarms); E is pulled up
// 15 cents at 5 h. Seeded noise of 0.3 cents.
func fakeNight() []monitor.Entry {
	rng := rand.New(rand.NewPCG(1, 1))
	var out []monitor.Entry
	seq := uint64(0)
	add := func(e monitor.Entry) {
		seq++
		e.Seq, e.Run = seq, "run-1"
		out = append(out, e)
	}
	add(monitor.Entry{Kind: monitor.KindStart, Time: night0})
	ids := []string{"A", "B", "C", "D", "E"}
	hz := []float64{110, 147, 196, 262, 349}
	for round := 0; round <= 30; round++ {
		for i, id := range ids {
			h := float64(round)/3 + float64(i)*0.01
			c := -4*math.Log1p(h/0.4) + 0.3*rng.NormFloat64()
			e := monitor.Entry{Kind: monitor.KindReading, String: id, MonoS: h * 3600,
				F0Hz: hz[i], Inharmonicity: 1e-4, TensionN: 100, Margin: 0.5, State: monitor.Settling}
			switch {
			case id == "B" && h >= 5:
				c -= 30
				e.State, e.Reason = monitor.Alarm, "jump"
			case id == "C":
				e.Margin, e.State, e.Reason = 0.9, monitor.Alarm, "margin"
			case id == "D" && h >= 6:
				e.Inharmonicity = 1.6e-4
				e.State, e.Reason = monitor.Alarm, "partials"
			case id == "E" && h >= 5:
				c += 15 - 2*math.Log1p((h-5)/0.4)
			}
			e.Cents = c
			e.Time = night0.Add(time.Duration(e.MonoS * float64(time.Second)))
			add(e)
		}
	}
	add(monitor.Entry{Kind: monitor.KindGap, Time: night0.Add(2 * time.Hour), MonoS: 7200, Reason: "overflow", GapFrames: 512})
	return out
}

func TestBuild_FlagsAndOrder(t *testing.T) {
	r := Build(fakeNight(), Options{JournalPath: "j"})
	var ids []string
	for _, s := range r.Strings {
		ids = append(ids, s.ID)
	}
	// Without a config: ordered by median pitch, lowest first.
	if !slices.Equal(ids, []string{"A", "B", "C", "D", "E"}) {
		t.Errorf("order %v", ids)
	}
	want := map[string][]string{"B": {FlagSlip}, "C": {FlagMargin}, "D": {FlagPartials}}
	for _, s := range r.Strings {
		if !slices.Equal(s.Flags, want[s.ID]) {
			t.Errorf("%s: flags %v, want %v (reasons %q)", s.ID, s.Flags, want[s.ID], s.Reasons)
		}
	}
	// Attention: the three alarms first, C (margin 90 %) leading them.
	att := r.Attention()
	if len(att) < 3 || att[0].ID != "C" || att[0].Class != ClassAlarm || att[1].Class != ClassAlarm || att[2].Class != ClassAlarm {
		t.Errorf("attention order %v", attentionIDs(att))
	}
	if !r.HighMargin() {
		t.Error("a 90 % margin is not reported as high")
	}
	e := r.Strings[4]
	if len(e.Analysis.Segments) != 2 {
		t.Errorf("E: %d segments, want 2 (one pull-up)", len(e.Analysis.Segments))
	}
	d := r.Strings[3]
	if !strings.Contains(strings.Join(d.Reasons, " "), "from 0.0001 to 0.00016 (+60 %)") {
		t.Errorf("D reasons %q lack the B shift", d.Reasons)
	}
	if len(r.Night) != 2 || r.Night[1].Kind != monitor.KindGap {
		t.Errorf("night events %+v", r.Night)
	}
}

func attentionIDs(ss []*String) []string {
	var out []string
	for _, s := range ss {
		out = append(out, s.ID)
	}
	return out
}

func TestReport_WriteJSON(t *testing.T) {
	r := Build(fakeNight(), Options{JournalPath: "j"})
	var buf bytes.Buffer
	if err := r.WriteJSON(&buf); err != nil {
		t.Fatal(err)
	}
	var f struct {
		Flagged []string                 `json:"flagged"`
		Caution string                   `json:"caution"`
		Strings []map[string]interface{} `json:"strings"`
	}
	if err := json.Unmarshal(buf.Bytes(), &f); err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(f.Flagged, []string{"B", "C", "D"}) {
		t.Errorf("flagged %v", f.Flagged)
	}
	if f.Caution == "" {
		t.Error("no caution with a 90 % margin")
	}
	for _, key := range []string{"id", "state", "rate_cents_per_hour", "hours_to_steady", "cents_now",
		"tension_n", "margin", "flags", "reasons", "fit_model", "suggested_pull_up_cents"} {
		if _, ok := f.Strings[0][key]; !ok {
			t.Errorf("summary lacks %q", key)
		}
	}
	if f.Strings[2]["state"] != "alarm" {
		t.Errorf("C state %v, want alarm", f.Strings[2]["state"])
	}
}

func TestReport_WriteCSV(t *testing.T) {
	r := Build(fakeNight(), Options{})
	var buf bytes.Buffer
	if err := r.WriteCSV(&buf); err != nil {
		t.Fatal(err)
	}
	rows, err := csv.NewReader(&buf).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) != 1+31*5 {
		t.Errorf("%d rows, want header + 155 readings", len(rows))
	}
	if rows[1][4] != "A" || rows[1][14] != "settling" {
		t.Errorf("first row %v", rows[1])
	}
}

func TestReport_WriteHTML(t *testing.T) {
	r := Build(fakeNight(), Options{JournalPath: "night/journal"})
	var buf bytes.Buffer
	if err := r.WriteHTML(&buf); err != nil {
		t.Fatal(err)
	}
	page := buf.String()
	for _, want := range []string{"Caution: high tension", "Look at these first", "<svg", "slip -30",
		"pull-up +1", "warning 70 %", "alarm 85 %", "FLAGGED: margin"} {
		if !strings.Contains(page, want) {
			t.Errorf("page lacks %q", want)
		}
	}
	// Self-contained: the only URL is the SVG namespace.
	rest := strings.ReplaceAll(page, `xmlns="http://www.w3.org/2000/svg"`, "")
	for _, bad := range []string{"http://", "https://", "<script", "<link", "@import", "url(http"} {
		if strings.Contains(rest, bad) {
			t.Errorf("page contains %q", bad)
		}
	}
}

func TestReport_WriteTable(t *testing.T) {
	r := Build(fakeNight(), Options{})
	var buf bytes.Buffer
	if err := r.WriteTable(&buf); err != nil {
		t.Fatal(err)
	}
	out := buf.String()
	for _, want := range []string{"string  state", "flagged (3):", "look at first: C (alarm)", "CAUTION:"} {
		if !strings.Contains(out, want) {
			t.Errorf("table lacks %q:\n%s", want, out)
		}
	}
}

func TestBuild_Empty(t *testing.T) {
	r := Build(nil, Options{})
	var buf bytes.Buffer
	if err := r.WriteHTML(&buf); err != nil {
		t.Fatal(err)
	}
	if err := r.WriteJSON(&buf); err != nil {
		t.Fatal(err)
	}
	if len(r.Strings) != 0 || r.HighMargin() {
		t.Errorf("empty journal: %d strings", len(r.Strings))
	}
}
