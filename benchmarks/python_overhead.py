"""Overhead of the Python module per call: repel.build on the drug set (benchmarks/drug_like.smi, the molecules that
build), CPU time per molecule after a warm-up pass, to compare with the library alone on the same set and the same
steps, bench_build's BM_BuildDrugSetFromText (read_smiles + make_hydrogens_explicit + build_structure per record,
refinement on; its "CPU" column divided by the molecules it reports). Not a test.

    PYTHONPATH=build/python python3 benchmarks/python_overhead.py [passes]
    build/bin/bench_build --benchmark_filter=BM_BuildDrugSetFromText --benchmark_repetitions=5

repel.build does the same steps through the front door, then copies the result into plain arrays (elements,
numbers, positions, bonds) and wraps it in a Python object; reading the arrays is left out, as the library alone
does not make them either. CPU time (time.process_time) on one thread, as Google Benchmark's CPU column.
"""
import sys
import time

from python_gil import drug_set  # the same set, failures dropped

import repel


def main():
    passes = int(sys.argv[1]) if len(sys.argv) > 1 else 5
    records = drug_set()  # one pass already: the per-thread caches are warm, as in bench_build's repeated runs
    per_pass = []
    for _ in range(passes):
        start = time.process_time()
        for smiles in records:
            repel.build(smiles, notation="smiles")  # as bench_build reads them
        per_pass.append((time.process_time() - start) / len(records))
    per_pass.sort()
    med = per_pass[len(per_pass) // 2]
    print(f"repel.build: {len(records)} molecules, CPU per molecule median {med * 1e6:.0f} us "
          f"(min {per_pass[0] * 1e6:.0f}, max {per_pass[-1] * 1e6:.0f}) over {passes} passes; "
          f"{1 / med:.0f} molecules per CPU second")


if __name__ == "__main__":
    main()
