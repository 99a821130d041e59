#!/usr/bin/python3
"""Before/after comparison of tidemark's fast build against the PyTorch peer.

    bench/compare.py --base COMMIT [--shape 256x512] [--rounds 5] [--budget 12]

Builds the openblas gobench of the working tree ("new") and of an earlier
commit ("base", extracted with git archive into a temporary directory; the
repository is not touched), then runs, for each round, base, new and the peer
(bench/peer/made_peer.py, same OpenBLAS kernels through OPENBLAS_CORETYPE) one
after the other at one shape in float32, so that a change of machine load hits
all three alike. Prints the median over rounds of each figure (per second of
wall time and of CPU time) and the ratios new/peer, base/peer and new/base,
each ratio the median of the per-round ratios. Run it from the repository root.
"""
import argparse
import json
import os
import shutil
import statistics
import subprocess
import sys
import tempfile

FIGS = ("train", "logprob", "logprobmatrix64")


def run(cmd, env=None):
    out = subprocess.run(cmd, env=env, check=True, capture_output=True, text=True).stdout
    return [json.loads(l) for l in out.splitlines() if l.strip()]


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--base", required=True, help="commit of the baseline")
    ap.add_argument("--shape", default="256x512")
    ap.add_argument("--rounds", type=int, default=5)
    ap.add_argument("--budget", type=float, default=12, help="seconds per side and round (all figures)")
    ap.add_argument("--reps", type=int, default=5)
    a = ap.parse_args()
    tmp = tempfile.mkdtemp(prefix="tmcompare")
    try:
        measure(a, tmp)
    finally:
        shutil.rmtree(tmp, ignore_errors=True)


def measure(a, tmp):
    env = dict(os.environ, CGO_LDFLAGS="-lopenblas")
    src = os.path.join(tmp, "base")
    os.mkdir(src)
    subprocess.run(f"git archive {a.base} | tar -x -C {src}", shell=True, check=True)
    bins = {}
    for side, d in (("base", src), ("new", ".")):
        bins[side] = os.path.join(tmp, "gobench_" + side)
        subprocess.run(["go", "build", "-tags", "openblas", "-o", bins[side], "./bench/gobench"], cwd=d, env=env, check=True)
    core = (subprocess.run([bins["new"], "-blascore"], capture_output=True, text=True).stdout.split() or [""])[0]
    n = int(a.shape.split("x")[0])
    rows = 256 if n <= 256 else 64
    res = {}  # (side, fig) -> list of (rate, cpu) per round
    load = [open("/proc/loadavg").read().split()[:3]]
    for r in range(a.rounds):
        for side in ("base", "new", "peer"):
            print(f"compare: round {r + 1}, {side}", file=sys.stderr)
            if side == "peer":
                cmd = ["/usr/bin/python3", "bench/peer/made_peer.py", "--threads", "2", "--reps", str(a.reps),
                       "--budget", str(a.budget), "--gemm", "0", "--shapes", a.shape, "--matrows", str(rows)]
                e = dict(os.environ, OPENBLAS_CORETYPE=core, OMP_WAIT_POLICY="PASSIVE")
            else:
                cmd = [bins[side], "-threads", "2", "-reps", str(a.reps), "-budget", str(a.budget), "-gemm", "0",
                       "-shapes", a.shape, "-precision", "float32", "-matrows", str(rows)]
                e = dict(os.environ, OPENBLAS_NUM_THREADS="1")
            for x in run(cmd, e):
                if x.get("what") in FIGS:
                    res.setdefault((side, x["what"]), []).append((x["rate"], x.get("cpu_rate") or float("nan")))
    load.append(open("/proc/loadavg").read().split()[:3])
    med = statistics.median
    print(f"shape {a.shape}, float32, {a.rounds} rounds, base {a.base}, OpenBLAS kernels {core}; "
          f"load average {' '.join(load[0])} before, {' '.join(load[1])} after")
    print()
    print("| figure | base | new | peer | new/peer | base/peer | new/base | new/peer (CPU time) | base/peer (CPU time) |")
    print("|---|---|---|---|---|---|---|---|---|")
    for f in FIGS:
        b, nw, p = res[("base", f)], res[("new", f)], res[("peer", f)]
        k = min(len(b), len(nw), len(p))
        rat = lambda x, y, i: med([x[j][i] / y[j][i] for j in range(k)])
        print(f"| {f} | {med([v[0] for v in b]):,.0f} | {med([v[0] for v in nw]):,.0f} | {med([v[0] for v in p]):,.0f} "
              f"| {rat(nw, p, 0):.2f}× | {rat(b, p, 0):.2f}× | {rat(nw, b, 0):.2f}× | {rat(nw, p, 1):.2f}× | {rat(b, p, 1):.2f}× |")
    print()
    print("per-round wall-time rates (base, new, peer):")
    for f in FIGS:
        print(f"  {f}: " + "; ".join(f"{res[('base', f)][j][0]:,.0f} {res[('new', f)][j][0]:,.0f} {res[('peer', f)][j][0]:,.0f}"
                                     for j in range(len(res[("peer", f)]))))


if __name__ == "__main__":
    main()
