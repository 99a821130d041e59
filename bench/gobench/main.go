// Command gobench measures the throughput of tidemark's model package on
// one machine: training steps (LossGrad plus an Adam update over all
// weights), scoring with LogProb and with LogProbMatrix at 64 λ, and the
// machine's dense GEMM rate in double and single precision through the BLAS
// the build uses. It prints one JSON object per line; bench/run.sh puts
// them beside the PyTorch peer's figures.
//
// Usage:
//
//	go run ./bench/gobench -shapes 64x256,256x512 -threads 2 -budget 60
package main

import (
	"encoding/json"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"runtime"
	"runtime/pprof"
	"runtime/trace"
	"sort"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"time"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas32"
	"gonum.org/v1/gonum/blas/blas64"

	"tidemark/model"
	"tidemark/train"
)

// result is one measured figure.
type result struct {
	Side      string `json:"side"`
	What      string `json:"what"`
	N         int    `json:"n,omitempty"`
	Rows      int    `json:"rows,omitempty"` // snapshots per LogProbMatrix call
	H         int    `json:"h,omitempty"`
	Precision string `json:"precision,omitempty"`
	Model     string `json:"model,omitempty"` // "additive" (shifts only, the peer's default) or "film"
	// Activation is the model's hidden and conditioning activation.
	Activation string  `json:"activation,omitempty"`
	Rate       float64 `json:"rate"`               // per second of wall time, median
	CPURate    float64 `json:"cpu_rate,omitempty"` // per second of process CPU time (all threads), median
	Unit       string  `json:"unit"`
	GFlops     float64 `json:"gflops,omitempty"`          // dense-equivalent GFLOP/s of a training step
	GFlopsRun  float64 `json:"gflops_executed,omitempty"` // GFLOP/s actually executed (all-zero mask blocks skipped)
	Reps       int     `json:"reps"`
	Threads    int     `json:"threads"`
	BLAS       string  `json:"blas"`
}

func main() {
	shapes := flag.String("shapes", "64x256,256x512,1024x1024", "comma-separated NxH shapes (sites x hidden width)")
	threads := flag.Int("threads", 2, "threads (goroutines) to use")
	budget := flag.Float64("budget", 60, "time budget per shape in seconds (all measurements of one shape together)")
	reps := flag.Int("reps", 5, "repetitions per measurement (the median is reported)")
	precs := flag.String("precision", "float64,float32", "comma-separated precisions to measure")
	gemmN := flag.Int("gemm", 1024, "size of the square GEMM for the machine's rate (0 skips it)")
	only = flag.String("only", "", "measure only this figure (train, logprob or logprobmatrix64)")
	chunksFlag = flag.Int("chunks", 0, "graphs the training batch is split over (0 = one per thread)")
	matRows := flag.Int("matrows", 256, "snapshots scored at 64 λ by LogProbMatrix")
	cpuprof := flag.String("cpuprofile", "", "write a CPU profile to this file")
	traceOut := flag.String("trace", "", "write an execution trace to this file (go tool trace; shows threads waiting)")
	flag.IntVar(&grid, "grid", 0, "draw each training snapshot's λ from this many evenly spaced grid points in [0, 1], as datasets are (0: a continuous λ per snapshot)")
	flag.BoolVar(&film, "film", false, "FiLM conditioning (the trainer's default model; the peer's with --film) instead of shifts only")
	flag.StringVar(&activation, "activation", defaultActivation, "activation of the hidden layers and the conditioning net (default: train's); the peer's with --activation")
	blasCore := flag.Bool("blascore", false, "print the OpenBLAS kernels in use (model.BLASCore) and exit")
	flag.Parse()
	if grid == 1 || grid < 0 {
		fmt.Fprintf(os.Stderr, "gobench: -grid must be 0 (continuous λ) or at least 2 grid points, found %d\n", grid)
		os.Exit(2)
	}
	if *blasCore {
		fmt.Println(model.BLASCore())
		return
	}
	if *traceOut != "" {
		f, err := os.Create(*traceOut)
		if err == nil {
			err = trace.Start(f)
		}
		if err != nil {
			fmt.Fprintln(os.Stderr, "gobench:", err)
			os.Exit(1)
		}
		defer trace.Stop()
	}
	if *cpuprof != "" {
		f, err := os.Create(*cpuprof)
		if err == nil {
			err = pprof.StartCPUProfile(f)
		}
		if err != nil {
			fmt.Fprintln(os.Stderr, "gobench:", err)
			os.Exit(1)
		}
		defer pprof.StopCPUProfile()
	}
	runtime.GOMAXPROCS(*threads)
	enc := json.NewEncoder(os.Stdout)
	emit := func(r result) {
		r.Side, r.Threads, r.BLAS = "ours", *threads, model.BLAS
		if r.What != "gemm" {
			r.Model = "additive"
			if film {
				r.Model = "film"
			}
			r.Activation = activation
		}
		if c := model.BLASCore(); c != "" {
			r.BLAS += ", " + c
		}
		if err := enc.Encode(r); err != nil {
			fmt.Fprintln(os.Stderr, "gobench:", err)
			os.Exit(1)
		}
	}
	if *gemmN > 0 {
		for _, p := range []string{"float64", "float32"} {
			emit(result{What: "gemm", N: *gemmN, Precision: p, Rate: gemmRate(*gemmN, p, *reps), Unit: "GFLOP/s", Reps: *reps})
		}
	}
	for _, s := range strings.Split(*shapes, ",") {
		if strings.TrimSpace(s) == "" {
			continue
		}
		n, h, err := parseShape(s)
		if err != nil {
			fmt.Fprintln(os.Stderr, "gobench:", err)
			pprof.StopCPUProfile()
			os.Exit(2)
		}
		ps := strings.Split(*precs, ",")
		per := time.Duration(*budget / float64(len(ps)) * float64(time.Second))
		for _, p := range ps {
			for _, r := range measureShape(n, h, p, *threads, *reps, *matRows, per) {
				emit(r)
			}
		}
	}
}

func parseShape(s string) (int, int, error) {
	a, b, ok := strings.Cut(strings.TrimSpace(s), "x")
	n, e1 := strconv.Atoi(a)
	h, e2 := strconv.Atoi(b)
	if !ok || e1 != nil || e2 != nil || n < 2 || h < 1 {
		return 0, 0, fmt.Errorf("shape must be NxH with N ≥ 2 and H ≥ 1 (e.g. 256x512), found %q", s)
	}
	return n, h, nil
}

// gemmRate is the median GFLOP/s of an n×n×n GEMM (2n³ flops).
func gemmRate(n int, prec string, reps int) float64 {
	rng := rand.New(rand.NewPCG(1, 2))
	var rates []float64
	if prec == "float32" {
		a := make([]float32, n*n)
		for i := range a {
			a[i] = float32(rng.NormFloat64())
		}
		g := blas32.General{Rows: n, Cols: n, Stride: n, Data: a}
		c := blas32.General{Rows: n, Cols: n, Stride: n, Data: make([]float32, n*n)}
		blas32.Gemm(blas.NoTrans, blas.NoTrans, 1, g, g, 0, c)
		for range reps {
			t := time.Now()
			blas32.Gemm(blas.NoTrans, blas.NoTrans, 1, g, g, 0, c)
			rates = append(rates, 2*math.Pow(float64(n), 3)/time.Since(t).Seconds()/1e9)
		}
		return median(rates)
	}
	a := make([]float64, n*n)
	for i := range a {
		a[i] = rng.NormFloat64()
	}
	g := blas64.General{Rows: n, Cols: n, Stride: n, Data: a}
	c := blas64.General{Rows: n, Cols: n, Stride: n, Data: make([]float64, n*n)}
	blas64.Gemm(blas.NoTrans, blas.NoTrans, 1, g, g, 0, c)
	for range reps {
		t := time.Now()
		blas64.Gemm(blas.NoTrans, blas.NoTrans, 1, g, g, 0, c)
		rates = append(rates, 2*math.Pow(float64(n), 3)/time.Since(t).Seconds()/1e9)
	}
	return median(rates)
}

func median(v []float64) float64 {
	s := append([]float64(nil), v...)
	sort.Float64s(s)
	if len(s) == 0 {
		return math.NaN()
	}
	if len(s)%2 == 1 {
		return s[len(s)/2]
	}
	return (s[len(s)/2-1] + s[len(s)/2]) / 2
}

const batch = 256

var (
	only       *string
	chunksFlag *int
	film       bool   // FiLM conditioning (-film)
	activation string // hidden and conditioning activation (-activation)
	grid       int    // grid points λ is drawn from (-grid; 0 = continuous)
)

// defaultActivation is -activation's default: the activation train fits.
var defaultActivation = string(train.DefaultSettings().Arch.Activation)

func want(what string) bool { return *only == "" || *only == what }

// stepFlops is the dense-equivalent floating-point operation count of one
// training step of batch b: the forward masked products, the weight
// gradients of all of them and the input gradients of all but those that
// read the data (first layer and direct connection) — what a dense
// implementation executes. The conditioning net (64 units) is left out.
func stepFlops(n, h, b int) float64 {
	in := float64(n)
	hh := float64(h)
	fwd := in*hh + hh*hh + hh*in + in*in
	dx := hh*hh + hh*in
	return 2 * float64(b) * (2*fwd + dx)
}

// executedFlops counts the floating-point operations of one training step
// of batch b as the model executes them: like stepFlops, but only over the
// rows of each 64-column block of a mask that hold a nonzero entry (the
// same block rule as the model's masked products).
func executedFlops(m *model.Model, b int) float64 {
	masks := m.Masks()
	total := 0.0
	for i, mk := range masks {
		in, out := mk.Shape[0], mk.Shape[1]
		work := 0
		for c0 := 0; c0 < out; c0 += 64 {
			c1 := min(c0+64, out)
			lo, hi := in, 0
			for j := 0; j < in; j++ {
				for k := c0; k < c1; k++ {
					if mk.Data[j*out+k] != 0 {
						lo, hi = min(lo, j), max(hi, j+1)
						break
					}
				}
			}
			if hi > lo {
				work += (c1 - c0) * (hi - lo)
			}
		}
		passes := 2.0 // forward and weight gradient
		if i > 0 && mk.Name != "mask.direct" {
			passes = 3 // and the input gradient
		}
		total += passes * 2 * float64(b) * float64(work)
	}
	return total
}

// cpuSeconds is the CPU time (user and system, all threads) of the process.
func cpuSeconds() float64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return math.NaN()
	}
	return float64(ru.Utime.Nano()+ru.Stime.Nano()) / 1e9
}

// minRep is the length of the warm-up and the shortest repetition of a
// measurement: a repetition calls f as many times as the warm-up did, so
// that a call of a few milliseconds is timed over enough of them (and the
// first calls, which fill caches, buffers and the allocator, are left
// out). bench/peer/made_peer.py does the same with the same length.
const minRep = 300 * time.Millisecond

// measure runs f (which processes units work units) reps times after a
// warm-up and returns the median rates in units per second of wall time and
// per second of CPU time. It stops early, after at least one repetition,
// when the budget is spent.
func measure(f func(), units float64, reps int, budget time.Duration) (float64, float64, int) {
	start := time.Now()
	k := 0
	for k == 0 || time.Since(start) < minRep { // warm-up
		f()
		k++
	}
	var rates, cpu []float64
	for len(rates) < reps {
		t, c := time.Now(), cpuSeconds()
		for range k {
			f()
		}
		rates = append(rates, float64(k)*units/time.Since(t).Seconds())
		cpu = append(cpu, float64(k)*units/(cpuSeconds()-c))
		if time.Since(start) > budget {
			break
		}
	}
	return median(rates), median(cpu), len(rates)
}

// benchConfig is the model measured at N = n sites and two hidden layers
// of width h: the peer's (bench/peer/made_peer.py), with the activation of
// -activation (by default train's) in the hidden layers and the
// conditioning net, and FiLM with -film.
func benchConfig(n, h int, prec string) model.Config {
	cfg := model.DefaultConfig(n, 2, 1, []float64{0}, []float64{1})
	cfg.Hidden = []int{h, h}
	cfg.Activation = model.Activation(activation)
	cfg.CondActivation = model.Activation(activation)
	cfg.FiLM = film // false: the peer's default conditioning only shifts the layers
	cfg.Precision = prec
	return cfg
}

func measureShape(n, h int, prec string, threads, reps, matRows int, budget time.Duration) []result {
	cfg := benchConfig(n, h, prec)
	m, err := model.New(cfg, 1)
	if err != nil {
		fmt.Fprintln(os.Stderr, "gobench:", err)
		os.Exit(1)
	}
	rng := rand.New(rand.NewPCG(7, uint64(n)))
	xs := make([]uint8, batch*n)
	for i := range xs {
		xs[i] = uint8(rng.IntN(2))
	}
	// The training batch's λ: on a grid, as a dataset's snapshots are
	// (the step then runs the conditioning heads once per distinct λ), or
	// continuous, one λ per snapshot.
	ps := make([]float64, batch)
	for i := range ps {
		ps[i] = rng.Float64()
		if grid > 1 {
			ps[i] = float64(rng.IntN(grid)) / float64(grid-1)
		}
	}
	// Training as in package train: the batch is split over one graph per
	// thread (model.BatchGraph: W⊙M prepared once per step by all threads,
	// chunk gradients combined by all threads), then one Adam update over
	// all weights, split across the threads.
	nc := threads
	if *chunksFlag > 0 {
		nc = *chunksFlag
	}
	bg, err := model.NewBatchGraph(m, batch, nc)
	if err != nil {
		fmt.Fprintln(os.Stderr, "gobench:", err)
		os.Exit(1)
	}
	sum := make([][]float64, len(m.Weights))
	for i, t := range m.Weights {
		sum[i] = make([]float64, len(t.Data))
	}
	// The Adam update of package train (D. P. Kingma and J. Ba, ICLR 2015;
	// β1 = 0.9, β2 = 0.999, ε = 1e-8, no weight decay, as the peer's
	// torch.optim.Adam), split over the threads as train does.
	ws := make([][]float64, len(m.Weights))
	sizes := make([]int, len(m.Weights))
	for i, t := range m.Weights {
		ws[i], sizes[i] = t.Data, len(t.Data)
	}
	opt := train.NewAdam(sizes, 0.9, 0.999, 1e-8, 0)
	trainStep := func() {
		if _, err := bg.LossGrad(xs, ps, batch, 1, sum); err != nil {
			panic(err)
		}
		opt.UpdateThreads(ws, sum, 1e-4, threads)
	}
	steps := 2
	third := budget / 3
	train := func() {
		for range steps {
			trainStep()
		}
	}
	var out []result
	var rate, cpu float64
	var r int
	if want("train") {
		rate, cpu, r = measure(train, float64(steps*batch), reps, third)
		out = append(out, result{What: "train", N: n, H: h, Precision: prec, Rate: rate, CPURate: cpu, Unit: "snapshots/s",
			GFlops: rate / batch * stepFlops(n, h, batch) / 1e9, GFlopsRun: rate / batch * executedFlops(m, batch) / 1e9, Reps: r})
	}

	// LogProb: 1024 snapshots at one λ, split over the threads (LogProb is
	// safe for concurrent use).
	const nScore = 1024
	sx := make([]uint8, nScore*n)
	for i := range sx {
		sx[i] = uint8(rng.IntN(2))
	}
	dst := make([]float64, nScore)
	score := func() {
		var wg sync.WaitGroup
		per := nScore / threads
		for t := range threads {
			wg.Add(1)
			go func() {
				defer wg.Done()
				lo, hi := t*per, (t+1)*per
				if t == threads-1 {
					hi = nScore
				}
				if err := m.LogProb(dst[lo:hi], sx[lo*n:hi*n], []float64{0.5}); err != nil {
					panic(err)
				}
			}()
		}
		wg.Wait()
	}
	if want("logprob") {
		rate, cpu, r = measure(score, nScore, reps, third)
		out = append(out, result{What: "logprob", N: n, H: h, Precision: prec, Rate: rate, CPURate: cpu, Unit: "log p/s", Reps: r})
	}

	// LogProbMatrix: matRows snapshots × 64 λ.
	lams := make([][]float64, 64)
	for k := range lams {
		lams[k] = []float64{float64(k) / 63}
	}
	mat := func() {
		if _, err := m.LogProbMatrix(sx[:matRows*n], matRows, lams, threads); err != nil {
			panic(err)
		}
	}
	if want("logprobmatrix64") {
		rate, cpu, r = measure(mat, float64(matRows*64), reps, third)
		out = append(out, result{What: "logprobmatrix64", N: n, H: h, Rows: matRows, Precision: prec, Rate: rate, CPURate: cpu, Unit: "log p/s", Reps: r})
	}
	return out
}
