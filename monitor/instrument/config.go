// Package instrument reads an instrument config: the instrument, its strings (inline or
// from a CSV string table), material overrides, and the listener's settings.
package instrument

import (
	"time"

	"taut/monitor/tension"
)

// Config is one parsed and validated config file.
type Config struct {
	Path       string // file it was read from ("" when built in code)
	Instrument Instrument
	Listen     Listen
	Journal    Journal
	HTTP       HTTP
	Audio      Audio
	Lamps      Lamps
	Exciter    Exciter
}

// Instrument is the instrument and its strings in scale order (lowest first).
type Instrument struct {
	Name        string
	ReferenceHz float64 // A4, default 440 (ISO 16)
	Strings     []String
	Materials   map[string]*tension.Material // built-ins plus overrides, by name
}

// String is one string of the instrument: its tuning, its physics and how it is heard.
type String struct {
	ID          string // unique, e.g. "C4a" for the first string of a unison
	Note        string // scientific pitch name, e.g. "C4", "F#3", "Bb2"
	Section     string // grouping for totals, e.g. "treble", "tenor", "bass"
	TargetHz    float64
	CentsOffset float64 // stretch or chosen historic pitch, already applied to TargetHz
	Phys        tension.String
	Channel     int    // input channel (1-based) of a contact pickup on this string; 0 = none
	ExciterPin  string // GPIO pin name of this string's exciter; "" = none
}

// Listen holds the monitor's thresholds.
type Listen struct {
	SteadyCentsPerHour float64       // drift rate under which a string is steady (engineering default 1)
	ToleranceCents     float64       // off-target beyond this when steady (default 3)
	MarginWarn         float64       // warn above this share of breaking load (0.70, trade figure)
	MarginAlarm        float64       // alarm above this share (0.85, trade figure)
	JumpCents          float64       // a sudden change larger than this between readings is an alarm (default 25)
	PartialShift       float64       // relative change of B against the string's steady history that alarms (default 0.25)
	RateWindow         time.Duration // window of the robust drift fit (default 2h)
	QuietAfter         time.Duration // no reading for this long makes a string quiet (default 45m)
	MatchCents         float64       // a note further than this from every prediction is unmatched (default 60)
	AmbiguousCents     float64       // two candidates closer than this to each other are too close to call (default 10)
}

// Journal says where and how the journal is written.
type Journal struct {
	Dir           string        // directory of journal segments
	FsyncInterval time.Duration // group-commit interval (default 5s)
	SegmentBytes  int64         // start a new segment past this size (default 16 MiB)
}

// HTTP configures the status page and metrics server.
type HTTP struct {
	Listen string // "" = off; e.g. "127.0.0.1:9440"
}

// Audio selects the capture source.
type Audio struct {
	Input    string   // "-" for stdin PCM, "device" for PortAudio, "synth", or "" when Files is set
	Files    []string // WAV files replayed in order
	Device   string   // PortAudio device name substring
	Format   string   // stdin PCM: s16le, s32le or f32le
	RateHz   int      // stdin PCM sample rate
	Channels int      // stdin PCM channels
	Speed    float64  // file replay speed; 0 = as fast as possible, 1 = real time
}

// Lamps maps GPIO outputs to what they show.
type Lamps struct {
	Required bool // a missing pin is a start-up error instead of a warning
	Lamp     []Lamp
}

// Lamp is one GPIO output.
type Lamp struct {
	Name  string // e.g. "alarm"
	Pin   string // GPIO pin name as periph knows it, e.g. "GPIO17"
	Shows string // "alarm", "settling", "steady" (all steady), "off-target", "fault", "alive"
	Blink bool   // blink instead of lit steady
}

// Exciter drives strings for unattended rounds.
type Exciter struct {
	Enabled    bool
	Interval   time.Duration // time between the starts of two rounds (default 10m)
	Pulse      time.Duration // pulse width (default 20ms)
	MaxPulse   time.Duration // hard maximum the pulse may never exceed (default 50ms)
	Listen     time.Duration // capture window after each pulse (default 3s)
	QuietHours string        // "HH:MM-HH:MM" local time with no rounds; "" = none
}
