// Package lamp drives indicator lamps (LEDs, relay-switched lamps) on GPIO outputs
// from the monitor's journal entries.
//
// A [Board] is a [monitor.Sink]: Publish keeps the state of every string it has
// heard about and nudges the board's own goroutine ([Board.Run]), which computes
// each lamp's level and writes the pins that changed. Publish never touches a pin,
// so a slow GPIO write never holds up the monitor.
//
// # What a lamp shows
//
// Each [Lamp] shows one condition (its Shows field):
//
//   - "alarm": at least one string is in the alarm state;
//   - "settling": at least one string is settling;
//   - "steady": at least one string has been heard and every string that is not
//     quiet is steady (off-target, settling or alarm strings turn it off);
//   - "off-target": at least one string is steady but off its target;
//   - "fault": a component fault entry (journal write error, audio failure, ...)
//     arrived within the fault window (default 10 minutes, [WithFaultWindow]);
//   - "alive": a heartbeat that blinks while Run is running. It always blinks, even
//     without Blink set, because a frozen daemon would leave a steadily lit lamp
//     behind: only a blinking alive lamp proves the daemon is running.
//
// A lamp with Blink set flashes while its condition holds, half a period on and
// half off (default period 1 s, [WithBlinkPeriod]).
//
// # Exit state and crashes
//
// [Board.Halt] drives every lamp low: the defined exit state. The pins hold their
// level only while the process holds them; after a crash the kernel may leave a
// line at any level, which is why the alive lamp blinks.
//
// The package takes [gpio.PinOut] values and never initialises host drivers or
// looks pins up by name; that is the command's job.
package lamp
