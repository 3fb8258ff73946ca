package main

import (
	"context"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
)

// chromiumPath finds a headless-capable browser, or "" when none is installed.
func chromiumPath() string {
	for _, p := range []string{"/usr/bin/chromium", "chromium", "chromium-browser", "google-chrome"} {
		if path, err := exec.LookPath(p); err == nil {
			return path
		}
	}
	return ""
}

// checkInChromium loads the page in headless Chromium (fresh profile, no network) and
// returns every console error, uncaught exception and error log entry (a missing
// resource shows up there), plus the number of SVG plots the page holds.
func checkInChromium(t *testing.T, page string) (problems []string, svgs int) {
	t.Helper()
	exe := chromiumPath()
	if exe == "" {
		t.Skip("SKIP (loudly): no chromium installed; `apt-get install -y chromium` to check the report renders")
	}
	abs, err := filepath.Abs(page)
	if err != nil {
		t.Fatal(err)
	}
	opts := []chromedp.ExecAllocatorOption{
		chromedp.ExecPath(exe), chromedp.Headless, chromedp.NoSandbox, chromedp.DisableGPU,
		chromedp.NoFirstRun, chromedp.Flag("disable-background-networking", true),
		chromedp.UserDataDir(t.TempDir()),
	}
	actx, cancelA := chromedp.NewExecAllocator(context.Background(), opts...)
	defer cancelA()
	ctx, cancel := chromedp.NewContext(actx)
	defer cancel()
	ctx, cancelT := context.WithTimeout(ctx, 60*time.Second)
	defer cancelT()
	msgCtx, stopMsgs := context.WithCancel(ctx)
	messages := chromedp.Console(msgCtx)
	if err := chromedp.Do(ctx, chromedp.Navigate("file://"+abs), chromedp.WaitReady("body")); err != nil {
		t.Fatalf("chromium %s: %v", exe, err)
	}
	svgs, err = chromedp.Run(ctx, chromedp.Evaluate[int](`document.querySelectorAll("svg").length`))
	if err != nil {
		t.Fatalf("chromium: count plots: %v", err)
	}
	time.AfterFunc(300*time.Millisecond, stopMsgs) // let late messages arrive, then stop reading
	for m, err := range messages {
		if err != nil {
			break
		}
		switch m.Type {
		case chromedp.ConsoleError, chromedp.ConsoleWarning, chromedp.ConsoleException:
			problems = append(problems, fmt.Sprintf("%s (%s:%d)", m, m.URL, m.Line))
		}
	}
	return problems, svgs
}

// writeScreenshot is for people: TAUT_SCREENSHOT=path.png go test -run Chromium ./cmd/taut
// renders the last checked page to that file.
func writeScreenshot(t *testing.T, page string) {
	out := os.Getenv("TAUT_SCREENSHOT")
	if out == "" || chromiumPath() == "" {
		return
	}
	abs, _ := filepath.Abs(page)
	cmd := exec.Command(chromiumPath(), "--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
		"--no-first-run", "--user-data-dir="+t.TempDir(), "--screenshot="+out, "--window-size=1280,2400", "file://"+abs)
	if b, err := cmd.CombinedOutput(); err != nil {
		t.Logf("screenshot: %v\n%s", err, b)
	}
}
