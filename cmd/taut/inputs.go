package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"text/tabwriter"

	"taut/capture"
	"taut/capture/paudio"
)

// noPortAudioHelp is what `taut inputs` says in a build without PortAudio.
const noPortAudioHelp = `This taut was built without PortAudio, so it cannot list or open sound cards.

To capture from a device, rebuild with PortAudio (needs cgo and a C compiler):

    apt-get install -y gcc pkg-config portaudio19-dev
    CGO_ENABLED=1 go build -tags portaudio ./cmd/taut

Or keep this build and pipe raw PCM into the listener on stdin, e.g. with ALSA's arecord:

    arecord -t raw -f S16_LE -r 48000 -c 1 | taut listen --config CONFIG --input - --format s16le --rate 48000 --channels 1

('arecord -l' lists the capture devices; pick one with 'arecord -D plughw:CARD,DEV ...'.)
`

// cmdInputs lists the audio input devices PortAudio sees, or explains how to get
// audio in when this build has no PortAudio.
func cmdInputs(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("inputs", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.Usage = func() {
		fmt.Fprintln(stderr, "usage: taut inputs\n\nLists the audio input devices (name, host API, channels, default rate); '*' marks the\n"+
			"default. A build without PortAudio says how to rebuild with it, or how to pipe raw PCM\n"+
			"into taut listen instead (exit status 1).")
	}
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return nil
		}
		return usagef("inputs: %v", err)
	}
	if fs.NArg() > 0 {
		return usagef("inputs: takes no arguments, got %q", fs.Args())
	}
	devs, err := paudio.Devices()
	if errors.Is(err, capture.ErrUnavailable) {
		fmt.Fprint(stdout, noPortAudioHelp)
		return errors.New("inputs: no live audio input in this build (see above)")
	}
	if err != nil {
		return fmt.Errorf("inputs: %w", err)
	}
	if len(devs) == 0 {
		return errors.New("inputs: PortAudio finds no audio input; check that a capture device is plugged in " +
			"('arecord -l' lists them) and that this user may use it (the 'audio' group)")
	}
	return printDevices(stdout, devs)
}

func printDevices(w io.Writer, devs []paudio.Device) error {
	tw := tabwriter.NewWriter(w, 0, 4, 2, ' ', 0)
	fmt.Fprintln(tw, "\tname\thost api\tchannels\tdefault rate")
	for _, d := range devs {
		mark := ""
		if d.Default {
			mark = "*"
		}
		fmt.Fprintf(tw, "%s\t%s\t%s\t%d\t%.0f Hz\n", mark, d.Name, d.HostAPI, d.Channels, d.DefaultRateHz)
	}
	return tw.Flush()
}
