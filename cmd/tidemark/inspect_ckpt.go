package main

import (
	"bytes"
	"io"
	"os"

	"tidemark/checkpoints"
)

func init() { inspectHooks = append(inspectHooks, inspectCheckpoint) }

// inspectCheckpoint describes a file that starts with the checkpoint magic
// bytes; it leaves other files to the other inspectors.
func inspectCheckpoint(path string, asJSON bool, w io.Writer) (bool, error) {
	f, err := os.Open(path)
	if err != nil {
		return false, nil
	}
	head := make([]byte, len(checkpoints.Magic))
	n, _ := io.ReadFull(f, head)
	f.Close()
	if !bytes.Equal(head[:n], []byte(checkpoints.Magic)) {
		return false, nil
	}
	r, err := checkpoints.Describe(path)
	if err != nil {
		return true, err
	}
	if asJSON {
		return true, writeJSON(w, r)
	}
	return true, r.WriteText(w)
}
