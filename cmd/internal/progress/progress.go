// Package progress draws progress bars on stderr for tidemark's long-running
// commands. A bar is drawn only when stderr is a terminal and the user did
// not ask for quiet output; otherwise every method is a no-op, so library code
// can report progress through a plain callback without caring.
package progress

import (
	"io"
	"os"
	"sync"

	"github.com/schollz/progressbar/v3"
	"golang.org/x/term"
)

// Bar is a progress bar over a known number of steps. The zero value and a
// nil *Bar are silent.
type Bar struct {
	mu  sync.Mutex
	bar *progressbar.ProgressBar
}

// New returns a bar with total steps and a description, drawn on stderr when
// it is a terminal and quiet is false.
func New(total int, desc string, quiet bool) *Bar {
	return NewTo(os.Stderr, total, desc, quiet)
}

// NewTo is New with an explicit writer; it draws only when w is a terminal.
func NewTo(w io.Writer, total int, desc string, quiet bool) *Bar {
	f, ok := w.(*os.File)
	if quiet || !ok || !term.IsTerminal(int(f.Fd())) || total <= 0 {
		return &Bar{}
	}
	b := progressbar.NewOptions(total,
		progressbar.OptionSetWriter(w),
		progressbar.OptionSetDescription(desc),
		progressbar.OptionShowCount(),
		progressbar.OptionSetPredictTime(true),
		progressbar.OptionSetElapsedTime(true),
		progressbar.OptionThrottle(100_000_000),
		progressbar.OptionClearOnFinish(),
		progressbar.OptionSetWidth(30),
	)
	return &Bar{bar: b}
}

// Add advances the bar by n steps. It is safe for concurrent use.
func (b *Bar) Add(n int) {
	if b == nil || b.bar == nil {
		return
	}
	b.mu.Lock()
	b.bar.Add(n)
	b.mu.Unlock()
}

// Set moves the bar to step n.
func (b *Bar) Set(n int) {
	if b == nil || b.bar == nil {
		return
	}
	b.mu.Lock()
	b.bar.Set(n)
	b.mu.Unlock()
}

// Func returns a callback that advances the bar, for packages that report
// progress as func(n int).
func (b *Bar) Func() func(n int) { return b.Add }

// Done finishes and clears the bar.
func (b *Bar) Done() {
	if b == nil || b.bar == nil {
		return
	}
	b.mu.Lock()
	b.bar.Finish()
	b.mu.Unlock()
}

// Stages returns a progress callback of the shape indicator.Config.Progress
// takes that draws one bar per stage (none when quiet), finishing the
// previous bar when the next stage starts, and a function that finishes the
// last one.
func Stages(quiet bool) (start func(stage string, total int) func(int), done func()) {
	var bar *Bar
	done = func() {
		bar.Done()
		bar = nil
	}
	start = func(stage string, total int) func(int) {
		done()
		bar = New(total, stage, quiet)
		return bar.Func()
	}
	return start, done
}
