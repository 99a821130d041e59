package main

import (
	"context"
	"os"
	"os/signal"
	"syscall"

	"tidemark/cmd/internal/textout"
	"tidemark/data"
	"tidemark/data/safefile"
)

// checkOutput refuses an existing output file unless force is set, before
// any long work starts.
func checkOutput(path string, force bool) error { return safefile.CheckWritable(path, force) }

// threadsOrDefault returns n, or the number of CPUs when n ≤ 0 (data.Threads).
func threadsOrDefault(n int) int { return data.Threads(n) }

// writeJSON prints v as indented JSON (textout.JSON).
var writeJSON = textout.JSON

// signalContext returns a context that is cancelled by SIGINT or SIGTERM, so
// long work can stop cleanly (saving what it must) instead of dying.
func signalContext() (context.Context, context.CancelFunc) {
	return signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
}

// shellQuote quotes s for a POSIX shell (textout.Quote).
var shellQuote = textout.Quote
