// Package exciter drives the GPIO outputs that set strings sounding for unattended
// rounds: a short high pulse on a string's line fires its solenoid, hammer or
// electromagnet driver, then the line goes low again.
//
// A [Driver] sounds one string at a time ([Driver.Strike]). The pulse lasts
// Options.Pulse, which New refuses to set above Options.MaxPulse, and Strike also
// caps every pulse at [HardMaxPulse] whatever the options say: a line left high
// heats a coil and can keep a hammer against the string.
//
// # The hardware must be safe on its own
//
// Software cannot promise the state of a line after the process dies. The kernel
// holds a GPIO line's level only while the process holds the line; after a crash,
// a kill -9 or a power brown-out the line "may revert to its default state" or stay
// where it was — possibly high, mid-pulse. So the driver circuit must be safe by
// itself:
//
//   - a pull-down resistor on every exciter line, so a released or floating line
//     reads low and the driver is off;
//   - a hardware limit on the pulse length (an RC-coupled gate or a monostable, so
//     a line stuck high still gives only one short pulse);
//   - a fuse or current limit sized for the coil's continuous rating.
//
// [Driver.Halt] drives every line low and is the defined exit state on a clean
// shutdown; New also drives every line low before anything else.
//
// The package takes [gpio.PinOut] values; looking pins up by name and initialising
// host drivers belong to the command.
package exciter
