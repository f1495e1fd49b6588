#!/usr/bin/env python3
"""The installed package works for a program outside this source tree (how CI builds examples/consumer).

Usage (ctest): check_package.py BUILD_DIR SOURCE_DIR CXX_COMPILER [EXTRA_CXX_FLAGS]

1. `cmake --install BUILD_DIR --prefix TMP`: the library, <repel/repel.hpp> and the headers it includes, the CMake
   package files (repelConfig.cmake, its version file, the exported targets) and the repel executable.
2. examples/consumer is configured against TMP only (find_package(repel) through CMAKE_PREFIX_PATH), built and run.
3. Asserted: water's XYZ from the consumer has 3 atoms, O first, and both O-H bonds within 0.03 A of 0.9572 A
   (gas-phase water, Benedict, Gailar and Plyler, J. Chem. Phys. 24, 1139 (1956); from memory); the consumer's
   XYZ is byte for byte what the installed `repel build` writes for the same input (the front door and the command
   line run the same steps), for water and for a compound of samples/halide-lab.smi; the consumer's report on
   standard error names water's oxygen AX2E2 and bent and finds nothing in the audit of its own build; headers
   outside <prefix>/include/repel are not installed.
"""

import math
import os
import shutil
import subprocess
import sys
import tempfile


def run(cmd, **kw):
    r = subprocess.run(cmd, capture_output=True, text=True, **kw)
    if r.returncode != 0:
        sys.exit(f"FAIL: {' '.join(cmd)} exited {r.returncode}\n{r.stdout}\n{r.stderr}")
    return r


def xyz_atoms(text):
    lines = text.splitlines()
    n = int(lines[0])
    atoms = []
    for line in lines[2:2 + n]:
        el, x, y, z = line.split()[:4]
        atoms.append((el, float(x), float(y), float(z)))
    return atoms


def main():
    build_dir, source_dir, cxx = sys.argv[1:4]
    extra_flags = sys.argv[4] if len(sys.argv) > 4 else ""
    failures = []
    with tempfile.TemporaryDirectory(prefix="repel-package-") as tmp:
        prefix = os.path.join(tmp, "prefix")
        run(["cmake", "--install", build_dir, "--prefix", prefix])
        headers = []
        for root, _, files in os.walk(os.path.join(prefix, "include")):
            headers += [os.path.relpath(os.path.join(root, f), prefix) for f in files]
        if sorted(headers) != ["include/repel/error.hpp", "include/repel/molecule.hpp", "include/repel/repel.hpp"]:
            failures.append(f"installed headers: {sorted(headers)}")

        consumer = os.path.join(tmp, "consumer")
        configure = ["cmake", "-S", os.path.join(source_dir, "examples", "consumer"), "-B", consumer,
                     f"-DCMAKE_PREFIX_PATH={prefix}", f"-DCMAKE_CXX_COMPILER={cxx}", "-DCMAKE_BUILD_TYPE=Release"]
        if extra_flags:
            configure += [f"-DCMAKE_CXX_FLAGS={extra_flags}", f"-DCMAKE_EXE_LINKER_FLAGS={extra_flags}"]
        run(configure)
        run(["cmake", "--build", consumer, "-j1"])
        exe = os.path.join(consumer, "consumer")
        repel = os.path.join(prefix, "bin", "repel")

        water = run([exe])
        atoms = xyz_atoms(water.stdout)
        if len(atoms) != 3 or atoms[0][0] != "O" or sorted(a[0] for a in atoms) != ["H", "H", "O"]:
            failures.append(f"water: atoms {atoms}")
        else:
            for h in atoms[1:]:
                d = math.dist(atoms[0][1:], h[1:])
                if abs(d - 0.9572) > 0.03:
                    failures.append(f"water: O-H {d:.4f} A, expected 0.9572 +- 0.03")
        if "centre 1: AX2E2 bent" not in water.stderr or ": 0 findings" not in water.stderr:
            failures.append(f"water: consumer's report on standard error:\n{water.stderr}")

        with open(os.path.join(source_dir, "samples", "halide-lab.smi")) as f:
            lab = [line.split()[0] for line in f if line.strip() and not line.startswith("#")]
        for text in ["O", lab[0]]:
            ours = run([exe, text]).stdout
            theirs = run([repel, "build", text]).stdout
            if ours != theirs:
                failures.append(f"{text}: the consumer's XYZ differs from `repel build`'s:\n{ours}\n{theirs}")
        shutil.rmtree(consumer)
    if failures:
        print("\n".join("FAIL: " + f for f in failures))
        return 1
    print("package: installed, consumer built against it, water and", lab[0], "as `repel build` writes them")
    return 0


if __name__ == "__main__":
    sys.exit(main())
