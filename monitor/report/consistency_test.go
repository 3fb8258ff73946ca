package report

import (
	"bytes"
	"encoding/json"
	"math"
	"regexp"
	"strings"
	"testing"
	"time"

	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/tension"
)

// readingsOf makes a string's readings every 20 minutes for hours, with the listener's
// state, reason and rate on each; cents(h) gives the pitch.
func readingsOf(id string, hours float64, cents func(h float64) float64, state monitor.State, reason string,
	rate float64, seq *uint64) []monitor.Entry {
	var out []monitor.Entry
	for h := 0.0; h <= hours+1e-9; h += 1.0 / 3 {
		*seq++
		out = append(out, monitor.Entry{Seq: *seq, Run: "r", Kind: monitor.KindReading, String: id,
			Time: night0.Add(time.Duration(h * float64(time.Hour))), MonoS: h * 3600, FundamentalHz: 220, F0Hz: 219.9,
			Cents: cents(h), TensionN: 100, Margin: 0.4, State: state, Reason: reason, RateCentsHour: rate})
	}
	return out
}

// TestReport_ListenerAndFitConsistent: the listener's verdict and the fit's figures
// may differ near a threshold; the report must neither call an off-target string's
// next pull-up "none" nor present a string the listener calls settling as fine.
func TestReport_ListenerAndFitConsistent(t *testing.T) {
	var seq uint64
	// OFF: steady at −2.9 cents, the last reading −3.1: the listener calls it
	// off-target (its rule: the last reading beyond ±3), the fit puts it inside.
	off := readingsOf("OFF", 5, func(h float64) float64 {
		if h > 4.9 {
			return -3.1
		}
		return -2.9
	}, monitor.Steady, "drift", -0.02, &seq)
	off[len(off)-1].State, off[len(off)-1].Reason = monitor.OffTarget, "tolerance"
	// SLOW: sags 0.9 cents/hour — under the 1 ¢/h threshold by the fit — while the
	// listener's robust window slope is 1.1 and it still calls it settling.
	slow := readingsOf("SLOW", 3, func(h float64) float64 { return -0.9 * h }, monitor.Settling, "drift", -1.1, &seq)
	r := Build(append(off, slow...), Options{JournalPath: "j"})
	o, s := r.Strings[0], r.Strings[1]
	if o.ID != "OFF" || s.ID != "SLOW" {
		t.Fatalf("order %s, %s", o.ID, s.ID)
	}
	t.Run("OffTargetGetsAPullUp", func(t *testing.T) {
		if math.Abs(o.Analysis.CentsNow) > r.Limits.ToleranceCents {
			t.Fatalf("test premise: the fit puts OFF at %.2f, outside the tolerance", o.Analysis.CentsNow)
		}
		g := o.Analysis.Suggest
		// From the last reading with the trade share (30 %): −(−3.1)/(1−0.3).
		if want := 3.1 / 0.7; math.Abs(g.RaiseCents-want) > 1e-9 || math.Abs(g.AimCents-(want-3.1)) > 1e-9 {
			t.Errorf("raise %.3f → aim %.3f, want %.3f → %.3f", g.RaiseCents, g.AimCents, want, want-3.1)
		}
		if o.Class != ClassPitch || !strings.Contains(strings.Join(o.Reasons, " "), "the listener calls it off-target") {
			t.Errorf("class %d, reasons %q", o.Class, o.Reasons)
		}
		if rw := rowOf(o); !strings.HasSuffix(rw.PullUp, "(from last reading)") || strings.HasPrefix(rw.PullUp, "none") {
			t.Errorf("pull-up cell %q", rw.PullUp)
		}
	})
	t.Run("ListenerSettlingIsNotFine", func(t *testing.T) {
		if !s.Analysis.Steady {
			t.Fatalf("test premise: the fit's rate %.2f is not under 1", s.Analysis.RateNow)
		}
		if s.Class != ClassSettling || !strings.Contains(strings.Join(s.Reasons, " "), "the listener still calls it settling") {
			t.Errorf("class %d, reasons %q", s.Class, s.Reasons)
		}
	})
	t.Run("TableAndPageSayWhoseFigure", func(t *testing.T) {
		var table, page bytes.Buffer
		if err := r.WriteTable(&table); err != nil {
			t.Fatal(err)
		}
		if err := r.WriteHTML(&page); err != nil {
			t.Fatal(err)
		}
		for _, want := range []string{"state at dawn (listener)", "listener ¢/h (2 h)", "fit: cents now",
			"fit: steady (&lt; 1 ¢/h) in", "steady under 1 ¢/h"} {
			plain := strings.ReplaceAll(want, "&lt;", "<")
			if !strings.Contains(table.String(), plain) {
				t.Errorf("table lacks %q:\n%s", plain, table.String())
			}
			if !strings.Contains(page.String(), want) {
				t.Errorf("page lacks %q", want)
			}
		}
		// Both show the same cells for every string (html/template writes "+" as "&#43;").
		html := strings.ReplaceAll(page.String(), "&#43;", "+")
		for _, st := range r.Strings {
			rw := rowOf(st)
			for _, cell := range []string{rw.State, rw.ListenerRate, rw.Cents, rw.Rate, rw.Steady, rw.Margin, rw.PullUp} {
				if !strings.Contains(table.String(), cell) || !strings.Contains(html, cell) {
					t.Errorf("%s: cell %q missing from the table or the page", st.ID, cell)
				}
			}
		}
	})
}

// TestReport_TimesOneFormat: every time in a reason is "hour H (HH:MM)", whether it
// comes from the fit (a slip) or from a listener alarm (partials, margin).
func TestReport_TimesOneFormat(t *testing.T) {
	r := Build(fakeNight(), Options{JournalPath: "j"})
	both := regexp.MustCompile(`at hour \d+\.\d \(\d\d:\d\d\)`)
	clockOnly := regexp.MustCompile(`at \d\d:\d\d`)
	for _, id := range []string{"B", "D"} {
		s := r.Strings[strings.Index("ABCDE", id)]
		txt := strings.Join(s.Reasons[:len(s.Flags)], "; ")
		if !both.MatchString(txt) || clockOnly.MatchString(txt) {
			t.Errorf("%s: %q, want times as \"at hour H (HH:MM)\"", id, txt)
		}
	}
	// B slips at 5 h: 21:00 + 5 h = 02:00 (the step is found at the first reading after it).
	if b := strings.Join(r.Strings[1].Reasons, " "); !strings.Contains(b, "at hour 5.0 (02:00)") {
		t.Errorf("B: %q", b)
	}
	var page bytes.Buffer
	if err := r.WriteHTML(&page); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(page.String(), "hour 2.0 (23:00): gap") {
		t.Error("the night's events do not use the same time format")
	}
}

// TestReport_AsOf: the report speaks as of the journal's last entry (not the time it
// is written, which would make every run differ), and says so.
func TestReport_AsOf(t *testing.T) {
	entries := fakeNight()
	last := entries[len(entries)-2].Time // the gap entry at the end is earlier
	r := Build(entries, Options{})
	if !r.AsOf.Equal(last) {
		t.Errorf("as of %v, want the last entry %v", r.AsOf, last)
	}
	var page, js bytes.Buffer
	if err := r.WriteHTML(&page); err != nil {
		t.Fatal(err)
	}
	if err := r.WriteJSON(&js); err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(page.String(), "<dt>Report as of</dt><dd>"+last.Format("2006-01-02 15:04 MST")) ||
		strings.Contains(page.String(), "Written") {
		t.Error("the page does not say \"Report as of\" the last entry")
	}
	var f map[string]any
	if err := json.Unmarshal(js.Bytes(), &f); err != nil {
		t.Fatal(err)
	}
	if f["as_of"] != last.Format(time.RFC3339Nano) || f["generated"] != nil {
		t.Errorf("summary as_of %v, generated %v", f["as_of"], f["generated"])
	}
}

func configOf(ids ...string) *instrument.Config {
	cfg := &instrument.Config{Path: "other.toml", Instrument: instrument.Instrument{Name: "Another instrument"}}
	for _, id := range ids {
		cfg.Instrument.Strings = append(cfg.Instrument.Strings, instrument.String{ID: id, Note: id, TargetHz: 220})
	}
	return cfg
}

// TestReport_ConfigWarning: a config that does not know more than a quarter of the
// journal's strings is warned about by name, on the page, in summary.json and in the
// terminal table; one that knows most of them is not.
func TestReport_ConfigWarning(t *testing.T) {
	cases := []struct {
		name  string
		cfg   *instrument.Config
		warns bool
	}{
		{"NoConfig", nil, false},
		{"KnowsFourOfFive", configOf("A", "B", "C", "D"), false}, // 20 %
		{"KnowsThreeOfFive", configOf("A", "B", "C"), true},      // 40 %
		{"KnowsNone", configOf("X1", "X2"), true},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			r := Build(fakeNight(), Options{Config: tc.cfg})
			msg := r.ConfigWarning()
			if (msg != "") != tc.warns {
				t.Fatalf("warning %q, want one: %v", msg, tc.warns)
			}
			var page, js, table bytes.Buffer
			if err := r.WriteHTML(&page); err != nil {
				t.Fatal(err)
			}
			if err := r.WriteJSON(&js); err != nil {
				t.Fatal(err)
			}
			if err := r.WriteTable(&table); err != nil {
				t.Fatal(err)
			}
			banner := strings.Contains(page.String(), "Is this the right config?")
			if banner != tc.warns || strings.Contains(js.String(), `"config_warning"`) != tc.warns ||
				strings.HasPrefix(table.String(), "WARNING: ") != tc.warns {
				t.Errorf("banner %v, json %v, table %v; want %v", banner,
					strings.Contains(js.String(), `"config_warning"`), strings.HasPrefix(table.String(), "WARNING: "), tc.warns)
			}
			if tc.warns && (!strings.Contains(msg, "other.toml") || !strings.Contains(msg, "E")) {
				t.Errorf("warning %q does not name the config and the strings", msg)
			}
		})
	}
	if msg := Build(fakeNight(), Options{Config: configOf("A", "B", "C")}).ConfigWarning(); !strings.Contains(msg,
		"2 of the 5 strings in the journal (40 %): D, E") {
		t.Errorf("warning %q", msg)
	}
}

// TestReport_CautionThreshold: the caution shows above min(config margin_warn,
// tension.CautionFloor): a config may warn earlier than the floor, never later.
func TestReport_CautionThreshold(t *testing.T) {
	withMargin := func(m float64) []monitor.Entry {
		var seq uint64
		es := readingsOf("A", 2, func(float64) float64 { return 0 }, monitor.Steady, "drift", 0, &seq)
		for i := range es {
			es[i].Margin = m
		}
		return es
	}
	warnAt := func(w float64) *instrument.Config {
		c := configOf("A")
		c.Listen.MarginWarn, c.Listen.MarginAlarm = w, 0.9
		return c
	}
	cases := []struct {
		name    string
		cfg     *instrument.Config
		margin  float64
		caution bool
	}{
		{"DefaultUnder", nil, 0.69, false},
		{"DefaultOver", nil, 0.71, true},
		{"LateWarnStillFloor", warnAt(0.80), 0.75, true}, // the config may not warn later than 70 %
		{"EarlyWarn", warnAt(0.60), 0.65, true},          // nor stop a config warning earlier
		{"EarlyWarnUnder", warnAt(0.60), 0.55, false},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			r := Build(withMargin(tc.margin), Options{Config: tc.cfg})
			if r.HighMargin() != tc.caution {
				t.Errorf("caution %v at margin %.2f (caution above %.2f)", r.HighMargin(), tc.margin, r.Limits.CautionMargin)
			}
			var page bytes.Buffer
			if err := r.WriteHTML(&page); err != nil {
				t.Fatal(err)
			}
			if strings.Contains(page.String(), "Caution: high tension") != tc.caution ||
				!strings.Contains(page.String(), "and local professional practice") {
				t.Error("the page's caution does not match, or the caution text (tension.Caution) is missing")
			}
		})
	}
	if tension.CautionFloor != 0.70 { // reference-values §4.1: 70 %, the trade's usual upper design limit
		t.Errorf("caution floor %v", tension.CautionFloor)
	}
}
