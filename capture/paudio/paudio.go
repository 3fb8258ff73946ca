//go:build portaudio && cgo

package paudio

import (
	"context"
	"errors"
	"fmt"
	"math"
	"runtime"
	"strings"
	"sync"
	"time"

	"github.com/gordonklaus/portaudio"

	"taut/capture"
)

// Available reports whether this build can capture from devices.
const Available = true

// paMu serialises PortAudio's global state (Initialize, Terminate, the binding's
// device cache) between Devices and the opening and closing of streams.
var paMu sync.Mutex

// Stream is a live input stream; see the package documentation.
type Stream struct {
	format       capture.Format
	q            *blockQueue
	stop         chan struct{}
	done         chan struct{}
	stopOnce     sync.Once
	closeTimeout time.Duration
}

// Open opens the input whose name contains deviceSubstring ("" = the default input),
// one channel at the device's default rate.
func Open(deviceSubstring string) (*Stream, error) {
	return OpenWith(Options{Device: deviceSubstring})
}

// OpenWith opens an input stream and starts capturing.
func OpenWith(o Options) (*Stream, error) {
	o = o.withDefaults()
	s := &Stream{
		stop:         make(chan struct{}),
		done:         make(chan struct{}),
		closeTimeout: o.CloseTimeout,
	}
	ready := make(chan error, 1)
	go s.run(o, ready)
	t := time.NewTimer(o.OpenTimeout)
	defer t.Stop()
	select {
	case err := <-ready:
		if err != nil {
			return nil, err
		}
		return s, nil
	case <-t.C:
		s.stopOnce.Do(func() { close(s.stop) })
		return nil, fmt.Errorf("paudio: opening %q took longer than %v; the device or its driver is not answering", o.Device, o.OpenTimeout)
	}
}

func (o Options) withDefaults() Options {
	if o.Channels <= 0 {
		o.Channels = 1
	}
	if o.QueueBlocks <= 0 {
		o.QueueBlocks = 16
	}
	if o.OpenTimeout <= 0 {
		o.OpenTimeout = 10 * time.Second
	}
	if o.CloseTimeout <= 0 {
		o.CloseTimeout = 2 * time.Second
	}
	return o
}

// run is the only goroutine that calls PortAudio for this stream.
func (s *Stream) run(o Options, ready chan<- error) {
	runtime.LockOSThread()
	defer runtime.UnlockOSThread()
	defer close(s.done)
	st, buf, err := s.open(o)
	if err != nil {
		ready <- err
		return
	}
	defer shutdown(st)
	s.q = newBlockQueue(o.Channels, len(buf), o.QueueBlocks, s.stop)
	ready <- nil
	for {
		select {
		case <-s.stop:
			return
		default:
		}
		err := st.Read()
		// An overflow leaves a good buffer; PortAudio discarded audio before it.
		overflowed := errors.Is(err, portaudio.InputOverflowed)
		if err != nil && !overflowed {
			s.q.fail(fmt.Errorf("paudio: read: %w", err))
			return
		}
		s.q.put(buf, overflowed)
	}
}

// open initialises PortAudio, opens and starts the stream, holding paMu.
func (s *Stream) open(o Options) (*portaudio.Stream, []float32, error) {
	paMu.Lock()
	defer paMu.Unlock()
	if err := portaudio.Initialize(); err != nil {
		return nil, nil, fmt.Errorf("paudio: initialize: %w", err)
	}
	st, buf, err := s.openInitialized(o)
	if err != nil {
		portaudio.Terminate()
		return nil, nil, err
	}
	return st, buf, nil
}

func (s *Stream) openInitialized(o Options) (*portaudio.Stream, []float32, error) {
	dev, err := choose(o.Device)
	if err != nil {
		return nil, nil, err
	}
	if o.Channels > dev.MaxInputChannels {
		return nil, nil, fmt.Errorf("paudio: %q has %d input channels; %d asked for", dev.Name, dev.MaxInputChannels, o.Channels)
	}
	p := portaudio.HighLatencyParameters(dev, nil)
	p.Input.Channels = o.Channels
	fpb := o.FramesPerBuffer
	if fpb <= 0 {
		fpb = defaultFramesPerBuffer(p.SampleRate)
	}
	p.FramesPerBuffer = fpb
	buf := make([]float32, fpb*o.Channels)
	st, err := portaudio.OpenStream(p, buf)
	if err != nil {
		return nil, nil, fmt.Errorf("paudio: open %q at %.0f Hz × %d channels: %w", dev.Name, p.SampleRate, o.Channels, err)
	}
	rate := p.SampleRate
	if info := st.Info(); info != nil && info.SampleRate > 0 {
		rate = info.SampleRate
	}
	s.format = capture.Format{SampleRate: int(math.Round(rate)), Channels: o.Channels}
	if err := s.format.Validate(); err != nil {
		st.Close()
		return nil, nil, fmt.Errorf("paudio: %q: %w", dev.Name, err)
	}
	if err := st.Start(); err != nil {
		st.Close()
		return nil, nil, fmt.Errorf("paudio: start %q: %w", dev.Name, err)
	}
	return st, buf, nil
}

// defaultFramesPerBuffer is the largest power of two not above 50 ms of audio.
func defaultFramesPerBuffer(rateHz float64) int {
	n := 64
	for float64(2*n) <= rateHz/20 {
		n *= 2
	}
	return n
}

func shutdown(st *portaudio.Stream) {
	st.Abort() // Stop would wait for pending buffers; a hung device must not hold us
	st.Close()
	paMu.Lock()
	portaudio.Terminate()
	paMu.Unlock()
}

// choose returns the input device whose name contains sub (case-insensitive), the
// default input when sub is empty.
func choose(sub string) (*portaudio.DeviceInfo, error) {
	devs, err := portaudio.Devices()
	if err != nil {
		return nil, fmt.Errorf("paudio: list devices: %w", err)
	}
	var inputs, matches []*portaudio.DeviceInfo
	for _, d := range devs {
		if d.MaxInputChannels > 0 {
			inputs = append(inputs, d)
		}
	}
	if sub == "" {
		d, err := portaudio.DefaultInputDevice()
		if err != nil {
			return nil, fmt.Errorf("paudio: default input: %w; inputs are: %s", err, names(inputs))
		}
		return d, nil
	}
	for _, d := range inputs {
		if d.Name == sub {
			return d, nil
		}
		if strings.Contains(strings.ToLower(d.Name), strings.ToLower(sub)) {
			matches = append(matches, d)
		}
	}
	switch len(matches) {
	case 0:
		return nil, fmt.Errorf("paudio: no input device name contains %q; inputs are: %s", sub, names(inputs))
	case 1:
		return matches[0], nil
	}
	return nil, fmt.Errorf("paudio: %q matches %d inputs (%s); give a longer part of the name", sub, len(matches), names(matches))
}

func names(devs []*portaudio.DeviceInfo) string {
	if len(devs) == 0 {
		return "none"
	}
	q := make([]string, len(devs))
	for i, d := range devs {
		q[i] = fmt.Sprintf("%q", d.Name)
	}
	return strings.Join(q, ", ")
}

// Devices lists the audio inputs.
func Devices() ([]Device, error) {
	paMu.Lock()
	defer paMu.Unlock()
	if err := portaudio.Initialize(); err != nil {
		return nil, fmt.Errorf("paudio: initialize: %w", err)
	}
	defer portaudio.Terminate()
	devs, err := portaudio.Devices()
	if err != nil {
		return nil, fmt.Errorf("paudio: list devices: %w", err)
	}
	def, _ := portaudio.DefaultInputDevice() // none is fine: no device is the default
	var out []Device
	for _, d := range devs {
		if d.MaxInputChannels <= 0 {
			continue
		}
		api := ""
		if d.HostApi != nil {
			api = d.HostApi.Name
		}
		out = append(out, Device{Name: d.Name, HostAPI: api, Channels: d.MaxInputChannels,
			DefaultRateHz: d.DefaultSampleRate, Default: def != nil && d.Index == def.Index})
	}
	return out, nil
}

// Format returns the rate the device granted and the channels captured.
func (s *Stream) Format() capture.Format { return s.format }

// Read copies captured frames into dst, waiting for a block when none is queued. A
// *capture.Gap comes with the good samples that follow lost frames. Other errors
// (the device failed) are final.
func (s *Stream) Read(ctx context.Context, dst []float32) (int, error) {
	return s.q.read(ctx, dst)
}

// Close stops capture and releases the device: abort, close, Terminate, all on the
// capture goroutine. If that goroutine is stuck inside a device read for longer than
// the close timeout, Close returns an error and leaves it behind.
func (s *Stream) Close() error {
	s.stopOnce.Do(func() { close(s.stop) })
	t := time.NewTimer(s.closeTimeout)
	defer t.Stop()
	select {
	case <-s.done:
		return nil
	case <-t.C:
		return fmt.Errorf("paudio: close: the capture thread is still inside a device read after %v; the device was left open", s.closeTimeout)
	}
}

// Stats returns the stream's counters; it is safe to call from any goroutine.
func (s *Stream) Stats() Stats { return s.q.stats() }
