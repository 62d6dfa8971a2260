#!/usr/bin/env bash
# Monolithic `decide` against `decide --jobs K` on one question, in one run.
#
# Usage: scripts/bench-jobs.sh [REPEATS] [JOBS] [CUBES...]
#   defaults: 3 repeats, --jobs 2, cube counts 8 16 32
#   question: {-1,0,1}^4 with p = 17 (infeasible; override with QUESTION="...")
#
# Runs are interleaved (monolithic, then each cube count, repeated), so that a
# change in the machine's load hits every variant alike. Every run is the
# certified default: an infeasible answer needs an LRAT proof accepted by
# orbitcnf's checker (for --jobs, one proof assembled from all cubes). Prints
# wall-clock and CPU seconds (user + sys) per run and the medians; on a
# machine shared with other work, CPU seconds show the work done and wall
# seconds what a user waits.
set -euo pipefail
cd "$(dirname "${BASH_SOURCE[0]}")/.."
repeats=${1:-3}
jobs=${2:-2}
shift $(( $# > 2 ? 2 : $# ))
cubes=("$@")
[ ${#cubes[@]} -gt 0 ] || cubes=(8 16 32)
question=${QUESTION:---dim 4 --grid=-1..1 --period 17}
cargo build --release --quiet
bin=target/release/orbitcnf

# run LABEL ARGS...: one decide, prints "label wall cpu conflicts verdict"
run() {
    local label=$1
    shift
    local t0 t1 out
    t0=$(date +%s.%N)
    out=$( { TIMEFORMAT='%U %S'; time "$bin" decide $question --json --quiet "$@" >"$tmp" 2>/dev/null || true; } 2>&1 )
    t1=$(date +%s.%N)
    local cpu conflicts verdict
    cpu=$(awk '{printf "%.2f", $1 + $2}' <<<"$out")
    conflicts=$(grep -o '"conflicts":[0-9]*' "$tmp" | head -1 | cut -d: -f2)
    verdict=$(grep -o '"verdict":"[a-z]*"' "$tmp" | cut -d'"' -f4)
    printf '%-16s %8.2f %8s %10s  %s\n' "$label" "$(awk -v a="$t0" -v b="$t1" 'BEGIN {print b - a}')" "$cpu" "${conflicts:-?}" "$verdict"
}

tmp=$(mktemp)
trap 'rm -f "$tmp"' EXIT
results=$(mktemp)
echo "question: decide $question; $repeats repeats; load average now: $(cut -d' ' -f1-3 /proc/loadavg)"
printf '%-16s %8s %8s %10s  %s\n' variant wall_s cpu_s conflicts verdict
for ((r = 1; r <= repeats; r++)); do
    run monolithic | tee -a "$results"
    for c in "${cubes[@]}"; do
        run "jobs=$jobs,cubes=$c" --jobs "$jobs" --cubes "$c" | tee -a "$results"
    done
done
echo
echo "medians over $repeats runs:"
printf '%-16s %8s %8s\n' variant wall_s cpu_s
median() { sort -n | sed -n "$(( (repeats + 1) / 2 ))p"; }
for v in monolithic "${cubes[@]/#/jobs=$jobs,cubes=}"; do
    w=$(awk -v v="$v" '$1 == v {print $2}' "$results" | median)
    c=$(awk -v v="$v" '$1 == v {print $3}' "$results" | median)
    printf '%-16s %8s %8s\n' "$v" "$w" "$c"
done
rm -f "$results"
