package instrument

import (
	"math"
	"testing"
	"testing/fstest"
	"time"

	"taut/monitor/tension"
)

func mapFS(files map[string]string) fstest.MapFS {
	fsys := fstest.MapFS{}
	for name, data := range files {
		fsys[name] = &fstest.MapFile{Data: []byte(data)}
	}
	return fsys
}

const minimal = `name = "minimal"
[[string]]
id = "C4"
note = "C4"
length_mm = 620
core = "music_wire"
core_mm = 1.0
`

func TestParse_Defaults(t *testing.T) {
	cfg, err := Parse(mapFS(map[string]string{"m.toml": minimal}), "m.toml")
	if err != nil {
		t.Fatal(err)
	}
	if cfg.Path != "m.toml" || cfg.Instrument.ReferenceHz != 440 {
		t.Errorf("Path %q, reference %g", cfg.Path, cfg.Instrument.ReferenceHz)
	}
	if cfg.Listen != DefaultListen {
		t.Errorf("Listen = %+v, want defaults %+v", cfg.Listen, DefaultListen)
	}
	if cfg.Journal != DefaultJournal {
		t.Errorf("Journal = %+v, want %+v", cfg.Journal, DefaultJournal)
	}
	if cfg.Exciter != DefaultExciter {
		t.Errorf("Exciter = %+v, want %+v", cfg.Exciter, DefaultExciter)
	}
	if a := cfg.Audio; a.Input != "device" || a.Format != "s16le" || a.RateHz != 48000 || a.Channels != 1 || a.Speed != 1 {
		t.Errorf("Audio = %+v", a)
	}
	if cfg.HTTP.Listen != "" || cfg.Lamps.Required || len(cfg.Lamps.Lamp) != 0 {
		t.Errorf("HTTP %+v Lamps %+v", cfg.HTTP, cfg.Lamps)
	}
	s := cfg.Instrument.Strings[0]
	// ISO 16: A4 = 440 Hz → C4 = 261.6256 Hz (reference-values §5).
	if math.Abs(s.TargetHz-261.6256) > 1e-4 {
		t.Errorf("C4 target = %.4f, want 261.6256", s.TargetHz)
	}
	// reference-values §1.2 E7: C4, 0.62 m, 1.00 mm plain wire, ρ 7850 → 648.9 N at
	// f0 = 261.6256 Hz. (The string tuned to C4 as a first partial has an f0 0.3 cents
	// lower: TestParse_TargetIsFirstPartial.)
	if tn := s.Phys.Tension(s.TargetHz); math.Abs(tn-648.9) > 0.05 {
		t.Errorf("tension = %.2f N, want 648.9", tn)
	}
}

func TestParse_Settings(t *testing.T) {
	src := minimal + `
[listen]
steady_cents_per_hour = 2
rate_window = "90m"
margin_warn = 0.6
margin_alarm = 0.8
[journal]
dir = "/var/lib/taut"
fsync_interval = "1s"
segment_mb = 4
[http]
listen = ":9440"
[audio]
files = ["a.wav", "b.wav"]
speed = 0
[lamps]
required = true
[[lamps.lamp]]
pin = "GPIO17"
shows = "alarm"
blink = true
[exciter]
pulse = "10ms"
quiet_hours = "22:00-07:00"
`
	cfg, err := Parse(mapFS(map[string]string{"s.toml": src}), "s.toml")
	if err != nil {
		t.Fatal(err)
	}
	l := cfg.Listen
	if l.SteadyCentsPerHour != 2 || l.RateWindow != 90*time.Minute || l.MarginWarn != 0.6 || l.MarginAlarm != 0.8 || l.ToleranceCents != 3 {
		t.Errorf("Listen = %+v", l)
	}
	if j := cfg.Journal; j.Dir != "/var/lib/taut" || j.FsyncInterval != time.Second || j.SegmentBytes != 4<<20 {
		t.Errorf("Journal = %+v", j)
	}
	if a := cfg.Audio; a.Input != "" || len(a.Files) != 2 || a.Speed != 0 {
		t.Errorf("Audio = %+v", a)
	}
	if cfg.HTTP.Listen != ":9440" {
		t.Errorf("HTTP = %+v", cfg.HTTP)
	}
	want := Lamp{Name: "alarm", Pin: "GPIO17", Shows: "alarm", Blink: true}
	if !cfg.Lamps.Required || len(cfg.Lamps.Lamp) != 1 || cfg.Lamps.Lamp[0] != want {
		t.Errorf("Lamps = %+v", cfg.Lamps)
	}
	if e := cfg.Exciter; e.Pulse != 10*time.Millisecond || e.MaxPulse != 50*time.Millisecond || e.QuietHours != "22:00-07:00" {
		t.Errorf("Exciter = %+v", e)
	}
}

func TestParse_Strings(t *testing.T) {
	toml := `name = "mixed"
reference_hz = 442
string_table = "t.csv"
[materials.silk_core]
like = "nylon"
density_kg_m3 = 1200
strength_mpa = 300
basis = "invented test value"
[[string]]
id = "G3"
target_hz = 196.5
length_in = 30
core = "silk_core"
core_in = 0.04
wrap1 = "copper"
wrap1_mm = 0.2
mass_g_per_m = 1.2
channel = 2
exciter_pin = "GPIO23"
`
	csv := "id,note,section,length_mm,core,core_in,wrap1,wrap1_mm,wrap2,wrap2_mm,cents_offset\n" +
		"A1a,A1,bass,1200,music_wire,0.059,copper,1.0,copper,0.8,-2\n" +
		"A1b,A1,bass,1200,music_wire,0.059,copper,1.0,copper,0.8,-2\n" +
		"C5a,C5,tenor,350,music_wire,0.036,,,,,\n"
	cfg, err := Parse(mapFS(map[string]string{"d/i.toml": toml, "d/t.csv": csv}), "d/i.toml")
	if err != nil {
		t.Fatal(err)
	}
	ss := cfg.Instrument.Strings
	if len(ss) != 4 || ss[0].ID != "A1a" || ss[1].ID != "A1b" || ss[2].ID != "G3" || ss[3].ID != "C5a" {
		t.Fatalf("strings not in scale order: %+v", ss)
	}
	a := ss[0]
	// A1 = 55 Hz at A4 = 440; here A4 = 442 and −2 cents.
	if want := 55 * 442.0 / 440 * math.Exp2(-2.0/1200); math.Abs(a.TargetHz-want) > 1e-9 || a.CentsOffset != -2 {
		t.Errorf("A1a target %.6f, want %.6f", a.TargetHz, want)
	}
	if a.Section != "bass" || len(a.Phys.Wraps) != 2 || a.Phys.Core.DiameterM != tension.Inches(0.059) || a.Phys.LengthM != 1.2 {
		t.Errorf("A1a = %+v", a)
	}
	g := ss[2]
	if g.Note != "G3" || g.TargetHz != 196.5 || g.Channel != 2 || g.ExciterPin != "GPIO23" || g.Phys.MeasuredMuKgM != 1.2e-3 {
		t.Errorf("G3 = %+v", g)
	}
	if m := g.Phys.Core.Material; m.Name != "silk_core" || m.DensityKgM3 != 1200 || m.StrengthPa != 300e6 || m.YoungPa != 4e9 || m.Basis != "invented test value" {
		t.Errorf("silk_core = %+v", m)
	}
	if math.Abs(g.Phys.LengthM-0.762) > 1e-12 {
		t.Errorf("30 in = %g m", g.Phys.LengthM)
	}
	if len(cfg.Instrument.Materials) != 9 {
		t.Errorf("%d materials, want 8 built-in + 1", len(cfg.Instrument.Materials))
	}
}

func TestParse_MaterialOverride(t *testing.T) {
	src := minimal + `
[materials.music_wire]
strength_mpa = 2600
`
	cfg, err := Parse(mapFS(map[string]string{"o.toml": src}), "o.toml")
	if err != nil {
		t.Fatal(err)
	}
	m := cfg.Instrument.Materials["music_wire"]
	if m.StrengthPa != 2600e6 || len(m.StrengthTable) != 0 || m.Basis != "o.toml (config file)" || m.DensityKgM3 != 7850 {
		t.Errorf("override = %+v", m)
	}
	if b := tension.Builtin()["music_wire"]; len(b.StrengthTable) == 0 {
		t.Error("override changed the built-in")
	}
}

func TestLocator(t *testing.T) {
	src := "a = 1 # x = 2\n[t]\nk = \"#not a comment\" # c\n[[arr]]\nx = 1\n[[arr]]\nx = 2\n\"q.k\".z = 3\n"
	l := newLocator(src)
	for path, want := range map[string]int{"a": 1, "t": 2, "t.k": 3, "arr.0.x": 5, "arr.1": 6, "arr.1.x": 7, "arr.1.q.k.z": 8, "nope": 0} {
		if got := l.line(path); got != want {
			t.Errorf("line(%q) = %d, want %d", path, got, want)
		}
	}
	if got := l.nth("arr.x", 1); got != 7 {
		t.Errorf("nth(arr.x, 1) = %d, want 7", got)
	}
}
