#!/usr/bin/env bash
# Batch figures for `repel build -i FILE` (the batch machinery: chunked reading, threads, ordered writing):
#   1. molecules per second with --threads 1 and --threads 2 on the fixed drug set (benchmarks/drug_like.smi,
#      102 marketed drugs of 20-37 heavy atoms) repeated to RECORDS records (default 2,040), runs taken back to back,
#      wall time and CPU time, and the speed-up of 2 threads over 1;
#   2. peak memory (maximum resident set size, /usr/bin/time -v or /proc VmHWM sampled) of a run over 100,000
#      molecules (BIG, default 100,000) with every core, against the 2,040-record run: flat memory means the two
#      figures are about the same.
# Usage: benchmarks/batch.sh [path/to/repel] [records] [big]
set -euo pipefail

here=$(cd "$(dirname "$0")" && pwd)
repel=${1:-$here/../build/bin/repel}
records=${2:-2040}
big=${3:-100000}
[[ -x $repel ]] || { echo "batch.sh: no repel executable at $repel (build it first)" >&2; exit 2; }
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

make_set() {  # make_set COUNT FILE: the drug set cycled to COUNT records, each with its own name
    awk -v n="$1" -v m=0 'NF && $1 !~ /^#/ { s[m] = $1; nm[m] = $2; m++ }
        END { for (i = 0; i < n; i++) printf "%s %s-%d\n", s[i % m], nm[i % m], i + 1 }' "$here/drug_like.smi" >"$2"
}

source "$here/common.sh"  # peak_kib

echo "machine: $(nproc) cores, $(awk '/MemTotal/ {printf "%.0f GiB", $2 / 1048576}' /proc/meminfo)," \
     "$(lscpu | awk -F: '/Model name/ {gsub(/^ +/, "", $2); print $2; exit}'), load $(cut -d' ' -f1-3 /proc/loadavg)"
echo "repel: $repel"
make_set "$records" "$work/set.smi"

echo "1. throughput, $records drug-sized molecules -> SDF (targets: 2 threads >= 1.8 x 1 thread; >= 1,000 per second per core)"
declare -A wall
for threads in 1 2; do
    t0=$(date +%s%N)
    cpu=$( { TIMEFORMAT='%3U %3S'; time "$repel" build -i "$work/set.smi" -o "$work/t$threads.sdf" --threads "$threads" 2>"$work/err.txt" || true; } 2>&1 )
    t1=$(date +%s%N)
    ms=$(((t1 - t0) / 1000000))
    wall[$threads]=$ms
    summary=$(grep -E 'read [0-9]+, built' "$work/err.txt" | tail -1)
    awk -v ms="$ms" -v n="$records" -v t="$cpu" -v th="$threads" -v s="$summary" 'BEGIN {
        split(t, a, " "); c = a[1] + a[2];
        printf "   --threads %d: %s; wall %.2f s: %.0f molecules/s; CPU %.2f s: %.0f molecules per CPU second\n",
               th, s, ms / 1000, n * 1000 / ms, c, n / c }'
done
cmp -s "$work/t1.sdf" "$work/t2.sdf" && echo "   outputs identical" || echo "   OUTPUTS DIFFER"
awk -v a="${wall[1]}" -v b="${wall[2]}" 'BEGIN { printf "   speed-up of 2 threads over 1: %.2f\n", a / b }'

echo "2. peak memory (maximum resident set size)"
printf '   %-48s %10s\n' run peak_MiB
kib=$(peak_kib "$repel" build -i "$work/set.smi" -o "$work/m.sdf")
printf '   %-48s %10.1f\n' "$records molecules, every core" "$(awk -v k="$kib" 'BEGIN { print k / 1024 }')"
make_set "$big" "$work/big.smi"
t0=$(date +%s%N)
kib=$(peak_kib "$repel" build -i "$work/big.smi" -o "$work/big.sdf")
t1=$(date +%s%N)
printf '   %-48s %10.1f   (%.0f s, %s)\n' "$big molecules, every core" "$(awk -v k="$kib" 'BEGIN { print k / 1024 }')" \
    "$(awk -v ns=$((t1 - t0)) 'BEGIN { print ns / 1e9 }')" "$(du -h "$work/big.sdf" | cut -f1) of SDF"

echo "3. share of the work that is serial (instruction counts, valgrind --tool=callgrind, repeatable on a busy machine)"
if command -v valgrind >/dev/null && command -v callgrind_annotate >/dev/null; then
    make_set 408 "$work/cg.smi"
    valgrind --tool=callgrind --callgrind-out-file="$work/cg.out" "$repel" build -i "$work/cg.smi" -o "$work/cg.sdf" \
        --threads 1 >/dev/null 2>&1 || true
    callgrind_annotate --inclusive=yes "$work/cg.out" 2>/dev/null | awk '
        /PROGRAM TOTALS/ { gsub(/,/, "", $1); total = $1 }
        /repel::batch::build_chunk/ && !b { gsub(/,/, "", $1); b = $1 }
        END { s = 1 - b / total;
              printf "   408 molecules: %.4g instructions in all, %.2f%% in build_chunk (the parallel stage)\n", total, 100 * b / total;
              printf "   serial share (start-up, reading, writing, checkpoints) %.2f%%: Amdahl bound for 2 threads %.2f\n", 100 * s, 1 / (s + (1 - s) / 2) }'
else
    echo "   (valgrind not installed)"
fi
