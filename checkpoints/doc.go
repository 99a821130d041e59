// Package checkpoints reads and writes tidemark's trained-model files (.ckpt):
// a versioned, checksummed binary container holding a JSON header (the model
// configuration, the dataset it was trained on, the held-out points, the
// training settings and per-epoch metrics), the best and the last weights,
// and the Adam optimiser state needed to resume training exactly.
//
// # File layout (format version 1)
//
// All integers and floats are little-endian.
//
//	offset  size  content
//	0       8     magic "TDMKCKPT"
//	8       4     format version (uint32)
//	12      8     header length H in bytes (uint64)
//	20      8     payload length P in bytes (uint64)
//	28      H     header: UTF-8 JSON object (type Header)
//	28+H    P     payload: float64 values of every tensor of every section,
//	              in the order listed by Header.Sections
//	28+H+P  32    SHA-256 of bytes 0 .. 28+H+P−1
//
// The payload holds four sections, each a list of tensors with the names and
// shapes of the model's weights: "best" (the weights with the lowest
// validation loss, used by every command that scores), "last" (the weights
// after the last completed epoch), and "adam_m" and "adam_v" (Adam's first-
// and second-moment estimates belonging to "last"). Keeping both weight sets
// in one file means one path always names one consistent training run.
//
// Load checks, in order, the magic bytes, the format version (a newer one is
// refused), the lengths, the checksum and then the header, and says which
// check failed.
package checkpoints
