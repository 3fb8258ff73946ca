package main

import (
	"bytes"
	"context"
	"errors"
	"strings"
	"testing"

	"taut/capture/paudio"
)

func TestInputsWithoutPortAudio(t *testing.T) {
	if paudio.Available {
		t.Skip("this build has PortAudio; TestPrintDevices covers the listing")
	}
	var out, errb bytes.Buffer
	err := cmdInputs(context.Background(), nil, &out, &errb)
	if err == nil || exitCode(err, &errb) != 1 {
		t.Errorf("error = %v; want a failure with exit status 1", err)
	}
	for _, want := range []string{
		"-tags portaudio",
		"portaudio19-dev",
		"arecord -t raw -f S16_LE -r 48000 -c 1 | taut listen --config CONFIG --input - --format s16le --rate 48000 --channels 1",
	} {
		if !strings.Contains(out.String(), want) {
			t.Errorf("output lacks %q:\n%s", want, out.String())
		}
	}
}

func TestInputsBadArgs(t *testing.T) {
	var out, errb bytes.Buffer
	err := cmdInputs(context.Background(), []string{"extra"}, &out, &errb)
	var u usageError
	if !errors.As(err, &u) {
		t.Errorf("error = %v; want a usage error (exit 2)", err)
	}
	if err := cmdInputs(context.Background(), []string{"--bogus"}, &out, &errb); !errors.As(err, &u) {
		t.Errorf("error = %v; want a usage error (exit 2)", err)
	}
}

func TestPrintDevices(t *testing.T) {
	var out bytes.Buffer
	printDevices(&out, []paudio.Device{
		{Name: "Workshop USB mic", HostAPI: "ALSA", Channels: 1, DefaultRateHz: 48000, Default: true},
		{Name: "Pickup interface 4x4", HostAPI: "ALSA", Channels: 4, DefaultRateHz: 96000},
	})
	want := "" +
		"   name                  host api  channels  default rate\n" +
		"*  Workshop USB mic      ALSA      1         48000 Hz\n" +
		"   Pickup interface 4x4  ALSA      4         96000 Hz\n"
	if out.String() != want {
		t.Errorf("got:\n%s\nwant:\n%s", out.String(), want)
	}
}
