// Command trainstages runs the training loop as `tidemark train` does (the
// same train.Run, the checkpoint written after every epoch by the
// command's OnEpoch, a progress callback) and prints where the wall time of
// the epochs went: minibatch assembly, the step, the update, progress,
// validation, building the checkpoint and writing it. bench/RESULTS.md
// quotes its output.
//
// Usage:
//
//	go run ./bench/trainstages -data d.npz -hidden 512,512 -batch 256 -epochs 3 [-cpuprofile cpu.prof]
package main

import (
	"context"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"runtime/pprof"
	"time"

	"tidemark/checkpoints"
	"tidemark/data"
	"tidemark/train"
)

func main() {
	path := flag.String("data", "", "dataset (.npz)")
	hidden := flag.String("hidden", "", "hidden widths (default: the trainer's)")
	arch := flag.String("arch", "dense", "dense or conv")
	batch := flag.Int("batch", 128, "minibatch size")
	epochs := flag.Int("epochs", 3, "epochs")
	threads := flag.Int("threads", 0, "threads (0: number of CPUs, the command's default)")
	precision := flag.String("precision", "", "float64 or float32")
	augment := flag.String("augment", "none", "symmetries to augment with")
	cpuprofile := flag.String("cpuprofile", "", "write a CPU profile here")
	saveShare := flag.Float64("saveshare", 0.05, "train.Options.SaveShare (the command's 0.05; 0: a checkpoint every epoch)")
	flag.Parse()
	if err := run(*path, *hidden, *arch, *batch, *epochs, *threads, *precision, *augment, *cpuprofile, *saveShare); err != nil {
		fmt.Fprintln(os.Stderr, "trainstages:", err)
		os.Exit(2)
	}
}

func run(path, hidden, arch string, batch, epochs, threads int, precision, augment, cpuprofile string, saveShare float64) error {
	t0 := time.Now()
	ds, err := data.Read(path)
	if err != nil {
		return err
	}
	read := time.Since(t0)
	st := train.DefaultSettings()
	st.Batch, st.Epochs, st.Threads = batch, epochs, data.Threads(threads)
	st.Arch.Precision = precision
	st.Arch.Kind = train.ArchKind(arch)
	if hidden != "" {
		if st.Arch.Hidden, err = train.ParseWidths(hidden); err != nil {
			return err
		}
	}
	if st.Augment, err = train.ParseAugment(augment); err != nil {
		return err
	}
	dir, err := os.MkdirTemp("", "trainstages")
	if err != nil {
		return err
	}
	defer os.RemoveAll(dir)
	out := filepath.Join(dir, "m.ckpt")
	var stages train.Stages
	saves := 0
	opt := train.Options{Settings: st, DataPath: path, Software: "trainstages", Stages: &stages, SaveShare: saveShare,
		Progress: func(int) {},
		OnEpoch: func(m checkpoints.EpochMetrics, ck *checkpoints.Checkpoint) error {
			fmt.Printf("epoch %d  train %.5f  val %.5f bits/site  %.0f samples/s\n", m.Epoch, m.TrainBitsPerSite, m.ValBitsPerSite, m.SamplesPerS)
			if ck.Best == nil {
				return nil // no save due
			}
			saves++
			return ck.Save(out, true)
		}}
	if cpuprofile != "" {
		f, err := os.Create(cpuprofile)
		if err != nil {
			return err
		}
		defer f.Close()
		if err := pprof.StartCPUProfile(f); err != nil {
			return err
		}
		defer pprof.StopCPUProfile()
	}
	t1 := time.Now()
	ck, err := train.Run(context.Background(), ds, opt)
	if err != nil {
		return err
	}
	loop := time.Since(t1)
	t2 := time.Now()
	if err := ck.Save(out, true); err != nil {
		return err
	}
	final := time.Since(t2)
	s := stages
	rows := []struct {
		name string
		d    time.Duration
	}{
		{"read the .npz", read},
		{"batch assembly/augmentation", s.Assemble},
		{"step (LossGrad)", s.Step},
		{"clip + Adam + average", s.Update},
		{"progress callback", s.Progress},
		{"validation", s.Validate},
		{"checkpoint build", s.Checkpoint},
		{"checkpoint write (OnEpoch)", s.OnEpoch},
		{"final checkpoint write", final},
	}
	known := read + final
	for _, r := range rows[1:8] {
		known += r.d
	}
	total := read + loop + final
	rows = append(rows, struct {
		name string
		d    time.Duration
	}{"other (setup, shuffles)", total - known})
	fmt.Printf("| stage | seconds | share |\n|---|---|---|\n")
	for _, r := range rows {
		fmt.Printf("| %s | %.3f | %.1f%% |\n", r.name, r.d.Seconds(), 100*r.d.Seconds()/total.Seconds())
	}
	fmt.Printf("| total | %.3f | %d epochs × %d snapshots, %d checkpoint writes |\n", total.Seconds(), len(ck.Header.Metrics), ck.Header.Training.TrainSnapshots, saves+1)
	return nil
}
