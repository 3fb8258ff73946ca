package main

import (
	"context"
	"errors"
	"fmt"
	"strings"
	"time"

	"taut/capture"
	"taut/capture/paudio"
	"taut/monitor"
)

// audioSource is an opened audio input.
type audioSource interface {
	monitor.Source
	Close() error
}

// input is the opened audio source and how the monitor should treat it.
type input struct {
	src        audioSource
	name       string
	liveClock  bool          // entries stamped with the wall clock
	stallAfter time.Duration // fault when no frames arrive this long; 0 = never
	drop       bool          // drop audio rather than wait when analysis is behind
	// reopen opens the input again after it failed or stalled (monitor.Options.Reopen);
	// nil when it cannot be reopened: files end, and stdin is a pipe whose writer is
	// gone once it fails, so stdin's EOF ends the run and a stall only raises a fault
	// (and stops feeding systemd's watchdog, which restarts the whole pipeline).
	reopen func(ctx context.Context) (monitor.Source, error)
}

// openAudioDevice opens a live input by name substring; tests replace it with a
// fake device that can be unplugged.
var openAudioDevice = func(name string) (audioSource, error) {
	st, err := paudio.Open(name)
	if err != nil {
		return nil, err // not a typed nil in an interface
	}
	return st, nil
}

// The backoff between reopen attempts of a live device (monitor.Options.ReopenMin/Max).
var deviceReopenMin, deviceReopenMax = time.Second, 30 * time.Second

// openInput opens the audio input named by the flags or, without them, the config.
func (l *listener) openInput() (*input, error) {
	in, err := l.chooseInput()
	if err != nil {
		return nil, err
	}
	l.closers = append(l.closers, func() {
		if err := in.src.Close(); err != nil {
			l.log.Warn().Err(err).Msg("close audio input")
		}
	})
	switch l.flags.clock {
	case "wall":
		in.liveClock = true
	case "samples":
		in.liveClock = false
	}
	return in, nil
}

func (l *listener) chooseInput() (*input, error) {
	a := l.cfg.Audio
	inputs := l.flags.inputs
	if len(inputs) == 0 {
		switch {
		case a.Input != "":
			inputs = []string{a.Input}
		default:
			inputs = a.Files
		}
	}
	switch {
	case l.flags.device != "" || (len(inputs) == 1 && inputs[0] == "device"):
		return l.openDevice(firstNonEmpty(l.flags.device, a.Device))
	case len(inputs) == 1 && inputs[0] == "-":
		return l.openStdin()
	case len(inputs) == 1 && inputs[0] == "synth":
		return nil, usagef("listen: input synth is the demo's simulated microphone; use `taut demo`")
	case len(inputs) == 0:
		return nil, usagef("listen: no audio input: pass --input FILE.wav, --input - (raw PCM on stdin) or --device NAME")
	}
	for _, p := range inputs {
		if p == "-" || p == "device" {
			return nil, usagef("listen: --input %s cannot be mixed with WAV files", p)
		}
	}
	return l.openFiles(inputs)
}

func (l *listener) openFiles(paths []string) (*input, error) {
	speed := l.cfg.Audio.Speed
	if l.flags.speed >= 0 {
		speed = l.flags.speed
	}
	src, err := capture.OpenFiles(paths, speed)
	if err != nil {
		return nil, fmt.Errorf("listen: %w", err)
	}
	return &input{src: src, name: strings.Join(paths, ",")}, nil
}

func (l *listener) openStdin() (*input, error) {
	a := l.cfg.Audio
	f := capture.Format{SampleRate: pick(l.flags.rateHz, a.RateHz), Channels: pick(l.flags.channels, a.Channels)}
	enc := firstNonEmpty(l.flags.format, a.Format)
	src, err := capture.NewPCMSource(listenStdin, enc, f)
	if err != nil {
		return nil, usagef("listen: stdin: %v", err)
	}
	return &input{src: src, name: fmt.Sprintf("stdin (%s, %d Hz, %d ch)", enc, f.SampleRate, f.Channels),
		liveClock: true, stallAfter: liveStallAfter}, nil
}

// openDevice opens a live device. A device that fails or stalls later (unplugged, a
// driver that stops delivering) is reopened by name, which also finds it again after
// it was plugged back (each open initialises PortAudio afresh).
func (l *listener) openDevice(name string) (*input, error) {
	st, err := openAudioDevice(name)
	if errors.Is(err, capture.ErrUnavailable) {
		return nil, fmt.Errorf("listen: no audio device: %w", err)
	} else if err != nil {
		return nil, fmt.Errorf("listen: open audio device %q: %w (see `taut inputs` for the devices; "+
			"or pipe raw PCM on stdin: arecord -t raw -f S16_LE -r 48000 -c 1 | taut listen --input - ...)", name, err)
	}
	reopen := func(context.Context) (monitor.Source, error) {
		src, err := openAudioDevice(name)
		if err != nil {
			return nil, fmt.Errorf("open audio device %q: %w", name, err)
		}
		return src, nil
	}
	return &input{src: st, name: "device " + name, liveClock: true, stallAfter: liveStallAfter, drop: true,
		reopen: reopen}, nil
}

func pick(flagValue, configValue int) int {
	if flagValue > 0 {
		return flagValue
	}
	return configValue
}
