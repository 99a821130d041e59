#!/usr/bin/python3
"""Batched log-likelihood peer of `tidemark score --at`, for bench/score.sh.

Reads a tidemark dataset (.npz, states M x N uint8) with NumPy and computes
log p(x|lambda) of every snapshot at one lambda with the conditional MADE of
made_peer.py (FiLM, softplus, the hidden widths given; float32; weights
as initialised, which costs the same as trained ones) in batches of --batch
snapshots under torch.no_grad, writing the M values to --out (.npy).
Prints one JSON object: snapshots per second of the scoring loop and of
the whole process.
"""
import argparse
import json
import os
import sys
import time

T0 = time.perf_counter()

import numpy as np
import torch

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from made_peer import CondMADE  # noqa: E402


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("data")
    ap.add_argument("--hidden", required=True)
    ap.add_argument("--batch", type=int, default=4096)
    ap.add_argument("--threads", type=int, default=2)
    ap.add_argument("--direct-window", type=int, default=0, help="tidemark's --direct-window on a square lattice (0: every earlier site)")
    ap.add_argument("--out", required=True)
    a = ap.parse_args()
    torch.set_num_threads(a.threads)
    torch.manual_seed(1)
    with np.load(a.data) as f:
        states = f["states"]
    m, n = states.shape
    model = CondMADE(n, [int(h) for h in a.hidden.split(",")], fourier=1, film=True, activation="softplus", direct_window=a.direct_window)
    model.eval()
    logp = np.empty(m, dtype=np.float64)
    t = time.perf_counter()
    with torch.no_grad():
        for lo in range(0, m, a.batch):
            x = torch.from_numpy(states[lo:lo + a.batch].astype(np.float32))
            lam = torch.full((x.shape[0],), 0.5)
            logp[lo:lo + a.batch] = model.log_prob(x, lam).double().numpy()
    loop = time.perf_counter() - t
    np.save(a.out, logp)
    print(json.dumps({"side": "peer", "snapshots": m, "sites": n, "loop_per_s": m / loop,
                      "process_per_s": m / (time.perf_counter() - T0)}))


main()
