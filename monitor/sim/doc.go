// Package sim plans a simulated night of settling for the demo and plays it into a
// synthetic audio source, so that the real pipeline (capture → pitch → monitor →
// journal → lamps → report) can be run end to end without an instrument.
//
// # The settling model
//
// Every string starts within ±1 cent of its target and then sags by log-time creep,
//
//	c(t) = c0 − b·ln(1 + t/t0),
//
// with a magnitude b that depends on the construction: nylon 6–9 cents per unit of
// ln(1 + t/t0), fluorocarbon 4–6, gut 2.5–4, plain steel 1.5–3, wound strings
// 0.8–1.6; t0 is 0.2–0.8 h. Polymer strings creep far more than gut, and gut more
// than metal (viscoelastic creep; reference-values §4.3 suggests the log-time form);
// new plain piano wire also sags as it seats at its bearing points (§4.3, trade).
// The ranges are invented for the demo, not measured.
//
// Midway through the night the restorer does one pull-up pass: every string flatter
// than 3 cents is raised by −c/(1−s), s being the trade share a raise is expected to
// give back (~30 % treble, ~10 % bass; reference-values §4.3, common practice). The
// raised stretch then creeps back by the string's own share of the raise over about
// 12 hours (nylon ~35 %, gut ~25 %, wound and steel ~10–12 %, ±15 % per string).
//
// Each reading also wanders by a seeded 0.12 cents, and the room adds white noise.
//
// # Injected faults
//
//   - margin: the wound string with the highest margin is fitted with a lighter core,
//     found by bisection so that at pitch it runs 5 points over the alarm share; the
//     config the listener gets records the fitted core, so its margin alarms.
//   - winding: a wound string's winding loosens a little past the middle of the night:
//     its inharmonicity B doubles over an hour while its pitch falls 1.5 cents.
//   - slip: a plain string near the middle of the scale slips at its pin late in the
//     night (after the pull-up): a sudden drop of 35 cents, past the listener's
//     25-cent jump threshold.
//
// # Audio
//
// Each strike is a synth.Tone (stiff-string partials f_n = n·f0·√(1 + B·n²), Fletcher
// 1964) of the string's simulated B whose FIRST PARTIAL sits at the simulated pitch:
// a string's pitch and target are its first partial's (what a tuner hears), so the
// tone's ideal f0 is f1/√(1 + B). Tension (and so the margin fault) uses that ideal
// f0. The partials decay, there is a short thump, then rendered silence; the time between rounds is skipped, not
// rendered, so a night costs only its strikes. All randomness is seeded.
package sim
