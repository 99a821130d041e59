package checkpoints_test

import (
	"crypto/sha256"
	"encoding/binary"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"

	"tidemark/checkpoints"
)

// region is a stretch of a checkpoint file and the check that must catch a
// damaged byte inside it.
type region struct {
	name       string
	start, end int // byte offsets, end exclusive
	want       error
	word       string // the word the message must contain
	positions  int    // how many positions to try, spread over the region
}

// checkpointRegions splits an encoded checkpoint into its parts (see the
// file layout in the package documentation).
func checkpointRegions(b []byte) []region {
	h := int(binary.LittleEndian.Uint64(b[12:20]))
	p := int(binary.LittleEndian.Uint64(b[20:28]))
	return []region{
		{"magic", 0, 8, checkpoints.ErrMagic, "magic", 8},
		{"version", 8, 12, checkpoints.ErrVersion, "version", 4},
		{"header length", 12, 20, checkpoints.ErrLength, "length", 8},
		{"payload length", 20, 28, checkpoints.ErrLength, "length", 8},
		{"header", preamble, preamble + h, checkpoints.ErrChecksum, "checksum", 24},
		{"weights", preamble + h, preamble + h + p, checkpoints.ErrChecksum, "checksum", 24},
		{"checksum", preamble + h + p, len(b), checkpoints.ErrChecksum, "checksum", 24},
	}
}

// TestCorruptByteIsNamed flips one byte at 100 positions spread over the
// magic, version, both lengths, header, weights and checksum of a real
// checkpoint, and checks that each is refused by the right check and that
// the message names the file and the check.
func TestCorruptByteIsNamed(t *testing.T) {
	good, err := smallCheckpoint(t, true).Bytes()
	if err != nil {
		t.Fatal(err)
	}
	regs := checkpointRegions(good)
	if regs[len(regs)-1].end-regs[len(regs)-1].start != sha256.Size {
		t.Fatalf("checksum region of %d bytes, want %d", regs[len(regs)-1].end-regs[len(regs)-1].start, sha256.Size)
	}
	tried := 0
	for _, r := range regs {
		for i := 0; i < r.positions; i++ {
			pos := r.start + i*(r.end-r.start)/r.positions
			// Alternate the flipped bits: the lowest, the highest, all.
			mask := []byte{0x01, 0x80, 0xff}[i%3]
			b := slices.Clone(good)
			b[pos] ^= mask
			tried++
			t.Run(fmt.Sprintf("%s/byte%d^%#x", r.name, pos, mask), func(t *testing.T) {
				_, err := checkpoints.Decode(b, "model.ckpt")
				if !errors.Is(err, r.want) {
					t.Fatalf("error %v, want one wrapping %q", err, r.want)
				}
				msg := err.Error()
				if !strings.HasPrefix(msg, "model.ckpt: ") || !strings.Contains(msg, r.word) {
					t.Fatalf("error %q does not name the file and the %s check", msg, r.word)
				}
			})
		}
	}
	if tried != 100 {
		t.Fatalf("tried %d positions, want 100", tried)
	}
}

// TestTruncatedIsNamed cuts a real checkpoint at lengths inside each of its
// parts and checks that the cut is refused as a length error (or, inside
// the first 8 bytes, as bad magic bytes, since too little is left to tell a
// checkpoint), naming the file; one cut file goes through Load from disk.
func TestTruncatedIsNamed(t *testing.T) {
	good, err := smallCheckpoint(t, true).Bytes()
	if err != nil {
		t.Fatal(err)
	}
	h := int(binary.LittleEndian.Uint64(good[12:20]))
	p := int(binary.LittleEndian.Uint64(good[20:28]))
	cases := []struct {
		n    int
		want error
		word string
	}{
		{0, checkpoints.ErrMagic, "magic"},
		{5, checkpoints.ErrMagic, "magic"},
		{8, checkpoints.ErrLength, "length"},
		{11, checkpoints.ErrLength, "length"},
		{preamble, checkpoints.ErrLength, "length"},
		{preamble + sha256.Size - 1, checkpoints.ErrLength, "length"},
		{preamble + h/2, checkpoints.ErrLength, "length"},
		{preamble + h, checkpoints.ErrLength, "length"},
		{preamble + h + p/2, checkpoints.ErrLength, "length"},
		{preamble + h + p/2 + 3, checkpoints.ErrLength, "length"},
		{preamble + h + p, checkpoints.ErrLength, "length"},
		{len(good) - 8, checkpoints.ErrLength, "length"},
		{len(good) - 1, checkpoints.ErrLength, "length"},
	}
	for _, c := range cases {
		t.Run(fmt.Sprintf("%d_of_%d", c.n, len(good)), func(t *testing.T) {
			_, err := checkpoints.Decode(good[:c.n], "model.ckpt")
			if !errors.Is(err, c.want) {
				t.Fatalf("error %v, want one wrapping %q", err, c.want)
			}
			if msg := err.Error(); !strings.HasPrefix(msg, "model.ckpt: ") || !strings.Contains(msg, c.word) {
				t.Fatalf("error %q does not name the file and the %s check", msg, c.word)
			}
		})
	}

	path := filepath.Join(t.TempDir(), "cut.ckpt")
	if err := os.WriteFile(path, good[:len(good)/2], 0o644); err != nil {
		t.Fatal(err)
	}
	_, err = checkpoints.Load(path)
	if !errors.Is(err, checkpoints.ErrLength) || !strings.HasPrefix(err.Error(), path+": ") {
		t.Fatalf("Load of a file cut in half: %v", err)
	}
	t.Log(err)
}
