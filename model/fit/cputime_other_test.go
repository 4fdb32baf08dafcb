//go:build !linux

package fit

import "time"

// threadCPU is not available on this system.
func threadCPU() (time.Duration, bool) { return 0, false }

// processCPU is not available on this system.
func processCPU() (time.Duration, bool) { return 0, false }
