#!/usr/bin/env bash
# Whole-process figures for `repel build` (the benchmark executables measure the library alone):
#   1. one process for a single-centre species, wall time over RUNS runs (start-up, parse, solve, write);
#   2. molecules per second of `repel build -i FILE -o OUT.sdf` for the drug set repeated to about 1,000 records;
#   3. peak memory (maximum resident set size) of those runs and of single chains of 1,000 and 10,000 atoms.
# Plain bash and `date +%s%N`; /usr/bin/time -v for peak memory when it is installed, else /proc/PID/status VmHWM
# sampled while the process runs (a lower bound). Usage: benchmarks/throughput.sh [path/to/repel] [runs]
set -euo pipefail

here=$(cd "$(dirname "$0")" && pwd)
repel=${1:-$here/../build/bin/repel}
runs=${2:-50}
[[ -x $repel ]] || { echo "throughput.sh: no repel executable at $repel (build it first)" >&2; exit 2; }
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

now_ns() { date +%s%N; }

source "$here/common.sh"  # peak_kib

# CPU time (user + system, ms) per run of a command, averaged over RUNS runs: the figure that the load of a shared
# machine disturbs least. Bash's `time` keyword reads the children's rusage (microsecond resolution).
cpu_per_run() {
    local TIMEFORMAT='%3U %3S' i t
    t=$( { time { for ((i = 0; i < runs; i++)); do "$@" >/dev/null 2>&1 || true; done; }; } 2>&1 )
    awk -v t="$t" -v n="$runs" 'BEGIN { split(t, a, " "); printf "%.2f", (a[1] + a[2]) * 1000 / n }'
}

# Wall times in ms of RUNS runs of a command: prints "median min mean".
time_runs() {
    local t0 t1 i
    : >"$work/times.txt"
    for ((i = 0; i < runs; i++)); do
        t0=$(now_ns)
        "$@" >/dev/null 2>&1
        t1=$(now_ns)
        echo $(((t1 - t0) / 1000)) >>"$work/times.txt"
    done
    sort -n "$work/times.txt" | awk '{a[NR] = $1; s += $1} END {
        m = (NR % 2) ? a[(NR + 1) / 2] : (a[NR / 2] + a[NR / 2 + 1]) / 2;
        printf "%.2f %.2f %.2f\n", m / 1000, a[1] / 1000, s / NR / 1000 }'
}

echo "machine: $(nproc) cores, $(awk '/MemTotal/ {printf "%.0f GiB", $2 / 1048576}' /proc/meminfo)," \
     "$(lscpu | awk -F: '/Model name/ {gsub(/^ +/, "", $2); print $2; exit}')"
echo "repel: $repel"
echo

echo "1. one process for a single-centre species, $runs runs each (target: under 20 ms)"
printf '   %-24s %10s %10s %10s %10s\n' input median_ms min_ms mean_ms cpu_ms
for input in 'F[S](F)(F)F' 'F[Xe](F)(F)F' 'XeF4' 'O' 'ClO4-'; do
    read -r med min mean < <(time_runs "$repel" build "$input")
    printf '   %-24s %10s %10s %10s %10s\n' "$input" "$med" "$min" "$mean" "$(cpu_per_run "$repel" build "$input")"
done
read -r med min mean < <(time_runs "$repel" --version)
printf '   %-24s %10s %10s %10s %10s   (start-up alone)\n' "repel --version" "$med" "$min" "$mean" \
    "$(cpu_per_run "$repel" --version)"
echo

echo "2. molecules per second, one process (target: at least 1,000 per second per core)"
set_file=$here/drug_like.smi
records=$(grep -cv '^\s*\(#\|$\)' "$set_file")
repeat=$(((1000 + records - 1) / records))
for ((i = 0; i < repeat; i++)); do grep -v '^\s*\(#\|$\)' "$set_file"; done >"$work/drugs.smi"
total=$((records * repeat))
for fmt in sdf xyz; do
    t0=$(now_ns)
    cpu=$( { TIMEFORMAT='%3U %3S'; time "$repel" build -i "$work/drugs.smi" -o "$work/x.$fmt" 2>"$work/stderr.txt" || true; } 2>&1 )
    t1=$(now_ns)
    summary=$(grep -E 'read [0-9]+, built [0-9]+, failed [0-9]+' "$work/stderr.txt" | tail -1 || true)
    built=$(sed -E 's/.*built ([0-9]+).*/\1/' <<<"${summary:-built 0}")
    ms=$(((t1 - t0) / 1000000))
    read -r rate cpu_rate cpu_s < <(awk -v b="$built" -v ms="$ms" -v t="$cpu" 'BEGIN {
        split(t, a, " "); c = a[1] + a[2];
        printf "%.0f %.0f %.2f\n", (ms > 0 ? b * 1000 / ms : 0), (c > 0 ? b / c : 0), c }')
    echo "   -o x.$fmt: $total records ($records molecules x $repeat), $summary"
    echo "      wall ${ms} ms: $rate built molecules/s;  CPU (user+sys) ${cpu_s} s: $cpu_rate built molecules per CPU second"
done
echo

echo "3. peak memory (maximum resident set size)"
printf '   %-44s %10s\n' run peak_MiB
mib() { awk -v k="$1" 'BEGIN { printf "%.1f", k / 1024 }'; }
printf '   %-44s %10s\n' "build SF4" "$(mib "$(peak_kib "$repel" build 'F[S](F)(F)F')")"
printf '   %-44s %10s\n' "build -i drug set x$repeat -o x.sdf" "$(mib "$(peak_kib "$repel" build -i "$work/drugs.smi" -o "$work/m.sdf")")"
for atoms in 1000 3000 10000; do
    units=$(((atoms - 2) / 7))
    peg="O$(printf 'CCO%.0s' $(seq 1 "$units"))"
    t0=$(now_ns)
    kib=$(peak_kib "$repel" build "$peg" -o "$work/peg.sdf")
    t1=$(now_ns)
    printf '   %-44s %10s   (%d ms)\n' "build PEG chain, $((7 * units + 2)) atoms" "$(mib "$kib")" $(((t1 - t0) / 1000000))
done
