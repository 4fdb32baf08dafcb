//go:build !unix

package main

import "os"

// stopSignals ask a command to stop cleanly: Ctrl-C.
var stopSignals = []os.Signal{os.Interrupt}
