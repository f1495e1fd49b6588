#!/usr/bin/env bash
# Runs the whole test suite (unit tests and the checks against ASE and xtb) on the build made by scripts/setup.sh.
set -euo pipefail
cd "$(dirname "$0")/.."
[ -x build/bin/repel ] || scripts/setup.sh
cmake --build build -j "$(nproc)"
ctest --test-dir build --output-on-failure -j "$(nproc)" "$@"
