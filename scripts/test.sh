#!/usr/bin/env bash
# Runs the whole test suite (unit tests, fuzz-corpus replays, the hostile-input table and the checks against ASE and
# xtb) on the build made by scripts/setup.sh; then builds the same suite with AddressSanitizer and
# UndefinedBehaviorSanitizer in build-asan/ and runs all of it again there; then runs each libFuzzer target briefly
# (scripts/fuzz.sh, build-fuzz/). Arguments go to both ctest runs (for example -R hostile).
# Environment: REPEL_SANITIZE_SUITE=0 skips the sanitizer suite, REPEL_FUZZ_SECONDS (default 30; 0 skips) sets the
# time per fuzz target.
set -euo pipefail
cd "$(dirname "$0")/.."
[ -x build/bin/repel ] || scripts/setup.sh
jobs=$(nproc)
SECONDS=0
cmake --build build -j "$jobs"
ctest --test-dir build --output-on-failure -j "$jobs" "$@"
echo "test: normal suite passed (${SECONDS}s so far)"

if [ "${REPEL_SANITIZE_SUITE:-1}" != 0 ]; then
    # -O1 -g1: what the sanitizers recommend (fast to build, line numbers in reports, still quick to run).
    cmake -S . -B build-asan -DCMAKE_BUILD_TYPE=Release "-DCMAKE_CXX_FLAGS_RELEASE=-O1 -g1 -DNDEBUG" -DREPEL_SANITIZE=ON \
        -DREPEL_BENCHMARKS=OFF >/dev/null
    cmake --build build-asan -j "$jobs"
    # Every finding is fatal (halt_on_error); leaks are findings too.
    ASAN_OPTIONS=${ASAN_OPTIONS:-detect_leaks=1:halt_on_error=1:abort_on_error=1} \
    UBSAN_OPTIONS=${UBSAN_OPTIONS:-halt_on_error=1:print_stacktrace=1} \
        ctest --test-dir build-asan --output-on-failure -j "$jobs" "$@"
    echo "test: sanitizer suite passed (${SECONDS}s so far)"
fi

if [ "${REPEL_FUZZ_SECONDS:-30}" != 0 ]; then
    FUZZ_JOBS=$jobs scripts/fuzz.sh "${REPEL_FUZZ_SECONDS:-30}"
    echo "test: fuzz targets ran without a finding (${SECONDS}s in all)"
fi
