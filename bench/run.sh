#!/bin/sh
# bench/run.sh — side-by-side throughput of tidemark's model package and a
# PyTorch CPU peer of the same conditional MADE, in one run on one machine.
#
#   bench/run.sh [-s SHAPES] [-f SHAPES] [-a ACTIVATION] [-g POINTS] [-b SECONDS] [-r REPS] [-n ROUNDS] [-e SIZES] [-o FILE]
#
#   -s  comma-separated NxH shapes of the additive model (conditioning that
#       shifts every layer, the peer's default; default 64x256,256x512,1024x1024)
#   -f  comma-separated NxH shapes of the FiLM model (shift and scale, the
#       trainer's default; default 256x512; "" skips it)
#   -a  activation of the hidden layers and the conditioning net on both
#       sides: softplus (default, the model train fits) or relu
#   -g  the training batch's λ come from this many grid points, as a
#       dataset's do (default 21); 0 gives every snapshot its own λ, which
#       takes away our step's grouping of the conditioning heads by λ
#   -b  time budget per shape, per side and round, in seconds (default 20)
#   -r  repetitions per figure; the median is reported (default 5)
#   -n  rounds: every side runs every shape once per round, interleaved,
#       so a change of machine load hits all sides alike (default 2)
#   -e  also the end-to-end case (bench/e2e.sh): `tidemark train` against
#       the peer's training script, whole processes on the same .npz, at
#       these lattice widths (e.g. 16,32,64 for N = 256, 1024, 4096), with
#       the same number of rounds; its section is appended to the results
#   -o  results file (default bench/RESULTS.md)
#
# Sides: ours built pure Go (the default build), ours built with -tags
# openblas (skipped when OpenBLAS is missing), and bench/peer/made_peer.py
# under Debian's /usr/bin/python3 with python3-torch. Every side uses 2
# threads: GOMAXPROCS=2 with one OpenBLAS thread per goroutine on our side,
# torch.set_num_threads(2) on the peer's.
set -eu
cd "$(dirname "$0")/.."
shapes=64x256,256x512,1024x1024
filmshapes=256x512
act=softplus
grid=21
budget=20
reps=5
rounds=2
out=bench/RESULTS.md
e2e=""
while getopts s:f:a:g:b:r:n:e:o: opt; do
	case $opt in
	s) shapes=$OPTARG ;;
	f) filmshapes=$OPTARG ;;
	a) act=$OPTARG ;;
	g) grid=$OPTARG ;;
	b) budget=$OPTARG ;;
	r) reps=$OPTARG ;;
	n) rounds=$OPTARG ;;
	e) e2e=$OPTARG ;;
	o) out=$OPTARG ;;
	*) echo "usage: bench/run.sh [-s SHAPES] [-f SHAPES] [-a ACTIVATION] [-g POINTS] [-b SECONDS] [-r REPS] [-n ROUNDS] [-e SIZES] [-o FILE]" >&2; exit 2 ;;
	esac
done
threads=2
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
raw=$tmp/raw.jsonl

go build -o "$tmp/gobench" ./bench/gobench
sides="gonum"
if CGO_LDFLAGS="-lopenblas" go build -tags openblas -o "$tmp/gobench_openblas" ./bench/gobench 2>"$tmp/ob.log"; then
	sides="$sides openblas"
else
	echo "bench: the openblas build failed (is libopenblas-dev installed?); measuring the default build only" >&2
	cat "$tmp/ob.log" >&2
fi
if ! /usr/bin/python3 -c 'import torch' 2>/dev/null; then
	echo "bench: /usr/bin/python3 cannot import torch (apt-get install -y python3-torch python3-numpy)" >&2
	exit 2
fi
sides="$sides peer"
# The OpenBLAS kernels our openblas build runs (it re-selects them when
# OpenBLAS's CPU detection fell back to its generic ones); the peer's torch
# links the same OpenBLAS, so it gets the same kernels through
# OPENBLAS_CORETYPE, unless that is set already.
blascore=""
peercore=${OPENBLAS_CORETYPE:-}
if [ -x "$tmp/gobench_openblas" ]; then
	blascore=$("$tmp/gobench_openblas" -blascore)
	if [ -z "$peercore" ]; then
		peercore=$(echo "$blascore" | cut -d' ' -f1)
	fi
fi
peerenv=""
if [ -n "$peercore" ]; then
	peerenv="OPENBLAS_CORETYPE=$peercore"
fi

load_before=$(cut -d' ' -f1-3 /proc/loadavg)
start=$(date -u '+%Y-%m-%d %H:%M UTC')
round=1
while [ $round -le "$rounds" ]; do
	# Square-GEMM rates of each side, every round (the summary keeps the
	# best: the machine's rate when it is least disturbed).
	"$tmp/gobench" -threads $threads -reps $reps -shapes "" -gemm 1024 >>"$raw"
	if [ -x "$tmp/gobench_openblas" ]; then
		OPENBLAS_NUM_THREADS=$threads "$tmp/gobench_openblas" -threads $threads -reps $reps -shapes "" -gemm 1024 >>"$raw"
	fi
	env $peerenv OMP_WAIT_POLICY=PASSIVE /usr/bin/python3 bench/peer/made_peer.py --threads $threads --reps $reps --shapes "" --gemm 1024 >>"$raw"
	# Every shape of the additive model, then of the FiLM model (the
	# same flag on both sides).
	for job in $(echo "$shapes" | tr ',' ' ' | sed 's/[^ ][^ ]*/&:additive/g') \
		$(echo "$filmshapes" | tr ',' ' ' | sed 's/[^ ][^ ]*/&:film/g'); do
		shape=${job%:*}
		kind=${job#*:}
		gofilm=""
		peerfilm=""
		if [ "$kind" = film ]; then
			gofilm="-film"
			peerfilm="--film"
		fi
		n=${shape%x*}
		rows=256
		[ "$n" -gt 256 ] && rows=64
		for side in $sides; do
			echo "bench: round $round, $shape, $kind model, $side" >&2
			case $side in
			gonum) "$tmp/gobench" -threads $threads -reps $reps -budget "$budget" -gemm 0 -shapes "$shape" -matrows $rows -grid $grid -activation $act $gofilm >>"$raw" ;;
			openblas) OPENBLAS_NUM_THREADS=1 "$tmp/gobench_openblas" -threads $threads -reps $reps -budget "$budget" -gemm 0 -shapes "$shape" -matrows $rows -grid $grid -activation $act $gofilm >>"$raw" ;;
			peer) env $peerenv OMP_WAIT_POLICY=PASSIVE /usr/bin/python3 bench/peer/made_peer.py --threads $threads --reps $reps --budget "$budget" --gemm 0 --shapes "$shape" --matrows $rows --grid $grid --activation $act $peerfilm >>"$raw" ;;
			esac
		done
	done
	round=$((round + 1))
done
load_after=$(cut -d' ' -f1-3 /proc/loadavg)
# Memory: peak heap of LogProbMatrix beyond its output, 10^5 snapshots.
echo "bench: streaming benchmark" >&2
go test ./model -run XXX -bench LogProbMatrixStream -benchtime 1x -benchmem | grep '^Benchmark' >"$tmp/stream.txt" || true
cp "$raw" bench/last-run.jsonl
/usr/bin/python3 bench/summarize.py "$raw" --start "$start" --load-before "$load_before" --load-after "$load_after" \
	--threads $threads --budget "$budget" --reps "$reps" --rounds "$rounds" --grid "$grid" --stream "$tmp/stream.txt" \
	--blascore "$blascore" --peercore "$peercore" >"$tmp/results.md"
if [ -n "$e2e" ]; then
	sh bench/e2e.sh -z "$e2e" -n "$rounds" >>"$tmp/results.md"
fi
mv "$tmp/results.md" "$out"
cat "$out"
