//go:build unix

package main

import (
	"os"
	"syscall"
)

func sighupSelf() error { return syscall.Kill(os.Getpid(), syscall.SIGHUP) }
