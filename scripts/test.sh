#!/usr/bin/env bash
# Two tiers.
#   scripts/test.sh --quick   the everyday tier: the whole suite (unit tests, fuzz-corpus replays, the hostile-input
#                             table, the checks against ASE, xtb and published data) on the build made by
#                             scripts/setup.sh; a few minutes.
#   scripts/test.sh           the thorough tier, what CI runs: the quick tier, then the same suite built with
#                             AddressSanitizer and UndefinedBehaviorSanitizer and warnings as errors (build-asan/), then
#                             each libFuzzer target briefly (scripts/fuzz.sh, build-fuzz/).
# Further arguments go to the ctest runs (for example -R hostile, or -L unit: see the labels in tests/CMakeLists.txt).
# Environment: REPEL_SANITIZE_SUITE=0 skips the sanitizer suite, REPEL_FUZZ_SECONDS (default 30; 0 skips) sets the
# time per fuzz target, REPEL_BATCH_RECORDS (default 2500 in the sanitizer suite, 10,000 in the normal one) the
# size of the thread/shard/MPI identity batch.
set -euo pipefail
cd "$(dirname "$0")/.."
quick=0
if [ "${1:-}" = --quick ]; then
    quick=1
    shift
fi
[ -x build/bin/repel ] || scripts/setup.sh
jobs=$(nproc)
SECONDS=0
cmake --build build -j "$jobs"
ctest --test-dir build --output-on-failure -j "$jobs" "$@"
echo "test: normal suite passed (${SECONDS}s so far)"
if [ "$quick" = 1 ]; then
    exit 0
fi

if [ "${REPEL_SANITIZE_SUITE:-1}" != 0 ]; then
    # -O1 -g1: what the sanitizers recommend (fast to build, line numbers in reports, still quick to run).
    cmake -S . -B build-asan -DCMAKE_BUILD_TYPE=Release "-DCMAKE_CXX_FLAGS_RELEASE=-O1 -g1 -DNDEBUG" -DREPEL_SANITIZE=ON \
        -DREPEL_BENCHMARKS=OFF -DREPEL_WERROR=ON >/dev/null
    cmake --build build-asan -j "$jobs"
    # Every finding is fatal (halt_on_error); leaks are findings too.
    ASAN_OPTIONS=${ASAN_OPTIONS:-detect_leaks=1:halt_on_error=1:abort_on_error=1} \
    UBSAN_OPTIONS=${UBSAN_OPTIONS:-halt_on_error=1:print_stacktrace=1} \
    REPEL_BATCH_RECORDS=${REPEL_BATCH_RECORDS:-2500} \
        ctest --test-dir build-asan --output-on-failure -j "$jobs" "$@"
    echo "test: sanitizer suite passed (${SECONDS}s so far)"
fi

if [ "${REPEL_FUZZ_SECONDS:-30}" != 0 ]; then
    FUZZ_JOBS=$jobs scripts/fuzz.sh "${REPEL_FUZZ_SECONDS:-30}"
    echo "test: fuzz targets ran without a finding (${SECONDS}s in all)"
fi
