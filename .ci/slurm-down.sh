#!/usr/bin/env bash
# Stops the cluster .ci/slurm-up.sh started, by the daemons' pid files.
set -uo pipefail
dir="${TIDEMARK_SLURM_DIR:-/tmp/tidemark-slurm}"
for pidfile in "$dir/slurmd.pid" "$dir/slurmctld.pid" /run/munge/munged.pid; do
	if [ -s "$pidfile" ]; then
		pid="$(cat "$pidfile")"
		kill "$pid" 2>/dev/null || true
		for _ in $(seq 1 50); do
			kill -0 "$pid" 2>/dev/null || break
			sleep 0.1
		done
	fi
done
exit 0
