package journal_test

import (
	"bufio"
	"flag"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"strconv"
	"strings"
	"testing"
	"time"

	"taut/monitor"
	"taut/monitor/journal"
)

var kills = flag.Int("journal.kills", 10, "kill -9 rounds in TestKillLoop (e.g. 300 for a long run)")

const killDirEnv = "TAUT_JOURNAL_KILL_DIR"

// TestHelperProcess is the child of TestKillLoop: it opens the journal, reports what it
// recovered, then appends a known sequence of entries and prints each seq once Append has
// returned ("appended N") and once it is committed ("synced N"), until it is killed. It
// does nothing in a normal test run.
func TestHelperProcess(t *testing.T) {
	dir := os.Getenv(killDirEnv)
	if dir == "" {
		t.Skip("child process of TestKillLoop")
	}
	seed, _ := strconv.ParseUint(os.Getenv(killDirEnv+"_SEED"), 10, 64)
	w, rec, err := journal.Open(dir, journal.Options{FsyncInterval: 2 * time.Millisecond, SegmentBytes: 16 << 10})
	if err != nil {
		fmt.Printf("error %v\n", err)
		os.Exit(3)
	}
	fmt.Printf("open %d %d\n", rec.LastSeq, rec.Repairs)
	rng := rand.New(rand.NewPCG(seed, 7))
	deadline := time.Now().Add(30 * time.Second) // never outlive a parent that died
	for i := int(rec.LastSeq); time.Now().Before(deadline); i++ {
		e := entryN(i) // seq i+1 always carries entryN(i), so the parent can check content
		if err := w.Append(&e); err != nil {
			fmt.Printf("error %v\n", err)
			os.Exit(3)
		}
		fmt.Printf("appended %d\n", e.Seq)
		if e.State == monitor.Alarm { // committed before Append returned
			fmt.Printf("synced %d\n", e.Seq)
		} else if rng.IntN(6) == 0 {
			if err := w.Sync(); err != nil {
				fmt.Printf("error %v\n", err)
				os.Exit(3)
			}
			fmt.Printf("synced %d\n", e.Seq)
		}
	}
	os.Exit(4)
}

// TestKillLoop kills a writer with SIGKILL at random points, over and over, and checks
// after each kill that the journal parses, seq is continuous, every entry is the one
// written with that seq, every entry acknowledged as committed is there, and so is every
// entry Append returned from: kill -9 cannot take bytes already written to the kernel, so
// a missing one would mean user-space buffering.
func TestKillLoop(t *testing.T) {
	n := *kills
	if testing.Short() {
		n = min(n, 3)
	}
	dir := t.TempDir()
	rng := rand.New(rand.NewPCG(1, 1))
	var last uint64
	var acks, torn, repairs int
	for k := range n {
		r := killOnce(t, dir, uint64(k), rng)
		if r.recovered != last {
			t.Fatalf("kill %d: child recovered last seq %d, want %d", k, r.recovered, last)
		}
		repairs += r.repairs
		entries, rep, err := journal.Load(dir)
		if err != nil {
			t.Fatalf("kill %d: load: %v", k, err)
		}
		if rep.Bad != 0 || rep.Gaps != 0 || rep.Disordered != 0 || rep.Torn > 1 {
			t.Fatalf("kill %d: %s", k, rep)
		}
		torn += rep.Torn
		for i, e := range entries {
			want := entryN(i)
			want.Seq = uint64(i + 1)
			if err := sameEntry(e, want); err != nil {
				t.Fatalf("kill %d: %v", k, err)
			}
		}
		last = uint64(len(entries))
		if r.maxAck > last || r.maxAppended > last {
			t.Fatalf("kill %d: seq %d was committed and %d appended, journal ends at %d", k, r.maxAck, r.maxAppended, last)
		}
		acks += r.acks
	}
	w, rec := openT(t, dir, journal.Options{})
	closeT(t, w)
	if rec.LastSeq != last {
		t.Fatalf("final open recovered %d, want %d", rec.LastSeq, last)
	}
	// State resumes: the history is each string's latest entries from the segments read.
	all, _, err := journal.Load(dir)
	if err != nil || rec.Report.FirstSeq == 0 {
		t.Fatalf("load: %v; recovery read %s", err, rec.Report)
	}
	assertEntries(t, rec.Entries, expectedHistory(all[rec.Report.FirstSeq-1:], journal.DefaultRecoverReadings, 16))
	t.Logf("%d kills survived: %d entries, %d commits acknowledged and found, %d torn tails seen, %d repaired by the next start",
		n, last, acks, torn, repairs+rec.Repairs)
}

type killResult struct {
	recovered uint64 // last seq the child recovered at Open
	repairs   int
	acks      int
	maxAck    uint64
	// maxAppended is the last seq Append returned from.
	maxAppended uint64
}

// killOnce runs a child, waits for a random number of commit acknowledgements and a
// random delay, kills it with SIGKILL, and collects everything it printed.
func killOnce(t *testing.T, dir string, seed uint64, rng *rand.Rand) killResult {
	t.Helper()
	cmd := exec.Command(os.Args[0], "-test.run=^TestHelperProcess$", "-test.count=1")
	cmd.Env = append(os.Environ(), killDirEnv+"="+dir, killDirEnv+"_SEED="+strconv.FormatUint(seed, 10))
	cmd.Stderr = os.Stderr
	out, err := cmd.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	lines := make(chan string)
	go func() {
		defer close(lines)
		sc := bufio.NewScanner(out)
		for sc.Scan() {
			lines <- sc.Text()
		}
	}()
	var r killResult
	target := 1 + rng.IntN(40)
	timeout := time.After(20 * time.Second)
	for r.acks < target {
		select {
		case line, ok := <-lines:
			if !ok {
				t.Fatalf("child exited early: %v", cmd.Wait())
			}
			parseChildLine(t, line, &r)
		case <-timeout:
			cmd.Process.Kill()
			t.Fatalf("child gave %d of %d acknowledgements in 20 s", r.acks, target)
		}
	}
	time.Sleep(time.Duration(rng.IntN(3000)) * time.Microsecond)
	if err := cmd.Process.Kill(); err != nil {
		t.Fatal(err)
	}
	for line := range lines { // what the child printed before it died counts too
		parseChildLine(t, line, &r)
	}
	if err := cmd.Wait(); err == nil || !strings.Contains(err.Error(), "killed") {
		t.Fatalf("child ended with %v, want killed", err)
	}
	return r
}

func parseChildLine(t *testing.T, line string, r *killResult) {
	t.Helper()
	var a, b uint64
	switch {
	case strings.HasPrefix(line, "synced "):
		fmt.Sscanf(line, "synced %d", &a)
		r.acks++
		r.maxAck = max(r.maxAck, a)
	case strings.HasPrefix(line, "appended "):
		fmt.Sscanf(line, "appended %d", &a)
		r.maxAppended = max(r.maxAppended, a)
	case strings.HasPrefix(line, "open "):
		fmt.Sscanf(line, "open %d %d", &a, &b)
		r.recovered, r.repairs = a, int(b)
	case strings.HasPrefix(line, "error "):
		t.Fatalf("child: %s", line)
	}
}
