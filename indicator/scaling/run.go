package scaling

import (
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strings"

	"tidemark/indicator/report"
)

// ErrInput marks bad input to Run (too few sizes, scans that do not fit
// together, a scan without peaks); commands report it as one line.
var ErrInput = errors.New("bad input")

// Options configures Run.
type Options struct {
	// Fit chooses the scaling form and the bootstrap.
	Fit FitOptions
	// Sizes overrides the linear sizes taken from the scans' lattices
	// (one per scan, in order); nil uses the lattices.
	Sizes []float64
	// CurvePeaks re-locates every peak from its scan's curve in
	// indicators.csv with CurvePeak, where the curve has errors (the
	// scans' own peaks otherwise).
	CurvePeaks bool
}

// Scan is one scan folder's contribution.
type Scan struct {
	// Dir is the folder as given; Source is "exact", "model" or "histogram".
	Dir, Source string
	// Param is the scanned parameter; Size the linear size.
	Param string
	Size  float64
	// Lattice is the lattice recorded by the scan (nil for old scans).
	Lattice []int
	// Peaks maps an indicator to its main peak in this scan.
	Peaks map[string]Point
	// Curve lists the indicators whose peak CurvePeak re-located.
	Curve []string
}

// Estimate is one indicator's extrapolation, as written in summary.json.
type Estimate struct {
	Indicator string  `json:"indicator"`
	Param     string  `json:"param"`
	Value     float64 `json:"value"`
	Err       float64 `json:"err"`
	Nu        float64 `json:"nu"`
	NuErr     float64 `json:"nu_err,omitempty"`
	NuFitted  bool    `json:"nu_fitted"`
	Omega     float64 `json:"omega,omitempty"`
	// Corrections is the number of correction terms and Bs their amplitudes.
	Corrections int       `json:"corrections"`
	A           float64   `json:"a"`
	B           float64   `json:"b,omitempty"`
	Bs          []float64 `json:"bs,omitempty"`
	Sizes       []float64 `json:"sizes"`
	Peaks       []float64 `json:"peaks"`
	PeakErrs    []float64 `json:"peak_errs"`
	Chi2        float64   `json:"chi2"`
	Dof         int       `json:"dof"`
	Chi2Dof     float64   `json:"chi2_per_dof"`
	CovErr      float64   `json:"err_covariance"`
	BootErr     float64   `json:"err_bootstrap"`
	Drift       float64   `json:"err_drift"`
	// Stat and Syst are the statistical and systematic parts of Err;
	// FormShift is the change made by the last correction term.
	Stat      float64 `json:"err_statistical"`
	Syst      float64 `json:"err_systematic"`
	FormShift float64 `json:"err_form_shift"`
	// SystKnown says whether the systematic error could be measured.
	SystKnown bool `json:"syst_estimated"`
	Weighted  bool `json:"weighted"`
	// Forms are the candidate forms of an automatic choice.
	Forms []Form `json:"forms,omitempty"`

	fit *Fit
}

// CombinedEstimate is the merged λ_c of all indicators in summary.json.
type CombinedEstimate struct {
	Param      string   `json:"param"`
	Value      float64  `json:"value"`
	Err        float64  `json:"err"`
	Method     string   `json:"method"`
	Indicators []string `json:"indicators"`
	Chi2       float64  `json:"chi2"`
	Dof        int      `json:"dof"`
	PValue     float64  `json:"p_value"`
	Agree      bool     `json:"agree"`
}

// ScanEntry records one input scan in summary.json.
type ScanEntry struct {
	Dir    string `json:"dir"`
	Source string `json:"source"`
	// Curve lists the indicators whose peak was re-located from the curve.
	Curve   []string `json:"curve_peaks,omitempty"`
	Size    float64  `json:"size"`
	Lattice []int    `json:"lattice,omitempty"`
}

// Result is the extrapolation of a set of scans; it is what summary.json holds.
type Result struct {
	Param     string           `json:"param"`
	Form      string           `json:"form"`
	Peaks     string           `json:"peaks"`
	Bootstrap int              `json:"bootstrap"`
	Seed      uint64           `json:"seed"`
	Scans     []ScanEntry      `json:"scans"`
	Estimates []Estimate       `json:"estimates"`
	Combined  CombinedEstimate `json:"combined"`
	Notes     []string         `json:"notes,omitempty"`
	Files     []string         `json:"files"`

	scans []*Scan
}

// LinearSize returns the linear size of a lattice: the length of a chain
// or the side of a square (or cubic) lattice; 0 for other shapes.
func LinearSize(lattice []int) int {
	if len(lattice) == 0 {
		return 0
	}
	for _, l := range lattice[1:] {
		if l != lattice[0] {
			return 0
		}
	}
	return lattice[0]
}

// ReadScan reads dir/summary.json of a 1-D scan and keeps, per indicator,
// its highest peak, refined by the zoom pass when the scan made one.
func ReadScan(dir string) (*Scan, error) { return readScan(dir, false, 0) }

// readScan is ReadScan, re-locating the peaks from the curves with curve.
func readScan(dir string, curve bool, seed uint64) (*Scan, error) {
	path := filepath.Join(dir, "summary.json")
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("%w: %s: expected a scan folder holding summary.json: %w", ErrInput, dir, err)
	}
	var s report.Summary
	if err := json.Unmarshal(b, &s); err != nil {
		return nil, fmt.Errorf("%w: %s: expected the JSON summary of a scan: %w", ErrInput, path, err)
	}
	if len(s.Params) != 1 {
		return nil, fmt.Errorf("%w: %s: expected a scan along one parameter, found %d (%s)", ErrInput, path, len(s.Params), strings.Join(s.Params, ", "))
	}
	sc := &Scan{Dir: dir, Source: s.Source, Param: s.Params[0], Lattice: s.Lattice, Size: float64(LinearSize(s.Lattice)), Peaks: map[string]Point{}}
	for name, is := range s.Indicators {
		best := -1
		for i, p := range is.Peaks {
			if len(p.At) != 1 || len(p.Err) != 1 {
				return nil, fmt.Errorf("%w: %s: indicator %s: expected peaks with one coordinate, found %d", ErrInput, path, name, len(p.At))
			}
			if best < 0 || p.Height > is.Peaks[best].Height {
				best = i
			}
		}
		if best < 0 {
			continue
		}
		pk := Point{Size: sc.Size, At: is.Peaks[best].At[0], Err: is.Peaks[best].Err[0]}
		for _, z := range s.Zoom {
			zi, ok := z.Indicators[name]
			if !ok || !(z.From <= pk.At && pk.At <= z.To) {
				continue
			}
			for _, p := range zi.Peaks {
				if len(p.At) == 1 && len(p.Err) == 1 && math.Abs(p.At[0]-pk.At) <= math.Max(3*pk.Err, (z.To-z.From)/2) {
					pk.At, pk.Err = p.At[0], p.Err[0]
					break
				}
			}
		}
		if curve {
			x, y, e, err := readCurve(dir, sc.Param, name)
			if at, er, _, ok := CurvePeak(x, y, e, 400, seed); err == nil && ok {
				pk.At, pk.Err = at, er
				sc.Curve = append(sc.Curve, name)
			}
		}
		sc.Peaks[name] = pk
	}
	sort.Strings(sc.Curve)
	if len(sc.Peaks) == 0 {
		return nil, fmt.Errorf("%w: %s: expected at least one indicator peak, found none (rescan over a wider range or with more points)", ErrInput, path)
	}
	return sc, nil
}

// Run reads the scans in dirs and extrapolates every indicator that has a
// peak in enough of them.
func Run(dirs []string, opt Options) (*Result, error) {
	if opt.Sizes != nil && len(opt.Sizes) != len(dirs) {
		return nil, fmt.Errorf("%w: --sizes: expected one size per scan (%d), found %d", ErrInput, len(dirs), len(opt.Sizes))
	}
	res := &Result{Form: describeForm(opt.Fit), Bootstrap: opt.Fit.Bootstrap, Seed: opt.Fit.Seed, Peaks: "the scans' highest peaks"}
	if opt.CurvePeaks {
		res.Peaks = "a weighted parabola through the top of each curve that has errors (the points above 70% of its height over the minimum, at least 5), its error from a bootstrap of the curve; the scan's highest peak otherwise"
	}
	for i, d := range dirs {
		sc, err := readScan(d, opt.CurvePeaks, opt.Fit.Seed+uint64(i))
		if err != nil {
			return nil, err
		}
		if opt.Sizes != nil {
			sc.Size = opt.Sizes[i]
			for k, p := range sc.Peaks {
				p.Size = sc.Size
				sc.Peaks[k] = p
			}
		}
		if !(sc.Size > 0) {
			if sc.Lattice == nil {
				return nil, fmt.Errorf("%w: %s: the scan records no lattice (an older scan, or its dataset could not be read): expected --sizes", ErrInput, d)
			}
			return nil, fmt.Errorf("%w: %s: expected a chain or a square lattice to take the linear size from, found %v: give --sizes", ErrInput, d, sc.Lattice)
		}
		if len(res.scans) > 0 && sc.Param != res.Param {
			return nil, fmt.Errorf("%w: %s: expected the parameter %s as in %s, found %s", ErrInput, d, res.Param, res.scans[0].Dir, sc.Param)
		}
		res.Param = sc.Param
		res.scans = append(res.scans, sc)
		res.Scans = append(res.Scans, ScanEntry{Dir: d, Source: sc.Source, Size: sc.Size, Lattice: sc.Lattice, Curve: sc.Curve})
	}
	distinct := map[float64]bool{}
	for _, sc := range res.scans {
		distinct[sc.Size] = true
	}
	if len(distinct) < 3 {
		return nil, fmt.Errorf("%w: expected scans of at least 3 different sizes, found %d (%s)", ErrInput, len(distinct), sizeList(res.scans))
	}
	if need := MinSizes(opt.Fit); len(distinct) < need {
		hint := ""
		if opt.Fit.Nu == 0 {
			hint = "; give ν with --nu"
		}
		return nil, fmt.Errorf("%w: expected at least %d different sizes for %s, found %d (%s)%s", ErrInput, need, describeForm(opt.Fit), len(distinct), sizeList(res.scans), hint)
	}
	var names []string
	for _, sc := range res.scans {
		for n := range sc.Peaks {
			if !contains(names, n) {
				names = append(names, n)
			}
		}
	}
	sort.Strings(names)
	var vals, errs []float64
	var used []string
	for k, name := range names {
		var pts []Point
		var missing []string
		for _, sc := range res.scans {
			if p, ok := sc.Peaks[name]; ok {
				pts = append(pts, p)
			} else {
				missing = append(missing, sc.Dir)
			}
		}
		if len(missing) > 0 {
			res.Notes = append(res.Notes, fmt.Sprintf("%s has no peak in %s", name, strings.Join(missing, ", ")))
		}
		fo := opt.Fit
		fo.Seed = opt.Fit.Seed + uint64(k)
		f, err := FitPeaks(pts, fo)
		if err != nil {
			res.Notes = append(res.Notes, fmt.Sprintf("%s not extrapolated: %v", name, err))
			continue
		}
		e := Estimate{
			Indicator: name, Param: res.Param, Value: f.Value, Err: f.Err, Nu: f.Nu, NuErr: f.NuErr, NuFitted: f.NuFitted,
			Omega: f.Omega, Corrections: f.Corrections, A: f.A, B: f.B, Bs: f.Bs, Chi2: f.Chi2, Dof: f.Dof, Chi2Dof: f.Chi2 / float64(f.Dof),
			CovErr: f.CovErr, BootErr: f.BootErr, Drift: f.Drift, Stat: f.Stat, Syst: f.Syst, FormShift: f.FormShift, SystKnown: f.SystKnown,
			Weighted: f.Weighted, Forms: f.Forms, fit: f,
		}
		for _, p := range pts {
			e.Sizes = append(e.Sizes, p.Size)
			e.Peaks = append(e.Peaks, p.At)
			e.PeakErrs = append(e.PeakErrs, p.Err)
		}
		res.Estimates = append(res.Estimates, e)
	}
	// An estimate whose systematic error could not be measured (a peak at
	// too few sizes to spare one) has an error that is too small, and would
	// outweigh the others in the mean: it joins only when none has one.
	anyKnown := false
	for _, e := range res.Estimates {
		anyKnown = anyKnown || (e.SystKnown && e.Err > 0)
	}
	for _, e := range res.Estimates {
		switch {
		case !(e.Err > 0):
		case anyKnown && !e.SystKnown:
			res.Notes = append(res.Notes, fmt.Sprintf("%s is not combined: its peaks at %d sizes leave none to spare for a systematic error", e.Indicator, len(e.Sizes)))
		default:
			vals, errs = append(vals, e.Value), append(errs, e.Err)
			used = append(used, e.Indicator)
		}
	}
	if len(res.Estimates) == 0 {
		return nil, fmt.Errorf("%w: no indicator could be extrapolated (%s)", ErrInput, strings.Join(res.Notes, "; "))
	}
	res.Combined = CombinedEstimate{Param: res.Param, Indicators: used}
	if len(vals) > 0 {
		c := Combine(vals, errs)
		res.Combined.Value, res.Combined.Err = c.Value, c.Err
		res.Combined.Chi2, res.Combined.Dof, res.Combined.PValue, res.Combined.Agree = c.Chi2, c.Dof, c.PValue, c.Agree
		m := "inverse-variance weighted mean of the indicators' estimates"
		if c.Inflated {
			m += "; error multiplied by √(χ²/dof) because they scatter more than their errors"
		}
		if c.Floored {
			m += "; error raised to the smallest single error, because estimates from the same snapshots are correlated"
		}
		m += fmt.Sprintf("; they agree within their errors when the χ² p-value is at least %g", AgreeLevel)
		res.Combined.Method = m
	} else {
		res.Combined.Method = "none: no estimate has an error"
	}
	return res, nil
}

func sizeList(scans []*Scan) string {
	s := make([]string, len(scans))
	for i, sc := range scans {
		s[i] = fmt.Sprintf("L=%g", sc.Size)
	}
	return strings.Join(s, ", ")
}

func contains(s []string, x string) bool {
	for _, v := range s {
		if v == x {
			return true
		}
	}
	return false
}

// WriteText prints one line per indicator's estimate, the combined
// estimate with whether the indicators agree, and the notes.
func (r *Result) WriteText(w io.Writer) {
	for _, e := range r.Estimates {
		nu := fmt.Sprintf("ν = %.4g", e.Nu)
		if e.NuFitted {
			nu = fmt.Sprintf("ν = %.3g ± %.2g (fitted)", e.Nu, e.NuErr)
		}
		fmt.Fprintf(w, "  %-14s %s_c = %.6g ± %.2g (stat %.2g, syst %.2g)   %s, %d corr., χ²/dof = %.2f, %d sizes\n",
			e.Indicator, e.Param, e.Value, e.Err, e.Stat, e.Syst, nu, e.Corrections, e.Chi2Dof, len(e.Sizes))
	}
	c := r.Combined
	agree := "the indicators agree within their errors"
	if !c.Agree {
		agree = "the indicators do NOT agree within their errors"
	}
	fmt.Fprintf(w, "combined: %s_c = %.6g ± %.2g (%d indicators; %s, χ² = %.2f for %d dof)\n", c.Param, c.Value, c.Err, len(c.Indicators), agree, c.Chi2, c.Dof)
	for _, n := range r.Notes {
		fmt.Fprintf(w, "note: %s\n", n)
	}
}
