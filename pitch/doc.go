// Package pitch measures the notes of struck and plucked strings: the first partial to a
// small fraction of a cent, the ideal (flexible-string) fundamental f0 and the
// inharmonicity coefficient B, from a stretch of mono samples. It is pure computation:
// samples in, numbers out, no I/O and no logging.
//
// # Use
//
// An Analyzer is made once per sample rate with New and reused; Analyze fills a Note and
// does not allocate once its buffers and FFT plans exist (destination first, as in
// gonum). One Analyzer serves one goroutine. A recording is cut into notes with Segments;
// a live stream is watched with an OnsetDetector, and the listener takes WindowLen
// samples starting AttackSkip samples after each onset.
//
//	a, _ := pitch.New(pitch.Config{SampleRate: 48000})
//	for _, s := range pitch.Segments(nil, x, 48000, 25) {
//		err := a.Analyze(&note, x[s.Start:s.End], pitch.Hint{})
//		…
//	}
//
// Analyze never makes a number up. Too few samples give ErrTooShort, a level below
// Config.SilenceDB ErrSilence, flat tops at full scale on 1 % or more of the samples
// ErrClipped (see Clipping), NaN, infinite or absurd (beyond ±1000) samples
// ErrBadSample, and noise, or a tone whose partial series continues outside the search
// range, ErrNoPitch.
//
// # Units
//
// Samples are float32 in [-1, 1] (full scale 1). Frequencies are in hertz, B is
// dimensionless, levels are dBFS: Note.LevelDB is the RMS level of the samples the
// estimate used (a full-scale sine is -3.01 dBFS), Partial.DB the amplitude of one
// partial (a full-scale sine is 0 dB). Cents and note names are left to package
// pitch/note.
//
// # Algorithm
//
// 1. Decimation. The input is kept at its own rate and at successively halved rates,
// each made by a 47-tap linear-phase half-band FIR filter (Kaiser window, about 80 dB of
// alias rejection) evaluated only at the kept samples. A time-invariant filter does not
// move the frequency of a sinusoid, decaying or not, so low notes are analysed at low
// rates with small FFTs at no cost in accuracy.
//
// 2. YIN (de Cheveigné & Kawahara 2002), steps 2 to 6 as published: the difference
// function d(τ) = Σ_j (x_j − x_{j+τ})², computed exactly but fast from
// d(τ) = r_t(0) + r_{t+τ}(0) − 2·r_t(τ) with running energy sums and one FFT
// cross-correlation; the cumulative mean normalised difference d′; the absolute
// threshold 0.1 (the first dip below it wins); parabolic interpolation of each dip, whose
// interpolated value is used for the dip selection and whose abscissa, taken on the raw
// d, is the period; and the best local estimate, which compares three frames half the
// longest period apart and searches the centre frame again within ±20 % of the deepest
// dip's period. The integration window is one longest period (at least 10 ms). The lag
// axis is split in two bands, each a complete YIN from lag 1 on its own level: periods
// of pitches from MaxHz/4 to MaxHz at the rate MaxHz needs (four or more samples per
// period), and longer periods at a four times lower rate, where they take four times
// fewer samples. The short lags are searched first, as in the paper. A Hint narrows the
// lag range and so the cost.
//
// 3. Spectrum. A stretch of the signal, twelve periods of the YIN pitch lengthened
// towards 48 periods as long as it stays within 0.2 s (never shorter than 0.05 s nor
// longer than 0.5 s, nor longer than what was given), is taken at the lowest rate whose
// alias-free band holds MaxPartials stretched partials, multiplied by a Gaussian window
// spanning ±4 standard deviations (±5 when the window holds fewer than 40 periods, to
// keep the leakage of the negative-frequency image from the low partials) and
// transformed with at least twofold zero-padding. The logarithm of a Gaussian window's
// spectrum is a parabola, and a Gaussian times a decaying exponential is a shifted
// Gaussian, so the parabola through the log power at the three bins around a peak gives
// a partial's frequency with a bias below 1e-4 bin, also for decaying partials.
//
// 4. Partials. Partials n = 1..MaxPartials are looked for within ±f0/4 of
// n·f0·sqrt(1 + B·n²) (Fletcher 1964), starting from the YIN pitch with B = 0 and
// refitting f0 and B after every partial found, so that the search follows the stretch
// of the series. A peak counts when it is a local maximum 17 dB above the local noise
// floor (a low quantile of the nearby bins) and within 60 dB of the strongest partial
// and of the whole signal; a lone partial (a plain sine) needs 30 dB. A second pass
// searches again within ±f0/20 of the fitted series, which recovers partials the first,
// rougher pass missed. A weak or missing first partial (the piano bass) is simply
// absent from the list.
//
// 5. Fit. (f_n/n)² = f0² + f0²·B·n² is a straight line in n², fitted by weighted least
// squares with each point weighted by its inverse variance, from its signal-to-noise
// ratio and a floor for the interpolation's bias. Partials whose residual exceeds six
// standard deviations (at least 0.3 bin) are dropped one at a time. FitPartials is the
// same fit with equal weights. With a single partial, f0 is that partial's frequency and
// B is 0 (it cannot be measured). B is reported as fitted: for a nearly harmonic tone it
// can come out slightly below zero, within its uncertainty.
//
// 6. Octave safety. If all partial numbers found share a factor g > 1, or partials 1 to
// 3 are all missing, the series is searched again from the lowest partial found as
// partial 1 (YIN chose too long a period). If lines lie between the partials at a half or
// a third of their spacing, at the positions of the partials of f0/2 or f0/3 that the
// current series lacks, the series is searched again from there (too short a period). If
// YIN has no dip below its threshold, or the series leaves more than a tenth of the
// spectrum's line power unexplained (often two notes sounding, or extreme
// inharmonicity), YIN's other deep dips and the strongest spectral line taken as partial
// 1, 2 or 3 are tried as well, and the series that holds the largest share of its
// window's energy wins.
//
// FundamentalHz is the first partial as the fit places it, f0·sqrt(1+B), not the raw
// peak of partial 1: the fit pools all partials, so it stays precise when partial 1 is
// weak or missing and it is what tension needs. The raw measurement of partial 1, when it
// was found, is Partials[0] (with N = 1). YINHz is YIN's own estimate, kept for
// comparison: on a stiff string it reads several cents sharp of the first partial,
// because YIN finds the period of the whole stretched series.
//
// Clarity is the share of the power between half the fundamental and the last partial
// found that lies in the partials' peaks: near 1 for a clean tone, lower with noise or
// other sounds. Below 0.05 the result is ErrNoPitch.
//
// # Clipping
//
// A clean tone at full scale spends a few per cent of its samples within 0.1 % of its
// peak, so the level alone does not tell clipping. Clipping shows as flat tops: runs
// of samples stuck at the rail. A flat run is three or more consecutive samples at or
// beyond ±0.98, each within 2⁻¹⁴ (two steps of a 16-bit converter) of the run's first.
// It counts as clipping when it is
//
//   - longer than twice the flat of a full-scale sine at Config.MinHz, the slowest
//     pitch searched: a sine stays within δ of its peak for sqrt(2δ)/(π·f) seconds,
//     14 samples at 48 kHz for 25 Hz (28 at 96 kHz), which no sine in range reaches
//     (a tone whose partials happen to flatten its peaks further could); or
//   - entered and left at a corner: the level changes by more than 16·2⁻¹⁴ over the two
//     samples before the run and over the two after it. A smooth peak that is flat to
//     2⁻¹⁴ for three samples has a curvature so small that it moves by at most 8·2⁻¹⁴
//     over the next two; a clipped wave hits the rail at full speed, so this catches
//     the short flat tops of clipped treble notes.
//
// Analyze reports ErrClipped when 1 % or more of the samples lie in such runs. A
// full-scale sine, quantised to 16 bits (with or without dither) or not, is measured
// at any pitch from A0 to C8 at 44.1 to 96 kHz; a tone driven three times over full
// scale is rejected at all of them, and one 10 % over up to about 1 kHz at 48 kHz
// (above, its flat tops are shorter than three samples). Clipping that was filtered or
// resampled afterwards, so that its tops ripple, or that sits below 0.98 of full scale,
// is not recognised.
//
// # Segmentation
//
// The OnsetDetector works on the input averaged in groups down to 11 to 22 kHz (the
// input itself below 22 kHz). Every half frame (21 ms at 48 kHz) it takes the power
// spectrum of the last 43 ms (a Hann window of 512 samples at 12 kHz) in dB,
// floored at −90 dB of a full-scale sine's peak. The spectral flux is the sum over the
// bins of the rises, never the falls, of each bin over the loudest level it, or a
// neighbouring bin, had in the frames 21 to 107 ms earlier: a new note's partials,
// and the broadband noise of a strike or pluck, rise in bins where the ringing note
// is quiet, whatever that note's level; a partial coming back from a beat's null or
// gliding by a bin does not. A frame whose flux exceeds 60 dB plus twice the median
// of the last 32 frames marks its 43 ms as holding a candidate onset.
//
// The candidate is then checked and placed on the level of 1.3 ms sub-blocks, of the
// signal high-passed at 80 Hz (no offset) and of its first difference (which stresses
// the strike's noise), taking in each test the band that rises more:
//
//   - the mean power over 40 ms (a period at 25 Hz, so a low note's own waveform is no
//     rise) must exceed that over the 40 ms before by 1.8 dB somewhere in the frame;
//   - the onset is placed, from 20 ms before the largest such rise to 13 ms after the
//     frame, at the first sub-block whose power exceeds the loudest sub-block of the
//     40 ms before it by three quarters, in dB, of the largest such jump there, or at
//     the largest jump when that is under 3 dB; it must be at least 0.8 dB (a ringing
//     note's waveform repeats and decays, so makes no jump, short of a few tenths of a
//     dB where partials beat). Within the sub-block the onset is the first sample whose
//     step exceeds every step of the 40 ms before and a third of the largest in it;
//   - after the attack, from 8 to 48 ms after the onset, the level must still be 1 dB
//     above the 40 ms before the onset (or before the largest rise, if that came
//     first): a click or a step on a ringing note is not; and within 16 dB of the
//     attack's peak: a click, a knock or a step of the offset out of silence dies
//     away faster than that;
//   - the level must reach −60 dBFS, and no onset follows another within 100 ms.
//
// Only rises count, so a sound that stops, abruptly or not, starts nothing, and a
// candidate that fails does not hide one that follows right after it (a hand damping
// one string and plucking the next). A stream that starts with sound above −60 dBFS
// has an onset at its first sample, noise included. An onset is confirmed 55 to 85 ms
// after it happened (at most about 105 ms), once the 48 ms after it are in; Push then
// reports it, and Last gives its exact sample.
//
// Segments runs the same detector over a recording, skips the 50 ms attack
// (AttackSkip) and ends each window at the first of: WindowLen samples (what Analyze
// can use for the lowest expected pitch), 10 ms before the next onset (an onset is
// placed at or after the true one, mostly within 10 ms, later when a low note starts
// under a louder high one or a bass string is struck again), the point where the
// level has fallen 35 dB below the attack peak, or the end of the recording.
//
// Measured on harp-like plucks (capture/synth, 14 partials) struck while the previous
// note rings 3 to 10 dB below the new one, low after high (C5–A3, G4–E2), high after
// low (A3–C5, E2–G4) and in the bass (A0–A1), and on re-strikes of the same string
// that raise the level by only 3 dB (A0, A2, C4, C7), each with and without the
// pluck's noise, 60 phase sets each (2880 pairs; onset_test.go with -onset.seeds 60):
// all found but one A2 re-strike (missed with and without the noise); none early;
// all within 10 ms late but 14, bass re-strikes and one A3 under C5, placed 10 to
// 20 ms late (within half a period of A0). On the demo's harp night (684 strikes),
// with each tone ringing until the next strike instead of being damped, 683 onsets
// are found (the former energy detector found 638), and the damped night gives no
// onset where a tone stops (it gave 32).
//
// # Accuracy and limits
//
// Measured on synthetic stiff-string tones (capture/synth; see accuracy_test.go) from A0
// to C8, B from 1e-5 to 2e-2, with decay, random phases and a noise thump, and a first
// partial 20 dB down in the bass: the first partial within 0.02 cent at 40 dB SNR and
// 0.2 cent at 20 dB, medians below 0.005 and 0.05 cent, clean tones within 0.001 cent;
// B within 0.2 % at 40 dB and 1.4 % at 20 dB when B ≥ 1e-4 with six or more partials;
// 1500 random tones across those ranges (three to sixteen partials, random roll-off)
// within 0.25 cent, none an octave off. On a plain sine in white noise the RMS error is
// 2.5 to 2.7 times the Cramér–Rao bound for the samples used (the price of the Gaussian
// window), 3.5 times in the deep bass. Treble notes use 0.05 s even when more is given.
//
// Limits: one note at a time (with two notes sounding, the one holding more energy is
// measured, and partials that coincide with the other note's are pulled); the hinged-end
// stiff-string model without the clamped-end correction; no model of beating unisons,
// which shift partial peaks; a window of at most 0.5 s, so a longer note does not gain
// precision; inharmonicity beyond B ≈ 2e-2 and tones made of one partial with the first
// partial buried in noise can be measured an octave high. At least six periods of the
// pitch (and two of MinHz for YIN) must be given.
//
// # Speed
//
// On one core of the development machine (a shared AMD EPYC), Analyze takes about 0.4 to
// 1.1 ms of CPU for a 1 s note from A0 to C8 with no hint, 900 to 2400 times real time;
// the onset detector 0.4 to 0.6 ms per second of audio (a 512-point spectrum every
// 21 ms, with its own small FFT), and Segments plus Analyze together 500 to 1500
// times real time (the spread is the shared machine's load). BenchmarkAnalyze, BenchmarkMeasure and BenchmarkOnsetDetector_Push
// report audio seconds per CPU second. New sizes the buffers for Config.MaxSamples
// (about 3.5 MB for the default 2^16 at 48 kHz); the FFT plans are made on first use.
// An OnsetDetector holds about 90 kB.
//
// # References
//
// A. de Cheveigné, H. Kawahara, "YIN, a fundamental frequency estimator for speech and
// music", JASA 111(4):1917–1930 (2002).
//
// H. Fletcher, "Normal vibration frequencies of a stiff piano string", JASA 36(1):203–209
// (1964): f_n = n·f0·sqrt(1 + B·n²).
//
// S. M. Kay, Fundamentals of Statistical Signal Processing: Estimation Theory, Prentice
// Hall (1993), Example 3.14: the Cramér–Rao bound for a sinusoid's frequency (from
// memory, as recorded in the project's reference values).
//
// M. Gasior, J. L. Gonzalez, "Improving FFT frequency measurement resolution by parabolic
// and Gaussian spectrum interpolation", AIP Conference Proceedings 732 (2004): the
// parabola through the log spectrum of a Gaussian window (from memory).
package pitch
