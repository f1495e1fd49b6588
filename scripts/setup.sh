#!/usr/bin/env bash
# Sets up a fresh Debian machine for repel: installs the Debian packages that are missing (and only those),
# configures and builds in ./build, then builds the bundled sample library as a smoke run.
set -euo pipefail
cd "$(dirname "$0")/.."

packages=(build-essential cmake pkg-config libeigen3-dev libnlopt-cxx-dev libfmt-dev libspdlog-dev libcli11-dev
          nlohmann-json3-dev libgtest-dev libgmock-dev libbenchmark-dev libtbb-dev openmpi-bin libopenmpi-dev python3 python3-ase python3-numpy xtb
          clang libclang-rt-14-dev  # clang and its runtime libraries: the libFuzzer targets (scripts/fuzz.sh)
          chromium nodejs  # the browser test of the check report (tests/external/check_report_browser.js)
          pybind11-dev python3-pybind11 python3-pytest python3-venv)  # the Python module (python/), its tests (tests/python) and its install check (a venv)
missing=()
for p in "${packages[@]}"; do
  dpkg-query -W -f='${Status}' "$p" 2>/dev/null | grep -q "install ok installed" || missing+=("$p")
done
# npm installs puppeteer-core for the browser test. Debian's npm package only when no npm is there: a nodejs from
# another source brings its own npm, and Debian's would conflict with it.
command -v npm > /dev/null || missing+=(npm)
if [ ${#missing[@]} -gt 0 ]; then
  echo "setup: installing ${missing[*]}"
  SUDO=""; [ "$(id -u)" -eq 0 ] || SUDO="sudo"
  $SUDO apt-get update -qq
  DEBIAN_FRONTEND=noninteractive $SUDO apt-get install -y -qq --no-install-recommends "${missing[@]}"
fi

# puppeteer-core for the browser test, from the npm registry at the version of package-lock.json; it drives Debian's
# chromium and must never download a browser of its own (PUPPETEER_SKIP_DOWNLOAD). Skipped when it is up to date.
browser_dir=tests/external/browser
if [ ! -f "$browser_dir/node_modules/.package-lock.json" ] || \
   [ "$browser_dir/package-lock.json" -nt "$browser_dir/node_modules/.package-lock.json" ]; then
  echo "setup: installing puppeteer-core into $browser_dir/node_modules"
  (cd "$browser_dir" && PUPPETEER_SKIP_DOWNLOAD=1 npm ci --no-audit --no-fund)
fi

cmake -S . -B build -DCMAKE_BUILD_TYPE=Release ${REPEL_CMAKE_ARGS:-}
cmake --build build -j "$(nproc)"

echo "setup: built build/bin/repel; building the sample library samples/halide-lab.smi"
build/bin/repel build -i samples/halide-lab.smi -o build/halide-lab.sdf --errors build/halide-lab.errors || true
echo "setup: wrote build/halide-lab.sdf"
