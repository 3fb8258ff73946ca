package main

import (
	"context"
	"strings"
	"testing"
	"time"

	"github.com/rs/zerolog"
	"periph.io/x/conn/v3/gpio"
	"periph.io/x/conn/v3/gpio/gpioreg"
	"periph.io/x/conn/v3/gpio/gpiotest"

	"taut/monitor"
	"taut/monitor/instrument"
)

// fakePins returns a pin lookup holding only the named fake pins, so that a test sees
// neither the pins other tests put in periph's process-wide registry nor real ones.
func fakePins(names ...string) (pinLookup, map[string]*gpiotest.Pin) {
	pins := map[string]*gpiotest.Pin{}
	var all []gpio.PinIO
	for i, n := range names {
		p := &gpiotest.Pin{N: n, Num: 100 + i}
		pins[n] = p
		all = append(all, p)
	}
	return pinLookup{
		byName: func(name string) gpio.PinIO {
			if p, ok := pins[name]; ok {
				return p
			}
			return nil // as gpioreg.ByName: nil for a missing pin, never a typed nil
		},
		all: func() []gpio.PinIO { return all },
	}, pins
}

func testLamps(required bool) instrument.Lamps {
	return instrument.Lamps{Required: required, Lamp: []instrument.Lamp{
		{Name: "alarm", Pin: "TAUT_T_ALARM", Shows: "alarm"},
		{Name: "alive", Pin: "TAUT_T_ALIVE", Shows: "alive"},
	}}
}

// warnings returns the warn-level lines of a JSON log.
func warnings(log string) []string {
	var out []string
	for _, l := range strings.Split(strings.TrimSpace(log), "\n") {
		if strings.Contains(l, `"level":"warn"`) {
			out = append(out, l)
		}
	}
	return out
}

func TestSetupLamps(t *testing.T) {
	tests := []struct {
		name     string
		pins     []string // registered fake pins
		required bool
		off      bool
		wantErr  []string
		wantWarn string // the one warning
		driven   []string
	}{
		{name: "no GPIO, logged", wantWarn: "no GPIO on this machine"},
		{name: "no GPIO, required", required: true,
			wantErr: []string{`lamp "alarm" on pin "TAUT_T_ALARM"`, `lamp "alive" on pin "TAUT_T_ALIVE"`, "no usable GPIO", "gpio group", "--lamps=off"}},
		{name: "lamps off", pins: []string{"TAUT_T_ALARM", "TAUT_T_ALIVE"}, off: true, required: true, wantWarn: "lamps off (--lamps=off)"},
		{name: "one pin missing, logged", pins: []string{"TAUT_T_ALARM", "TAUT_T_OTHER"},
			wantWarn: `lamp \"alive\" on pin \"TAUT_T_ALIVE\"`, driven: []string{"TAUT_T_ALARM"}},
		{name: "one pin missing, required", pins: []string{"TAUT_T_ALARM"}, required: true,
			wantErr: []string{`GPIO pins were not found: lamp "alive" on pin "TAUT_T_ALIVE"`, "udev rule", "GPIO17"}},
		{name: "all pins present", pins: []string{"TAUT_T_ALARM", "TAUT_T_ALIVE"}, required: true,
			driven: []string{"TAUT_T_ALARM", "TAUT_T_ALIVE"}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			lookup, pins := fakePins(tt.pins...)
			var buf lockedBuffer // the board's goroutine logs while the test reads
			board, err := setupLampsWith(lookup, testLamps(tt.required), tt.off, zerolog.New(&buf))
			if tt.wantErr != nil {
				if err == nil {
					t.Fatal("no error")
				}
				for _, w := range tt.wantErr {
					if !strings.Contains(err.Error(), w) {
						t.Errorf("error %q lacks %q", err, w)
					}
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			warns := warnings(buf.String())
			switch {
			case tt.wantWarn == "" && len(warns) != 0:
				t.Errorf("warnings %q, want none", warns)
			case tt.wantWarn != "" && (len(warns) != 1 || !strings.Contains(warns[0], tt.wantWarn)):
				t.Errorf("warnings %q, want one containing %q", warns, tt.wantWarn)
			}
			// An alarm lights the alarm lamp: on its fake pin when driven, in the log otherwise.
			ctx, cancel := context.WithCancel(context.Background())
			done := make(chan error)
			go func() { done <- board.Run(ctx) }()
			board.Publish(monitor.Entry{Kind: monitor.KindState, String: "C4", State: monitor.Alarm})
			alarmPin := pins["TAUT_T_ALARM"]
			driven := len(tt.driven) > 0 && tt.driven[0] == "TAUT_T_ALARM"
			waitUntil(t, func() bool {
				if driven {
					return alarmPin.Read() == gpio.High
				}
				return strings.Contains(buf.String(), `"lamp":"alarm","pin":"TAUT_T_ALARM","shows":"alarm","message":"lamp on"`)
			})
			cancel()
			<-done
			if err := board.Halt(); err != nil {
				t.Fatal(err)
			}
			for _, n := range tt.driven {
				if pins[n].Read() != gpio.Low {
					t.Errorf("%s not low after Halt", n)
				}
			}
		})
	}
}

// TestSetupLamps_isolatedFromRegistry: pins other tests put in periph's process-wide
// registry must not turn "no GPIO" into "pin missing" (the case failed only in the full
// package run, depending on test order).
func TestSetupLamps_isolatedFromRegistry(t *testing.T) {
	registerGlobalPin(t, "TAUT_T_GLOBAL_OTHER")
	lookup, _ := fakePins()
	var buf lockedBuffer
	if _, err := setupLampsWith(lookup, testLamps(false), false, zerolog.New(&buf)); err != nil {
		t.Fatal(err)
	}
	if w := warnings(buf.String()); len(w) != 1 || !strings.Contains(w[0], "no GPIO on this machine") {
		t.Errorf("warnings %q; want the one no-GPIO warning", w)
	}
}

// TestSetupLamps_hostRegistry: setupLamps itself looks pins up in periph's registry.
func TestSetupLamps_hostRegistry(t *testing.T) {
	alarm := registerGlobalPin(t, "TAUT_T_HOST_ALARM")
	cfg := instrument.Lamps{Required: true, Lamp: []instrument.Lamp{{Name: "alarm", Pin: "TAUT_T_HOST_ALARM", Shows: "alarm"}}}
	board, err := setupLamps(cfg, false, zerolog.Nop())
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan error)
	go func() { done <- board.Run(ctx) }()
	board.Publish(monitor.Entry{Kind: monitor.KindState, String: "C4", State: monitor.Alarm})
	waitUntil(t, func() bool { return alarm.Read() == gpio.High })
	cancel()
	<-done
	if err := board.Halt(); err != nil {
		t.Fatal(err)
	}
}

// registerGlobalPin puts a fake pin in periph's process-wide registry for one test.
func registerGlobalPin(t *testing.T, name string) *gpiotest.Pin {
	t.Helper()
	p := &gpiotest.Pin{N: name, Num: 990}
	if err := gpioreg.Register(p); err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { _ = gpioreg.Unregister(name) })
	return p
}

func waitUntil(t *testing.T, cond func() bool) {
	t.Helper()
	deadline := time.Now().Add(30 * time.Second) // a hang detector, generous for a loaded 2-core box
	for !cond() {
		if time.Now().After(deadline) {
			t.Fatal("timed out")
		}
		time.Sleep(time.Millisecond)
	}
}

func exciterConfig(pins ...string) *instrument.Config {
	cfg := &instrument.Config{Exciter: instrument.Exciter{Enabled: true, Pulse: time.Millisecond, MaxPulse: 50 * time.Millisecond}}
	for i, p := range pins {
		cfg.Instrument.Strings = append(cfg.Instrument.Strings, instrument.String{ID: []string{"C2a", "C2b", "D2"}[i], ExciterPin: p})
	}
	return cfg
}

func TestSetupExciter(t *testing.T) {
	lookup, pins := fakePins("TAUT_T_EXC_BASS", "TAUT_T_EXC_D2")
	t.Run("disabled", func(t *testing.T) {
		cfg := exciterConfig("NOPE")
		cfg.Exciter.Enabled = false
		if d, err := setupExciterWith(lookup, cfg, zerolog.Nop()); d != nil || err != nil {
			t.Fatalf("got %v, %v; want nil, nil", d, err)
		}
	})
	t.Run("shared and own lines", func(t *testing.T) {
		// C2a and C2b are struck together by one driver; D2 has its own, and the third
		// string in the list (no pin) is simply not excited.
		cfg := exciterConfig("TAUT_T_EXC_BASS", "TAUT_T_EXC_BASS", "TAUT_T_EXC_D2")
		d, err := setupExciterWith(lookup, cfg, zerolog.Nop())
		if err != nil {
			t.Fatal(err)
		}
		if got := strings.Join(d.Strings(), " "); got != "C2a C2b D2" {
			t.Errorf("strings %q", got)
		}
		if err := d.Strike(context.Background(), "C2b"); err != nil {
			t.Fatal(err)
		}
		if pins["TAUT_T_EXC_BASS"].Read() != gpio.Low {
			t.Error("bass line left high")
		}
		if err := d.Halt(); err != nil {
			t.Fatal(err)
		}
	})
	tests := []struct {
		name string
		cfg  *instrument.Config
		want string
	}{
		{"missing pin", exciterConfig("TAUT_T_EXC_BASS", "GPIO_NOT_HERE"),
			`exciter is enabled but GPIO pins were not found: string C2b on pin "GPIO_NOT_HERE"`},
		{"no pins at all", exciterConfig(), "no string has an exciter pin"},
		{"pulse over max", func() *instrument.Config {
			c := exciterConfig("TAUT_T_EXC_D2")
			c.Exciter.Pulse = time.Second
			return c
		}(), "exciter: pulse 1s is longer than max pulse 50ms"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := setupExciterWith(lookup, tt.cfg, zerolog.Nop())
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Fatalf("error %v, want %q", err, tt.want)
			}
		})
	}
}
