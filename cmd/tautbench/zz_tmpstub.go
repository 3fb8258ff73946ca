package main

import (
	"errors"
	"syscall"
	"time"
)

const ourMinHz = 25

type ourAnalyser struct{}

func newOurAnalyser(rateHz float64, maxSamples int) (*ourAnalyser, error) { return &ourAnalyser{}, nil }
func (o *ourAnalyser) measure(path string) (float64, int, error) {
	return 0, 1, errors.New("stub")
}
func cpuTime() time.Duration {
	var ru syscall.Rusage
	syscall.Getrusage(syscall.RUSAGE_SELF, &ru)
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
