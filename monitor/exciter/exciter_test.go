package exciter

import (
	"context"
	"errors"
	"fmt"
	"slices"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/jonboulle/clockwork"
	"periph.io/x/conn/v3/gpio"
	"periph.io/x/conn/v3/gpio/gpiotest"
)

// trace records every level written, with the fake clock's time since the start.
type trace struct {
	mu    sync.Mutex
	clock clockwork.Clock
	start time.Time
	log   []string
}

func newTrace(c clockwork.Clock) *trace { return &trace{clock: c, start: c.Now()} }

func (tr *trace) pin(name string) *tracePin {
	return &tracePin{Pin: &gpiotest.Pin{N: name}, tr: tr}
}

func (tr *trace) snapshot() []string {
	tr.mu.Lock()
	defer tr.mu.Unlock()
	return slices.Clone(tr.log)
}

type tracePin struct {
	*gpiotest.Pin
	tr       *trace
	failHigh error
}

func (p *tracePin) Out(l gpio.Level) error {
	if l == gpio.High && p.failHigh != nil {
		return p.failHigh
	}
	p.tr.mu.Lock()
	defer p.tr.mu.Unlock()
	lv := "L"
	if l {
		lv = "H"
	}
	p.tr.log = append(p.tr.log, fmt.Sprintf("%v %s:%s", p.tr.clock.Since(p.tr.start), p.N, lv))
	return p.Pin.Out(l)
}

// strikeAsync starts a strike and waits until its pulse timer is armed.
func strikeAsync(t *testing.T, ctx context.Context, fc *clockwork.FakeClock, d *Driver, id string) <-chan error {
	t.Helper()
	done := make(chan error, 1)
	go func() { done <- d.Strike(ctx, id) }()
	wctx, cancel := context.WithTimeout(ctx, 2*time.Second)
	defer cancel()
	if err := fc.BlockUntilContext(wctx, 1); err != nil {
		t.Fatalf("strike %s never armed its timer: %v", id, err)
	}
	return done
}

func TestDriver_Strike_sequence(t *testing.T) {
	fc := clockwork.NewFakeClock()
	tr := newTrace(fc)
	c4, bass := tr.pin("GPIO20"), tr.pin("GPIO21")
	d, err := New(map[string]gpio.PinOut{"C4a": c4, "C2a": bass, "C2b": bass}, // C2a and C2b share a driver
		Options{Pulse: 20 * time.Millisecond, MaxPulse: 50 * time.Millisecond, Clock: fc})
	if err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()

	done := strikeAsync(t, ctx, fc, d, "C4a")
	fc.Advance(19 * time.Millisecond)
	if got := c4.Read(); got != gpio.High {
		t.Fatal("line low before the pulse ended")
	}
	fc.Advance(time.Millisecond)
	if err := <-done; err != nil {
		t.Fatal(err)
	}
	fc.Advance(100 * time.Millisecond)
	done = strikeAsync(t, ctx, fc, d, "C2b")
	fc.Advance(20 * time.Millisecond)
	if err := <-done; err != nil {
		t.Fatal(err)
	}
	if err := d.Halt(); err != nil {
		t.Fatal(err)
	}
	want := []string{
		"0s GPIO21:L", "0s GPIO20:L", // New: every distinct line low, in string-id order (C2a, C4a)
		"0s GPIO20:H", "20ms GPIO20:L", // C4a: exactly one 20 ms pulse
		"120ms GPIO21:H", "140ms GPIO21:L", // C2b on the shared bass line
		"140ms GPIO21:L", "140ms GPIO20:L", // Halt
	}
	if got := tr.snapshot(); !slices.Equal(got, want) {
		t.Errorf("levels:\n got %q\nwant %q", got, want)
	}
	if err := d.Strike(ctx, "C4a"); !errors.Is(err, ErrHalted) {
		t.Errorf("Strike after Halt = %v, want ErrHalted", err)
	}
}

// TestDriver_Strike_hardCap: even a driver whose pulse got past New is capped.
func TestDriver_Strike_hardCap(t *testing.T) {
	fc := clockwork.NewFakeClock()
	tr := newTrace(fc)
	p := tr.pin("GPIO20")
	d, err := New(map[string]gpio.PinOut{"A": p}, Options{Pulse: 10 * time.Millisecond, MaxPulse: 10 * time.Millisecond, Clock: fc})
	if err != nil {
		t.Fatal(err)
	}
	d.pulse = 10 * time.Second // options gone wrong after construction
	done := strikeAsync(t, context.Background(), fc, d, "A")
	fc.Advance(HardMaxPulse)
	if err := <-done; err != nil {
		t.Fatal(err)
	}
	want := []string{"0s GPIO20:L", "0s GPIO20:H", "250ms GPIO20:L"}
	if got := tr.snapshot(); !slices.Equal(got, want) {
		t.Errorf("levels %q, want %q", got, want)
	}
}

// TestDriver_Strike_oneAtATime: a second strike waits for the first pulse to end.
func TestDriver_Strike_oneAtATime(t *testing.T) {
	fc := clockwork.NewFakeClock()
	tr := newTrace(fc)
	d, err := New(map[string]gpio.PinOut{"A": tr.pin("PA"), "B": tr.pin("PB")},
		Options{Pulse: 20 * time.Millisecond, MaxPulse: 20 * time.Millisecond, Clock: fc})
	if err != nil {
		t.Fatal(err)
	}
	ctx := context.Background()
	first := strikeAsync(t, ctx, fc, d, "A")
	second := make(chan error, 1)
	go func() { second <- d.Strike(ctx, "B") }()
	time.Sleep(20 * time.Millisecond) // give B every chance to start too early
	if got := tr.snapshot(); slices.Contains(got, "0s PB:H") {
		t.Fatalf("B struck while A's pulse was on: %q", got)
	}
	fc.Advance(20 * time.Millisecond)
	if err := <-first; err != nil {
		t.Fatal(err)
	}
	wctx, cancel := context.WithTimeout(ctx, 2*time.Second)
	defer cancel()
	if err := fc.BlockUntilContext(wctx, 1); err != nil {
		t.Fatal(err)
	}
	fc.Advance(20 * time.Millisecond)
	if err := <-second; err != nil {
		t.Fatal(err)
	}
	want := []string{"0s PA:L", "0s PB:L", "0s PA:H", "20ms PA:L", "20ms PB:H", "40ms PB:L"}
	if got := tr.snapshot(); !slices.Equal(got, want) {
		t.Errorf("levels %q, want %q", got, want)
	}
}

func TestDriver_Strike_interrupted(t *testing.T) {
	tests := []struct {
		name    string
		stop    func(cancel context.CancelFunc, d *Driver)
		wantErr error
	}{
		{"context cancelled", func(cancel context.CancelFunc, d *Driver) { cancel() }, context.Canceled},
		{"halted", func(cancel context.CancelFunc, d *Driver) { _ = d.Halt() }, ErrHalted},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			fc := clockwork.NewFakeClock()
			tr := newTrace(fc)
			p := tr.pin("GPIO20")
			d, err := New(map[string]gpio.PinOut{"A": p}, Options{Pulse: 40 * time.Millisecond, MaxPulse: 50 * time.Millisecond, Clock: fc})
			if err != nil {
				t.Fatal(err)
			}
			ctx, cancel := context.WithCancel(context.Background())
			defer cancel()
			done := strikeAsync(t, ctx, fc, d, "A")
			fc.Advance(5 * time.Millisecond)
			tt.stop(cancel, d)
			if err := <-done; !errors.Is(err, tt.wantErr) {
				t.Fatalf("Strike = %v, want %v", err, tt.wantErr)
			}
			if p.Read() != gpio.Low {
				t.Error("line left high")
			}
			if got := tr.snapshot(); got[1] != "0s GPIO20:H" || got[2] != "5ms GPIO20:L" {
				t.Errorf("levels %q: want the pulse cut at 5ms", got)
			}
		})
	}
}

func TestDriver_Strike_errors(t *testing.T) {
	fc := clockwork.NewFakeClock()
	tr := newTrace(fc)
	p := tr.pin("GPIO20")
	d, err := New(map[string]gpio.PinOut{"A": p}, Options{Pulse: time.Millisecond, MaxPulse: time.Millisecond, Clock: fc})
	if err != nil {
		t.Fatal(err)
	}
	if err := d.Strike(context.Background(), "Z"); err == nil || err.Error() != "exciter: string Z has no exciter line" {
		t.Errorf("unknown string: %v", err)
	}
	p.failHigh = errors.New("EBUSY")
	err = d.Strike(context.Background(), "A")
	if err == nil || err.Error() != "exciter: strike A on GPIO20: set high: EBUSY" {
		t.Errorf("failing line: %v", err)
	}
	if got, want := tr.snapshot(), []string{"0s GPIO20:L", "0s GPIO20:L"}; !slices.Equal(got, want) {
		t.Errorf("levels %q, want %q (driven low even though high failed)", got, want)
	}
}

func TestNew_errors(t *testing.T) {
	pin := &gpiotest.Pin{N: "GPIO20"}
	ms := time.Millisecond
	tests := []struct {
		name string
		pins map[string]gpio.PinOut
		opts Options
		want string
	}{
		{"zero pulse", map[string]gpio.PinOut{"A": pin}, Options{MaxPulse: 50 * ms}, "exciter: pulse 0s: want a positive duration"},
		{"zero max", map[string]gpio.PinOut{"A": pin}, Options{Pulse: 20 * ms}, "exciter: max pulse 0s: want a positive duration"},
		{"pulse over max", map[string]gpio.PinOut{"A": pin}, Options{Pulse: 60 * ms, MaxPulse: 50 * ms}, "exciter: pulse 60ms is longer than max pulse 50ms"},
		{"max over hard limit", map[string]gpio.PinOut{"A": pin}, Options{Pulse: 20 * ms, MaxPulse: time.Second}, "exciter: max pulse 1s is over the hard limit 250ms"},
		{"nil pin", map[string]gpio.PinOut{"A": nil}, Options{Pulse: 20 * ms, MaxPulse: 50 * ms}, "exciter: string A: no pin"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := New(tt.pins, tt.opts)
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Fatalf("New = %v, want %q", err, tt.want)
			}
		})
	}
}
