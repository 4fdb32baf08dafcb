//go:build unix

package main

import (
	"os"
	"syscall"
)

// stopSignals ask a command to stop cleanly: Ctrl-C, kill's default SIGTERM (which batch
// schedulers send at a job's time limit or on pre-emption), and SIGUSR1, which a job
// can ask Slurm to send some minutes before the limit (sbatch --signal).
var stopSignals = []os.Signal{os.Interrupt, syscall.SIGTERM, syscall.SIGUSR1}
