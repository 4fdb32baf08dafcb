package main

import (
	"context"
	"fmt"
	"io"
	"os"
	"os/signal"
)

// exitStopped is the exit status of a command that stopped early, on a signal or at its
// time budget, leaving work that continues with --resume: 75, EX_TEMPFAIL of BSD's
// sysexits.h ("temporary failure; the user is invited to retry"). Job scripts test it to
// requeue.
const exitStopped = 75

// stopOnSignal returns a context cancelled by the first of stopSignals: a fit then
// finishes the step in flight, writes its checkpoint and chain, and exits with
// exitStopped. A second signal ends the process at once with exitStopped; the files on
// disk then hold the last checkpoint, from which --resume continues.
func stopOnSignal(stderr io.Writer) (context.Context, func()) {
	ctx, cancel := context.WithCancel(context.Background())
	ch := make(chan os.Signal, 2)
	signal.Notify(ch, stopSignals...)
	done := make(chan struct{})
	go func() {
		select {
		case sig := <-ch:
			fmt.Fprintf(stderr, "\nmirabilis: %v: stopping after the current step (a second signal stops at once)\n", sig)
			cancel()
		case <-done:
			return
		}
		select {
		case sig := <-ch:
			fmt.Fprintf(stderr, "mirabilis: %v again: stopping now; --resume continues from the last checkpoint\n", sig)
			os.Exit(exitStopped)
		case <-done:
		}
	}()
	return ctx, func() {
		signal.Stop(ch)
		close(done)
		cancel()
	}
}
