#!/usr/bin/env bash
# Builds the libFuzzer targets (clang, AddressSanitizer + UndefinedBehaviorSanitizer, in build-fuzz/) and runs each
# for the given number of seconds:  scripts/fuzz.sh [seconds] [target...]   (default 60 s, every target).
# Targets: smiles formula xyz pdb sdf (or fuzz_smiles ...). Each run starts from the seed corpus
# tests/fuzz/corpus/<target>/ plus the regression inputs, and keeps what it learns in build-fuzz/corpus/<target>/
# (the repository's corpus is not touched). A finding stops the run, leaves the input as build-fuzz/crash-* (or
# leak-*, timeout-*, oom-*) and makes the script fail; turn it into a regression input (README.md, Fuzzing).
# Environment: FUZZ_JOBS=2 runs two targets at a time; FUZZ_ARGS adds libFuzzer options; FUZZ_LOG_DIR keeps logs.
set -euo pipefail
cd "$(dirname "$0")/.."
seconds=${1:-60}
[ $# -gt 0 ] && shift
targets=("$@")
[ ${#targets[@]} -gt 0 ] || targets=(smiles formula xyz pdb sdf)
for i in "${!targets[@]}"; do targets[$i]=fuzz_${targets[$i]#fuzz_}; done

CXX_CLANG=${CXX_CLANG:-$(command -v clang++ || command -v clang++-14)}
cmake -S . -B build-fuzz -DCMAKE_BUILD_TYPE=RelWithDebInfo -DCMAKE_CXX_COMPILER="$CXX_CLANG" -DREPEL_FUZZ=ON >/dev/null
cmake --build build-fuzz -j "$(nproc)" --target "${targets[@]}"

logs=${FUZZ_LOG_DIR:-build-fuzz/logs}
mkdir -p "$logs"
run_one() {
    local t=$1
    local rc=0
    mkdir -p "build-fuzz/corpus/$t"
    # Seed corpus and regression inputs, where the repository has them (git keeps no empty folder).
    local inputs=("build-fuzz/corpus/$t")
    for d in "tests/fuzz/corpus/$t" "tests/fuzz/regressions/$t"; do [ -d "$d" ] && inputs+=("$d"); done
    # -timeout: one input may take this long (a hang guard well above any small molecule's build time);
    # -rss_limit_mb: an input that makes the process this large is a finding.
    ASAN_OPTIONS=detect_leaks=1 UBSAN_OPTIONS=print_stacktrace=1 \
    "build-fuzz/bin/$t" -max_total_time="$seconds" -timeout=20 -rss_limit_mb=4096 -print_final_stats=1 \
        -artifact_prefix="build-fuzz/$t-" ${FUZZ_ARGS:-} \
        "${inputs[@]}" >"$logs/$t.log" 2>&1 || rc=$?
    # The last status line: executions, coverage (cov: edges, ft: features), corpus size and speed.
    local last; last=$(grep -E '^#[0-9]+' "$logs/$t.log" | tail -1 || true)
    local rate; rate=$(grep -E 'stat::average_exec_per_sec' "$logs/$t.log" | awk '{print $2}' || true)
    echo "fuzz: $t ${seconds}s: ${last} | exec/s average ${rate:-?} | exit $rc"
    return $rc
}
status=0
jobs_max=${FUZZ_JOBS:-1}
pids=()
for t in "${targets[@]}"; do
    run_one "$t" &
    pids+=($!)
    if [ ${#pids[@]} -ge "$jobs_max" ]; then
        wait "${pids[0]}" || status=1
        pids=("${pids[@]:1}")
    fi
done
for p in "${pids[@]}"; do wait "$p" || status=1; done
if [ $status -ne 0 ]; then
    echo "fuzz: a target found something; see $logs/ and build-fuzz/fuzz_*-crash-*" >&2
    for t in "${targets[@]}"; do grep -A3 'FUZZ FINDING\|ERROR: \|runtime error' "$logs/$t.log" | head -20 >&2 || true; done
fi
exit $status
