package main

import (
	"fmt"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"strings"
	"testing"
	"time"

	"tidemark/data"
)

// badInput is one row of the catalogue of bad inputs: a command line that
// must be refused with exit status 2, one line on stderr containing want, no
// stack trace, and no file created or changed.
//
// In args, "@name" stands for a fixture path (see catalogueFixtures) and an
// argument starting with "@out" for a path in the row's own empty folder
// ("@out.npz" → FOLDER/out.npz), which must still not exist afterwards.
// pre lists files (name → content) put in the row's folder first, for rows
// about existing outputs; they must be left exactly as they were. A name
// ending in "/" is a folder, made with one file "keep" inside.
type badInput struct {
	name string
	args []string
	want string
	pre  map[string]string
}

// catalogue lists the bad inputs by command. To cover a new command or
// class, add a row; TestCatalogueOfBadInputs fails for a command listed by
// "tidemark --help" that has no row here.
var catalogue = map[string][]badInput{
	"import": {
		{"missing file", []string{"import", "@none", "--params", "T", "-o", "@out.npz"}, "no such file", nil},
		{"folder", []string{"import", "@dir", "--params", "T", "-o", "@out.npz"}, "found a folder", nil},
		{"checkpoint given as text", []string{"import", "@ck", "--params", "T", "-o", "@out.npz"}, "found binary data", nil},
		{"dataset given as text", []string{"import", "@ds4", "--params", "T", "-o", "@out.npz"}, "found binary data", nil},
		{"empty file", []string{"import", "@empty", "--params", "T", "-o", "@out.npz"}, "found none", nil},
		{"words, not numbers", []string{"import", "@txt", "--params", "T", "-o", "@out.npz"}, "expected a finite number", nil},
		{"repeated parameter names", []string{"import", "@csv", "--params", "T,T", "-o", "@out.npz"}, "distinct", nil},
		{"unknown flag", []string{"import", "@csv", "--params", "T", "--bogus", "-o", "@out.npz"}, "unknown flag: --bogus", nil},
		{"alphabet not a number", []string{"import", "@csv", "--params", "T", "--alphabet", "two", "-o", "@out.npz"}, `invalid argument "two"`, nil},
		{"alphabet out of range", []string{"import", "@csv", "--params", "T", "--alphabet", "1", "-o", "@out.npz"}, "alphabet from 2 to 256, found 1", nil},
		{"lattice not a shape", []string{"import", "@csv", "--params", "T", "--lattice", "4xa", "-o", "@out.npz"}, "--lattice", nil},
		{"lattice of the wrong size", []string{"import", "@csv", "--params", "T", "--lattice", "3x3", "-o", "@out.npz"}, "has 9 sites", nil},
		{"unknown spin encoding", []string{"import", "@csv", "--params", "T", "--spins", "ud", "-o", "@out.npz"}, "--spins", nil},
		{"no output", []string{"import", "@csv", "--params", "T"}, `"output" not set`, nil},
		{"output exists", []string{"import", "@csv", "--params", "T", "-o", "@out.npz"}, "already exists", map[string]string{"out.npz": "earlier"}},
		{"output is a folder", []string{"import", "@csv", "--params", "T", "-o", "@out", "--force"}, "found a folder", map[string]string{"out/": ""}},
		{"output folder missing", []string{"import", "@csv", "--params", "T", "-o", "@out/sub/x.npz"}, "no such file", nil},
	},
	"run": {
		{"missing study file", []string{"run", "@none", "-o", "@out"}, "bad study file", nil},
		{"text, not a study file", []string{"run", "@txt", "-o", "@out"}, "bad study file", nil},
		{"empty study file", []string{"run", "@empty", "-o", "@out"}, "missing section [system]", nil},
		{"dataset given as the study", []string{"run", "@ds4", "-o", "@out"}, "bad study file", nil},
		{"no output", []string{"run", "@empty"}, "--output: expected an output folder", nil},
		{"no processes", []string{"run", "@empty", "-o", "@out", "--parallel", "0"}, "--parallel: expected at least 1 process, found 0", nil},
		{"unit with slurm", []string{"run", "@empty", "-o", "@out", "--unit", "train:0", "--slurm"}, "--unit runs units here", nil},
		{"unknown flag", []string{"run", "@empty", "-o", "@out", "--bogus"}, "unknown flag: --bogus", nil},
	},
	"extrapolate": {
		{"missing scan folder", []string{"extrapolate", "@none", "@none", "@none", "--nu", "1", "-o", "@out"}, "expected a scan folder holding summary.json", nil},
		{"folder without a scan", []string{"extrapolate", "@dir", "@dir", "@dir", "--nu", "1", "-o", "@out"}, "expected a scan folder holding summary.json", nil},
		{"negative exponent", []string{"extrapolate", "@dir", "@dir", "@dir", "--nu", "-1", "-o", "@out"}, "--nu: expected an exponent above 0, found -1", nil},
		{"sizes not numbers", []string{"extrapolate", "@dir", "@dir", "@dir", "--sizes", "8,x,16", "-o", "@out"}, `--sizes: entry 2 of "8,x,16"`, nil},
		{"no output", []string{"extrapolate", "@dir", "@dir", "@dir"}, "--output: expected an output folder", nil},
		{"output exists", []string{"extrapolate", "@dir", "@dir", "@dir", "-o", "@out"}, "exists and is not empty", map[string]string{"out/": ""}},
	},
	"inspect": {
		{"missing file", []string{"inspect", "@none"}, "no such file", nil},
		{"folder", []string{"inspect", "@dir"}, "found a folder", nil},
		{"text file", []string{"inspect", "@txt"}, "expected a .npz dataset or a .ckpt checkpoint", nil},
		{"empty file", []string{"inspect", "@empty"}, "expected a .npz dataset or a .ckpt checkpoint", nil},
		{"two files", []string{"inspect", "@ds4", "@ck"}, "inspect: accepts 1 arg(s), received 2", nil},
		{"no file", []string{"inspect"}, "inspect: accepts 1 arg(s), received 0", nil},
		{"unknown flag", []string{"inspect", "@ds4", "--bogus"}, "unknown flag: --bogus", nil},
	},
	"simulate ising": {
		{"empty grid", []string{"simulate", "ising", "--size", "3", "--grid", "", "--samples", "10", "-o", "@out.npz"}, "--grid", nil},
		{"grid value not a number", []string{"simulate", "ising", "--size", "3", "--grid", "T=1:x:3", "--samples", "10", "-o", "@out.npz"}, "expected a finite number", nil},
		{"unknown grid axis", []string{"simulate", "ising", "--size", "3", "--grid", "Q=1:2:3", "--samples", "10", "-o", "@out.npz"}, "Q", nil},
		{"no temperature", []string{"simulate", "ising", "--size", "3", "--grid", "h=0:1:3", "--samples", "10", "-o", "@out.npz"}, "--temperature", nil},
		{"size out of range", []string{"simulate", "ising", "--size", "1", "--grid", "T=1:2:3", "--samples", "10", "-o", "@out.npz"}, "--size", nil},
		{"size not a number", []string{"simulate", "ising", "--size", "four", "--grid", "T=1:2:3", "--samples", "10", "-o", "@out.npz"}, `--size: expected a positive whole number or a list like 8,16,32, found "four"`, nil},
		{"size listed twice", []string{"simulate", "ising", "--size", "4,8,4", "--grid", "T=1:2:3", "--samples", "10", "-o", "@out.npz"}, "size 4 is listed twice", nil},
		{"one size of a series too small", []string{"simulate", "ising", "--size", "4,1", "--grid", "T=1:2:3", "--samples", "10", "-o", "@out.npz"}, "at least 2 sites, found 1", nil},
		{"output of a series member exists", []string{"simulate", "ising", "--size", "4,6", "--grid", "T=1:2:3", "--samples", "10", "-o", "@out.npz"}, "out-L6.npz: already exists", map[string]string{"out-L6.npz": "earlier"}},
		{"too few samples", []string{"simulate", "ising", "--size", "3", "--grid", "T=1:2:3", "--samples", "1", "-o", "@out.npz"}, "--samples", nil},
		{"exact samples of a big lattice", []string{"simulate", "ising", "--size", "6", "--grid", "T=1:2:3", "--samples", "10", "--exact-samples", "-o", "@out.npz"}, "24", nil},
		{"unknown flag", []string{"simulate", "ising", "--size", "3", "--grid", "T=1:2:3", "--samples", "10", "--bogus", "-o", "@out.npz"}, "unknown flag: --bogus", nil},
		{"output exists", []string{"simulate", "ising", "--size", "3", "--grid", "T=1:2:3", "--samples", "10", "-o", "@out.npz"}, "already exists", map[string]string{"out.npz": "earlier"}},
		{"output is a folder", []string{"simulate", "ising", "--size", "3", "--grid", "T=1:2:3", "--samples", "10", "-o", "@out", "--force"}, "found a folder", map[string]string{"out/": ""}},
	},
	"simulate chain": {
		{"empty grid", []string{"simulate", "chain", "--sites", "4", "--hamiltonian", "-ZZ - h*X", "--grid", "", "-o", "@out.npz"}, "--grid", nil},
		{"grid axis not in the Hamiltonian", []string{"simulate", "chain", "--sites", "4", "--hamiltonian", "-ZZ - h*X", "--grid", "g=1:2:3", "-o", "@out.npz"}, `axis "g"`, nil},
		{"bad Pauli word", []string{"simulate", "chain", "--sites", "4", "--hamiltonian", "-ZQ - h*X", "--grid", "h=1:2:3", "-o", "@out.npz"}, "column", nil},
		{"too many sites", []string{"simulate", "chain", "--sites", "40", "--solver", "ed", "--hamiltonian", "-ZZ - h*X", "--grid", "h=1:2:3", "-o", "@out.npz"}, "--sites", nil},
		{"too many sites for mps", []string{"simulate", "chain", "--sites", "5000", "--hamiltonian", "-ZZ - h*X", "--grid", "h=1:2:3", "-o", "@out.npz"}, "--sites", nil},
		{"unknown solver", []string{"simulate", "chain", "--sites", "40", "--solver", "dmrg", "--hamiltonian", "-ZZ - h*X", "--grid", "h=1:2:3", "-o", "@out.npz"}, "--solver", nil},
		{"negative pin", []string{"simulate", "chain", "--sites", "40", "--pin", "-1", "--hamiltonian", "-ZZ - h*X", "--grid", "h=1:2:3", "-o", "@out.npz"}, "--pin", nil},
		{"too many sites in a series", []string{"simulate", "chain", "--sites", "4,40", "--solver", "ed", "--hamiltonian", "-ZZ - h*X", "--grid", "h=1:2:3", "-o", "@out.npz"}, "--sites: expected 2 to 16 sites, found 40", nil},
		{"sites not a list", []string{"simulate", "chain", "--sites", "4;6", "--hamiltonian", "-ZZ - h*X", "--grid", "h=1:2:3", "-o", "@out.npz"}, "--sites: expected a positive whole number or a list", nil},
		{"unknown basis", []string{"simulate", "chain", "--sites", "4", "--hamiltonian", "-ZZ - h*X", "--grid", "h=1:2:3", "--basis", "w", "-o", "@out.npz"}, "--basis", nil},
		{"unknown sector", []string{"simulate", "chain", "--sites", "4", "--hamiltonian", "-ZZ - h*X", "--grid", "h=1:2:3", "--sector", "up", "-o", "@out.npz"}, "--sector", nil},
		{"too few samples", []string{"simulate", "chain", "--sites", "4", "--hamiltonian", "-ZZ - h*X", "--grid", "h=1:2:3", "--samples", "1", "-o", "@out.npz"}, "--samples", nil},
		{"unknown flag", []string{"simulate", "chain", "--sites", "4", "--bogus", "-o", "@out.npz"}, "unknown flag: --bogus", nil},
		{"output exists", []string{"simulate", "chain", "--sites", "4", "--hamiltonian", "-ZZ - h*X", "--grid", "h=1:2:3", "-o", "@out.npz"}, "already exists", map[string]string{"out.npz": "earlier"}},
	},
	"train": {
		{"missing file", []string{"train", "@none", "-o", "@out.ckpt"}, "no such file", nil},
		{"folder", []string{"train", "@dir", "-o", "@out.ckpt"}, "found a folder", nil},
		{"checkpoint given as data", []string{"train", "@ck", "-o", "@out.ckpt"}, "expected a NumPy .npz", nil},
		{"text file given as data", []string{"train", "@txt", "-o", "@out.ckpt"}, "expected a NumPy .npz", nil},
		{"single-point grid", []string{"train", "@one", "-o", "@out.ckpt"}, "at least 2 distinct grid points, found 1", nil},
		{"holdout of every point", []string{"train", "@ds4", "--holdout", "T=0:10", "-o", "@out.ckpt"}, "at least 2 left", nil},
		{"holdout of a value off the grid", []string{"train", "@ds4", "--holdout", "T=7", "-o", "@out.ckpt"}, "not a grid value", nil},
		{"zero epochs", []string{"train", "@ds4", "--epochs", "0", "-o", "@out.ckpt"}, "--epochs", nil},
		{"unknown precision", []string{"train", "@ds4", "--precision", "float16", "-o", "@out.ckpt"}, "precision", nil},
		{"batch not a number", []string{"train", "@ds4", "--batch", "many", "-o", "@out.ckpt"}, `invalid argument "many"`, nil},
		{"validation fraction out of range", []string{"train", "@ds4", "--val-frac", "2", "-o", "@out.ckpt"}, "--val-frac", nil},
		{"bad widths", []string{"train", "@ds4", "--hidden", "16,x", "-o", "@out.ckpt"}, "--hidden", nil},
		{"unknown activation", []string{"train", "@ds4", "--activation", "swish", "-o", "@out.ckpt"}, "swish", nil},
		{"unknown schedule", []string{"train", "@ds4", "--schedule", "sawtooth", "-o", "@out.ckpt"}, "sawtooth", nil},
		{"symmetric model of three-state data", []string{"train", "@q3", "--symmetric", "-o", "@out.ckpt"}, "alphabet 2", nil},
		{"unknown symmetry", []string{"train", "@ds4", "--augment", "translate,shear", "-o", "@out.ckpt"}, `found "shear"`, nil},
		{"negative averaging time", []string{"train", "@ds4", "--average", "-1", "-o", "@out.ckpt"}, "average: expected a time constant ≥ 0 epochs", nil},
		{"flip augmentation of three-state data", []string{"train", "@q3", "--augment", "flip", "-o", "@out.ckpt"}, "augment flip: expected alphabet 2", nil},
		{"unknown flag", []string{"train", "@ds4", "--bogus", "-o", "@out.ckpt"}, "unknown flag: --bogus", nil},
		{"no output", []string{"train", "@ds4"}, "-o MODEL.ckpt", nil},
		{"output exists", []string{"train", "@ds4", "-o", "@out.ckpt"}, "already exists", map[string]string{"out.ckpt": "earlier"}},
		{"output is a folder", []string{"train", "@ds4", "-o", "@out", "--force"}, "found a folder", map[string]string{"out/": ""}},
		{"resume from a dataset", []string{"train", "@ds4", "--resume", "@ds4", "-o", "@out.ckpt"}, "not a tidemark checkpoint", nil},
		{"resume from a missing file", []string{"train", "@ds4", "--resume", "@none", "-o", "@out.ckpt"}, "no such file", nil},
		{"resume on 3×3 data", []string{"train", "@ds3", "--resume", "@ck", "-o", "@out.ckpt"}, "different dataset", nil},
		{"resume on data with other parameter names", []string{"train", "@dsh", "--resume", "@ck", "-o", "@out.ckpt"}, "different dataset", nil},
		{"resume with a changed setting", []string{"train", "@ds4", "--resume", "@ck", "--lr", "0.1", "-o", "@out.ckpt"}, "--lr: cannot be changed", nil},
	},
	"check": {
		{"missing checkpoint", []string{"check", "@none", "--data", "@ds4"}, "no such file", nil},
		{"dataset given as checkpoint", []string{"check", "@ds4", "--data", "@ds4"}, "not a tidemark checkpoint", nil},
		{"folder given as checkpoint", []string{"check", "@dir", "--data", "@ds4"}, "is a directory", nil},
		{"checkpoint given as data", []string{"check", "@ck", "--data", "@ck"}, "expected a NumPy .npz", nil},
		{"no data", []string{"check", "@ck"}, "--data", nil},
		{"3×3 data for a 4×4 model", []string{"check", "@ck", "--data", "@ds3"}, "the model has 16 sites, the dataset 9", nil},
		{"data with other parameter names", []string{"check", "@ck", "--data", "@dsh"}, `"h"`, nil},
		{"data with another alphabet", []string{"check", "@ck", "--data", "@imp3"}, "alphabet is 2 values per site, the dataset's 3", nil},
		{"data on another lattice", []string{"check", "@ck", "--data", "@imp28"}, "lattice is [4 4], the dataset's [2 8]", nil},
		{"data without an exact reference", []string{"check", "@ck", "--data", "@imp"}, "imported", nil},
		{"threads not a number", []string{"check", "@ck", "--data", "@ds4", "--threads", "all"}, `invalid argument "all"`, nil},
		{"unknown flag", []string{"check", "@ck", "--data", "@ds4", "--bogus"}, "unknown flag: --bogus", nil},
	},
	"score": {
		{"missing checkpoint", []string{"score", "@none", "@ds4", "-o", "@out.npz"}, "no such file", nil},
		{"missing dataset", []string{"score", "@ck", "@none", "-o", "@out.npz"}, "no such file", nil},
		{"arguments swapped", []string{"score", "@ds4", "@ck", "-o", "@out.npz"}, "not a tidemark checkpoint", nil},
		{"text file given as data", []string{"score", "@ck", "@txt", "-o", "@out.npz"}, "expected a NumPy .npz", nil},
		{"3×3 data for a 4×4 model", []string{"score", "@ck", "@ds3", "-o", "@out.npz"}, "the model has 16 sites, the dataset 9", nil},
		{"data with other parameter names", []string{"score", "@ck", "@dsh", "-o", "@out.npz"}, `"h"`, nil},
		{"data with one more parameter", []string{"score", "@ck", "@dsth", "-o", "@out.npz"}, `the dataset's ["T" "h"]`, nil},
		{"data with another alphabet", []string{"score", "@ck", "@imp3", "-o", "@out.npz"}, "alphabet is 2 values per site, the dataset's 3", nil},
		{"data on another lattice", []string{"score", "@ck", "@imp28", "-o", "@out.npz"}, "lattice is [4 4], the dataset's [2 8]", nil},
		{"point with another parameter", []string{"score", "@ck", "@ds4", "--at", "h=1", "-o", "@out.npz"}, `found "h"`, nil},
		{"point without a value", []string{"score", "@ck", "@ds4", "--at", "T=", "-o", "@out.npz"}, "expected a finite number", nil},
		{"unknown output format", []string{"score", "@ck", "@ds4", "-o", "@out.txt"}, ".npz or .csv", nil},
		{"unknown flag", []string{"score", "@ck", "@ds4", "--bogus", "-o", "@out.npz"}, "unknown flag: --bogus", nil},
		{"output exists", []string{"score", "@ck", "@ds4", "-o", "@out.csv"}, "already exists", map[string]string{"out.csv": "earlier"}},
	},
	"export": {
		{"missing checkpoint", []string{"export", "@none", "-o", "@out.npz"}, "no such file", nil},
		{"dataset given as checkpoint", []string{"export", "@ds4", "-o", "@out.npz"}, "not a tidemark checkpoint", nil},
		{"text file given as checkpoint", []string{"export", "@txt", "-o", "@out.npz"}, "not a tidemark checkpoint", nil},
		{"folder given as checkpoint", []string{"export", "@dir", "-o", "@out.npz"}, "is a directory", nil},
		{"two checkpoints", []string{"export", "@ck", "@ck", "-o", "@out.npz"}, "export: accepts 1 arg(s), received 2", nil},
		{"unknown flag", []string{"export", "@ck", "--bogus", "-o", "@out.npz"}, "unknown flag: --bogus", nil},
		{"output exists", []string{"export", "@ck", "-o", "@out.npz"}, "already exists", map[string]string{"out.npz": "earlier"}},
		{"output is a folder", []string{"export", "@ck", "-o", "@out", "--force"}, "found a folder", map[string]string{"out/": ""}},
		{"output folder missing", []string{"export", "@ck", "-o", "@out/sub/x.npz"}, "no such file", nil},
	},
	"scan": {
		{"no source", []string{"scan", "--data", "@ds4", "-o", "@out"}, "exactly one density source", nil},
		{"two sources", []string{"scan", "--data", "@ds4", "--exact", "--histogram", "-o", "@out"}, "exactly one density source", nil},
		{"missing dataset", []string{"scan", "--data", "@none", "--exact", "-o", "@out"}, "no such file", nil},
		{"checkpoint given as data", []string{"scan", "--data", "@ck", "--exact", "-o", "@out"}, "expected a NumPy .npz", nil},
		{"dataset given as model", []string{"scan", "--data", "@ds4", "--model", "@ds4", "-o", "@out"}, "not a tidemark checkpoint", nil},
		{"missing model", []string{"scan", "--data", "@ds4", "--model", "@none", "-o", "@out"}, "no such file", nil},
		{"3×3 data for a 4×4 model", []string{"scan", "--data", "@ds3", "--model", "@ck", "-o", "@out"}, "the model has 16 sites, the dataset 9", nil},
		{"data with other parameter names", []string{"scan", "--data", "@dsh", "--model", "@ck", "-o", "@out"}, `"h"`, nil},
		{"data with another alphabet", []string{"scan", "--data", "@imp3", "--model", "@ck", "-o", "@out"}, "alphabet is 2 values per site, the dataset's 3", nil},
		{"data on another lattice", []string{"scan", "--data", "@imp28", "--model", "@ck", "-o", "@out"}, "lattice is [4 4], the dataset's [2 8]", nil},
		{"exact source for imported data", []string{"scan", "--data", "@imp", "--exact", "-o", "@out"}, "no exact reference", nil},
		{"refined grid, lattice too large to sample exactly", []string{"scan", "--data", "@ds6", "--exact", "--refine", "2", "-o", "@out"}, "cannot draw them", nil},
		{"exact sums, lattice too large to list", []string{"scan", "--data", "@ds6", "--exact", "--exact-sums", "-o", "@out"}, "states can all be listed", nil},
		{"large lattice under a field", []string{"scan", "--data", "@ds6h", "--exact", "-o", "@out"}, "field is not zero", nil},
		{"single-point grid", []string{"scan", "--data", "@one", "--exact", "-o", "@out"}, "at least 2 distinct grid points", nil},
		{"unknown indicator", []string{"scan", "--data", "@ds4", "--exact", "--indicators", "entropy", "-o", "@out"}, "entropy", nil},
		{"negative bootstrap", []string{"scan", "--data", "@ds4", "--exact", "--bootstrap", "-3", "-o", "@out"}, "--bootstrap", nil},
		{"refine out of range", []string{"scan", "--data", "@ds4", "--exact", "--refine", "0", "-o", "@out"}, "--refine", nil},
		{"window out of range", []string{"scan", "--data", "@ds4", "--exact", "--window", "0", "-o", "@out"}, "--window", nil},
		{"one region for sl", []string{"scan", "--data", "@ds4", "--exact", "--sl-regions", "1:2", "-o", "@out"}, "--sl-regions", nil},
		{"bootstrap not a number", []string{"scan", "--data", "@ds4", "--exact", "--bootstrap", "lots", "-o", "@out"}, `invalid argument "lots"`, nil},
		{"unknown flag", []string{"scan", "--data", "@ds4", "--exact", "--bogus", "-o", "@out"}, "unknown flag: --bogus", nil},
		{"output is a file", []string{"scan", "--data", "@ds4", "--exact", "-o", "@out"}, "expected a folder", map[string]string{"out": "earlier"}},
		{"output folder not empty", []string{"scan", "--data", "@ds4", "--exact", "-o", "@out"}, "--force", map[string]string{"out/": ""}},
		{"parent folder missing", []string{"scan", "--data", "@ds4", "--exact", "-o", "@out/sub/x"}, "no such file", nil},
	},
	"demo": {
		{"argument", []string{"demo", "extra", "-o", "@out"}, `"extra"`, nil},
		{"seed not a number", []string{"demo", "--seed", "abc", "-o", "@out"}, `invalid argument "abc"`, nil},
		{"unknown flag", []string{"demo", "--bogus", "-o", "@out"}, "unknown flag: --bogus", nil},
		{"output folder not empty", []string{"demo", "-o", "@out"}, "--force", map[string]string{"out/": ""}},
	},
	"": {
		{"unknown command", []string{"simmer"}, `unknown command "simmer"`, nil},
		{"unknown simulation", []string{"simulate", "potts"}, `expected a model to simulate (chain, ising), found "potts"`, nil},
	},
}

// catalogueFixtures writes the inputs the rows refer to into dir and returns
// them by name: small datasets, a checkpoint trained for 2 epochs on ds4,
// a text file, an empty file, an empty folder, a missing path.
func catalogueFixtures(t *testing.T, dir string) map[string]string {
	t.Helper()
	f := map[string]string{}
	for _, name := range []string{"ds4", "ds3", "dsh", "dsth", "ds6", "ds6h", "imp", "imp3", "imp28", "q3", "one", "ck", "txt", "empty", "csv", "csv1", "dir", "none"} {
		ext := ".npz"
		switch name {
		case "ck":
			ext = ".ckpt"
		case "txt", "empty":
			ext = ".txt"
		case "csv", "csv1":
			ext = ".csv"
		case "dir":
			ext = ""
		}
		f[name] = filepath.Join(dir, name+ext)
	}
	sim := func(out string, args ...string) {
		mustRunBin(t, dir, append(append([]string{"simulate", "ising"}, args...), "--samples", "40", "--exact-samples", "--quiet", "-o", out)...)
	}
	sim(f["ds4"], "--size", "4", "--grid", "T=1:4:5")
	sim(f["ds3"], "--size", "3", "--grid", "T=1:4:5")
	sim(f["dsh"], "--size", "4", "--temperature", "2", "--grid", "h=-1:1:5")
	sim(f["dsth"], "--size", "4", "--grid", "T=1:4:3,h=0;0.5")
	// 6×6 (36 sites) is too large to enumerate: Monte Carlo samples.
	mustRunBin(t, dir, "simulate", "ising", "--size", "6", "--grid", "T=1:4:5", "--samples", "40", "--quiet", "-o", f["ds6"])
	mustRunBin(t, dir, "simulate", "ising", "--size", "6", "--temperature", "2", "--grid", "h=0:1:3", "--samples", "40", "--quiet", "-o", f["ds6h"])
	mustRunBin(t, dir, "train", f["ds4"], "-o", f["ck"], "--epochs", "2", "--hidden", "16", "--cond-hidden", "8", "--batch", "32", "--quiet")

	write := func(path, s string) {
		if err := os.WriteFile(path, []byte(s), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	write(f["txt"], "hello\nthese are words, not snapshots\n")
	write(f["empty"], "")
	// Four snapshots of 4 sites at T = 1 and 2; csv1 has a single point.
	write(f["csv"], "1,0,1,1,0\n1,1,1,0,0\n2,0,0,1,1\n2,1,1,1,1\n")
	write(f["csv1"], "2,0,1,1,0\n2,1,1,0,0\n2,0,0,1,1\n2,1,1,1,1\n")
	if err := os.Mkdir(f["dir"], 0o755); err != nil {
		t.Fatal(err)
	}
	// Imported data of 16 sites with the checkpoint's parameter T: imp fits
	// the model but has no exact reference; imp3 has three site values,
	// imp28 another lattice shape.
	imp := func(out string, q int, lattice string) {
		var rows strings.Builder
		for k, T := range []string{"1", "4"} {
			for s := range 3 {
				rows.WriteString(T)
				for i := range 16 {
					fmt.Fprintf(&rows, ",%d", (i+s+k)%q)
				}
				rows.WriteString("\n")
			}
		}
		csv16 := out + ".csv"
		write(csv16, rows.String())
		mustRunBin(t, dir, "import", csv16, "--params", "T", "--lattice", lattice, "-o", out)
	}
	imp(f["imp"], 2, "4x4")
	imp(f["imp3"], 3, "4x4")
	imp(f["imp28"], 2, "2x8")
	write(filepath.Join(dir, "q3.csv"), "1,0,1,2,0\n1,1,1,0,0\n2,0,0,1,2\n2,1,1,1,1\n")
	mustRunBin(t, dir, "import", filepath.Join(dir, "q3.csv"), "--params", "T", "-o", f["q3"])

	// A dataset whose snapshots all sit at one point, as a user's own .npz
	// could: written with Encode, which does not validate (Write would refuse it).
	one, err := data.New(6, 16, []string{"T"}, 2, []int{4, 4}, map[string]string{"generator": "imported"})
	if err != nil {
		t.Fatal(err)
	}
	for i := range one.Params {
		one.Params[i] = 2
	}
	fh, err := os.Create(f["one"])
	if err != nil {
		t.Fatal(err)
	}
	if err := one.Encode(fh); err != nil {
		t.Fatal(err)
	}
	if err := fh.Close(); err != nil {
		t.Fatal(err)
	}
	return f
}

// listCommands returns the commands "tidemark --help" lists (with the
// simulations as "simulate NAME"), leaving out help.
func listCommands(t *testing.T, dir string) []string {
	t.Helper()
	names := func(help string) []string {
		_, after, _ := strings.Cut(help, "Available Commands:\n")
		var out []string
		for _, line := range strings.Split(after, "\n") {
			f := strings.Fields(line)
			if len(f) == 0 || !strings.HasPrefix(line, "  ") {
				break
			}
			if f[0] != "help" {
				out = append(out, f[0])
			}
		}
		return out
	}
	var cmds []string
	for _, c := range names(mustRunBin(t, dir, "--help").stdout) {
		if c == "simulate" {
			for _, s := range names(mustRunBin(t, dir, "simulate", "--help").stdout) {
				cmds = append(cmds, "simulate "+s)
			}
			continue
		}
		cmds = append(cmds, c)
	}
	return cmds
}

// folderState describes the files of dir (name, size, time, mode) and its
// folders, to see whether a run changed anything there.
func folderState(t *testing.T, dir string) string {
	t.Helper()
	var b strings.Builder
	err := filepath.WalkDir(dir, func(p string, d os.DirEntry, err error) error {
		if err != nil {
			return err
		}
		info, err := d.Info()
		if err != nil {
			return err
		}
		rel, _ := filepath.Rel(dir, p)
		if d.IsDir() {
			// A folder's time changes when a temporary file comes and
			// goes, which a command may do before it fails cleanly.
			fmt.Fprintf(&b, "%s/ %v\n", rel, info.Mode())
			return nil
		}
		fmt.Fprintf(&b, "%s %d %s %v\n", rel, info.Size(), info.ModTime().Format(time.RFC3339Nano), info.Mode())
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return b.String()
}

var stackTrace = regexp.MustCompile(`goroutine|panic|\.go:\d`)

// TestCatalogueOfBadInputs runs the built binary on every row of catalogue:
// each bad input must give exit status 2, one line on stderr that names the
// problem, no stack trace, and no output or temporary file; existing files
// and the fixtures must stay as they were.
func TestCatalogueOfBadInputs(t *testing.T) {
	root := t.TempDir()
	fixDir := filepath.Join(root, "fixtures")
	if err := os.Mkdir(fixDir, 0o755); err != nil {
		t.Fatal(err)
	}
	fix := catalogueFixtures(t, fixDir)
	fixState := folderState(t, fixDir)

	listed := listCommands(t, root)
	for _, c := range listed {
		if len(catalogue[c]) == 0 {
			t.Errorf("command %q has no rows in the catalogue of bad inputs (catalogue_test.go)", c)
		}
	}
	var groups []string
	for g := range catalogue {
		groups = append(groups, g)
	}
	slices.Sort(groups)
	n := 0
	for _, g := range groups {
		if g != "" && !slices.Contains(listed, g) {
			t.Logf("skipping the rows of %q: tidemark --help does not list it", g)
			continue
		}
		for i, row := range catalogue[g] {
			n++
			name := strings.ReplaceAll(strings.TrimSpace(g+" "+row.name), " ", "_")
			t.Run(name, func(t *testing.T) {
				dir := filepath.Join(root, fmt.Sprintf("row-%s-%d", strings.ReplaceAll(g, " ", "-"), i))
				if err := os.Mkdir(dir, 0o755); err != nil {
					t.Fatal(err)
				}
				for p, content := range row.pre {
					if strings.HasSuffix(p, "/") {
						p += "keep"
						if err := os.MkdirAll(filepath.Join(dir, filepath.Dir(p)), 0o755); err != nil {
							t.Fatal(err)
						}
					}
					if err := os.WriteFile(filepath.Join(dir, p), []byte(content), 0o644); err != nil {
						t.Fatal(err)
					}
				}
				before := folderState(t, dir)
				var args, outs []string
				for _, a := range row.args {
					switch {
					case strings.HasPrefix(a, "@out"):
						a = filepath.Join(dir, strings.TrimPrefix(a, "@"))
						outs = append(outs, a)
					case strings.HasPrefix(a, "@"):
						p, ok := fix[a[1:]]
						if !ok {
							t.Fatalf("row uses unknown fixture %s", a)
						}
						a = p
					}
					args = append(args, a)
				}
				r := runBin(t, dir, args...)
				msg := strings.TrimSuffix(r.stderr, "\n")
				t.Logf("status %d: %s", r.status, msg)
				if r.status != 2 {
					t.Errorf("exit status %d, want 2; stderr: %q", r.status, r.stderr)
				}
				if msg == "" || strings.Contains(msg, "\n") {
					t.Errorf("want exactly one line on stderr, got %q", r.stderr)
				}
				if !strings.HasPrefix(msg, "tidemark") {
					t.Errorf("stderr line does not start with tidemark: %q", msg)
				}
				if !strings.Contains(msg, row.want) {
					t.Errorf("stderr %q does not contain %q", msg, row.want)
				}
				if stackTrace.MatchString(r.stderr + r.stdout) {
					t.Errorf("output looks like a stack trace:\nstdout: %s\nstderr: %s", r.stdout, r.stderr)
				}
				for _, o := range outs {
					rel := strings.TrimPrefix(o, dir+string(filepath.Separator))
					if _, isPre := row.pre[rel]; isPre {
						continue
					}
					if _, isPre := row.pre[rel+"/"]; isPre {
						continue
					}
					if _, err := os.Lstat(o); err == nil {
						t.Errorf("output %s was created", o)
					}
				}
				if after := folderState(t, dir); after != before {
					t.Errorf("the row's folder changed:\nbefore:\n%s\nafter:\n%s", before, after)
				}
				if after := folderState(t, fixDir); after != fixState {
					t.Fatalf("the fixtures changed:\nbefore:\n%s\nafter:\n%s", fixState, after)
				}
			})
		}
	}
	t.Logf("%d bad inputs over %d commands", n, len(listed))
}
