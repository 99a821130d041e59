#!/usr/bin/python3
"""Summary of bench/e2e.sh: one markdown section from its raw lines
"round N side wall_s user_s sys_s maxrss_kB loop_samples_per_s"."""
import argparse
import collections
import statistics


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("raw")
    ap.add_argument("--epochs", type=int)
    ap.add_argument("--batch", type=int)
    ap.add_argument("--load", default="")
    a = ap.parse_args()
    rows = collections.defaultdict(dict)  # (N, side) -> round -> (wall, cpu, rss)
    sides = []
    for line in open(a.raw):
        r, n, side, wall, user, sys_, rss, rate = line.split()
        rows[(int(n), side)][int(r)] = (float(wall), float(user) + float(sys_), int(rss) / 1024, float(rate))
        if side not in sides:
            sides.append(side)
    ns = sorted({n for n, _ in rows})
    ours = [s for s in sides if s != "peer"]
    print("## End to end: `tidemark train` against the peer's training script\n")
    print(f"bench/e2e.sh: {a.epochs} epochs, batch {a.batch}, validation split 0.1 with a validation pass after every "
          f"epoch, the weights saved at the end, 2 threads on both sides; whole processes timed with /usr/bin/time, "
          f"sides interleaved round by round (load average at the end: {a.load}). Ratio = peer's wall seconds / ours "
          f"(> 1: ours faster), per round, then the median and the range over rounds. Loop samples/s: the last "
          f"epoch's training snapshots per second inside the loop (ours from the checkpoint's metrics, the peer's from "
          f"its own timing), median over rounds.\n")
    print("| N | side | wall s per round | median wall s | median CPU s | peak RSS MB | loop samples/s | ratio per round | median ratio (range) |")
    print("|---|---|---|---|---|---|---|---|---|")
    for n in ns:
        peer = rows.get((n, "peer"), {})
        for side in sides:
            d = rows.get((n, side))
            if not d:
                continue
            walls = [d[r][0] for r in sorted(d)]
            cpus = [d[r][1] for r in sorted(d)]
            rss = max(d[r][2] for r in d)
            loop = statistics.median(d[r][3] for r in d)
            ratio, med = "", ""
            if side in ours and side != "conv" and peer:
                rs = [peer[r][0] / d[r][0] for r in sorted(d) if r in peer]
                ratio = ", ".join(f"{x:.2f}×" for x in rs)
                med = f"{statistics.median(rs):.2f}× ({min(rs):.2f}–{max(rs):.2f})"
            print(f"| {n} | {side} | {', '.join(f'{w:.1f}' for w in walls)} | {statistics.median(walls):.1f} | "
                  f"{statistics.median(cpus):.1f} | {rss:.0f} | {loop:,.0f} | {ratio} | {med} |")
    print()


main()
