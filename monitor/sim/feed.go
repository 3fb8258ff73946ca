package sim

import (
	"context"
	"time"

	"taut/capture/synth"
)

// Player is where the night's audio goes (capture.SynthSource).
type Player interface {
	Queue(tone synth.Tone, durS float64)
	QueueSilence(durS float64)
	Skip(frames int64)
	Close() error
}

// Exciter is told which string each strike drives, at which sample frame, and
// reports how far capture has read ((*monitor.Monitor).Excite and Frame).
type Exciter interface {
	Excite(id string, frame int64)
	Frame() int64
}

// Feed plays the night: for each strike it registers the strike with ex, then queues
// its tone and the damped pause after it; between rounds it skips the idle time. It stays at most
// ahead strikes in front of capture, so the listener's memory of pending strikes (and
// the queue) stays small. It closes p at the end or when ctx ends.
func Feed(ctx context.Context, n *Night, p Player, ex Exciter, ahead int) error {
	defer p.Close()
	ahead = max(ahead, 1)
	var sent []int64 // frames of the strikes queued, for the look-ahead
	pos := int64(0)  // frames queued so far
	for _, r := range n.Rounds {
		if r.Frame > pos {
			p.Skip(r.Frame - pos)
			pos = r.Frame
		}
		for _, s := range r.Strikes {
			if k := len(sent) - ahead; k >= 0 {
				if err := waitFrame(ctx, ex, sent[k]); err != nil {
					return err
				}
			}
			ex.Excite(s.String, s.Frame)
			p.Queue(s.Tone, n.Options.ToneS)
			p.QueueSilence(n.Options.DampS)
			sent = append(sent, s.Frame)
			pos = s.Frame + n.SlotFrames()
		}
	}
	return nil
}

// waitFrame waits until capture has read past frame.
func waitFrame(ctx context.Context, ex Exciter, frame int64) error {
	for ex.Frame() <= frame {
		select {
		case <-ctx.Done():
			return ctx.Err()
		case <-time.After(250 * time.Microsecond):
		}
	}
	return nil
}
