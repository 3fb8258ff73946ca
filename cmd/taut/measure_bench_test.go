//go:build unix

package main

import (
	"context"
	"io"
	"syscall"
	"testing"
	"time"
)

// BenchmarkMeasure runs `taut measure` over the six-note harp phrase (4.6 s of audio,
// 44.1 kHz), the whole command from reading the file to printing. It reports seconds
// of audio measured per wall-clock second and per CPU second of the process (target:
// at least 300× real time on one core). The CPU figure is the one to compare across
// runs on a busy machine; run with GOMAXPROCS=1 for the single-core wall figure.
func BenchmarkMeasure(b *testing.B) {
	const audioS = 4.6
	args := []string{fixture("harp-phrase.wav")}
	b.ReportAllocs()
	cpu0 := benchCPUTime()
	for b.Loop() {
		if err := cmdMeasure(context.Background(), args, io.Discard, io.Discard); err != nil {
			b.Fatal(err)
		}
	}
	cpu := benchCPUTime() - cpu0
	b.ReportMetric(audioS*float64(b.N)/b.Elapsed().Seconds(), "audio-s/s")
	b.ReportMetric(audioS*float64(b.N)/cpu.Seconds(), "audio-s/cpu-s")
}

// benchCPUTime returns the user and system CPU time this process has used.
func benchCPUTime() time.Duration {
	var ru syscall.Rusage
	syscall.Getrusage(syscall.RUSAGE_SELF, &ru)
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
