package main

import (
	"archive/zip"
	"bufio"
	"encoding/binary"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/spf13/cobra"

	"tidemark/checkpoints"
	"tidemark/cmd/internal/progress"
	"tidemark/data"
	"tidemark/data/safefile"
	"tidemark/model"
)

func init() { commands = append(commands, newScoreCmd) }

type scoreOptions struct {
	out     string
	at      string
	last    bool
	threads int
	force   bool
	quiet   bool
}

func newScoreCmd() *cobra.Command {
	var o scoreOptions
	c := &cobra.Command{
		Use:   "score MODEL.ckpt DATA.npz -o SCORES.npz|SCORES.csv",
		Short: "Write the model's log-likelihood of every snapshot of a dataset",
		Long: `score writes log p(x|λ) in nats (natural log) of every snapshot of DATA under the
model, each at its own parameters λ, or with --at at one given λ for all of them
(then DATA may be unlabelled). The output format follows the extension: .npz
holds the arrays "logp" (M) and "params" (M × d, the λ used); .csv has a header
line and one row per snapshot: index, the parameters, logp.

DATA must match the model: the same number of sites, alphabet, lattice and
parameter names. Scoring at a λ outside the range the model was trained on
(printed by "tidemark inspect MODEL.ckpt") extrapolates and may mislead.`,
		Example: `  tidemark score film.ckpt film.npz -o scores.npz
  tidemark score film.ckpt film.npz --at "T=2.5" -o at25.csv`,
		Args: cobra.ExactArgs(2),
		RunE: func(cmd *cobra.Command, args []string) error {
			return runScore(cmd, args[0], args[1], &o)
		},
	}
	f := c.Flags()
	f.StringVarP(&o.out, "output", "o", "", "output file: .npz (arrays logp, params) or .csv")
	f.StringVar(&o.at, "at", "", `score every snapshot at this parameter point, e.g. "T=2.5" or "T=2.3,h=0.1"`)
	f.BoolVar(&o.last, "last", false, "use the weights of the last epoch instead of the best")
	f.IntVar(&o.threads, "threads", 0, "goroutines (0: number of CPUs); results do not depend on it")
	f.BoolVar(&o.force, "force", false, "overwrite the output file if it exists")
	f.BoolVar(&o.quiet, "quiet", false, "draw no progress bar")
	return c
}

// parseAt parses --at into a λ in the order of names: every name exactly once.
func parseAt(s string, names []string) ([]float64, error) {
	spec, err := data.ParseGridSpec(s)
	if err != nil {
		return nil, fmt.Errorf("--at: %w", err)
	}
	lam := make([]float64, len(names))
	got := map[string]bool{}
	for _, ax := range spec.Axes {
		i := slices.Index(names, ax.Name)
		if i < 0 {
			return nil, fmt.Errorf("--at %q: expected the model's parameters %q, found %q", s, names, ax.Name)
		}
		if len(ax.Values) != 1 {
			return nil, fmt.Errorf("--at %q: expected one value of %s, found %d", s, ax.Name, len(ax.Values))
		}
		lam[i] = ax.Values[0]
		got[ax.Name] = true
	}
	for _, n := range names {
		if !got[n] {
			return nil, fmt.Errorf("--at %q: expected a value for every parameter %q, %s is missing", s, names, n)
		}
	}
	return lam, nil
}

func runScore(cmd *cobra.Command, ckPath, dataPath string, o *scoreOptions) error {
	if o.out == "" {
		return errors.New("score: expected an output file (-o SCORES.npz or SCORES.csv), found none")
	}
	ext := strings.ToLower(filepath.Ext(o.out))
	if ext != ".npz" && ext != ".csv" {
		return fmt.Errorf("score: expected an output file ending in .npz or .csv, found %q", o.out)
	}
	if err := checkOutput(o.out, o.force); err != nil {
		return err
	}
	ck, err := checkpoints.Load(ckPath)
	if err != nil {
		return err
	}
	names := ck.Header.ParamNames
	var at []float64
	if o.at != "" {
		if at, err = parseAt(o.at, names); err != nil {
			return err
		}
	}
	ds, err := data.ReadWith(dataPath, data.ReadOptions{Unlabelled: at != nil})
	if err != nil {
		return err
	}
	chk := ds
	if ds.D == 0 {
		// Unlabelled data scored at --at: check everything but the names.
		c := *ds
		c.Meta.ParamNames = names
		chk = &c
	}
	if err := ck.CheckDataset(chk); err != nil {
		return fmt.Errorf("score: %s and %s: %w", ckPath, dataPath, err)
	}
	if ck.Header.BestEpoch == 0 {
		fmt.Fprintf(cmd.ErrOrStderr(), "tidemark: note: %s has no completed epoch; its weights are the untrained initial ones\n", ckPath)
	}
	m, err := ck.Model()
	if o.last {
		m, err = ck.LastModel()
	}
	if err != nil {
		return fmt.Errorf("%s: %w", ckPath, err)
	}
	bar := progress.New(ds.M, "score", o.quiet)
	logp, params, err := scoreDataset(m, ds, at, threadsOrDefault(o.threads), bar.Func())
	bar.Done()
	if err != nil {
		return fmt.Errorf("score: %w", err)
	}
	d := len(names)
	if ext == ".csv" {
		err = safefile.Write(o.out, o.force, func(w io.Writer) error { return writeScoresCSV(w, names, logp, params) })
	} else {
		err = safefile.Write(o.out, o.force, func(w io.Writer) error { return writeScoresNPZ(w, logp, params, d, names, ckPath, dataPath) })
	}
	if err != nil {
		return err
	}
	mean := 0.0
	for _, v := range logp {
		mean += v
	}
	mean /= float64(len(logp))
	fmt.Fprintf(cmd.OutOrStdout(), "wrote %s: log p of %d snapshots, mean %.4f nats (%.5f bits per site)\n", o.out, len(logp), mean, -mean/float64(ds.N)/math.Ln2)
	return nil
}

// scoreDataset returns log p(x_m|λ_m) of every snapshot and the λ used
// (row-major M × d), each at its own λ or all at at.
func scoreDataset(m *model.Model, ds *data.Dataset, at []float64, threads int, progress func(int)) ([]float64, []float64, error) {
	d := m.Cfg.ParamDim
	N := ds.N
	logp := make([]float64, ds.M)
	params := make([]float64, ds.M*d)
	type job struct {
		rows   []int
		lambda []float64
	}
	var jobs []job
	if at != nil {
		const chunk = 1024
		for lo := 0; lo < ds.M; lo += chunk {
			rows := make([]int, 0, chunk)
			for i := lo; i < min(lo+chunk, ds.M); i++ {
				rows = append(rows, i)
			}
			jobs = append(jobs, job{rows, at})
		}
	} else {
		g := data.NewGrid(ds)
		for k, idx := range g.Index {
			jobs = append(jobs, job{idx, g.Points[k]})
		}
	}
	errs := make([]error, len(jobs))
	next := make(chan int)
	var wg sync.WaitGroup
	for t := 0; t < max(threads, 1); t++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for j := range next {
				jb := jobs[j]
				xs := make([]uint8, 0, len(jb.rows)*N)
				for _, r := range jb.rows {
					xs = append(xs, ds.Row(r)...)
				}
				lp := make([]float64, len(jb.rows))
				if err := m.LogProb(lp, xs, jb.lambda); err != nil {
					errs[j] = err
					continue
				}
				for i, r := range jb.rows {
					logp[r] = lp[i]
					copy(params[r*d:(r+1)*d], jb.lambda)
				}
				if progress != nil {
					progress(len(jb.rows))
				}
			}
		}()
	}
	for j := range jobs {
		next <- j
	}
	close(next)
	wg.Wait()
	for _, err := range errs {
		if err != nil {
			return nil, nil, err
		}
	}
	return logp, params, nil
}

func writeScoresCSV(w io.Writer, names []string, logp, params []float64) error {
	bw := bufio.NewWriter(w)
	d := len(names)
	fmt.Fprintf(bw, "index,%s,logp\n", strings.Join(names, ","))
	for i, v := range logp {
		bw.WriteString(strconv.Itoa(i))
		for _, p := range params[i*d : (i+1)*d] {
			bw.WriteByte(',')
			bw.WriteString(strconv.FormatFloat(p, 'g', -1, 64))
		}
		bw.WriteByte(',')
		bw.WriteString(strconv.FormatFloat(v, 'g', -1, 64))
		bw.WriteByte('\n')
	}
	return bw.Flush()
}

func writeScoresNPZ(w io.Writer, logp, params []float64, d int, names []string, ckPath, dataPath string) error {
	meta, err := json.Marshal(map[string]any{"param_names": names, "checkpoint": ckPath, "data": dataPath, "units": "nats", "software_version": version})
	if err != nil {
		return err
	}
	zw := zip.NewWriter(w)
	put := func(name, descr string, shape []int, body []byte) error {
		f, err := zw.CreateHeader(&zip.FileHeader{Name: name + ".npy", Method: zip.Deflate, Modified: time.Now()})
		if err != nil {
			return err
		}
		if _, err := f.Write(exportNPYHeader(descr, shape)); err != nil {
			return err
		}
		_, err = f.Write(body)
		return err
	}
	f64 := func(v []float64) []byte {
		b := make([]byte, 0, 8*len(v))
		for _, x := range v {
			b = binary.LittleEndian.AppendUint64(b, math.Float64bits(x))
		}
		return b
	}
	if err := put("logp", "<f8", []int{len(logp)}, f64(logp)); err != nil {
		return err
	}
	if err := put("params", "<f8", []int{len(logp), d}, f64(params)); err != nil {
		return err
	}
	if err := put("meta", "|u1", []int{len(meta)}, meta); err != nil {
		return err
	}
	return zw.Close()
}
