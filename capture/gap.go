package capture

//go:generate go run ./internal/genfixtures -out ../testdata/audio

// Reasons a source gives in a Gap.
const (
	// GapIdle marks deliberate, unrendered silence: a simulation skipped time. The
	// sample clock advanced by Gap.Frames but nothing was lost.
	GapIdle = "idle"
	// GapOverflow marks frames the device discarded because they were not read in time.
	GapOverflow = "overflow"
	// GapDropped marks blocks a source discarded itself because its reader fell behind.
	GapDropped = "dropped"
)
