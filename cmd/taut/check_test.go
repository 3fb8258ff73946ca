package main

import (
	"bytes"
	"context"
	"errors"
	"io"
	"path/filepath"
	"strings"
	"testing"

	"taut/monitor/instrument"
	"taut/monitor/tension"
)

func TestCheck(t *testing.T) {
	out, _, err := runCmd(t, cmdCheck, "../../configs/harp36.toml")
	if err != nil || !strings.HasPrefix(out, "ok: 36 strings") || strings.Contains(out, "warning") {
		t.Errorf("check harp36: %q, %v", out, err)
	}
	out, _, err = runCmd(t, cmdCheck, "../../configs/upright.toml")
	if err != nil || !strings.HasPrefix(out, "ok: 113 strings") {
		t.Errorf("check upright: %q, %v", out, err)
	}
	_, _, err = runCmd(t, cmdCheck, "../../monitor/instrument/testdata/bad/wrong_type.toml")
	var u usageError
	var list *instrument.Errors
	if !errors.As(err, &u) || !errors.As(err, &list) || len(list.List) != 3 {
		t.Fatalf("check broken config: %v; want a usage error (exit 2) listing 3 errors", err)
	}
	if code := exitCode(err, &bytes.Buffer{}); code != 2 {
		t.Errorf("exit code %d, want 2", code)
	}
}

// TestCheck_UnreadableConfig: a config that cannot be read is a config error (exit
// status 2) whose message names the path exactly as given.
func TestCheck_UnreadableConfig(t *testing.T) {
	dir := t.TempDir()
	for _, c := range []struct {
		name, path, want string
	}{
		{"MissingAbsolute", filepath.Join(dir, "nonexist.toml"), "open " + filepath.Join(dir, "nonexist.toml") + ": no such file"},
		{"MissingRelative", "no/such/config.toml", "open no/such/config.toml: no such file"},
		{"Directory", dir, "read " + dir + ": is a directory"},
	} {
		for _, cmd := range []struct {
			name string
			run  func(context.Context, []string, io.Writer, io.Writer) error
		}{{"check", cmdCheck}, {"scale", cmdScale}} {
			t.Run(cmd.name+"/"+c.name, func(t *testing.T) {
				_, _, err := runCmd(t, cmd.run, c.path)
				var u usageError
				if !errors.As(err, &u) || !strings.Contains(err.Error(), c.want) {
					t.Fatalf("err = %v; want a usage error containing %q", err, c.want)
				}
				if code := exitCode(err, &bytes.Buffer{}); code != 2 {
					t.Errorf("exit code %d, want 2", code)
				}
			})
		}
	}
}

// TestCheck_HighMarginWarnings: check still passes (exit 0) but warns, with the caution,
// about strings over the caution floor and over margin_alarm.
func TestCheck_HighMarginWarnings(t *testing.T) {
	out, _, err := runCmd(t, cmdCheck, "testdata/scale_high.toml")
	if err != nil || exitCode(err, &bytes.Buffer{}) != 0 {
		t.Fatalf("check: %v; want exit status 0", err)
	}
	for _, want := range []string{
		"ok: 4 strings",
		"warning: string warn (A4): tension 966.6 N is 76.0 % of its 1272.3 N breaking load, above 70 %",
		"warning: string alarm (C5): tension 1207.9 N is 85.6 % of its 1411.7 N breaking load, above margin_alarm 85 %",
	} {
		if !strings.Contains(out, want) {
			t.Errorf("output lacks %q:\n%s", want, out)
		}
	}
	if strings.Count(out, "warning:") != 2 || !strings.Contains(strings.Join(strings.Fields(out), " "), "CAUTION: "+tension.Caution) {
		t.Errorf("want two warnings and the caution:\n%s", out)
	}
	// A config that warns at 80 % is still warned at the 70 % floor.
	out, _, err = runCmd(t, cmdCheck, writeFloorConfig(t, 0.80))
	if err != nil || !strings.Contains(out, "warning: string warn (A4)") || !strings.Contains(out, "CAUTION: ") {
		t.Errorf("check with margin_warn 0.80: %v\n%s", err, out)
	}
}

// TestHelpText: -h of each command prints its usage on stderr, exits 0 and does not
// leak internal names.
func TestHelpText(t *testing.T) {
	for _, c := range []struct {
		name string
		run  func(context.Context, []string, io.Writer, io.Writer) error
		want []string
	}{
		{"scale", cmdScale, []string{"usage: taut scale", "first partial", "-units", "-json", "-csv"}},
		{"check", cmdCheck, []string{"usage: taut check CONFIG", "exit status 2", "70 %"}},
		{"measure", cmdMeasure, []string{"usage: taut measure", "-channel", "-mix"}},
		{"inputs", cmdInputs, []string{"usage: taut inputs"}},
	} {
		t.Run(c.name, func(t *testing.T) {
			out, stderr, err := runCmd(t, c.run, "-h")
			if err != nil || out != "" {
				t.Fatalf("-h: err %v, stdout %q", err, out)
			}
			for _, w := range c.want {
				if !strings.Contains(stderr, w) {
					t.Errorf("help lacks %q:\n%s", w, stderr)
				}
			}
			for _, internal := range []string{"scaleSheet", "scaleRow", "measureOptions", "cmd" + strings.ToUpper(c.name[:1])} {
				if strings.Contains(stderr, internal) {
					t.Errorf("help leaks the internal name %q:\n%s", internal, stderr)
				}
			}
		})
	}
}
