#!/usr/bin/env bash
# Stops the daemons .ci/slurm-up.sh started (listed in $dir/pidfiles), by
# their pid files, slurmd first.
set -uo pipefail
dir="${TIDEMARK_SLURM_DIR:-/tmp/tidemark-slurm}"
[ -s "$dir/pidfiles" ] || exit 0
for pidfile in $(tac "$dir/pidfiles"); do
	if [ -s "$pidfile" ]; then
		pid="$(cat "$pidfile")"
		kill "$pid" 2>/dev/null || true
		for _ in $(seq 1 50); do
			kill -0 "$pid" 2>/dev/null || break
			sleep 0.1
		done
	fi
done
rm -f "$dir/pidfiles"
exit 0
