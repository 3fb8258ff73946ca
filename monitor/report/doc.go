// Package report turns a journal's entries into the morning settling report:
// report.html (one self-contained page with hand-written inline SVG plots, no scripts,
// fonts or network), readings.csv (one row per reading), summary.json (one object per
// string) and a short table for a terminal.
//
// # Time axis
//
// Each run's entries are placed by its monotonic clock (mono_s) anchored at the wall
// time of the run's first entry, so a wall clock stepped during a run does not bend a
// curve; separate runs are placed by their wall times. Hour 0 is the first reading.
//
// # Per string
//
// The readings of each string go to package settle (pull-ups, slips, a fitted
// settling model, drift rate, time to steady, +24 h, the next pull-up). The trade
// fall-back share is the bass figure (~10 %) for wound strings and strings in a
// section named "bass" — without a config, for strings below C3 (131 Hz) — and the
// treble figure (~30 %) otherwise (reference-values §4.3, common practice).
//
// # Flags and attention
//
// Flags are problems: "margin" (the highest tension of the night over the alarm share
// of breaking load, or a margin alarm from the listener), "slip" (a sudden drop that
// creep does not explain, found by the analysis, or a jump alarm from the listener)
// and "partials" (a partial-shift alarm from the listener; the report adds how the
// fitted inharmonicity B moved from the first to the last quarter of the night).
// Warnings — over the warning share, off target, still settling, outliers — are
// states to act on, not faults. Strings needing a look are ranked: alarms first (more
// flags, then higher margin), then off target (furthest first), then settling (longest
// to steady first).
//
// # Listener and fit
//
// The state of a string is the listener's, from its last entry ("at dawn"): it judges
// a robust slope over its rate window (listen.rate_window, 2 h by default) and its last
// reading. The report's own figures come from the fitted settling model: the slope and
// pitch of the model now. Both use the same thresholds (shown in the table headers),
// and near a threshold they can disagree; a string either calls off-target or settling
// is ranked so, and its reasons say whose verdict it is. When the listener calls a
// string off-target that the fit puts inside the tolerance, the next pull-up is worked
// out from the listener's last reading instead of the fit's pitch.
//
// # Times and wording
//
// Times of events are written as hours since the first reading and the clock time on
// the report's axis ("hour 6.5 (01:30)"). The report speaks "as of" the journal's last
// entry and is not stamped with the time it is written, so a journal always gives the
// same files.
//
// # Config check
//
// When more than a quarter of the journal's strings are not in the given config, it is
// probably the wrong config (targets, thresholds and advice would all be off): the
// report says so in a banner, in summary.json (config_warning) and on the terminal.
//
// # Safety
//
// Whenever a margin is over min(warning share, tension.CautionFloor) — a config may
// warn earlier, never later — the page leads with tension.Caution and the strength
// basis of the margins; every margin is a guide that depends on the strength figure
// used, never a guarantee.
package report
