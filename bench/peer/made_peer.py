#!/usr/bin/python3
"""PyTorch CPU peer of tidemark's conditional MADE, for bench/run.sh.

An ordinary PyTorch implementation of the same network: binary sites (q = 2),
masks built by the same degree rule (Germain et al., ICML 2015: input of site s
at autoregressive position s has degree s+1, hidden unit k of a width-h layer
has degree 1 + k*(N-1)//h, hidden masks deg(k) >= deg(j), output and direct
masks deg(out) > deg(in)), masks applied as weight*mask in every forward pass,
conditioning features t, sin(pi f t), cos(pi f t) for f = 1..F of the
normalised parameter, a conditioning MLP with one hidden layer of 64 units
whose linear heads add a bias to every masked layer (softplus units in the
conditioning net and the hidden layers, as tidemark's train fits by default;
--activation relu for ReLU), a direct masked
input-to-output connection, Bernoulli logits, torch.optim.Adam, float32
(PyTorch's default). Prints one JSON object per line.
"""
import argparse
import json
import math
import statistics
import time

import torch
import torch.nn as nn
import torch.nn.functional as F


def degrees(n, h):
    span = max(n - 1, 1)
    return torch.tensor([1 + k * span // h for k in range(h)])


class MaskedLinear(nn.Module):
    def __init__(self, mask, bias=True):
        super().__init__()
        fan_in, fan_out = mask.shape
        self.register_buffer("mask", mask.float())
        self.weight = nn.Parameter(torch.randn(fan_in, fan_out) * math.sqrt(2.0 / max(mask.sum().item() / fan_out, 1)))
        self.bias = nn.Parameter(torch.zeros(fan_out)) if bias else None

    def forward(self, x):
        y = x @ (self.weight * self.mask)
        return y + self.bias if self.bias is not None else y


def near_on_square(n, r):
    """Pairs of sites of a periodic L×L lattice (row-major, L² = n) within r
    along both axes, the shorter way round: tidemark's --direct-window r."""
    l = math.isqrt(n)
    assert l * l == n, "a direct window needs a square lattice"
    y, x = torch.arange(n) // l, torch.arange(n) % l
    dy = (y[:, None] - y[None, :]).abs()
    dx = (x[:, None] - x[None, :]).abs()
    return (torch.minimum(dy, l - dy) <= r) & (torch.minimum(dx, l - dx) <= r)


class CondMADE(nn.Module):
    def __init__(self, n, hidden, cond_hidden=64, fourier=2, film=False, activation="softplus", direct_window=0):
        super().__init__()
        self.n, self.fourier, self.film = n, fourier, film
        self.act = F.softplus if activation == "softplus" else F.relu
        din = torch.arange(1, n + 1)
        dh = [degrees(n, h) for h in hidden]
        masks, prev = [], din
        for d in dh:
            masks.append(d[None, :] >= prev[:, None])
            prev = d
        masks.append(din[None, :] > prev[:, None])
        self.layers = nn.ModuleList(MaskedLinear(m) for m in masks)
        dmask = din[None, :] > din[:, None]
        if direct_window > 0:
            dmask = dmask & near_on_square(n, direct_window)
        self.direct = MaskedLinear(dmask, bias=False)
        feat = 1 + 2 * fourier
        self.cond = nn.Linear(feat, cond_hidden)
        self.heads = nn.ModuleList(nn.Linear(cond_hidden, m.shape[1], bias=False) for m in masks)
        if film:
            # FiLM (Perez et al., AAAI 2018) as tidemark's model.Config.FiLM:
            # a = (1 + u·S) ⊙ (h·(W⊙M) + b(λ)), the direct term inside the
            # output bracket; the scale heads start at zero.
            self.scales = nn.ModuleList(nn.Linear(cond_hidden, m.shape[1], bias=False) for m in masks)
            for sc in self.scales:
                nn.init.zeros_(sc.weight)

    def features(self, lam):
        t = 2 * lam - 1  # lam in [0, 1] -> t in [-1, 1]
        fs = [t]
        for f in range(1, self.fourier + 1):
            fs += [torch.sin(math.pi * f * t), torch.cos(math.pi * f * t)]
        return torch.stack(fs, dim=1)

    def log_prob(self, x, lam):
        u = self.act(self.cond(self.features(lam)))
        h = x
        last = len(self.layers) - 1
        for i, layer in enumerate(self.layers):
            a = layer(h) + self.heads[i](u)
            if self.film:
                if i == last:
                    a = a + self.direct(x)
                a = a * (1 + self.scales[i](u))
            h = self.act(a) if i < last else a
        z = h if self.film else h + self.direct(x)
        return -F.binary_cross_entropy_with_logits(z, x, reduction="none").sum(dim=1)


# The length of the warm-up and the shortest repetition, in seconds: a
# repetition calls f as many times as the warm-up did (as bench/gobench).
MIN_REP = 0.3


def median_rate(f, units, reps, budget):
    """Median rates per second of wall time and of process CPU time (all threads)."""
    start = time.perf_counter()
    k = 0
    while k == 0 or time.perf_counter() - start < MIN_REP:  # warm-up
        f()
        k += 1
    rates, cpu = [], []
    while len(rates) < reps:
        t, c = time.perf_counter(), time.process_time()
        for _ in range(k):
            f()
        rates.append(k * units / (time.perf_counter() - t))
        cpu.append(k * units / max(time.process_time() - c, 1e-9))
        if time.perf_counter() - start > budget:
            break
    median_rate.cpu = statistics.median(cpu)
    return statistics.median(rates), len(rates)


def step_flops(n, h, b):
    fwd = n * h + h * h + h * n + n * n
    dx = h * h + h * n
    return 2 * b * (2 * fwd + dx)


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--shapes", default="64x256,256x512,1024x1024")
    ap.add_argument("--threads", type=int, default=2)
    ap.add_argument("--budget", type=float, default=60)
    ap.add_argument("--reps", type=int, default=5)
    ap.add_argument("--gemm", type=int, default=1024)
    ap.add_argument("--matrows", type=int, default=256)
    ap.add_argument("--grid", type=int, default=0, help="draw the training batch's lambda from this many grid points in [0, 1] (0: continuous)")
    ap.add_argument("--film", action="store_true", help="FiLM conditioning (tidemark's default model) instead of shifts only")
    ap.add_argument("--activation", choices=("softplus", "relu"), default="softplus", help="activation of the hidden layers and the conditioning net (tidemark's train fits softplus)")
    a = ap.parse_args()
    if a.grid == 1 or a.grid < 0:
        ap.error(f"--grid must be 0 (continuous lambda) or at least 2 grid points, found {a.grid}")
    torch.set_num_threads(a.threads)
    torch.manual_seed(1)
    common = dict(side="peer", threads=a.threads, blas="torch " + torch.__version__)

    def emit(**kw):
        if kw["what"] != "gemm":
            kw["cpu_rate"] = median_rate.cpu
            kw["model"] = "film" if a.film else "additive"
            kw["activation"] = a.activation
        print(json.dumps({**kw, **common}), flush=True)

    if a.gemm > 0:
        for dt, name in ((torch.float64, "float64"), (torch.float32, "float32")):
            m = torch.randn(a.gemm, a.gemm, dtype=dt)
            rate, r = median_rate(lambda: torch.mm(m, m), 2 * a.gemm ** 3 / 1e9, a.reps, 30)
            emit(what="gemm", n=a.gemm, precision=name, rate=rate, unit="GFLOP/s", reps=r)

    B = 256
    for s in a.shapes.split(","):
        if not s.strip():
            continue
        n, h = (int(v) for v in s.split("x"))
        net = CondMADE(n, [h, h], film=a.film, activation=a.activation)
        opt = torch.optim.Adam(net.parameters(), lr=1e-4)
        g = torch.Generator().manual_seed(7)
        x = torch.randint(0, 2, (B, n), generator=g).float()
        lam = torch.rand(B, generator=g)
        if a.grid > 1:
            lam = torch.randint(0, a.grid, (B,), generator=g).float() / (a.grid - 1)
        third = a.budget / 3
        steps = 2

        def train():
            for _ in range(steps):
                opt.zero_grad(set_to_none=True)
                loss = -net.log_prob(x, lam).mean()
                loss.backward()
                opt.step()

        rate, r = median_rate(train, steps * B, a.reps, third)
        emit(what="train", n=n, h=h, precision="float32", rate=rate, unit="snapshots/s",
             gflops=rate / B * step_flops(n, h, B) / 1e9, reps=r)

        xs = torch.randint(0, 2, (1024, n), generator=g).float()

        def score():
            with torch.no_grad():
                net.log_prob(xs, torch.full((1024,), 0.5))

        rate, r = median_rate(score, 1024, a.reps, third)
        emit(what="logprob", n=n, h=h, precision="float32", rate=rate, unit="log p/s", reps=r)

        lams = torch.linspace(0, 1, 64)
        R = a.matrows
        xb = xs[:R]

        def matrix():
            with torch.no_grad():
                out = torch.empty(R, 64)
                for k in range(64):
                    out[:, k] = net.log_prob(xb, lams[k].expand(R))

        rate, r = median_rate(matrix, R * 64, a.reps, third)
        emit(what="logprobmatrix64", n=n, h=h, rows=R, precision="float32", rate=rate, unit="log p/s", reps=r)


if __name__ == "__main__":
    main()
