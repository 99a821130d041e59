#!/usr/bin/python3
"""Turn the JSON lines of bench/run.sh into bench/RESULTS.md (Markdown on stdout)."""
import argparse
import collections
import json
import os
import platform
import statistics
import subprocess


def label(r):
    if r["side"] == "peer":
        return "peer"
    return ("openblas" if r["blas"].startswith("OpenBLAS") else "gonum") + "/" + r["precision"]


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("raw")
    ap.add_argument("--start", default="")
    ap.add_argument("--load-before", default="")
    ap.add_argument("--load-after", default="")
    ap.add_argument("--threads", default="2")
    ap.add_argument("--budget", default="")
    ap.add_argument("--reps", default="")
    ap.add_argument("--rounds", default="")
    ap.add_argument("--stream", default="")
    ap.add_argument("--grid", type=int, default=0, help="grid points of the training batch's lambda (0: continuous)")
    ap.add_argument("--blascore", default="", help="OpenBLAS kernels of our openblas build (model.BLASCore)")
    ap.add_argument("--peercore", default="", help="OPENBLAS_CORETYPE given to the peer")
    a = ap.parse_args()
    rows = [json.loads(l) for l in open(a.raw) if l.strip()]
    groups = collections.defaultdict(list)
    cpug = collections.defaultdict(list)
    gflops = collections.defaultdict(list)
    gexec = collections.defaultdict(list)
    gemm = {}
    torch_version = ""
    for r in rows:
        if r["side"] == "peer":
            torch_version = r["blas"]
        if r["what"] == "gemm":
            key = ("peer" if r["side"] == "peer" else label(r).split("/")[0], r["precision"])
            gemm[key] = max(gemm.get(key, 0), r["rate"])
            continue
        # The model column names the conditioning and the activation (runs
        # before the activation was recorded measured ReLU).
        k = (label(r), r["what"], r["n"], r["h"], r.get("model", "additive") + ", " + r.get("activation", "relu"))
        groups[k].append(r["rate"])
        if "cpu_rate" in r:
            cpug[k].append(r["cpu_rate"])
        if r["what"] == "train":
            gflops[k].append(r.get("gflops", 0))
            if "gflops_executed" in r:
                gexec[k].append(r["gflops_executed"])
    med = {k: statistics.median(v) for k, v in groups.items()}
    cmed = {k: statistics.median(v) for k, v in cpug.items()}
    cpu = ""
    for line in open("/proc/cpuinfo"):
        if line.startswith("model name"):
            cpu = line.split(":", 1)[1].strip()
            break
    nproc = os.cpu_count()
    goversion = subprocess.run(["go", "version"], capture_output=True, text=True).stdout.strip()
    # The additive model's shapes first, then the FiLM model's.
    shapes = sorted({(k[2], k[3], k[4]) for k in groups}, key=lambda t: (not t[2].startswith("additive"), t[0], t[1]))
    ours = [l for l in ("gonum/float64", "gonum/float32", "openblas/float64", "openblas/float32")
            if any(k[0] == l for k in groups)]
    p = print
    p("# Benchmark: tidemark's model package against a PyTorch peer")
    p()
    p(f"Run {a.start} on `{platform.node()}`: {cpu}, nproc = {nproc}; load average "
      f"{a.load_before} before and {a.load_after} after (the machine is shared: other jobs ran "
      "at the same time, so absolute figures are low and noisy; the sides ran interleaved, "
      f"{a.rounds} rounds, so ratios are fairer than absolutes). {goversion}; peer: {torch_version} "
      "(Debian python3-torch) under /usr/bin/python3.")
    p()
    p(f"Threads: {a.threads} on both sides — GOMAXPROCS={a.threads} with the training batch split "
      f"into {a.threads} chunks on {a.threads} goroutines (one OpenBLAS thread each, "
      f"OPENBLAS_NUM_THREADS=1) on ours; torch.set_num_threads({a.threads}) with "
      "OMP_WAIT_POLICY=PASSIVE on the peer's (with OpenMP's default busy-waiting the peer ran up to "
      "10× slower on this loaded machine, which would not be a fair comparison). "
      f"Each figure is the median of up to {a.reps} repetitions after a warm-up of 0.3 s (a repetition makes as many calls as the warm-up did), within a budget of "
      f"{a.budget} s per shape and side, then the median over rounds.")
    p()
    acts = sorted({k[4].split(", ")[1] for k in groups})
    p("Model: q = 2, two masked hidden layers of width H, conditioning MLP [64] on the features "
      f"t, sin(πft), cos(πft), f = 1, 2, direct connection, {' and '.join(acts)} units in the hidden layers and the conditioning net "
      "(the model column says which; tidemark's train fits softplus by default" +
      ("" if acts == ["softplus"] else ", so figures marked relu are not those of the model a user trains") +
      "); batch 256; Adam. The "
      "conditioning either adds a bias to every masked layer (*additive*, the peer's default "
      "conditioning) or also scales it, a·(1 + u·S) (*FiLM*, the conditioning tidemark's trainer "
      "uses by default; `gobench -film` and `made_peer.py --film`). `train` = snapshots per second through LossGrad + an Adam update over all "
      "weights; `logprob` = log p per second by LogProb (1024 snapshots at one λ, split over the "
      "threads); `logprobmatrix64` = log p per second by LogProbMatrix at 64 λ (256 snapshots; 64 for "
      "N > 256). " + (f"Each training snapshot's λ is one of {a.grid} grid points, as a dataset's are; our step "
      "runs the conditioning heads once per distinct λ in a chunk of the batch (model/groups.go), the peer, "
      "written the ordinary way, once per snapshot (`bench/run.sh -g 0` gives every snapshot its own λ and "
      "takes that saving away). " if a.grid > 1 else "Every training snapshot has its own λ. ") + "The peer scores the matrix the ordinary way (one full forward pass per λ, batched); "
      "ours computes the λ-independent first layer once per snapshot.")
    p()
    p("Our builds: `gonum` = default default build (gonum BLAS, with the GEMM of model/gemm: Go assembly for AVX2 or AVX-512, no cgo); `openblas` = "
      "`go build -tags openblas` (gonum and gorgonia BLAS through OpenBLAS via cgo). `float64` is the "
      "default Config.Precision; `float32` runs the masked products in single precision (the peer's "
      "precision) with float64 per-site terms and sums.")
    p()
    if a.blascore:
        p(f"OpenBLAS kernels: ours `{a.blascore}`"
          + (f"; the peer's torch links the same OpenBLAS and ran with OPENBLAS_CORETYPE={a.peercore}, "
             "so both sides use the same kernels" if a.peercore else "")
          + ". (OpenBLAS 0.3.21 does not recognise this CPU and falls back to its generic Prescott kernels, "
          "with sgemm 3–4× slower; tidemark's openblas build re-selects the kernels itself, the peer gets "
          "them through the variable.)")
        p()
    def table(title, m, note):
        p(title)
        p()
        if note:
            p(note)
            p()
        p("| model | N | H | figure | " + " | ".join(ours) + " | peer (torch f32) | " + " | ".join(f"ratio {o}" for o in ours) + " |")
        p("|" + "---|" * (5 + 2 * len(ours)))
        for n, h, mod in shapes:
            for what in ("train", "logprob", "logprobmatrix64"):
                pv = m.get(("peer", what, n, h, mod))
                vals = [m.get((o, what, n, h, mod)) for o in ours]
                cells = [f"{v:,.0f}" if v is not None else "–" for v in vals]
                ratios = [f"{v / pv:.2f}×" if v is not None and pv else "–" for v in vals]
                pc = f"{pv:,.0f}" if pv else "–"
                p(f"| {mod} | {n} | {h} | {what} | " + " | ".join(cells) + f" | {pc} | " + " | ".join(ratios) + " |")
        p()

    table("## Throughput (per second of wall time) and ratio ours/peer", med, "")
    table("## Throughput per second of CPU time (all threads) and ratio ours/peer", cmed,
          "The same runs counted against the CPU time each process received (user + system, all threads). "
          "On a machine shared with other jobs this is steadier than wall time, and it charges each side "
          "for its own spinning or idling threads.")
    p("## GEMM rate and the fraction of it a training step reaches")
    p()
    p("Square 1024³ GEMM (gonum blas64/blas32 in our builds, torch.mm in the peer), GFLOP/s, "
      f"{a.threads} threads, best median over the rounds:")
    p()
    p("| side | float64 | float32 |")
    p("|---|---|---|")
    for s in ("gonum", "openblas", "peer"):
        if (s, "float64") in gemm:
            p(f"| {s} | {gemm[(s, 'float64')]:.1f} | {gemm[(s, 'float32')]:.1f} |")
    p()
    p("Training-step FLOPs: the masked products forward, their weight gradients, and the input "
      "gradients of all but the layers that read the data (≈ 3× forward). *Dense-equivalent* counts "
      "full matrices (what the peer executes); *executed* counts only the mask blocks our products "
      "do not skip (about half). Fraction = GFLOP/s ÷ the side's GEMM rate in the step's precision.")
    p()
    p("| model | N | H | side | dense-equiv. GFLOP/s | fraction | executed GFLOP/s | fraction |")
    p("|---|---|---|---|---|---|---|---|")
    for n, h, mod in shapes:
        for o in ours + ["peer"]:
            k = (o, "train", n, h, mod)
            if k not in gflops:
                continue
            prec = "float32" if o == "peer" else o.split("/")[1]
            g = gemm.get(("peer" if o == "peer" else o.split("/")[0], prec))
            d = statistics.median(gflops[k])
            e = statistics.median(gexec[k]) if k in gexec else None
            fr = f"{d / g:.0%}" if g else "–"
            es = f"{e:.1f}" if e is not None else "(= dense)"
            efr = f"{e / g:.0%}" if e is not None and g else fr
            p(f"| {mod} | {n} | {h} | {o} | {d:.1f} | {fr} | {es} | {efr} |")
    if a.stream and os.path.exists(a.stream):
        p()
        p("## Memory of scoring")
        p()
        p("`go test ./model -bench LogProbMatrixStream -benchtime 1x -benchmem`: 10^5 snapshots of 256 "
          "sites (default widths 256) at 4 λ in one LogProbMatrix call; extra-peak-MB is the peak live "
          "heap beyond the n·K float64 output. Scoring streams in blocks of 64 snapshots, so this does "
          "not grow with n: 10^6 snapshots of 256 sites need their 256 MB of states, the 8·K MB-per-10^6 "
          "output and these few MB.")
        p()
        p("```")
        for line in open(a.stream):
            p(line.rstrip())
        p("```")
    p()
    p("Raw figures: bench/last-run.jsonl. Reproduce: `bench/run.sh` (options: -s shapes of the additive "
      "model, -f shapes of the FiLM model, -g grid points, -b budget, -r repetitions, -n rounds).")


if __name__ == "__main__":
    main()
