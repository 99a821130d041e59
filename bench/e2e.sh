#!/bin/sh
# bench/e2e.sh — `tidemark train` end to end against the PyTorch peer's
# training script (bench/peer/train_peer.py), both timed as whole processes
# on the same .npz, in one run on one machine. bench/run.sh -e calls it;
# it can also run alone:
#
#   bench/e2e.sh [-z SIZES] [-e EPOCHS] [-b BATCH] [-n ROUNDS] [-c]
#
#   -z  lattice widths L of the L×L Ising datasets (default 16,32,64: N =
#       256, 1024, 4096); L=16: 2 points × 4096 snapshots, L=32: 21 × 400,
#       L=64: 9 × 1000 (the dataset sizes the issue names)
#   -e  epochs (default 3); -b minibatch (default 128, train's default)
#   -n  rounds (default 3): each round runs every side once per size,
#       interleaved, so that the machine's load hits all sides alike
#   -c  also the conv network (train --arch conv) on our side (the peer has
#       no conv model; its figure is printed without a ratio)
#
# Both sides: validation split 0.1 of every grid point, a validation pass
# after every epoch, Adam at lr 2e-3, gradient clipping at 1, the hidden
# widths train builds by default for N (model.DefaultHiddenWidth), FiLM,
# softplus, the direct connection within r rows and columns (train's default
# on a 2-D lattice: r = L/8, at least 4), 2 threads; the weights are saved at the end (ours also after
# the first epoch). The peer reads the .npz with NumPy and trains in float32
# with torch (Debian's python3-torch under /usr/bin/python3); ours are the
# default build and, when OpenBLAS is installed, the openblas build
# (OPENBLAS_NUM_THREADS=1, as run.sh). Wall and CPU seconds come from
# /usr/bin/time; the summary prints the ratio peer/ours of wall time per
# round (> 1: ours faster), their median and range, and CPU seconds.
set -eu
cd "$(dirname "$0")/.."
sizes=16,32,64
epochs=3
batch=128
rounds=3
conv=0
while getopts z:e:b:n:c opt; do
	case $opt in
	z) sizes=$OPTARG ;;
	e) epochs=$OPTARG ;;
	b) batch=$OPTARG ;;
	n) rounds=$OPTARG ;;
	c) conv=1 ;;
	*) echo "usage: bench/e2e.sh [-z SIZES] [-e EPOCHS] [-b BATCH] [-n ROUNDS] [-c]" >&2; exit 2 ;;
	esac
done
if ! /usr/bin/python3 -c 'import torch' 2>/dev/null; then
	echo "e2e: /usr/bin/python3 cannot import torch (apt-get install -y python3-torch python3-numpy)" >&2
	exit 2
fi
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
go build -o "$tmp/tidemark" ./cmd/tidemark
sides="gonum"
if CGO_LDFLAGS="-lopenblas" go build -tags openblas -o "$tmp/tidemark_openblas" ./cmd/tidemark 2>/dev/null; then
	sides="$sides openblas"
fi
[ "$conv" = 1 ] && sides="$sides conv"
sides="$sides peer"
for L in $(echo "$sizes" | tr ',' ' '); do
	case $L in
	16) grid="T=2.0:2.6:2"; samples=4096 ;;
	32) grid="T=1.5:3.5:21"; samples=400 ;;
	*) grid="T=1.5:3.5:9"; samples=1000 ;;
	esac
	echo "e2e: simulating ${L}x${L}, $grid, $samples per point" >&2
	"$tmp/tidemark" simulate ising --size "$L" --grid "$grid" --samples "$samples" --quiet -o "$tmp/d$L.npz" >&2
done
width() { # train's default hidden width for N sites (model.DefaultHiddenWidth)
	w=$(( ($1 + 31) / 32 * 32 ))
	[ $w -lt 32 ] && w=32
	[ $w -gt 256 ] && w=256
	echo $w
}
window() { # train's default direct-connection window on an L×L lattice (train.DirectWindowFor)
	r=$(( ($1 + 7) / 8 ))
	[ $r -lt 4 ] && r=4
	echo $r
}
raw=$tmp/raw.txt
round=1
while [ $round -le "$rounds" ]; do
	for L in $(echo "$sizes" | tr ',' ' '); do
		N=$((L * L))
		h=$(width $N)
		for side in $sides; do
			echo "e2e: round $round, N = $N, $side" >&2
			t="$tmp/time.txt"
			case $side in
			gonum) /usr/bin/time -o "$t" -f "%e %U %S %M" "$tmp/tidemark" train "$tmp/d$L.npz" -o "$tmp/m.ckpt" --force --quiet \
				--epochs "$epochs" --batch "$batch" --threads 2 --patience 1000 ;;
			openblas) OPENBLAS_NUM_THREADS=1 /usr/bin/time -o "$t" -f "%e %U %S %M" "$tmp/tidemark_openblas" train "$tmp/d$L.npz" -o "$tmp/m.ckpt" --force --quiet \
				--epochs "$epochs" --batch "$batch" --threads 2 --patience 1000 ;;
			conv) /usr/bin/time -o "$t" -f "%e %U %S %M" "$tmp/tidemark" train "$tmp/d$L.npz" -o "$tmp/m.ckpt" --force --quiet \
				--epochs "$epochs" --batch "$batch" --threads 2 --patience 1000 --arch conv ;;
			peer) OMP_WAIT_POLICY=PASSIVE /usr/bin/time -o "$t" -f "%e %U %S %M" /usr/bin/python3 bench/peer/train_peer.py "$tmp/d$L.npz" \
				--hidden "$h,$h" --direct-window "$(window "$L")" --epochs "$epochs" --batch "$batch" --threads 2 --out "$tmp/peer.pt" >"$tmp/peer.json" ;;
			esac
			# The last epoch's samples per second inside the training loop.
			if [ "$side" = peer ]; then
				rate=$(/usr/bin/python3 -c 'import json,sys; print(json.load(open(sys.argv[1]))["samples_per_s"][-1])' "$tmp/peer.json")
			else
				rate=$("$tmp/tidemark" inspect "$tmp/m.ckpt" --json | /usr/bin/python3 -c 'import json,sys; print(json.load(sys.stdin)["metrics"][-1]["samples_per_s"])')
			fi
			echo "$round $N $side $(cat "$t") $rate" >>"$raw"
		done
	done
	round=$((round + 1))
done
/usr/bin/python3 bench/e2e_summary.py "$raw" --epochs "$epochs" --batch "$batch" --load "$(cut -d' ' -f1-3 /proc/loadavg)"
