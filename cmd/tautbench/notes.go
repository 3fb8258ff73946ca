package main

import (
	"fmt"
	"io"
	"math"
	"runtime"
	"strings"
)

// writeReport prints the whole comparison as markdown: the command, the accuracy table,
// the speed table, how each analyser was run, and the targets.
func writeReport(w io.Writer, res *runResult) {
	rows := groupRows(res.outcomes)
	fmt.Fprintf(w, "Command (from the module root): `%s` (%s, %s/%s, %d CPUs)\n\n", res.cmdline,
		runtime.Version(), runtime.GOOS, runtime.GOARCH, runtime.NumCPU())
	writeCorpusNote(w, res)
	fmt.Fprintln(w)
	writeAccuracyTable(w, rows)
	fmt.Fprintln(w)
	fmt.Fprintln(w, "Each cell: median |error| / 90th percentile (cents, against the true first partial "+
		"f0·√(1+B)) / gross errors (> 50 cents; \"oct\" = within 50 cents of a whole number of octaves, "+
		"\"miss\" = no pitch, counted as an infinite error).")
	fmt.Fprintln(w)
	writeSpeedTable(w, res)
	fmt.Fprintln(w)
	writeMethodNotes(w, res)
	fmt.Fprintln(w)
	writeTargets(w, res, rows)
}

func writeCorpusNote(w io.Writer, res *runResult) {
	o := res.opts
	keys := corpusKeys(o.keyStep)
	fmt.Fprintf(w, "Corpus: %d tones from `taut/capture/synth` (seed %d): %d keys A0..C8 (every %d%s key, C8 included) "+
		"× {piano-like, harp-like} × {clean, 40 dB, 20 dB SNR}; %g s of decaying stiff-string tone "+
		"(f_n = n·f0·√(1+B·n²)) after %g s of lead-in, %d Hz, 32-bit float WAV, detuned uniformly within ±%d cents. "+
		"Piano-like: B ≈ 1e-4 at C3 rising to 1e-2 at C8 and to 5e-4 at A0 (±25 %% jitter), first partial 20 dB down "+
		"below 110 Hz. Harp-like: B log-uniform in 1e-5..1e-4. Every tone starts with an 8 ms noise thump; "+
		"SNR is the whole file's mean signal power over white-noise power.\n",
		len(res.outcomes), o.seed, len(keys), o.keyStep, ordinalSuffix(o.keyStep), toneS, o.leadS, o.rateHz, maxDetuneC)
}

func ordinalSuffix(n int) string {
	if n%100 >= 11 && n%100 <= 13 {
		return "th"
	}
	switch n % 10 {
	case 1:
		return "st"
	case 2:
		return "nd"
	case 3:
		return "rd"
	}
	return "th"
}

func writeMethodNotes(w io.Writer, res *runResult) {
	var starts []string
	for _, m := range aubioMethods {
		starts = append(starts, fmt.Sprintf("%s %.0f/%.0f ms", m,
			1000*res.aubioStart[startKey{m, aubioBuf}].Seconds(), 1000*res.aubioStart[startKey{m, aubioBufBass}].Seconds()))
	}
	fmt.Fprintf(w, "aubio: `aubiopitch -i FILE -p METHOD -B %d -H %d -u hertz` (buffer %d for keys below %d Hz), "+
		"default tolerance and silence gate. aubiopitch prints no confidence, so its answer per tone is the median "+
		"of the frames whose whole buffer lies %g–%g s after the onset, leaving out 0 Hz frames (its no-pitch value). "+
		"CPU = the child process's user + system time per file (process start, WAV decode, analysis of every hop "+
		"of the file). ¹ Without process start: minus, per file, the median CPU of five runs on a one-hop (%d-sample) file with the same buffer (buffer %d/%d: %s).\n\n",
		aubioBuf, aubioHop, aubioBufBass, bassBelowHz, steadyFromS, steadyToS, aubioHop, aubioBuf, aubioBufBass,
		strings.Join(starts, ", "))
	fmt.Fprintf(w, "taut: what `taut measure` does without hints, in this process on one goroutine: "+
		"`capture.ReadWAVFile`, `pitch.Segments` (min %d Hz), `Analyzer.Analyze` on every note window it finds; "+
		"the answer is `Note.FundamentalHz` of the first window with a pitch. CPU = getrusage(RUSAGE_SELF) user + system around all of that "+
		"(WAV decode and garbage collection included; one analyser reused for all files, as `taut measure` does).\n",
		ourMinHz)
}

// writeTargets checks the targets and says by how much each is met or missed.
func writeTargets(w io.Writer, res *runResult, rows []groupRow) {
	fmt.Fprintln(w, "Targets:")
	worst, worstRow := math.Inf(1), groupRow{}
	gross := 0
	for _, r := range rows {
		if r.register == "" {
			continue
		}
		if q := r.accuracyRatio(); q < worst || math.IsNaN(q) {
			worst, worstRow = q, r
		}
		gross += r.sums[ours].Gross
	}
	name, _ := worstRow.bestAubio()
	fmt.Fprintf(w, "- accuracy: best aubio median ÷ taut median ≥ %d× in every register and SNR: %s (smallest %s, %s %s vs %s)\n",
		targetAccuracyRatio, metWord(worst >= targetAccuracyRatio), formatRatio(worst),
		registerLabel(worstRow.register), snrLabel(worstRow.snrDB), name)
	fmt.Fprintf(w, "- gross errors for taut: 0: %s (%d)\n", metWord(gross == 0), gross)
	ourRate := perCPUSecond(res.speeds[ours].audioS, res.speeds[ours].cpu)
	yf := res.speeds["aubio yinfft"]
	q := ourRate / perCPUSecond(yf.audioS, yf.cpu)
	fmt.Fprintf(w, "- speed: taut ≥ %.1f× aubio yinfft: %s (%s)\n", targetSpeedRatio, metWord(q >= targetSpeedRatio), formatRatio(q))
	if res.multiNotes > 0 {
		fmt.Fprintf(w, "- note: more than one window had a pitch in %d of %d single-tone files (the first was used)\n",
			res.multiNotes, len(res.outcomes))
	}
	for _, f := range res.ourFailures {
		fmt.Fprintf(w, "- taut gave no pitch: %s\n", f)
	}
}

func metWord(ok bool) string {
	if ok {
		return "met"
	}
	return "NOT met"
}
