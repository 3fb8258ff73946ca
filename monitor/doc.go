// Package monitor turns audio into string readings, drift states and journal entries:
// the heart of `taut listen`.
//
// # Pipeline
//
// A capture goroutine reads the Source into a fixed pool of blocks (about 20 ms each,
// 4 s in all by default). With Options.DropWhenBehind (live devices) it never waits for
// analysis: when no block is free the audio is dropped, counted, logged at most every
// 10 s and journaled as a KindGap entry with reason "dropped". Without it (files,
// pipes) capture waits and nothing is lost. The analysis goroutine (Run's own) owns
// everything else and is the only one that emits entries, so sinks see them in order.
//
// The time base is the sample clock: frames read plus gap frames since sample 0. An
// idle gap (capture.GapIdle, a simulation skipping time) advances it silently; any
// other gap is journaled with gap_frames. With LiveClock, entries carry the wall time
// and the monotonic time since start, and a wall clock that moves more than 2 s
// against the monotonic clock is journaled as KindClock; drift rates always use the
// sample clock. Without LiveClock (replay, simulation) Time = StartTime + sample time
// and MonoS = sample time. A source that delivers no frame for StallAfter raises a
// KindFault "audio-stall".
//
// # Losing the source
//
// With Options.Reopen (live devices), a source whose Read fails (a USB microphone
// unplugged) or stalls for StallAfter (a driver that stopped delivering: the stall
// watchdog cancels the hanging Read) is closed and opened again, the first attempt at
// once and then with capped exponential backoff (ReopenMin doubling up to ReopenMax,
// 1 s and 30 s by default). A reopened source that fails within a minute keeps the
// grown wait, so a flapping device is not reopened in a tight loop. The failure is
// journaled as a KindFault ("audio", or "audio-stall"; a first failed attempt as
// "audio-reopen") and the time the source was away as a KindGap with reason "reopen",
// measured on the monotonic clock from its last frames to the new source's first,
// which also moves the sample clock. A Read that does not return even when cancelled
// (a driver stuck in C code) is reported as "audio-stuck": only a restart helps, and
// the listener stops feeding systemd's watchdog while frames do not flow. A reopened
// source with another format ends the run with an error. Without Reopen (files,
// stdin: a pipe cannot be reopened) a failed source ends the run.
//
// # From audio to notes
//
// Each lane (an input channel, or the mix of all channels when no string has a pickup
// channel) runs a DC blocker (one-pole high-pass at 5 Hz), the pitch onset detector
// and, after an onset, skips the attack and collects an analysis window. The window
// length and the analyser's search range (pitch.Hint) come from the candidate strings'
// predicted pitches widened by 200 cents: a short window for treble strings, and the
// analyser never considers pitches no candidate could have. A window with more than
// 1 % of its samples clipped (|x| ≥ 0.999, counted before the DC blocker) is not
// analysed; the clipping is logged at most once a minute.
//
// # Matching a note to a string
//
// In this order:
//
//  1. A pickup channel with one string mapped to it: that string.
//  2. The exciter: strings driven (Excite) within Exciter.Listen before the onset.
//     One: that string; several sharing an exciter pin: rule 3 among them.
//  3. The string whose predicted current pitch is nearest the note's fitted f0. The
//     prediction is the string's last reading plus its trend (Theil–Sen slope of its
//     recent readings) times the time since, the change capped at JumpCents — not its
//     target, because a new string can sag a semitone onto its neighbour's target.
//     A string never heard predicts its target. The note is unmatched when the
//     nearest prediction is more than MatchCents away ("too-far") or when the
//     runner-up is within AmbiguousCents of it ("ambiguous").
//
// An unmatched note is journaled as KindUnmatched, never guessed. Unisons (several
// strings on one note) are ambiguous by construction for rule 3 until their histories
// differ: give them pickup channels or exciters.
//
// # Readings
//
// Tension uses the fitted f0 (not the first partial, which stiffness raises by
// √(1+B)): T = 4·L²·μ·f0² (tension.String.Tension); margin = T / breaking load;
// cents = 1200·log2(f1 / target) (note.Cents), where f1 is the measured first partial:
// a target is the pitch a tuner hears and shows, the first partial, so a string tuned
// by any ordinary tuner reads 0 cents; matching compares first partials too. The
// measured B is compared with the
// string data's prediction B = π³·E·d⁴/(64·T·L²) (Fletcher 1964) and a ratio outside
// 0.5..2 (0.5..3 for wound strings, whose core-only prediction is a lower bound) is
// flagged in Detail. A margin above MarginWarn is noted in Detail with a caution that
// defers to the maker's specification and local professional practice.
//
// # Drift rate and states
//
// Each string keeps a ring of at most 64 points; readings closer than RateWindow/64 are
// merged (averaged) into one point, so the ring spans the window whatever the reading
// rate, and memory per string is fixed. The drift rate in cents per hour is the
// Theil–Sen slope (median of pairwise slopes, Sen 1968) of the points within
// RateWindow: one misheard reading cannot fake a drift. It needs at least 4 points
// spanning a quarter of RateWindow.
//
//   - quiet: no reading for QuietAfter (stamped at that deadline).
//   - settling: too few points for a rate ("few-readings"), |rate| ≥
//     SteadyCentsPerHour ("drift"), or a pull-up just happened ("pull-up").
//   - steady: |rate| under SteadyCentsPerHour and within ToleranceCents of target.
//   - off-target: steady, but beyond ToleranceCents.
//   - alarm, with the causes in Reason: "margin" (margin > MarginAlarm); "jump" (the
//     pitch dropped more than JumpCents below its prediction: a slipped pin or a
//     broken string; latched until the string is brought back within JumpCents/2 of
//     where it was or pulled up); "partials" (two readings in a row with B·T, or a
//     partial's deviation from n·f0 times T, moved by more than PartialShift against
//     the string's own steady baseline, at least 3 cents for a partial; B falls as T
//     rises, so a pull-up is no shift).
//
// A rise of more than JumpCents is a pull-up: the drift series restarts and the string
// is settling again. A state change is journaled as KindState with prev_state, right
// after the reading that caused it.
//
// Every entry is appended to the journal first (which assigns Seq) and then given to
// every sink. A failed append is reported once as a KindFault entry (the journal holds
// and retries the entries) and the monitor keeps running.
//
// # Resuming
//
// Options.Resume (the journal's recovered entries) is replayed through the trackers at
// start, so drift series, rates, the B baseline and latches resume, and each string
// takes the last state the journal recorded. Per-partial baselines are not journaled
// and are learnt again.
//
// # Exciter rounds
//
// With an Exciter and Exciter.Enabled, a round every Interval (skipped in QuietHours,
// local time) drives each string with an exciter pin in scale order: Excite, Strike,
// then wait Listen. The round timing uses Options.Clock, so tests run it on a fake clock.
package monitor
