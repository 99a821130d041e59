package main

import (
	"bytes"
	"os"
	"strings"
	"testing"

	"github.com/spf13/cobra"
)

// execTidemark runs the command line in-process and returns what it wrote
// to stdout and the error RunE returned.
func execTidemark(t *testing.T, args ...string) (string, error) {
	t.Helper()
	root := newRootCmd()
	var out, errOut bytes.Buffer
	root.SetOut(&out)
	root.SetErr(&errOut)
	root.SetArgs(args)
	err := root.Execute()
	return out.String(), err
}

// TestEveryCommandHasAnExample walks the whole command tree, so that any
// command added later without an Example fails here.
func TestEveryCommandHasAnExample(t *testing.T) {
	var walk func(c *cobra.Command)
	n := 0
	walk = func(c *cobra.Command) {
		n++
		if strings.TrimSpace(c.Example) == "" {
			t.Errorf("%q has no Example in its help", c.CommandPath())
		}
		if c.Short == "" {
			t.Errorf("%q has no Short description", c.CommandPath())
		}
		for _, sub := range c.Commands() {
			if sub.Hidden || sub.Name() == "help" {
				continue
			}
			walk(sub)
		}
	}
	root := newRootCmd()
	walk(root)
	if n < 3 {
		t.Fatalf("only %d commands found; import and inspect should be registered", n)
	}
	for _, name := range []string{"import", "inspect"} {
		c, _, err := root.Find([]string{name})
		if err != nil || c.Name() != name {
			t.Errorf("command %q not registered", name)
		}
	}
}

func TestHelpShowsExample(t *testing.T) {
	for _, name := range []string{"import", "inspect"} {
		out, err := execTidemark(t, name, "--help")
		if err != nil || !strings.Contains(out, "Examples:") || !strings.Contains(out, "tidemark "+name) {
			t.Errorf("%s --help: err %v, output:\n%s", name, err, out)
		}
	}
}

func TestVersion(t *testing.T) {
	out, err := execTidemark(t, "--version")
	if err != nil || out != "tidemark "+version+"\n" {
		t.Fatalf("--version printed %q, err %v", out, err)
	}
}

func TestRunExitStatus(t *testing.T) {
	if got := run([]string{"--version"}); got != exitOK {
		t.Errorf("--version: status %d", got)
	}
	if got := run([]string{"inspect", "/no/such/file.npz"}); got != exitUsage {
		t.Errorf("missing file: status %d, want %d", got, exitUsage)
	}
	if got := run([]string{"no-such-command"}); got != exitUsage {
		t.Errorf("unknown command: status %d, want %d", got, exitUsage)
	}
}

// wantOneLineError runs the command line args and requires it to fail with a
// one-line error mentioning want, leaving no file at out.
func wantOneLineError(t *testing.T, args []string, want, out string) {
	t.Helper()
	root := newRootCmd()
	root.SetArgs(args)
	root.SetOut(new(strings.Builder))
	root.SetErr(new(strings.Builder))
	err := root.Execute()
	if err == nil || !strings.Contains(err.Error(), want) {
		t.Fatalf("error %v, want one mentioning %q", err, want)
	}
	if strings.Contains(err.Error(), "\n") {
		t.Errorf("error spans several lines: %q", err)
	}
	if _, err := os.Stat(out); err == nil {
		t.Errorf("output written despite the error")
	}
}
