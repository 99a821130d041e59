package report

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"sort"
	"strconv"

	"tidemark/indicator"
)

// ErrNotEmpty is returned (wrapped) when the output folder exists, is not
// empty and force is false.
var ErrNotEmpty = errors.New("exists and is not empty (use --force to replace it)")

// CheckDir refuses an existing non-empty folder (or an existing file) at
// path unless force is set, and a missing parent folder. Commands call it
// before long work.
func CheckDir(path string, force bool) error {
	if path == "" {
		return errors.New("output folder path is empty")
	}
	st, err := os.Stat(path)
	if err == nil {
		if !st.IsDir() {
			if !force {
				return fmt.Errorf("%s: exists and is a file, expected a folder (use --force to replace it)", path)
			}
		} else if !force {
			ents, err := os.ReadDir(path)
			if err != nil {
				return fmt.Errorf("%s: %w", path, err)
			}
			if len(ents) > 0 {
				return fmt.Errorf("%s: %w", path, ErrNotEmpty)
			}
		}
	}
	parent := filepath.Dir(filepath.Clean(path))
	pst, err := os.Stat(parent)
	if err != nil {
		return fmt.Errorf("%s: parent folder %s: %w", path, parent, err)
	}
	if !pst.IsDir() {
		return fmt.Errorf("%s: %s is not a folder", path, parent)
	}
	return nil
}

// Info describes the scan for summary.json.
type Info struct {
	// Source is "model", "exact" or "histogram".
	Source string
	// Data is the dataset path (for the record).
	Data string
	// Models are the checkpoint paths of model sources.
	Models []string
	// Refine is the refinement factor.
	Refine int
	// Seed is the scan's seed.
	Seed uint64
	// Page adds the dataset, model and exact-check sections of report.html
	// (inputs.Page builds them from the files named by Data and Models);
	// nil means none.
	Page *Page
}

// Write writes the scan folder at dir: indicators.csv, summary.json,
// pictures and report.html (see HTML). It builds everything in a temporary folder next to dir and
// renames it into place; an existing non-empty dir is replaced only with
// force. It returns the summary it wrote.
func Write(dir string, force bool, res *indicator.Result, info Info) (*Summary, error) {
	if err := CheckDir(dir, force); err != nil {
		return nil, err
	}
	clean := filepath.Clean(dir)
	parent := filepath.Dir(clean)
	tmp, err := os.MkdirTemp(parent, "."+filepath.Base(clean)+".tmp-*")
	if err != nil {
		return nil, fmt.Errorf("%s: cannot create temporary folder: %w", dir, err)
	}
	ok := false
	defer func() {
		if !ok {
			os.RemoveAll(tmp)
		}
	}()
	files := map[string][]byte{}
	files["indicators.csv"], err = CSV(res.Curves, res.Names)
	if err != nil {
		return nil, err
	}
	for i, z := range res.Zoom {
		files[fmt.Sprintf("zoom-%d.csv", i+1)], err = CSV(z.Curves, res.Names)
		if err != nil {
			return nil, err
		}
	}
	pics, err := Pictures(res)
	if err != nil {
		return nil, err
	}
	for n, b := range pics {
		files[n] = b
	}
	var names []string
	for n := range files {
		names = append(names, n)
	}
	names = append(names, "summary.json", "report.html")
	sort.Strings(names)
	pg := info.Page
	if pg == nil {
		pg = &Page{}
	}
	sum := NewSummary(res, info)
	sum.Files = names
	if pg.Dataset != nil {
		sum.Lattice = pg.Dataset.Lattice
	}
	js, err := json.MarshalIndent(sum, "", "  ")
	if err != nil {
		return nil, fmt.Errorf("summary.json: %w", err)
	}
	files["summary.json"] = append(js, '\n')
	if files["report.html"], err = HTML(res, sum, pics, pg); err != nil {
		return nil, err
	}
	for _, n := range names {
		if err := WriteSynced(filepath.Join(tmp, n), files[n]); err != nil {
			return nil, fmt.Errorf("%s: %w", dir, err)
		}
	}
	if err := Install(tmp, clean); err != nil {
		return nil, err
	}
	ok = true
	return sum, nil
}

// WriteSynced writes b to the new file path (it must not exist) and
// syncs it to disk before closing it.
func WriteSynced(path string, b []byte) error {
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
	if err != nil {
		return err
	}
	if _, err := f.Write(b); err != nil {
		f.Close()
		return err
	}
	if err := f.Sync(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

func fmtF(v float64) string {
	if math.IsNaN(v) {
		return ""
	}
	return strconv.FormatFloat(v, 'g', 10, 64)
}

// CSV returns the table of curves: the parameter columns, then <name> and
// <name>_err for each curve. There is one row per position, at the union of
// all curves' positions (grid points and the midpoints between neighbours),
// sorted; a cell is empty where a curve has no value.
func CSV(curves []*indicator.Curve, names []string) ([]byte, error) {
	type row struct {
		p    []float64
		vals map[int][2]float64
	}
	rows := map[string]*row{}
	key := func(p []float64) string {
		b := make([]byte, 0, 16*len(p))
		for _, v := range p {
			b = strconv.AppendUint(b, math.Float64bits(v), 16)
			b = append(b, ',')
		}
		return string(b)
	}
	for c, cv := range curves {
		for t, p := range cv.Pos {
			k := key(p)
			r := rows[k]
			if r == nil {
				r = &row{p: p, vals: map[int][2]float64{}}
				rows[k] = r
			}
			r.vals[c] = [2]float64{cv.Val[t], cv.Err[t]}
		}
	}
	list := make([]*row, 0, len(rows))
	for _, r := range rows {
		list = append(list, r)
	}
	sort.Slice(list, func(i, j int) bool {
		a, b := list[i].p, list[j].p
		for d := range a {
			if a[d] != b[d] {
				return a[d] < b[d]
			}
		}
		return false
	})
	var buf bytes.Buffer
	w := csv.NewWriter(&buf)
	head := append([]string(nil), names...)
	for _, cv := range curves {
		head = append(head, cv.Name, cv.Name+"_err")
	}
	w.Write(head)
	for _, r := range list {
		rec := make([]string, 0, len(head))
		for _, v := range r.p {
			rec = append(rec, fmtF(v))
		}
		for c := range curves {
			if v, ok := r.vals[c]; ok {
				rec = append(rec, fmtF(v[0]), fmtF(v[1]))
			} else {
				rec = append(rec, "", "")
			}
		}
		w.Write(rec)
	}
	w.Flush()
	if err := w.Error(); err != nil {
		return nil, fmt.Errorf("indicators.csv: %w", err)
	}
	return buf.Bytes(), nil
}
