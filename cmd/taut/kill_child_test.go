package main

import (
	"bytes"
	"context"
	"fmt"
	"io"
	"os"
	"os/signal"
	"strconv"
	"sync"
	"syscall"

	"taut/monitor"
	"taut/monitor/journal"
)

// killChild runs `taut <args>` like main does, with the reporters.
func killChild() int {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	out := &lineWriter{w: os.Stdout}
	listenExtraSinks = []monitor.Sink{appendReporter{out}}
	listenJournalFS = syncReportFS{out}
	return exitCode(run(ctx, os.Args[1:], io.Discard, os.Stderr), os.Stderr)
}

// lineWriter writes each report with one write call, so lines never interleave.
type lineWriter struct {
	mu sync.Mutex
	w  io.Writer
}

func (l *lineWriter) printf(format string, a ...any) {
	l.mu.Lock()
	defer l.mu.Unlock()
	fmt.Fprintf(l.w, format, a...)
}

type appendReporter struct{ out *lineWriter }

func (r appendReporter) Publish(e monitor.Entry) {
	r.out.printf("appended %d %s %s\n", e.Seq, e.Kind, orDash(e.String))
}

func orDash(s string) string {
	if s == "" {
		return "-"
	}
	return s
}

// syncReportFS reports the seq of the last line written to a segment after each of
// its fsyncs succeeds.
type syncReportFS struct{ out *lineWriter }

func (fs syncReportFS) OpenFile(path string) (journal.File, error) {
	f, err := journal.OSFS{}.OpenFile(path)
	if err != nil {
		return nil, err
	}
	return &syncReportFile{File: f, out: fs.out}, nil
}

func (fs syncReportFS) SyncDir(dir string) error { return journal.OSFS{}.SyncDir(dir) }

type syncReportFile struct {
	journal.File
	out     *lineWriter
	mu      sync.Mutex
	lastSeq uint64
}

func (f *syncReportFile) Write(p []byte) (int, error) {
	n, err := f.File.Write(p)
	if err == nil {
		f.mu.Lock()
		f.lastSeq = max(f.lastSeq, lastLineSeq(p))
		f.mu.Unlock()
	}
	return n, err
}

func (f *syncReportFile) Sync() error {
	f.mu.Lock()
	seq := f.lastSeq
	f.mu.Unlock()
	if err := f.File.Sync(); err != nil {
		return err
	}
	if seq > 0 {
		f.out.printf("synced %d\n", seq)
	}
	return nil
}

// lastLineSeq reads the seq of the last line in p (lines start with {"seq":N,).
func lastLineSeq(p []byte) uint64 {
	p = bytes.TrimRight(p, "\n")
	if i := bytes.LastIndexByte(p, '\n'); i >= 0 {
		p = p[i+1:]
	}
	const key = `{"seq":`
	if !bytes.HasPrefix(p, []byte(key)) {
		return 0
	}
	p = p[len(key):]
	end := bytes.IndexByte(p, ',')
	if end < 0 {
		return 0
	}
	v, _ := strconv.ParseUint(string(p[:end]), 10, 64)
	return v
}
