package main

import (
	"bufio"
	"bytes"
	"flag"
	"fmt"
	"io"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"syscall"
	"testing"
	"time"

	"taut/monitor"
	"taut/monitor/instrument"
	"taut/monitor/journal"
)

// The kill -9 loop runs `taut listen` as a child process: this test binary started
// again with killChildEnv set, which runs the command line it is given instead of the
// tests (TestMain), with two reporters added so the parent knows what must survive:
//
//   - a sink that prints "appended SEQ KIND STRING" for every entry, after the
//     journal's Append returned (the monitor journals first, then publishes): those
//     bytes are in the kernel, so SIGKILL cannot take them;
//   - a journal file system (journal.OSFS underneath) that prints "synced SEQ" after
//     each fsync returned, SEQ being the last line written to that file before it:
//     those survive even a power cut.
const killChildEnv = "TAUT_KILL_CHILD"

var killRounds = flag.Int("kills", 0, "kill -9 rounds of TestKillLoopLong (0: skip it); e.g. -run TestKillLoopLong -kills=100")

func TestMain(m *testing.M) {
	if os.Getenv(killChildEnv) != "" {
		os.Exit(killChild())
	}
	os.Exit(m.Run())
}

// childReport is what one child said before it died.
type childReport struct {
	appended map[uint64]string // seq → "kind string"
	synced   uint64
	exited   bool // it ended by itself or by SIGTERM, not SIGKILL
	stderr   string
}

// killLoop is the state of a kill -9 loop over one journal directory.
type killLoop struct {
	t     *testing.T
	dir   string
	input []byte // raw s16le PCM played on the child's stdin, over and over
	rng   *rand.Rand
	cfg   *instrument.Config

	runs, kills, clean, early   int // early: killed before its start entry
	appended, syncedHi, resumed int
	unsynced                    int // entries appended but not yet fsynced at a kill, found after it
	maxSeq                      uint64
}

// runChild starts `taut listen` on the journal; after wait it sends sig (SIGKILL or
// SIGTERM) unless the child ended first; it returns what the child reported.
func (k *killLoop) runChild(wait time.Duration, sig syscall.Signal) childReport {
	t := k.t
	t.Helper()
	cmd := exec.Command(os.Args[0], "listen", "--config", benchX30, "--journal", k.dir, "--input", "-",
		"--lamps", "off", "--log.level", "warn")
	cmd.Env = append(os.Environ(), killChildEnv+"=1", "NOTIFY_SOCKET=", "WATCHDOG_USEC=")
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	stdin, err := cmd.StdinPipe()
	if err != nil {
		t.Fatal(err)
	}
	stdout, err := cmd.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	go func() { // the input, over and over, as fast as the child takes it, until it dies
		defer stdin.Close()
		for {
			if _, err := stdin.Write(k.input); err != nil {
				return
			}
		}
	}()
	rep := childReport{appended: map[uint64]string{}}
	// The child's stdout carries its reports; the scanner reads them until it dies.
	read := make(chan struct{})
	go func() {
		defer close(read)
		sc := bufio.NewScanner(stdout)
		for sc.Scan() {
			f := strings.Fields(sc.Text())
			if len(f) < 2 {
				continue
			}
			seq, _ := strconv.ParseUint(f[1], 10, 64)
			switch {
			case f[0] == "appended" && len(f) == 4:
				rep.appended[seq] = f[2] + " " + f[3]
			case f[0] == "synced":
				rep.synced = max(rep.synced, seq)
			}
		}
	}()
	exited := make(chan error, 1)
	go func() { <-read; exited <- cmd.Wait() }()
	select {
	case err := <-exited:
		rep.exited = true
		if err != nil {
			t.Fatalf("child ended by itself with %v:\n%s", err, stderr.String())
		}
	case <-time.After(wait):
		if err := cmd.Process.Signal(sig); err != nil {
			t.Fatal(err)
		}
		err := <-exited
		rep.exited = sig != syscall.SIGKILL
		if sig != syscall.SIGKILL && err != nil {
			t.Fatalf("child stopped by %v with %v:\n%s", sig, err, stderr.String())
		}
	}
	rep.stderr = stderr.String()
	return rep
}

// round runs one child until it is killed (or stops) and checks the journal.
func (k *killLoop) round(wait time.Duration, sig syscall.Signal) {
	t := k.t
	t.Helper()
	wantResumed := k.resumableStrings()
	before := k.maxSeq
	rep := k.runChild(wait, sig)
	k.runs++
	if sig == syscall.SIGKILL && !rep.exited {
		k.kills++
	}
	if _, err := os.Stat(k.dir); os.IsNotExist(err) && k.maxSeq == 0 {
		k.early++ // killed before the journal directory was made
		return
	}
	entries, report, err := journal.Load(k.dir)
	if err != nil {
		t.Fatalf("run %d: journal.Load: %v", k.runs, err)
	}
	// A torn last line is allowed (the next start repairs it); nothing else.
	if report.Bad != 0 || report.Disordered != 0 || report.Gaps != 0 || report.Torn > 1 {
		t.Fatalf("run %d (killed after %v): journal damaged: %v\nchild stderr:\n%s", k.runs, wait, report, rep.stderr)
	}
	if len(entries) > 0 && entries[0].Seq != 1 {
		t.Fatalf("first seq %d, want 1", entries[0].Seq)
	}
	bySeq := make(map[uint64]*monitor.Entry, len(entries))
	for i := range entries {
		bySeq[entries[i].Seq] = &entries[i]
	}
	for seq, what := range rep.appended {
		e, ok := bySeq[seq]
		if !ok || string(e.Kind)+" "+orDash(e.String) != what {
			t.Fatalf("run %d: seq %d (%s) was appended before the kill but the journal has %v", k.runs, seq, what, e)
		}
	}
	if rep.synced > report.LastSeq {
		t.Fatalf("run %d: seq %d was fsynced but the journal ends at %d", k.runs, rep.synced, report.LastSeq)
	}
	if !k.checkStart(entries, before, wantResumed) {
		k.early++
	}
	for seq := range rep.appended {
		if seq > rep.synced && !rep.exited {
			k.unsynced++
		}
	}
	k.appended += len(rep.appended)
	k.syncedHi = max(k.syncedHi, int(rep.synced))
	k.maxSeq = report.LastSeq
	if rep.exited {
		k.clean++
	}
}

// checkStart finds the start entry of the run just made (the first entry after
// before) and checks that seq went on from before and that it resumed the strings. It
// returns false when the run wrote nothing (killed before its start entry).
func (k *killLoop) checkStart(entries []monitor.Entry, before uint64, wantResumed int) bool {
	t := k.t
	t.Helper()
	for _, e := range entries {
		if e.Seq <= before {
			continue
		}
		if e.Seq != before+1 || e.Kind != monitor.KindStart {
			t.Fatalf("run %d: first new entry is seq %d %s, want seq %d start", k.runs, e.Seq, e.Kind, before+1)
		}
		want := fmt.Sprintf("resumed %d strings", wantResumed)
		if !strings.Contains(e.Detail, want) {
			t.Fatalf("run %d: start entry %q, want %q", k.runs, e.Detail, want)
		}
		if wantResumed > 0 {
			k.resumed++
		}
		return true
	}
	return false // killed before the start entry was written: nothing new, which is fine
}

// resumableStrings counts the config's strings with a reading in the newest
// journal.DefaultRecoverSegments segments: what the next start must resume.
func (k *killLoop) resumableStrings() int {
	t := k.t
	t.Helper()
	segs, err := filepath.Glob(filepath.Join(k.dir, "journal-*.jsonl"))
	if err != nil {
		t.Fatal(err)
	}
	slices.Sort(segs) // the names sort in seq order
	segs = segs[max(0, len(segs)-journal.DefaultRecoverSegments):]
	known := map[string]bool{}
	for _, s := range k.cfg.Instrument.Strings {
		known[s.ID] = true
	}
	heard := map[string]bool{}
	for _, s := range segs {
		entries, _, err := journal.Load(s)
		if err != nil {
			t.Fatal(err)
		}
		for _, e := range entries {
			if e.Kind == monitor.KindReading && known[e.String] {
				heard[e.String] = true
			}
		}
	}
	return len(heard)
}

func newKillLoop(t *testing.T, seed uint64) *killLoop {
	t.Helper()
	if testing.Short() {
		t.Skip("kill loop starts child processes")
	}
	cfg, err := instrument.Load(benchX30)
	if err != nil {
		t.Fatal(err)
	}
	input, err := io.ReadAll(benchRoundRobin(t, cfg, 120).PCM16())
	if err != nil {
		t.Fatal(err)
	}
	return &killLoop{t: t, dir: filepath.Join(t.TempDir(), "journal"), input: input, cfg: cfg,
		rng: rand.New(rand.NewPCG(seed, 1))}
}

// run kills n children at random times up to maxWait after their start (every third
// within the first 15 ms: during start-up, journal recovery or the first notes), then
// lets a last one stop on SIGTERM, and checks the whole journal.
func (k *killLoop) run(n int, maxWait time.Duration) {
	t := k.t
	for i := range n {
		upTo := maxWait
		if i%3 == 0 {
			upTo = 15 * time.Millisecond
		}
		k.round(time.Duration(k.rng.Int64N(int64(upTo))), syscall.SIGKILL)
	}
	k.round(maxWait, syscall.SIGTERM)
	entries, report, err := journal.Load(k.dir)
	if err != nil || !report.Clean() {
		t.Fatalf("final journal: %v, %v", err, report)
	}
	if last := entries[len(entries)-1]; last.Kind != monitor.KindStop {
		t.Errorf("last entry %s, want the stop of the SIGTERM run", last.Kind)
	}
	var readings int
	for _, e := range entries {
		if e.Kind == monitor.KindReading {
			readings++
		}
	}
	t.Logf("%d runs: %d killed by SIGKILL (%d before writing their start entry), %d stopped cleanly; %d starts "+
		"resumed strings; %d entries (%d readings), seq 1..%d without gap or duplicate; %d entries reported appended, "+
		"all present (%d of them not yet fsynced when killed); highest fsynced seq reported %d",
		k.runs, k.kills, k.early, k.clean, k.resumed, len(entries), readings, k.maxSeq, k.appended, k.unsynced, k.syncedHi)
}

// TestKillLoop kills `taut listen` with SIGKILL at random points six times, restarting
// it on the same journal, then stops it with SIGTERM. After every run: the journal
// parses (at most a torn last line, repaired at the next start), seq has no gap or
// duplicate and goes on from the previous run, every entry the child reported as
// appended (so in the kernel) or fsynced is there with its kind and string, and the
// new run's start entry resumed every string the journal's recent segments hold.
func TestKillLoop(t *testing.T) {
	newKillLoop(t, 1).run(6, 1200*time.Millisecond)
}

// TestKillLoopLong is the long loop: go test ./cmd/taut -run TestKillLoopLong -kills=100.
func TestKillLoopLong(t *testing.T) {
	if *killRounds <= 0 {
		t.Skip("long kill loop: pass -kills=N")
	}
	newKillLoop(t, 2).run(*killRounds, 2*time.Second)
}
