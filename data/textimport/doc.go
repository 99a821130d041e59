// Package textimport reads snapshots from a text or CSV file, one snapshot
// a line, into a tidemark dataset.
//
// Each data line holds d parameter values and then the N site values. Site
// values are integers 0..q−1 separated by commas or whitespace, or one
// string of digits ("0110..."), or, with Options.Spins, Ising spins −1 and
// +1 (stored as 0 and 1). Blank lines and lines starting with # are skipped,
// and a first line that is not numeric is taken for a header. The file is
// streamed, so millions of lines need no more memory than the dataset.
package textimport
