package status

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"net/http/httptest"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
	"github.com/jonboulle/clockwork"

	"taut/monitor"
)

// findBrowser returns the path of a Chromium-family browser, or "".
func findBrowser() string {
	for _, p := range []string{"/usr/bin/chromium", "/usr/bin/chromium-browser", "/usr/bin/google-chrome"} {
		if _, err := os.Stat(p); err == nil {
			return p
		}
	}
	for _, n := range []string{"chromium", "chromium-browser", "google-chrome", "google-chrome-stable"} {
		if p, err := exec.LookPath(n); err == nil {
			return p
		}
	}
	return ""
}

// startBrowser starts a headless browser with a fresh profile and returns its
// context. It skips the test, loudly, only when no browser is installed.
func startBrowser(t *testing.T, width, height int) context.Context {
	t.Helper()
	path := findBrowser()
	if path == "" {
		t.Skip("\n*** SKIPPED: no Chromium browser installed, the status page was NOT tested in a browser. ***\n" +
			"*** Install one (Debian: apt-get install -y chromium); CI always has it.                  ***")
	}
	opts := append(chromedp.DefaultExecAllocatorOptions[:],
		chromedp.ExecPath(path),
		chromedp.Headless, chromedp.NoSandbox, chromedp.DisableGPU, chromedp.NoFirstRun,
		chromedp.Flag("disable-background-networking", true),
		chromedp.Flag("disable-component-update", true),
		chromedp.Flag("disable-sync", true),
		chromedp.UserDataDir(t.TempDir()),
		chromedp.WindowSize(width, height),
	)
	actx, cancelAlloc := chromedp.NewExecAllocator(context.Background(), opts...)
	ctx, cancelCtx := chromedp.NewContext(actx)
	t.Cleanup(func() { cancelCtx(); cancelAlloc() })
	if err := chromedp.Do(ctx); err != nil { // starts the browser; no timeout on this first call
		t.Fatalf("start %s: %v", path, err)
	}
	return ctx
}

// consoleLog collects the page's console API calls, exceptions and browser log entries.
type consoleLog struct {
	mu   sync.Mutex
	msgs []chromedp.ConsoleMessage
}

// lastConsole is the console being watched, dumped when a wait fails (tests in
// this package run one at a time).
var lastConsole *consoleLog

func watchConsole(ctx context.Context) *consoleLog {
	c := &consoleLog{}
	lastConsole = c
	msgs := chromedp.Console(ctx) // subscribes now, before any navigation
	go func() {
		for m, err := range msgs {
			if err != nil {
				return
			}
			c.mu.Lock()
			c.msgs = append(c.msgs, m)
			c.mu.Unlock()
		}
	}()
	return c
}

func (c *consoleLog) problems() []string {
	c.mu.Lock()
	defer c.mu.Unlock()
	var out []string
	for _, m := range c.msgs {
		if m.Type == chromedp.ConsoleError || m.Type == chromedp.ConsoleException || m.Type == chromedp.ConsoleWarning {
			out = append(out, fmt.Sprintf("%s (%s:%d)", m.String(), m.URL, m.Line))
		}
	}
	return out
}

// waitJS polls a JavaScript expression until it is true. chromedp.Poll compiles
// its predicate with new Function, which the page's CSP (rightly) refuses, so
// the polling happens from Go with plain evaluations.
func waitJS(t *testing.T, ctx context.Context, what, expr string) {
	t.Helper()
	if c := lastConsole; c != nil {
		defer func() {
			if t.Failed() {
				c.mu.Lock()
				for _, m := range c.msgs {
					t.Logf("console: %s (%s:%d)", m, m.URL, m.Line)
				}
				c.mu.Unlock()
			}
		}()
	}
	deadline := time.Now().Add(30 * time.Second) // a hang detector, generous: CI boxes are loaded
	for {
		ok, err := chromedp.Run(ctx, chromedp.Evaluate[bool](expr))
		if err == nil && ok {
			return
		}
		if time.Now().After(deadline) {
			t.Fatalf("waited 30 s for %s (%s): last error %v", what, expr, err)
		}
		time.Sleep(25 * time.Millisecond)
	}
}

func evalString(t *testing.T, ctx context.Context, expr string) string {
	t.Helper()
	s, err := chromedp.Run(ctx, chromedp.Evaluate[string](expr))
	if err != nil {
		t.Fatalf("evaluate %s: %v", expr, err)
	}
	return s
}

// TestBrowser_liveStatusPage loads the page in headless Chromium against a server
// fed by a scripted night, changes a string's state through Publish, and checks
// that the page follows over SSE, orders the strings needing attention first,
// shows the caution and stale banners and the wall layout, and logs no errors.
func TestBrowser_liveStatusPage(t *testing.T) {
	began := time.Now()
	ctx := startBrowser(t, 1280, 900)
	console := watchConsole(ctx)

	now := time.Now()
	fc := clockwork.NewFakeClockAt(now.Add(-6 * time.Hour))
	cfg := harpConfig()
	s := New(cfg, Options{Clock: fc, Version: "browser-test", StaleAfter: 15 * time.Minute})
	entries := demoEntries(cfg, now)
	publishNight(s, fc, entries, now)
	ts := httptest.NewServer(s.Handler())
	defer ts.Close()
	defer s.StopStreams()

	if err := chromedp.Do(ctx, chromedp.Navigate(ts.URL+"/")); err != nil {
		t.Fatal(err)
	}
	waitJS(t, ctx, "the snapshot rendered", `document.querySelectorAll('#rows tr').length === 36 &&
		document.querySelector('#link').classList.contains('live')`)
	waitJS(t, ctx, "B4 steady", `document.querySelector('tr[data-string="B4"]').dataset.state === "steady"`)
	if got := evalString(t, ctx, `document.querySelector('#attention li').dataset.string`); got != "G3" {
		t.Errorf("first attention card %q, want G3 (the alarm)", got)
	}

	// A live change: B4's pitch jumps (a slipped pin). The page must follow over SSE.
	seq := uint64(len(entries))
	b4 := cfg.Instrument.Strings[20] // C2 D2 ... B2 C3 ... B3 C4 ... B4
	if b4.ID != "B4" {
		t.Fatalf("string 20 is %s", b4.ID)
	}
	jump := demoReading(b4, demoState{monitor.Alarm, -31, -0.5, "jump"}, now)
	prev := monitor.Steady
	jump.Seq, jump.Kind, jump.Prev, jump.Reason = seq+1, monitor.KindState, &prev, "jump"
	s.Publish(jump)
	waitJS(t, ctx, "B4 in alarm on screen", `document.querySelector('tr[data-string="B4"]').dataset.state === "alarm"`)
	if got := evalString(t, ctx, `document.querySelector('tr[data-string="B4"] .state').textContent`); got != "alarm" {
		t.Errorf("B4's state label %q: the state must be written, not only coloured", got)
	}
	if got := evalString(t, ctx, `document.querySelector('tr[data-string="B4"] .state use').getAttribute('href')`); got != "#shape-alarm" {
		t.Errorf("B4's state shape %q", got)
	}
	order := evalString(t, ctx, `[...document.querySelectorAll('#attention li')].map(e => e.dataset.string).join(' ')`)
	if !strings.HasPrefix(order, "G3 B4 A2 C4 D5") { // alarms in scale order, then high margin, then off-target
		t.Errorf("attention order %q", order)
	}
	caution := evalString(t, ctx, `document.getElementById('caution').hidden ? "" : document.getElementById('caution').textContent`)
	for _, want := range []string{"A2", "78\u00a0%", "maker's specification and local professional practice", "ASTM A228"} {
		if !strings.Contains(caution, want) {
			t.Errorf("caution banner lacks %q: %q", want, caution)
		}
	}
	if !strings.Contains(evalString(t, ctx, `document.querySelector('#events li').textContent`), "B4: steady → alarm (jump)") {
		t.Error("the newest event is not B4's alarm")
	}

	// Wall display: tiles, no table.
	if err := chromedp.Do(ctx, chromedp.Navigate(ts.URL+"/?display=wall")); err != nil {
		t.Fatal(err)
	}
	waitJS(t, ctx, "wall tiles", `document.querySelectorAll('#tiles li').length === 36 &&
		getComputedStyle(document.querySelector('.table-wrap')).display === 'none' &&
		getComputedStyle(document.querySelector('#tiles')).display === 'grid'`)
	// A wall cannot scroll: one row of cards, the rest named on a last card.
	if got := evalString(t, ctx, `[...document.querySelectorAll('#attention li')].map(e => e.dataset.string || e.querySelector('.id').textContent).join(' ')`); got != "G3 B4 A2 C4 D5 +4 more" {
		t.Errorf("wall attention cards %q", got)
	}

	// Twenty minutes without a reading: the stale banner.
	fc.Advance(20 * time.Minute)
	if err := chromedp.Do(ctx, chromedp.Navigate(ts.URL+"/")); err != nil {
		t.Fatal(err)
	}
	waitJS(t, ctx, "stale banner", `!document.getElementById('stale').hidden`)
	if got := evalString(t, ctx, `document.getElementById('stale').textContent`); !regexp.MustCompile(`Data is stale: no reading for 2\d\x{a0}min\.`).MatchString(got) {
		t.Errorf("stale banner %q", got)
	}

	time.Sleep(100 * time.Millisecond) // let late console messages arrive
	for _, p := range console.problems() {
		t.Errorf("browser console: %s", p)
	}
	t.Logf("browser test took %v", time.Since(began).Round(time.Millisecond))
}

var screenshotDir = flag.String("screenshots", "", "write status page screenshots (PNG) to this directory (TestScreenshots)")

// TestScreenshots writes PNGs of the page for people to look at:
//
//	go test ./monitor/status -run TestScreenshots -screenshots=/tmp/shots
func TestScreenshots(t *testing.T) {
	if *screenshotDir == "" {
		t.Skip("set -screenshots=DIR to write the status page screenshots")
	}
	if err := os.MkdirAll(*screenshotDir, 0o755); err != nil {
		t.Fatal(err)
	}
	now := time.Now()
	fc := clockwork.NewFakeClockAt(now.Add(-6 * time.Hour))
	cfg := harpConfig()
	s := New(cfg, Options{Clock: fc, Version: "v0.1.0-demo"})
	publishNight(s, fc, demoEntries(cfg, now), now)
	ts := httptest.NewServer(s.Handler())
	defer ts.Close()
	defer s.StopStreams()

	shots := []struct {
		name          string
		path          string
		width, height int64
		mobile        bool
		staleBy       time.Duration
	}{
		{"normal", "/", 1280, 900, false, 0},
		{"phone", "/", 390, 844, true, 0},
		{"wall", "/?display=wall", 1920, 1080, false, 0},
		{"stale", "/", 1280, 900, false, 25 * time.Minute},
	}
	ctx := startBrowser(t, 1280, 900)
	console := watchConsole(ctx)
	defer func() {
		if p := console.problems(); len(p) > 0 {
			t.Error(errors.New(strings.Join(p, "\n")))
		}
	}()
	for _, sh := range shots {
		fc.Advance(sh.staleBy)
		var vp []chromedp.EmulateViewportOption
		if sh.mobile {
			vp = append(vp, chromedp.EmulateScale(2), chromedp.EmulateMobile)
		}
		if err := chromedp.Do(ctx, chromedp.EmulateViewport(sh.width, sh.height, vp...), chromedp.Navigate(ts.URL+sh.path)); err != nil {
			t.Fatal(err)
		}
		waitJS(t, ctx, "the page rendered", `document.querySelectorAll('#rows tr').length === 36`)
		time.Sleep(200 * time.Millisecond) // fonts and layout settle
		shoot(t, ctx, sh.name+".png", chromedp.FullScreenshot(100))
		if sh.mobile { // what a phone shows without scrolling, and at the table
			shoot(t, ctx, sh.name+"-top.png", chromedp.CaptureScreenshot())
			if err := chromedp.Do(ctx, chromedp.ScrollIntoView("#scale-h")); err != nil {
				t.Fatal(err)
			}
			shoot(t, ctx, sh.name+"-table.png", chromedp.CaptureScreenshot())
		}
	}

	// A whole piano on the wall display.
	pcfg, pentries := pianoNight(now)
	ps := New(pcfg, Options{Clock: clockwork.NewFakeClockAt(now), Version: "v0.1.0-demo"})
	for _, e := range pentries {
		ps.Publish(e)
	}
	pts := httptest.NewServer(ps.Handler())
	defer pts.Close()
	defer ps.StopStreams()
	if err := chromedp.Do(ctx, chromedp.EmulateViewport(1920, 1080), chromedp.Navigate(pts.URL+"/?display=wall")); err != nil {
		t.Fatal(err)
	}
	waitJS(t, ctx, "the piano rendered", `document.querySelectorAll('#tiles li').length === `+fmt.Sprint(len(pcfg.Instrument.Strings)))
	time.Sleep(200 * time.Millisecond)
	shoot(t, ctx, "wall-piano.png", chromedp.FullScreenshot(100))
}

func shoot(t *testing.T, ctx context.Context, name string, a chromedp.Action[[]byte]) {
	t.Helper()
	png, err := chromedp.Run(ctx, a)
	if err != nil {
		t.Fatal(err)
	}
	out := filepath.Join(*screenshotDir, name)
	if err := os.WriteFile(out, png, 0o644); err != nil {
		t.Fatal(err)
	}
	t.Logf("wrote %s", out)
}
