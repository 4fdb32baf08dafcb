package fit

import (
	"syscall"
	"time"
)

// threadCPU returns the CPU time the calling OS thread has used (getrusage RUSAGE_THREAD):
// on a loaded machine it counts the benchmark's own work, not the time it waited for a
// core. The caller locks itself to its thread (runtime.LockOSThread).
func threadCPU() (time.Duration, bool) {
	const rusageThread = 1 // RUSAGE_THREAD, Linux ≥ 2.6.26
	var ru syscall.Rusage
	if err := syscall.Getrusage(rusageThread, &ru); err != nil {
		return 0, false
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano()), true
}

// processCPU returns the CPU time the whole process has used (getrusage RUSAGE_SELF).
func processCPU() (time.Duration, bool) {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0, false
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano()), true
}
