package lamp

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

	"taut/monitor"
)

// recorder keeps every level written to the pins it wraps, in order, as "name:H"/"name:L".
type recorder struct {
	mu  sync.Mutex
	log []string
}

func (r *recorder) pin(name string, num int) *recPin {
	return &recPin{Pin: &gpiotest.Pin{N: name, Num: num}, rec: r}
}

func (r *recorder) snapshot() []string {
	r.mu.Lock()
	defer r.mu.Unlock()
	return slices.Clone(r.log)
}

// waitLen waits until n writes were recorded (Run works on its own goroutine).
func (r *recorder) waitLen(t *testing.T, n int) {
	t.Helper()
	deadline := time.Now().Add(2 * time.Second)
	for time.Now().Before(deadline) {
		if len(r.snapshot()) >= n {
			return
		}
		time.Sleep(time.Millisecond)
	}
	t.Fatalf("waited for %d pin writes, have %v", n, r.snapshot())
}

// recPin is a gpiotest.Pin that records each Out call.
type recPin struct {
	*gpiotest.Pin
	rec  *recorder
	fail error // returned by Out when set
}

func (p *recPin) Out(l gpio.Level) error {
	if p.fail != nil {
		return p.fail
	}
	if err := p.Pin.Out(l); err != nil {
		return err
	}
	p.rec.mu.Lock()
	defer p.rec.mu.Unlock()
	p.rec.log = append(p.rec.log, fmt.Sprintf("%s:%s", p.N, levelChar(l)))
	return nil
}

func levelChar(l gpio.Level) string {
	if l {
		return "H"
	}
	return "L"
}

func reading(id string, s monitor.State) monitor.Entry {
	return monitor.Entry{Kind: monitor.KindReading, String: id, State: s}
}

func stateEntry(id string, s monitor.State) monitor.Entry {
	return monitor.Entry{Kind: monitor.KindState, String: id, State: s}
}

// TestBoard_Run drives a board through a scripted evening and asserts the exact
// sequence of pin levels, step by step.
func TestBoard_Run(t *testing.T) {
	rec := &recorder{}
	alarm, settling := rec.pin("ALARM", 17), rec.pin("SETTLING", 27)
	steady, alive := rec.pin("STEADY", 22), rec.pin("ALIVE", 5)
	fc := clockwork.NewFakeClock()
	b, err := New([]Lamp{
		{Name: "alarm", Shows: ShowsAlarm, Blink: true, Pin: alarm},
		{Name: "settling", Shows: ShowsSettling, Pin: settling},
		{Name: "steady", Shows: ShowsSteady, Pin: steady},
		{Name: "alive", Shows: ShowsAlive, Pin: alive},
	}, WithClock(fc), WithBlinkPeriod(time.Second))
	if err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithCancel(context.Background())
	done := make(chan error, 1)
	go func() { done <- b.Run(ctx) }()
	if err := fc.BlockUntilContext(ctx, 1); err != nil { // Run's ticker exists
		t.Fatal(err)
	}

	var want []string
	step := func(name string, do func(), writes ...string) {
		t.Helper()
		do()
		want = append(want, writes...)
		rec.waitLen(t, len(want))
		if got := rec.snapshot(); !slices.Equal(got, want) {
			t.Fatalf("after %s:\n got %v\nwant %v", name, got, want)
		}
	}
	nothing := func() {}
	half := func() { fc.Advance(500 * time.Millisecond) }

	step("New and Run start", nothing, "ALARM:L", "SETTLING:L", "STEADY:L", "ALIVE:L", "ALIVE:H")
	step("C4 heard settling", func() { b.Publish(reading("C4", monitor.Settling)) }, "SETTLING:H")
	step("half period", half, "ALIVE:L")
	step("C4 steady", func() { b.Publish(stateEntry("C4", monitor.Steady)) }, "SETTLING:L", "STEADY:H")
	// Blinking lamps follow the phase: the alarm lamp stays dark until the "on" half.
	step("D4 alarm during the off half", func() { b.Publish(stateEntry("D4", monitor.Alarm)) }, "STEADY:L")
	step("half period (on)", half, "ALARM:H", "ALIVE:H")
	step("half period (off)", half, "ALARM:L", "ALIVE:L")
	step("D4 steady again", func() { b.Publish(stateEntry("D4", monitor.Steady)) }, "STEADY:H")
	step("half period (on), nothing blinking", half, "ALIVE:H")
	// A quiet string no longer counts as heard: the steady lamp stays lit.
	step("E4 quiet", func() { b.Publish(stateEntry("E4", monitor.Quiet)) })
	step("half period (off)", half, "ALIVE:L")

	cancel()
	if err := <-done; err != nil {
		t.Fatalf("Run: %v", err)
	}
	step("Halt", func() {
		if err := b.Halt(); err != nil {
			t.Fatal(err)
		}
	}, "ALARM:L", "SETTLING:L", "STEADY:L", "ALIVE:L")
	for _, p := range []*recPin{alarm, settling, steady, alive} {
		if p.L != gpio.Low {
			t.Errorf("%s is %v after Halt, want Low", p.N, p.L)
		}
	}
}

// TestBoard_conditions checks what each kind of lamp shows for a set of string
// states, without running the blink loop (phase "on").
func TestBoard_conditions(t *testing.T) {
	tests := []struct {
		name    string
		entries []monitor.Entry
		want    map[string]bool // Shows → lit
	}{
		{"nothing heard", nil, map[string]bool{
			ShowsAlarm: false, ShowsSettling: false, ShowsSteady: false, ShowsOffTarget: false, ShowsFault: false, ShowsAlive: true}},
		{"all steady", []monitor.Entry{reading("A", monitor.Steady), reading("B", monitor.Steady)}, map[string]bool{
			ShowsSteady: true, ShowsSettling: false, ShowsOffTarget: false}},
		{"one off target", []monitor.Entry{reading("A", monitor.Steady), reading("B", monitor.OffTarget)}, map[string]bool{
			ShowsSteady: false, ShowsOffTarget: true}},
		{"only quiet strings", []monitor.Entry{stateEntry("A", monitor.Quiet)}, map[string]bool{
			ShowsSteady: false}},
		{"alarm then recovered", []monitor.Entry{reading("A", monitor.Alarm), reading("A", monitor.Settling)}, map[string]bool{
			ShowsAlarm: false, ShowsSettling: true}},
		{"fault", []monitor.Entry{{Kind: monitor.KindFault, Reason: "journal"}}, map[string]bool{
			ShowsFault: true, ShowsSteady: false}},
		{"unmatched notes change nothing", []monitor.Entry{{Kind: monitor.KindUnmatched, State: monitor.Alarm}}, map[string]bool{
			ShowsAlarm: false}},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			pins := map[string]*gpiotest.Pin{}
			var lamps []Lamp
			for i, s := range validShows {
				p := &gpiotest.Pin{N: "P" + s, Num: i}
				pins[s] = p
				lamps = append(lamps, Lamp{Name: s, Shows: s, Pin: p})
			}
			b, err := New(lamps, WithClock(clockwork.NewFakeClock()))
			if err != nil {
				t.Fatal(err)
			}
			for _, e := range tt.entries {
				b.Publish(e)
			}
			b.apply(true)
			for shows, lit := range tt.want {
				if got := pins[shows].L == gpio.High; got != lit {
					t.Errorf("%s lamp lit = %v, want %v", shows, got, lit)
				}
			}
		})
	}
}

// TestBoard_faultWindow: a fault lights the fault lamp for the window, then it goes dark.
func TestBoard_faultWindow(t *testing.T) {
	fc := clockwork.NewFakeClock()
	p := &gpiotest.Pin{N: "FAULT"}
	b, err := New([]Lamp{{Name: "fault", Shows: ShowsFault, Pin: p}}, WithClock(fc), WithFaultWindow(time.Minute))
	if err != nil {
		t.Fatal(err)
	}
	b.Publish(monitor.Entry{Kind: monitor.KindFault, Reason: "journal", Detail: "write: disk full"})
	b.apply(true)
	if p.L != gpio.High {
		t.Fatal("fault lamp dark right after a fault")
	}
	fc.Advance(59 * time.Second)
	b.apply(false)
	if p.L != gpio.High {
		t.Fatal("fault lamp dark 59 s after a fault, window is 60 s")
	}
	fc.Advance(time.Second)
	b.apply(true)
	if p.L != gpio.Low {
		t.Fatal("fault lamp still lit when the window has passed")
	}
}

func TestNew_errors(t *testing.T) {
	pin := func(n string) gpio.PinOut { return &gpiotest.Pin{N: n} }
	tests := []struct {
		name  string
		lamps []Lamp
		opts  []Option
		want  string
	}{
		{"no pin", []Lamp{{Name: "alarm", Shows: ShowsAlarm}}, nil, "lamp: alarm: no pin"},
		{"unknown shows", []Lamp{{Name: "x", Shows: "party", Pin: pin("A")}}, nil, `lamp: x: shows "party", want one of`},
		{"pin twice", []Lamp{{Name: "a", Shows: ShowsAlarm, Pin: pin("GPIO17")}, {Name: "b", Shows: ShowsAlive, Pin: pin("GPIO17")}}, nil,
			"lamp: b: pin GPIO17 is already used by lamp a"},
		{"unnamed lamp", []Lamp{{Shows: ShowsAlarm}}, nil, "lamp: #1: no pin"},
		{"bad period", nil, []Option{WithBlinkPeriod(0)}, "must be positive"},
		{"pin fails", []Lamp{{Name: "alive", Shows: ShowsAlive, Pin: &recPin{Pin: &gpiotest.Pin{N: "GPIO5"}, rec: &recorder{}, fail: errors.New("permission denied")}}}, nil,
			"lamp: alive on GPIO5: set low: permission denied"},
	}
	for _, tt := range tests {
		t.Run(tt.name, func(t *testing.T) {
			_, err := New(tt.lamps, tt.opts...)
			if err == nil || !strings.Contains(err.Error(), tt.want) {
				t.Fatalf("New error = %v, want it to contain %q", err, tt.want)
			}
		})
	}
}

// TestBoard_writeErrors: a failing pin is reported and retried; the others still work;
// Halt tries every pin and reports the failure.
func TestBoard_writeErrors(t *testing.T) {
	rec := &recorder{}
	bad, good := rec.pin("BAD", 1), rec.pin("GOOD", 2)
	var reported []string
	b, err := New([]Lamp{
		{Name: "alarm", Shows: ShowsAlarm, Pin: bad},
		{Name: "settling", Shows: ShowsSettling, Pin: good},
	}, WithClock(clockwork.NewFakeClock()), WithErrorHandler(func(lamp string, err error) {
		reported = append(reported, err.Error())
	}))
	if err != nil {
		t.Fatal(err)
	}
	bad.fail = errors.New("line busy")
	b.Publish(reading("A", monitor.Alarm))
	b.Publish(reading("B", monitor.Settling))
	b.apply(true)
	b.apply(true) // retried, reported again
	if want := []string{"lamp: alarm on BAD: line busy", "lamp: alarm on BAD: line busy"}; !slices.Equal(reported, want) {
		t.Errorf("reported %v, want %v", reported, want)
	}
	if good.L != gpio.High {
		t.Error("the good lamp did not light")
	}
	err = b.Halt()
	if err == nil || !strings.Contains(err.Error(), "alarm on BAD: set low: line busy") {
		t.Errorf("Halt error = %v", err)
	}
	if good.L != gpio.Low {
		t.Error("Halt left the good lamp lit")
	}
	b.Publish(reading("B", monitor.Settling))
	b.apply(true)
	if good.L != gpio.Low {
		t.Error("a halted board wrote a pin")
	}
}

// BenchmarkBoard_Publish is the cost the monitor pays per entry.
func BenchmarkBoard_Publish(b *testing.B) {
	var lamps []Lamp
	for i, s := range validShows {
		lamps = append(lamps, Lamp{Name: s, Shows: s, Pin: &gpiotest.Pin{N: s, Num: i}})
	}
	board, err := New(lamps)
	if err != nil {
		b.Fatal(err)
	}
	ids := make([]string, 230)
	for i := range ids {
		ids[i] = fmt.Sprintf("S%03d", i)
	}
	b.ReportAllocs()
	for i := 0; b.Loop(); i++ {
		board.Publish(reading(ids[i%len(ids)], monitor.State(i%5)))
	}
}
