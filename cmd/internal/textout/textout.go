// Package textout writes what tidemark's commands print for people and
// scripts: command lines quoted for a POSIX shell (commands to paste, job
// scripts) and indented JSON.
package textout

import (
	"encoding/json"
	"fmt"
	"io"
	"strings"
)

// Quote quotes s for a POSIX shell when it holds anything but letters,
// digits and -_./:=+@%, so a printed command can be pasted as it is.
func Quote(s string) string {
	safe := s != "" && strings.IndexFunc(s, func(r rune) bool {
		return !(r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || strings.ContainsRune("-_./:=+@%", r))
	}) < 0
	if safe {
		return s
	}
	return "'" + strings.ReplaceAll(s, "'", `'\''`) + "'"
}

// JSON prints v as indented JSON.
func JSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	if err := enc.Encode(v); err != nil {
		return fmt.Errorf("writing JSON: %w", err)
	}
	return nil
}
