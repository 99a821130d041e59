package main

import (
	"encoding/json"
	"fmt"
	"io"
	"runtime"

	"tidemark/data/safefile"
)

// checkOutput refuses an existing output file unless force is set, before
// any long work starts.
func checkOutput(path string, force bool) error {
	if err := safefile.CheckWritable(path, force); err != nil {
		return err
	}
	return nil
}

// threadsOrDefault returns n, or the number of CPUs when n ≤ 0.
func threadsOrDefault(n int) int {
	if n <= 0 {
		return runtime.NumCPU()
	}
	return n
}

// writeJSON prints v as indented JSON.
func writeJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	if err := enc.Encode(v); err != nil {
		return fmt.Errorf("writing JSON: %w", err)
	}
	return nil
}
