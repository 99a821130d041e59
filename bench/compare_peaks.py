#!/usr/bin/python3
"""Compare the peaks of a model scan with those of the exact scan of the
same snapshots (summary.json of `tidemark scan`). Prints, per indicator,
the highest peak of each, their distance, the distance in combined
standard errors, and the largest distance of any model peak from the
nearest exact peak in grid steps.

usage: compare_peaks.py EXACT_DIR MODEL_DIR GRID_STEP
"""
import json, sys

ex = json.load(open(sys.argv[1] + "/summary.json"))["indicators"]
mo = json.load(open(sys.argv[2] + "/summary.json"))["indicators"]
step = float(sys.argv[3])
ok = True
for name in ["lbc", "sl", "pbm", "local", "fisher", "fisher_deriv"]:
    if name not in ex or name not in mo:
        continue
    pe, pm = ex[name].get("peaks") or [], mo[name].get("peaks") or []
    if not pe or not pm:
        print(f"{name:13s} exact peaks {len(pe)} model peaks {len(pm)}")
        ok = False
        continue
    he = max(pe, key=lambda p: p["height"])
    hm = max(pm, key=lambda p: p["height"])
    d = hm["at"][0] - he["at"][0]
    se = (he["err"][0] ** 2 + hm["err"][0] ** 2) ** 0.5
    far = max(min(abs(p["at"][0] - q["at"][0]) for q in pe) for p in pm) / step
    good = abs(d) <= 0.01 and abs(d) <= 2 * se and far <= 2
    ok &= good or name == "fisher_deriv"
    print(f"{name:13s} exact {he['at'][0]:.4f}±{he['err'][0]:.4f} model {hm['at'][0]:.4f}±{hm['err'][0]:.4f} "
          f"Δ={d:+.4f} ({abs(d)/se if se>0 else float('inf'):.1f}σ) peaks {len(pm)}/{len(pe)} farthest {far:.1f} steps "
          f"height {hm['height']:.4g}/{he['height']:.4g} {'ok' if good else 'MISS'}")
print("all checks met" if ok else "some checks missed")
