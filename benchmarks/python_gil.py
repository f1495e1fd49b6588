"""GIL release of the Python module: the same work done by one Python thread, or split over two. Each "list" is
the drug set (benchmarks/drug_like.smi) built with repel.build once per record; `--threads 1` builds two lists on
one thread, `--threads 2` one list on each of two threads. Prints the wall time; the ratio one/two is the speed-up
from two threads (2.0 when the GIL is released for all of the work and two cores are free). Not a test.

    PYTHONPATH=build/python python3 benchmarks/python_gil.py --threads 1 [--lists-per-thread 1]
    PYTHONPATH=build/python python3 benchmarks/python_gil.py --threads 2
    PYTHONPATH=build/python python3 benchmarks/python_gil.py --compare      # both in one process, with the ratio
"""
import argparse
import threading
import time
from pathlib import Path

import repel

SET = Path(__file__).resolve().with_name("drug_like.smi")


def drug_set():
    out = []
    for line in SET.read_text().splitlines():
        if line.strip() and not line.startswith("#"):
            smiles = line.split()[0]
            try:
                repel.build(smiles)  # keep only what builds, as bench_build does; also warms the caches
                out.append(smiles)
            except (repel.InputError, repel.UnsupportedError):
                pass
    return out


def build_list(records, lists):
    for _ in range(lists):
        for smiles in records:
            repel.build(smiles)


class Workers:
    """Two threads that live for the whole run: the library keeps a cache of solved electron-domain arrangements
    per thread, so a new thread would pay the cold solves again. Each builds the list once before timing starts."""

    def __init__(self, records):
        self.records, self.job = records, None
        self.start, self.done = threading.Barrier(3), threading.Barrier(3)
        self.threads = [threading.Thread(target=self.loop, args=(k,), daemon=True) for k in range(2)]
        for t in self.threads:
            t.start()
        self.run(lambda k: build_list(records, 1))  # warm-up

    def loop(self, k):
        while True:
            self.start.wait()
            self.job(k)
            self.done.wait()

    def run(self, job):
        self.job = job
        t0, c0 = time.perf_counter(), time.process_time()
        self.start.wait()
        self.done.wait()
        self.cpu = time.process_time() - c0  # the process's CPU seconds (both threads) of the last run
        return time.perf_counter() - t0


def run(workers, threads, lists_per_thread):
    """Wall seconds for the work of two threads each building `lists_per_thread` lists: done by both threads, or
    all by thread 0 while thread 1 idles."""
    records = workers.records
    if threads == 2:
        return workers.run(lambda k: build_list(records, lists_per_thread))
    return workers.run(lambda k: build_list(records, 2 * lists_per_thread) if k == 0 else None)


def main():
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("--threads", type=int, choices=[1, 2], default=2)
    p.add_argument("--lists-per-thread", type=int, default=10)
    p.add_argument("--compare", action="store_true", help="time both, alternately, 5 times each; print the ratios")
    a = p.parse_args()
    records = drug_set()
    workers = Workers(records)
    if not a.compare:
        print(f"{a.threads} thread(s): {run(workers, a.threads, a.lists_per_thread):.3f} s wall "
              f"({2 * a.lists_per_thread * len(records)} builds)")
        return
    ratios, reference = [], []
    for _ in range(5):
        one = run(workers, 1, a.lists_per_thread)
        two = run(workers, 2, a.lists_per_thread)
        busy = workers.cpu / two  # cores kept busy by the two threads: 2.0 when nothing else runs and no lock waits
        ratios.append(one / two)
        # The same work through build_many on two worker threads of its own, which hold no GIL at all: what the
        # machine gives two threads right now, to read the ratio above against.
        t0 = time.perf_counter()
        for _ in repel.build_many(records * (2 * a.lists_per_thread), threads=2):
            pass
        reference.append(one / (time.perf_counter() - t0))
        print(f"one thread {one:.3f} s, two threads {two:.3f} s ({busy:.2f} cores busy): ratio {one / two:.2f}; "
              f"build_many(threads=2) ratio {reference[-1]:.2f}")
    print(f"median ratio {sorted(ratios)[2]:.2f} (min {min(ratios):.2f}, max {max(ratios):.2f}); "
          f"build_many median {sorted(reference)[2]:.2f}")


if __name__ == "__main__":
    main()
