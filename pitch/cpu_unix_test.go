//go:build unix

package pitch

import "syscall"

// cpuClock reads the process CPU time (user + system), so that throughput figures do
// not depend on how busy the machine is with other work.
type cpuClock float64

func startCPU() cpuClock { return cpuClock(processCPU()) }

func (c cpuClock) seconds() float64 { return processCPU() - float64(c) }

func processCPU() float64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	tv := func(t syscall.Timeval) float64 { return float64(t.Sec) + float64(t.Usec)/1e6 }
	return tv(ru.Utime) + tv(ru.Stime)
}
