package instrument

import (
	"net"
	"time"
)

// Defaults of the listener settings. Engineering defaults unless marked: the margin
// figures are the trade's (reference-values §4.1: 70 % "commonly accepted maximum";
// 85 % lies between that and the one-semitone-from-breaking figure of historic
// keyboards).
var (
	DefaultListen = Listen{
		SteadyCentsPerHour: 1,
		ToleranceCents:     3,
		MarginWarn:         0.70,
		MarginAlarm:        0.85,
		JumpCents:          25,
		PartialShift:       0.25,
		RateWindow:         2 * time.Hour,
		QuietAfter:         45 * time.Minute,
		MatchCents:         60,
		AmbiguousCents:     10,
	}
	DefaultJournal = Journal{Dir: "journal", FsyncInterval: 5 * time.Second, SegmentBytes: 16 << 20}
	DefaultAudio   = Audio{Format: "s16le", RateHz: 48000, Channels: 1, Speed: 1}
	DefaultExciter = Exciter{Interval: 10 * time.Minute, Pulse: 20 * time.Millisecond,
		MaxPulse: 50 * time.Millisecond, Listen: 3 * time.Second}
)

type rawListen struct {
	SteadyCentsPerHour any `toml:"steady_cents_per_hour"`
	ToleranceCents     any `toml:"tolerance_cents"`
	MarginWarn         any `toml:"margin_warn"`
	MarginAlarm        any `toml:"margin_alarm"`
	JumpCents          any `toml:"jump_cents"`
	PartialShift       any `toml:"partial_shift"`
	RateWindow         any `toml:"rate_window"`
	QuietAfter         any `toml:"quiet_after"`
	MatchCents         any `toml:"match_cents"`
	AmbiguousCents     any `toml:"ambiguous_cents"`
}

func (p *parser) listen(r *rawListen) Listen {
	d := DefaultListen
	c := &p.c
	l := Listen{
		SteadyCentsPerHour: c.optNumber(p.at("listen.steady_cents_per_hour"), r.SteadyCentsPerHour, d.SteadyCentsPerHour, "a drift rate in cents per hour above 0 and up to 100", between(1e-6, 100)),
		ToleranceCents:     c.optNumber(p.at("listen.tolerance_cents"), r.ToleranceCents, d.ToleranceCents, "cents above 0 and up to 50", between(1e-6, 50)),
		MarginWarn:         c.optNumber(p.at("listen.margin_warn"), r.MarginWarn, d.MarginWarn, "a fraction of the breaking load between 0 and 1, e.g. 0.70 for 70 %", between(1e-6, 1)),
		MarginAlarm:        c.optNumber(p.at("listen.margin_alarm"), r.MarginAlarm, d.MarginAlarm, "a fraction of the breaking load between 0 and 1, e.g. 0.85 for 85 %", between(1e-6, 1)),
		JumpCents:          c.optNumber(p.at("listen.jump_cents"), r.JumpCents, d.JumpCents, "cents above 0 and up to 1200", between(1e-6, 1200)),
		PartialShift:       c.optNumber(p.at("listen.partial_shift"), r.PartialShift, d.PartialShift, "a relative change of B above 0 and up to 10, e.g. 0.25", between(1e-6, 10)),
		RateWindow:         c.optDuration(p.at("listen.rate_window"), r.RateWindow, d.RateWindow, time.Minute, 7*24*time.Hour),
		QuietAfter:         c.optDuration(p.at("listen.quiet_after"), r.QuietAfter, d.QuietAfter, time.Second, 7*24*time.Hour),
		MatchCents:         c.optNumber(p.at("listen.match_cents"), r.MatchCents, d.MatchCents, "cents above 0 and up to 600", between(1e-6, 600)),
		AmbiguousCents:     c.optNumber(p.at("listen.ambiguous_cents"), r.AmbiguousCents, d.AmbiguousCents, "cents above 0 and up to 600", between(1e-6, 600)),
	}
	if r.MarginAlarm != nil || r.MarginWarn != nil {
		if l.MarginAlarm <= l.MarginWarn {
			at := p.at("listen.margin_alarm")
			if r.MarginAlarm == nil {
				at = p.at("listen.margin_warn")
			}
			c.add(at, nil, "margin_alarm %.2f must be above margin_warn %.2f", l.MarginAlarm, l.MarginWarn)
		}
	}
	if r.AmbiguousCents != nil || r.MatchCents != nil {
		if l.AmbiguousCents >= l.MatchCents {
			c.add(p.at("listen.ambiguous_cents"), nil, "ambiguous_cents %g must be below match_cents %g", l.AmbiguousCents, l.MatchCents)
		}
	}
	return l
}

type rawJournal struct {
	Dir           any `toml:"dir"`
	FsyncInterval any `toml:"fsync_interval"`
	SegmentMB     any `toml:"segment_mb"`
}

func (p *parser) journal(r *rawJournal) Journal {
	d := DefaultJournal
	j := Journal{
		Dir:           p.c.optString(p.at("journal.dir"), r.Dir, d.Dir),
		FsyncInterval: p.c.optDuration(p.at("journal.fsync_interval"), r.FsyncInterval, d.FsyncInterval, 10*time.Millisecond, time.Hour),
		SegmentBytes:  p.c.optInt(p.at("journal.segment_mb"), r.SegmentMB, d.SegmentBytes>>20, 1, 4096, "a whole number of MiB from 1 to 4096") << 20,
	}
	if j.Dir == "" {
		p.c.add(p.at("journal.dir"), r.Dir, "want a directory for the journal")
	}
	return j
}

type rawHTTP struct {
	Listen any `toml:"listen"`
}

func (p *parser) http(r *rawHTTP) HTTP {
	h := HTTP{Listen: p.c.optString(p.at("http.listen"), r.Listen, "")}
	if h.Listen != "" {
		if _, port, err := net.SplitHostPort(h.Listen); err != nil || port == "" {
			p.c.add(p.at("http.listen"), r.Listen, `want host:port, e.g. "127.0.0.1:9440" or ":9440", or "" for off`)
		}
	}
	return h
}

type rawAudio struct {
	Input    any `toml:"input"`
	Files    any `toml:"files"`
	Device   any `toml:"device"`
	Format   any `toml:"format"`
	RateHz   any `toml:"rate_hz"`
	Channels any `toml:"channels"`
	Speed    any `toml:"speed"`
}

// audio reads [audio]. With neither input nor files the listener uses the live
// device ("device").
func (p *parser) audio(r *rawAudio) Audio {
	d := DefaultAudio
	c := &p.c
	a := Audio{
		Input:    c.optOneOf(p.at("audio.input"), r.Input, "", "", "-", "device", "synth"),
		Files:    c.optStrings(p.at("audio.files"), r.Files),
		Device:   c.optString(p.at("audio.device"), r.Device, ""),
		Format:   c.optOneOf(p.at("audio.format"), r.Format, d.Format, "s16le", "s32le", "f32le"),
		RateHz:   int(c.optInt(p.at("audio.rate_hz"), r.RateHz, int64(d.RateHz), 8000, 384000, "a whole sample rate in Hz from 8000 to 384000")),
		Channels: int(c.optInt(p.at("audio.channels"), r.Channels, int64(d.Channels), 1, 64, "a whole number of channels from 1 to 64")),
		Speed:    c.optNumber(p.at("audio.speed"), r.Speed, d.Speed, "a replay speed from 0 (as fast as possible) to 1000, 1 = real time", between(0, 1000)),
	}
	switch {
	case a.Input != "" && len(a.Files) > 0:
		c.add(p.at("audio.files"), nil, "files are replayed only when input is not set; want either input or files")
	case a.Input == "" && len(a.Files) == 0:
		a.Input = "device"
	}
	return a
}
