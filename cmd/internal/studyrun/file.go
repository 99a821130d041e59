package studyrun

import (
	"bufio"
	"errors"
	"fmt"
	"os"
	"regexp"
	"strings"

	"github.com/BurntSushi/toml"
)

// ErrStudyFile marks a study file that cannot be read or does not describe
// a study; its message is one line naming the file, the line and the key.
var ErrStudyFile = errors.New("bad study file")

// SystemKind says where a study's snapshots come from.
type SystemKind string

// The kinds of system.
const (
	// KindIsing simulates the 2-D Ising model (data/ising).
	KindIsing SystemKind = "ising"
	// KindChain simulates a spin chain's ground state (data/chain).
	KindChain SystemKind = "chain"
	// KindImport reads one dataset file per size.
	KindImport SystemKind = "import"
)

// System is the [system] table: what is simulated or read, at which sizes.
type System struct {
	Kind    SystemKind `toml:"kind"`
	Sizes   []int      `toml:"sizes"`
	Grid    string     `toml:"grid"`
	Samples int        `toml:"samples"`
	Seed    uint64     `toml:"seed"`
	// Ising: the couplings that are not grid axes, and exact sampling.
	Jx           *float64 `toml:"jx"`
	Jy           *float64 `toml:"jy"`
	Field        float64  `toml:"field"`
	Temperature  float64  `toml:"temperature"`
	ExactSamples bool     `toml:"exact_samples"`
	// Chain: the Hamiltonian, measurement basis, sector and solver.
	Hamiltonian string   `toml:"hamiltonian"`
	Basis       string   `toml:"basis"`
	Sector      string   `toml:"sector"`
	Solver      string   `toml:"solver"`
	Datasets    []string `toml:"datasets"` // import: one per size, in the order of Sizes
}

// Model is the [model] table: the training settings that matter and the
// ensemble size.
type Model struct {
	Ensemble int     `toml:"ensemble"`
	Hidden   []int   `toml:"hidden"`
	Arch     string  `toml:"arch"`
	Epochs   int     `toml:"epochs"`
	Batch    int     `toml:"batch"`
	LR       float64 `toml:"lr"`
	Patience int     `toml:"patience"`
	ValFrac  float64 `toml:"val_frac"`
	Augment  string  `toml:"augment"`
	Threads  int     `toml:"threads"`
}

// Scan is the [scan] table.
type Scan struct {
	Bootstrap  *int     `toml:"bootstrap"`
	Indicators []string `toml:"indicators"`
	Window     int      `toml:"window"`
	Threads    int      `toml:"threads"`
	Block      int      `toml:"block"` // snapshots per matrix unit (0: defaultBlock)
}

// Extrapolate is the [extrapolate] table (optional).
type Extrapolate struct {
	Enabled   *bool   `toml:"enabled"`
	Nu        float64 `toml:"nu"`
	Omega     float64 `toml:"omega"`
	Bootstrap *int    `toml:"bootstrap"`
}

// Resources are a Slurm job's limits; empty fields are estimated.
type Resources struct {
	// Time is a Slurm time limit such as "00:30:00".
	Time string `toml:"time"`
	// Mem is a Slurm memory request such as "2G".
	Mem string `toml:"mem"`
	// UnitsPerTask groups this many units into one array task (0: estimated).
	UnitsPerTask int `toml:"units_per_task"`
}

// Slurm is the [slurm] table (optional): where jobs go and, per stage,
// overrides of the estimated limits ([slurm.train] time = "02:00:00").
type Slurm struct {
	Partition string    `toml:"partition"`
	Account   string    `toml:"account"`
	Extra     []string  `toml:"extra"` // lines added to every #SBATCH block ("--qos=short")
	Simulate  Resources `toml:"simulate"`
	Gather    Resources `toml:"gather"`
	Train     Resources `toml:"train"`
	Matrix    Resources `toml:"matrix"`
	ScanRes   Resources `toml:"scan"`
	Finish    Resources `toml:"finish"`
}

// Study is a whole study file.
type Study struct {
	System      System      `toml:"system"`
	Model       Model       `toml:"model"`
	Scan        Scan        `toml:"scan"`
	Extrapolate Extrapolate `toml:"extrapolate"`
	Slurm       Slurm       `toml:"slurm"`

	// path is the file the study was read from.
	path string
}

// requiredSections are the tables every study file has.
var requiredSections = []string{"system", "model", "scan"}

var typeErr = regexp.MustCompile(`^toml: line (\d+) \(last key "([^"]*)"\): incompatible types: TOML value has type ([^;]+); destination has type (.+)$`)

// Load reads and checks the study file at path. Its errors wrap
// ErrStudyFile and are one line: the file, the line, the key and what was
// expected.
func Load(path string) (*Study, error) {
	text, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("%w: %w", ErrStudyFile, err)
	}
	var st Study
	md, err := toml.Decode(string(text), &st)
	if err != nil {
		var pe toml.ParseError
		if errors.As(err, &pe) {
			key := ""
			if pe.LastKey != "" {
				key = fmt.Sprintf(" key %s:", pe.LastKey)
			}
			return nil, fmt.Errorf("%w: %s:%d:%s %s", ErrStudyFile, path, pe.Position.Line, key, oneLine(pe.Message))
		}
		if m := typeErr.FindStringSubmatch(err.Error()); m != nil {
			return nil, fmt.Errorf("%w: %s:%s: key %s: expected %s, found %s", ErrStudyFile, path, m[1], m[2], goTypeWord(m[4]), tomlTypeWord(m[3]))
		}
		return nil, fmt.Errorf("%w: %s: %s", ErrStudyFile, path, oneLine(err.Error()))
	}
	if und := md.Undecoded(); len(und) > 0 {
		k := und[0]
		return nil, fmt.Errorf("%w: %s:%d: unknown key %s (expected the keys described in the README's study-file section)", ErrStudyFile, path, keyLine(string(text), k), k.String())
	}
	for _, s := range requiredSections {
		if !md.IsDefined(s) {
			return nil, fmt.Errorf("%w: %s: missing section [%s] (every study file has [system], [model] and [scan])", ErrStudyFile, path, s)
		}
	}
	st.path = path
	if err := st.check(); err != nil {
		where := path
		if n := keyLine(string(text), err.key); n > 0 {
			where = fmt.Sprintf("%s:%d", path, n)
		}
		return nil, fmt.Errorf("%w: %s: %w", ErrStudyFile, where, err.err)
	}
	return &st, nil
}

// keyErr is a bad value: the key it names and what is wrong.
type keyErr struct {
	key toml.Key
	err error
}

func bad(section, key, format string, args ...any) *keyErr {
	return &keyErr{key: toml.Key{section, key}, err: fmt.Errorf("key %s.%s: "+format, append([]any{section, key}, args...)...)}
}

// keyLine returns the line of the file at which key is set (0 when it
// cannot be found): the line "name = …" under the table header of the
// key's table, or a header "[key]" itself.
func keyLine(text string, key toml.Key) int {
	if len(key) == 0 {
		return 0
	}
	table := ""
	sc := bufio.NewScanner(strings.NewReader(text))
	for n := 1; sc.Scan(); n++ {
		line := strings.TrimSpace(sc.Text())
		if strings.HasPrefix(line, "[") {
			table = strings.Trim(strings.TrimSpace(strings.SplitN(line, "#", 2)[0]), "[] ")
			if table == key.String() {
				return n
			}
			continue
		}
		name, _, ok := strings.Cut(line, "=")
		if !ok {
			continue
		}
		full := strings.TrimSpace(name)
		if table != "" {
			full = table + "." + full
		}
		if full == key.String() || strings.HasPrefix(key.String(), full+".") {
			return n
		}
	}
	return 0
}

func oneLine(s string) string { return strings.Join(strings.Fields(s), " ") }

// tomlTypeWord names the type of a TOML value as the parser reports it.
func tomlTypeWord(t string) string {
	switch t {
	case "int64":
		return "an integer"
	case "float64":
		return "a number with a fraction"
	case "string":
		return "a string"
	case "bool":
		return "true or false"
	}
	if strings.HasPrefix(t, "[]") {
		return "an array"
	}
	if strings.HasPrefix(t, "map") {
		return "a table"
	}
	return t
}

// goTypeWord names a Go destination type in the words of a study file.
func goTypeWord(t string) string {
	switch {
	case strings.Contains(t, "int"):
		return "an integer"
	case strings.Contains(t, "float"):
		return "a number"
	case strings.Contains(t, "bool"):
		return "true or false"
	case strings.Contains(t, "string") || t == "studyrun.SystemKind":
		return "a string"
	case strings.HasPrefix(t, "slice") || strings.HasPrefix(t, "[]"):
		return "an array"
	}
	return t
}
