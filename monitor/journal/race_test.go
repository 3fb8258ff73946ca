//go:build race

package journal_test

// raceEnabled thins the exhaustive loops, which the race detector slows tenfold.
const raceEnabled = true
