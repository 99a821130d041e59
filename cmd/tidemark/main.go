// Command tidemark finds phase transitions in snapshot data: it trains one
// parameter-conditioned autoregressive network on snapshots taken over a grid
// of control parameters and uses its exact likelihoods in Bayes-optimal
// transition indicators.
//
// Run "tidemark --help" for the commands.
package main

import (
	"errors"
	"fmt"
	"os"
	"runtime/debug"
	"strings"
)

// version is the software version, set at build time with
// -ldflags "-X main.version=...".
var version = "0.1.0-dev"

// Exit statuses.
const (
	exitOK          = 0
	exitUsage       = 2   // bad input, bad flags, or a failure to do the job
	exitInterrupted = 130 // SIGINT or SIGTERM, after saving what can be saved
)

func main() {
	os.Exit(run(os.Args[1:]))
}

// run executes the command line and returns the exit status. Errors are
// printed as one line on stderr; no panic or stack trace reaches a user.
func run(args []string) (status int) {
	defer func() {
		if p := recover(); p != nil {
			fmt.Fprintf(os.Stderr, "tidemark: internal error: %v (please report this with the command you ran)\n", p)
			if os.Getenv("TIDEMARK_TRACE") != "" {
				debug.PrintStack()
			}
			status = exitUsage
		}
	}()
	root := newRootCmd()
	root.SetArgs(args)
	err := root.Execute()
	if err == nil {
		return exitOK
	}
	msg := strings.ReplaceAll(err.Error(), "\n", "; ")
	if !strings.HasPrefix(msg, "tidemark") {
		msg = "tidemark: " + msg
	}
	fmt.Fprintln(os.Stderr, msg)
	if errors.Is(err, errInterrupted) {
		return exitInterrupted
	}
	return exitUsage
}

// errInterrupted marks a run stopped by a signal after it saved its state.
var errInterrupted = errors.New("interrupted")
