#!/usr/bin/python3
"""End-to-end PyTorch peer of `tidemark train`, for bench/run.sh -e.

Reads a tidemark dataset (.npz: states M x N uint8, params M x d) with NumPy,
keeps --val-frac of every grid point's snapshots for validation (at least
one), and trains the conditional MADE of made_peer.py (FiLM conditioning,
softplus, one conditioning layer of 64 units, Fourier features f = 1,
direct connection, the hidden widths given) for --epochs passes of shuffled
minibatches of --batch snapshots with Adam (lr 2e-3) and global-norm
gradient clipping at 1 on the mean NLL per site, as tidemark's trainer does,
computing the validation NLL after every epoch and saving the weights and
optimiser state at the end (torch.save). float32, torch.set_num_threads.
Prints one JSON object: the epochs' samples per second and the wall and CPU
seconds of the whole process as it measures them.
"""
import argparse
import json
import os
import resource
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
    ap.add_argument("--hidden", required=True, help="comma-separated widths")
    ap.add_argument("--epochs", type=int, default=3)
    ap.add_argument("--batch", type=int, default=128)
    ap.add_argument("--val-frac", type=float, default=0.1)
    ap.add_argument("--threads", type=int, default=2)
    ap.add_argument("--direct-window", type=int, default=0, help="tidemark's --direct-window on a square lattice (0: every earlier site)")
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--out", default=None)
    a = ap.parse_args()
    torch.set_num_threads(a.threads)
    torch.manual_seed(a.seed)
    rng = np.random.default_rng(a.seed)
    with np.load(a.data) as f:
        states, params = f["states"], f["params"]
    m, n = states.shape
    lam = params[:, 0]
    lo, hi = lam.min(), lam.max()
    lam = (lam - lo) / max(hi - lo, 1e-300)
    train_idx, val_idx = [], []
    for v in np.unique(params[:, 0]):
        idx = np.flatnonzero(params[:, 0] == v)
        rng.shuffle(idx)
        nv = min(max(int(round(a.val_frac * len(idx))), 1), len(idx) - 1)
        val_idx.append(idx[:nv])
        train_idx.append(idx[nv:])
    train_idx, val_idx = np.concatenate(train_idx), np.concatenate(val_idx)
    x_all = torch.from_numpy(states.astype(np.float32))
    l_all = torch.from_numpy(lam.astype(np.float32))
    model = CondMADE(n, [int(h) for h in a.hidden.split(",")], fourier=1, film=True, activation="softplus", direct_window=a.direct_window)
    opt = torch.optim.Adam(model.parameters(), lr=2e-3)
    rates = []
    for epoch in range(a.epochs):
        t = time.perf_counter()
        order = torch.from_numpy(rng.permutation(train_idx))
        for b in range(0, len(order), a.batch):
            idx = order[b:b + a.batch]
            loss = -model.log_prob(x_all[idx], l_all[idx]).mean() / n
            opt.zero_grad()
            loss.backward()
            torch.nn.utils.clip_grad_norm_(model.parameters(), 1.0)
            opt.step()
        rates.append(len(order) / (time.perf_counter() - t))
        with torch.no_grad():
            vi = torch.from_numpy(val_idx)
            val = -model.log_prob(x_all[vi], l_all[vi]).mean().item() / n / np.log(2)
    if a.out:
        torch.save({"model": model.state_dict(), "opt": opt.state_dict()}, a.out)
    ru = resource.getrusage(resource.RUSAGE_SELF)
    print(json.dumps({"side": "peer", "n": n, "epochs": a.epochs, "samples_per_s": rates,
                      "val_bits_per_site": val, "wall_s": time.perf_counter() - T0,
                      "cpu_s": ru.ru_utime + ru.ru_stime}))


main()
