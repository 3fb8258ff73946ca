package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"time"

	"taut/capture"
)

// compareOptions are the flags of `tautbench compare`.
type compareOptions struct {
	quick   bool
	leadS   float64
	keyStep int
	rateHz  int
	seed    uint64
	aubio   string
	dir     string
	verbose bool
}

// analyser names, in table order.
const ours = "taut"

func analyserNames() []string {
	names := make([]string, 0, len(aubioMethods)+1)
	for _, m := range aubioMethods {
		names = append(names, "aubio "+m)
	}
	return append(names, ours)
}

// outcome is what every analyser said about one tone.
type outcome struct {
	c  testCase
	hz map[string]float64 // analyser → first partial Hz; 0 = no pitch
}

// speed accumulates audio analysed and CPU spent by one analyser.
type speed struct {
	audioS   float64
	cpu      time.Duration
	startCPU time.Duration // aubio only: the part of cpu its process starts would cost on a one-hop file
}

// runResult is everything one run measured.
type runResult struct {
	opts        compareOptions
	cmdline     string
	outcomes    []outcome
	speeds      map[string]*speed
	aubioStart  map[startKey]time.Duration // CPU of one aubiopitch process on a one-hop file
	ourFailures []string                   // tone: error, for the closing notes
	multiNotes  int                        // tones where more than one of our windows had a pitch
}

func parseCompareFlags(args []string, stderr io.Writer) (compareOptions, error) {
	var o compareOptions
	fs := flag.NewFlagSet("tautbench compare", flag.ContinueOnError)
	fs.SetOutput(stderr)
	fs.BoolVar(&o.quick, "quick", false, "smaller corpus (every 12th key instead of every 3rd)")
	fs.IntVar(&o.rateHz, "rate", 48000, "sample rate of the corpus, Hz")
	fs.Float64Var(&o.leadS, "lead", defaultLeadS, "seconds of silence (or noise) before each tone's onset")
	fs.Uint64Var(&o.seed, "seed", 1, "corpus seed (detune, B jitter, phases, noise)")
	fs.StringVar(&o.aubio, "aubio", "aubiopitch", "aubiopitch binary")
	fs.StringVar(&o.dir, "dir", "", "keep the corpus WAV files in this directory (default: a temporary directory, removed)")
	fs.BoolVar(&o.verbose, "v", false, "print every tone's result to stderr")
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			return o, err
		}
		return o, usageError{err}
	}
	if fs.NArg() > 0 {
		return o, usagef("compare: unexpected argument %q", fs.Arg(0))
	}
	if !(o.leadS >= 0 && o.leadS <= 10) {
		return o, usagef("compare: -lead %g outside 0..10 s", o.leadS)
	}
	if o.rateHz < 22050 || o.rateHz > 192000 {
		return o, usagef("compare: -rate %d outside 22050..192000", o.rateHz)
	}
	o.keyStep = 3
	if o.quick {
		o.keyStep = 12
	}
	return o, nil
}

func cmdCompare(ctx context.Context, args []string, stdout, stderr io.Writer) error {
	opts, err := parseCompareFlags(args, stderr)
	if err != nil {
		return err
	}
	bin, err := findAubio(opts.aubio)
	if err != nil {
		return err
	}
	dir, cleanup, err := corpusDir(opts.dir)
	if err != nil {
		return err
	}
	defer cleanup()
	res, err := compare(ctx, opts, bin, dir, stderr)
	if err != nil {
		return err
	}
	res.cmdline = strings.Join(append([]string{"go run ./cmd/tautbench compare"}, args...), " ")
	writeReport(stdout, res)
	return nil
}

func corpusDir(dir string) (string, func(), error) {
	if dir != "" {
		if err := os.MkdirAll(dir, 0o755); err != nil {
			return "", nil, fmt.Errorf("corpus dir: %w", err)
		}
		return dir, func() {}, nil
	}
	tmp, err := os.MkdirTemp("", "tautbench-")
	if err != nil {
		return "", nil, fmt.Errorf("corpus dir: %w", err)
	}
	return tmp, func() { os.RemoveAll(tmp) }, nil
}

// compare writes the corpus, then for each file runs the three aubio methods and our
// analyser back to back, so all four see the same file and the same machine load.
func compare(ctx context.Context, opts compareOptions, bin, dir string, progress io.Writer) (*runResult, error) {
	rate := float64(opts.rateHz)
	cases := buildCorpus(opts.keyStep, opts.seed, opts.leadS)
	paths, err := writeCorpus(cases, dir, opts.rateHz)
	if err != nil {
		return nil, err
	}
	res := &runResult{opts: opts, speeds: map[string]*speed{}}
	for _, name := range analyserNames() {
		res.speeds[name] = &speed{}
	}
	if res.aubioStart, err = aubioStartCost(ctx, bin, dir, opts.rateHz); err != nil {
		return nil, err
	}
	mine, err := newOurAnalyser(rate)
	if err != nil {
		return nil, err
	}
	runtime.GC() // start our timings without the corpus rendering's garbage
	for i, c := range cases {
		if err := ctx.Err(); err != nil {
			return nil, err
		}
		out, err := measureOne(ctx, c, paths[i], bin, rate, mine, res)
		if err != nil {
			return nil, err
		}
		res.outcomes = append(res.outcomes, out)
		if opts.verbose {
			logOutcome(progress, out)
		} else if (i+1)%20 == 0 || i+1 == len(cases) {
			fmt.Fprintf(progress, "tautbench: %d/%d tones\n", i+1, len(cases))
		}
	}
	return res, nil
}

func writeCorpus(cases []testCase, dir string, rateHz int) ([]string, error) {
	paths := make([]string, len(cases))
	for i, c := range cases {
		paths[i] = filepath.Join(dir, c.Name+".wav")
		if err := writeWAV(paths[i], c.render(float64(rateHz)), rateHz); err != nil {
			return nil, err
		}
	}
	return paths, nil
}

func measureOne(ctx context.Context, c testCase, path, bin string, rate float64, mine *ourAnalyser, res *runResult) (outcome, error) {
	out := outcome{c: c, hz: map[string]float64{}}
	durS := c.durS()
	buf := aubioBufFor(c)
	for _, m := range aubioMethods {
		frames, cpu, err := runAubio(ctx, bin, path, m, buf)
		if err != nil {
			return out, err
		}
		sp := res.speeds["aubio "+m]
		sp.audioS += durS
		sp.cpu += cpu
		sp.startCPU += res.aubioStart[startKey{m, buf}]
		if hz, err := steadyMedian(frames, rate, buf, c.LeadS, steadyFromS, steadyToS); err == nil {
			out.hz["aubio "+m] = hz
		}
	}
	t0 := cpuTime()
	hz, pitched, err := mine.measure(path)
	sp := res.speeds[ours]
	sp.cpu += cpuTime() - t0
	sp.audioS += durS
	if pitched > 1 {
		res.multiNotes++
	}
	if err != nil {
		res.ourFailures = append(res.ourFailures, fmt.Sprintf("%s: %v", c.Name, err))
		return out, nil
	}
	out.hz[ours] = hz
	return out, nil
}

// startKey names one aubiopitch configuration.
type startKey struct {
	method string
	buf    int
}

// aubioStartCost is the median CPU time of five aubiopitch runs on a one-hop file, per
// method and buffer: the fixed cost each file pays for starting a process, loading its
// libraries and planning its FFT, with a single frame analysed.
func aubioStartCost(ctx context.Context, bin, dir string, rateHz int) (map[startKey]time.Duration, error) {
	path := filepath.Join(dir, "startup-one-hop.wav")
	x := make([]float32, aubioHop)
	for i := range x {
		x[i] = float32(0.1 * float64(i%97) / 97)
	}
	if err := writeWAV(path, x, rateHz); err != nil {
		return nil, err
	}
	costs := map[startKey]time.Duration{}
	for _, m := range aubioMethods {
		for _, buf := range []int{aubioBuf, aubioBufBass} {
			var cpus []time.Duration
			for range 5 {
				_, cpu, err := runAubio(ctx, bin, path, m, buf)
				if err != nil {
					return nil, err
				}
				cpus = append(cpus, cpu)
			}
			slices.Sort(cpus)
			costs[startKey{m, buf}] = cpus[len(cpus)/2]
		}
	}
	return costs, nil
}

func logOutcome(w io.Writer, o outcome) {
	fmt.Fprintf(w, "%-28s truth %9.3f Hz B %.2e", o.c.Name, o.c.TruthHz, o.c.Tone.B)
	for _, name := range analyserNames() {
		if c := errorCents(o.hz[name], o.c.TruthHz); c == c {
			fmt.Fprintf(w, "  %s %+.3fc", name, c)
		} else {
			fmt.Fprintf(w, "  %s miss", name)
		}
	}
	fmt.Fprintln(w)
}

// writeWAV writes mono 32-bit float samples with capture's encoder. Unlike
// capture.WriteWAVFile it does not sync: the corpus is scratch data, and 180 fsyncs on a
// busy disk would dominate the run.
func writeWAV(path string, x []float32, rateHz int) error {
	f, err := os.Create(path)
	if err != nil {
		return fmt.Errorf("write corpus: %w", err)
	}
	err = capture.EncodeWAV(f, capture.Format{SampleRate: rateHz, Channels: 1}, capture.EncF32, x)
	if cerr := f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return fmt.Errorf("write corpus %s: %w", path, err)
	}
	return nil
}
