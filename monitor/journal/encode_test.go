package journal

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"math/rand/v2"
	"reflect"
	"strings"
	"testing"
	"time"

	"taut/monitor"
)

// fillEntry sets every field of an Entry, found by reflection, to a random value, so that a
// field added to monitor.Entry later is filled too and TestAppendEntry_MatchesEncodingJSON
// fails until the encoder writes it.
func fillEntry(t testing.TB, rng *rand.Rand) monitor.Entry {
	var e monitor.Entry
	v := reflect.ValueOf(&e).Elem()
	for i := range v.NumField() {
		f, sf := v.Field(i), v.Type().Field(i)
		if rng.IntN(4) == 0 && sf.Name != "Seq" {
			continue // leave some fields zero to exercise omitempty
		}
		switch {
		case sf.Type == reflect.TypeOf(time.Time{}):
			f.Set(reflect.ValueOf(randomTime(rng)))
		case sf.Type == reflect.TypeOf(monitor.State(0)):
			f.SetUint(uint64(rng.IntN(int(monitor.Alarm) + 1)))
		case sf.Type == reflect.TypeOf((*monitor.State)(nil)):
			s := monitor.State(rng.IntN(int(monitor.Alarm) + 1))
			f.Set(reflect.ValueOf(&s))
		case sf.Type.Kind() == reflect.String:
			f.SetString(randomString(rng))
		case sf.Type.Kind() == reflect.Float64:
			f.SetFloat(randomFloat(rng))
		case sf.Type.Kind() == reflect.Int || sf.Type.Kind() == reflect.Int64:
			f.SetInt(rng.Int64N(1<<40) - 1<<39)
		case sf.Type.Kind() == reflect.Uint64:
			f.SetUint(rng.Uint64())
		default:
			t.Fatalf("monitor.Entry field %s has type %s that this test (and probably the journal encoder) does not handle", sf.Name, sf.Type)
		}
	}
	if e.Kind == "" {
		e.Kind = monitor.KindReading // the journal refuses entries without a kind
	}
	return e
}

func randomTime(rng *rand.Rand) time.Time {
	zones := []*time.Location{time.UTC, time.FixedZone("", 2*3600), time.FixedZone("", -(9*3600 + 30*60)), time.FixedZone("X", 23*3600+59*60)}
	sec := rng.Int64N(253402300799) - 62135596800 // years 0001 to 9999
	return time.Unix(sec, rng.Int64N(1e9)).In(zones[rng.IntN(len(zones))])
}

func randomString(rng *rand.Rand) string {
	pieces := []string{"C4", "a", " ", `"`, `\`, "<", ">", "&", "\n", "\t", "\b", "\f", "\r", "\x00", "\x1f", "\x7f",
		"é", "ü", "\u2028", "\u2029", "\xff", "\xe2\x82", "🎹", "string-12", "drift"}
	var b strings.Builder
	for range rng.IntN(8) {
		b.WriteString(pieces[rng.IntN(len(pieces))])
	}
	return b.String()
}

func randomFloat(rng *rand.Rand) float64 {
	switch rng.IntN(6) {
	case 0:
		return rng.NormFloat64() * 1e-9
	case 1:
		return rng.NormFloat64() * 1e22
	case 2:
		return math.Copysign(0, -1)
	case 3:
		return float64(rng.IntN(2000)) / 8
	case 4:
		return math.Float64frombits(rng.Uint64()&^(0x7ff<<52) | uint64(rng.IntN(0x7fe)+1)<<52)
	}
	return rng.NormFloat64() * 440
}

func TestAppendEntry_MatchesEncodingJSON(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 1))
	for i := range 20000 {
		e := fillEntry(t, rng)
		got, err := appendEntry(nil, &e)
		if err != nil {
			t.Fatalf("entry %d: %v", i, err)
		}
		want, err := json.Marshal(&e)
		if err != nil {
			t.Fatalf("entry %d: encoding/json: %v", i, err)
		}
		want = append(want, '\n')
		if !bytes.Equal(got, want) {
			t.Fatalf("entry %d differs from encoding/json:\n got %s\nwant %s", i, got, want)
		}
	}
}

func TestAppendEntry_RoundTrip(t *testing.T) {
	rng := rand.New(rand.NewPCG(2, 2))
	lmt, err := time.LoadLocation("Europe/Amsterdam") // 1900: offset +00:19:32 (LMT-style seconds)
	if err != nil {
		lmt = time.FixedZone("LMT", 19*60+32)
	}
	for i := range 5000 {
		e := fillEntry(t, rng)
		validUTF8(&e) // invalid UTF-8 is written as U+FFFD, as encoding/json does
		if i%50 == 0 {
			e.Time = time.Date(1900, 6, 1, 12, 0, 0, 123456789, lmt)
		}
		if i%7 == 0 {
			e.Time = time.Now() // carries a monotonic reading
		}
		line, err := appendEntry(nil, &e)
		if err != nil {
			t.Fatalf("entry %d: %v", i, err)
		}
		var got monitor.Entry
		if err := json.Unmarshal(line, &got); err != nil {
			t.Fatalf("entry %d: decode %s: %v", i, line, err)
		}
		assertSameEntry(t, got, e)
	}
}

func validUTF8(e *monitor.Entry) {
	for _, p := range []*string{&e.Run, &e.String, &e.Reason, &e.Detail} {
		*p = strings.ToValidUTF8(*p, "?")
	}
	e.Kind = monitor.Kind(strings.ToValidUTF8(string(e.Kind), "?"))
}

// assertSameEntry compares two entries field by field; times must be the same instant.
func assertSameEntry(t testing.TB, got, want monitor.Entry) {
	t.Helper()
	if !got.Time.Equal(want.Time) {
		t.Fatalf("seq %d: time %v, want %v", want.Seq, got.Time, want.Time)
	}
	got.Time, want.Time = time.Time{}, time.Time{}
	// -0 and 0 differ in bits only: compare bit patterns of floats.
	if !reflect.DeepEqual(got, want) || math.Signbit(got.Cents) != math.Signbit(want.Cents) {
		t.Fatalf("entry differs after round trip:\n got %+v\nwant %+v", got, want)
	}
}

func TestAppendEntry_Refuses(t *testing.T) {
	bad := monitor.State(9)
	tests := []struct {
		name  string
		edit  func(e *monitor.Entry)
		field string
	}{
		{"NoKind", func(e *monitor.Entry) { e.Kind = "" }, "kind"},
		{"NaNCents", func(e *monitor.Entry) { e.Cents = math.NaN() }, "cents"},
		{"InfTension", func(e *monitor.Entry) { e.TensionN = math.Inf(1) }, "tension_n"},
		{"NegInfMono", func(e *monitor.Entry) { e.MonoS = math.Inf(-1) }, "mono_s"},
		{"UnnamedState", func(e *monitor.Entry) { e.State = bad }, "state"},
		{"UnnamedPrev", func(e *monitor.Entry) { e.Prev = &bad }, "prev_state"},
		{"Year10000", func(e *monitor.Entry) { e.Time = time.Date(10000, 1, 1, 0, 0, 0, 0, time.UTC) }, "time"},
		{"YearMinus1", func(e *monitor.Entry) { e.Time = time.Date(-1, 1, 1, 0, 0, 0, 0, time.UTC) }, "time"},
		{"Offset24h", func(e *monitor.Entry) { e.Time = time.Date(2024, 1, 1, 0, 0, 0, 0, time.FixedZone("", 24*3600)) }, "time"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			e := monitor.Entry{Seq: 1, Kind: monitor.KindReading}
			tc.edit(&e)
			_, err := appendEntry(nil, &e)
			if err == nil || !strings.Contains(err.Error(), "field "+tc.field+" ") {
				t.Fatalf("appendEntry error = %v, want one naming field %s", err, tc.field)
			}
		})
	}
}

func TestAppendEntry_NoAllocs(t *testing.T) {
	e := sampleEntry(1)
	buf := make([]byte, 0, 1024)
	allocs := testing.AllocsPerRun(100, func() {
		var err error
		if buf, err = appendEntry(buf[:0], &e); err != nil {
			t.Fatal(err)
		}
	})
	if allocs != 0 {
		t.Fatalf("appendEntry allocates %v times per entry, want 0", allocs)
	}
}

func sampleEntry(i int) monitor.Entry {
	prev := monitor.Settling
	return monitor.Entry{
		Kind: monitor.KindReading, Time: time.Date(2025, 11, 3, 2, 10, 0, 123456789, time.UTC),
		MonoS: 3600.25 + float64(i), Run: "run-7f3a", String: "C4", FundamentalHz: 261.7, F0Hz: 261.55,
		Inharmonicity: 3.9e-4, Cents: -1.25, TensionN: 689.3, Margin: 0.52, RateCentsHour: -0.8,
		Clarity: 0.97, Partials: 12, State: monitor.Steady, Prev: &prev, Reason: "drift",
	}
}

func FuzzAppendEntry(f *testing.F) {
	f.Add("C4", "drift", "plain", 261.6, -1.25, int64(0))
	f.Add("\xff\x00\n", "<&>", "\u2028\"\\", math.Copysign(0, -1), 1e-7, int64(-5))
	f.Add("", "", "", 1e21, 123456789.0, int64(1<<40))
	f.Fuzz(func(t *testing.T, str, reason, detail string, f0, cents float64, gap int64) {
		e := sampleEntry(1)
		e.String, e.Reason, e.Detail, e.F0Hz, e.Cents, e.GapFrames = str, reason, detail, f0, cents, gap
		got, err := appendEntry(nil, &e)
		want, jerr := json.Marshal(&e)
		if (err != nil) != (jerr != nil) {
			t.Fatalf("appendEntry error %v, encoding/json error %v", err, jerr)
		}
		if err != nil {
			if !math.IsNaN(f0) && !math.IsInf(f0, 0) && !math.IsNaN(cents) && !math.IsInf(cents, 0) {
				t.Fatalf("refused a finite entry: %v", err)
			}
			return
		}
		if !bytes.Equal(got, append(want, '\n')) {
			t.Fatalf("differs from encoding/json:\n got %s\nwant %s", got, want)
		}
		if bytes.Count(got, []byte{'\n'}) != 1 {
			t.Fatalf("encoded entry is not one line: %q", got)
		}
		var back monitor.Entry
		if err := json.Unmarshal(got, &back); err != nil {
			t.Fatalf("decode: %v", err)
		}
		if back.F0Hz != e.F0Hz || back.Cents != e.Cents || back.GapFrames != e.GapFrames {
			t.Fatalf("numbers changed: got %v %v %v, want %v %v %v", back.F0Hz, back.Cents, back.GapFrames, e.F0Hz, e.Cents, e.GapFrames)
		}
		if errors.Is(err, ErrInvalid) {
			t.Fatal("unreachable")
		}
	})
}

func BenchmarkEncode(b *testing.B) {
	e := sampleEntry(1)
	buf := make([]byte, 0, 1024)
	b.ReportAllocs()
	for b.Loop() {
		buf, _ = appendEntry(buf[:0], &e)
	}
}

// BenchmarkEncodeJSON is encoding/json on the same entry, for comparison.
func BenchmarkEncodeJSON(b *testing.B) {
	e := sampleEntry(1)
	b.ReportAllocs()
	for b.Loop() {
		json.Marshal(&e)
	}
}
