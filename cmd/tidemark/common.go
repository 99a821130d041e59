package main

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"os/signal"
	"strings"
	"syscall"

	"tidemark/data"
	"tidemark/data/safefile"
)

// checkOutput refuses an existing output file unless force is set, before
// any long work starts.
func checkOutput(path string, force bool) error { return safefile.CheckWritable(path, force) }

// threadsOrDefault returns n, or the number of CPUs when n ≤ 0 (data.Threads).
func threadsOrDefault(n int) int { return data.Threads(n) }

// writeJSON prints v as indented JSON.
func writeJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	if err := enc.Encode(v); err != nil {
		return fmt.Errorf("writing JSON: %w", err)
	}
	return nil
}

// signalContext returns a context that is cancelled by SIGINT or SIGTERM, so
// long work can stop cleanly (saving what it must) instead of dying.
func signalContext() (context.Context, context.CancelFunc) {
	return signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
}

// shellQuote quotes s for a POSIX shell when it holds anything but letters,
// digits and -_./:=+@%, so a printed command can be pasted as it is.
func shellQuote(s string) string {
	safe := s != "" && strings.IndexFunc(s, func(r rune) bool {
		return !(r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || strings.ContainsRune("-_./:=+@%", r))
	}) < 0
	if safe {
		return s
	}
	return "'" + strings.ReplaceAll(s, "'", `'\''`) + "'"
}
