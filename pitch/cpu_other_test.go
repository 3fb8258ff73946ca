//go:build !unix

package pitch

import "time"

// cpuClock falls back to wall time where process CPU time is not available.
type cpuClock time.Time

func startCPU() cpuClock { return cpuClock(time.Now()) }

func (c cpuClock) seconds() float64 { return time.Since(time.Time(c)).Seconds() }
