package studyrun

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"

	"tidemark/data/safefile"
)

// stamp records a finished unit: the fingerprint of its inputs and the
// hashes of the outputs it wrote (paths relative to the output folder; a
// folder output is represented by its summary.json).
type stamp struct {
	Unit        string            `json:"unit"`
	Fingerprint string            `json:"fingerprint"`
	Outputs     map[string]string `json:"outputs"`
}

// fingerprint hashes what a unit's result depends on: its name, the study
// settings that affect it and the hashes of its input files.
func fingerprint(name string, settings any, inputs []string) (string, error) {
	h := sha256.New()
	fmt.Fprintf(h, "unit %s\n", name)
	js, err := json.Marshal(settings)
	if err != nil {
		return "", fmt.Errorf("%s: fingerprint: %w", name, err)
	}
	h.Write(js)
	sorted := append([]string(nil), inputs...)
	sort.Strings(sorted)
	for _, in := range sorted {
		sum, err := fileHash(in)
		if err != nil {
			return "", fmt.Errorf("%s: input %w", name, err)
		}
		fmt.Fprintf(h, "\n%s", sum)
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// fileHash returns the SHA-256 of a file, or of FOLDER/summary.json for a folder.
func fileHash(path string) (string, error) {
	if st, err := os.Stat(path); err == nil && st.IsDir() {
		path = filepath.Join(path, summaryFile)
	}
	f, err := os.Open(path)
	if err != nil {
		return "", err
	}
	defer f.Close()
	h := sha256.New()
	if _, err := io.Copy(h, f); err != nil {
		return "", fmt.Errorf("%s: %w", path, err)
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// upToDate reports whether the unit's stamp matches fp and every output it
// records still has its recorded hash.
func upToDate(out, name, fp string) bool {
	b, err := os.ReadFile(filepath.Join(out, stampPath(name)))
	if err != nil {
		return false
	}
	var s stamp
	if json.Unmarshal(b, &s) != nil || s.Fingerprint != fp || len(s.Outputs) == 0 {
		return false
	}
	for rel, want := range s.Outputs {
		if got, err := fileHash(filepath.Join(out, rel)); err != nil || got != want {
			return false
		}
	}
	return true
}

// writeStamp records that the unit finished with these outputs; it is
// written last, atomically, so a unit stopped before it is redone.
func writeStamp(out, name, fp string, outputs []string) error {
	s := stamp{Unit: name, Fingerprint: fp, Outputs: map[string]string{}}
	for _, rel := range outputs {
		sum, err := fileHash(filepath.Join(out, rel))
		if err != nil {
			return fmt.Errorf("%s: output %w", name, err)
		}
		s.Outputs[rel] = sum
	}
	js, err := json.MarshalIndent(s, "", "  ")
	if err != nil {
		return err
	}
	path := filepath.Join(out, stampPath(name))
	if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
		return err
	}
	return safefile.WriteBytes(path, true, append(js, '\n'))
}
