"""Leak check of the Python module (ctest python.leak): 100,000 calls of repel.build on a small molecule (reading
its arrays and text; every 100th call also an InputError, a build_many with a Failure, and a check), and the peak
resident memory after all 100,000 calls may be at most MARGIN_KIB above the peak after the first 10,000. Not a pytest
file (its name does not start with test_): it runs alone, so that no other test's allocations move the peak.

Why 4 MiB: a Structure of this molecule with its arrays is a few hundred bytes, so leaking one per call would add
well over 10 MiB over the last 90,000 calls, and a leak of 50 bytes per call 4.3 MiB. What the allocator keeps after
warm-up (free lists, the arenas of build_many's worker threads) measured 0 KiB of growth here (2026-12-04, 4.4 s for
the whole run), so 4 MiB tells a leak from noise with room to spare.
"""
import resource
import sys
import time

import repel

CALLS = 100_000
WARM_UP = 10_000
MARGIN_KIB = 4096


def peak_kib():
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss  # KiB on Linux (getrusage(2))


def one_call(k):
    s = repel.build("C#N", name="hydrogen-cyanide")  # 3 atoms: the module's own cost dominates
    assert s.positions.shape == (3, 3) and s.bonds.shape == (2, 3) and s.elements[0] == "C"
    assert s.to_text("xyz").startswith("3\n")
    if k % 100 == 0:  # the other paths, less often: an InputError, build_many with a Failure, check
        try:
            repel.build("C(C")
        except repel.InputError:
            pass
        else:
            raise AssertionError("C(C was built")
        assert [bool(r) for r in repel.build_many(["O", "C(C", ("N", "ammonia")], threads=2)] == [True, False, True]
        assert repel.check(s)[0]["findings"] == []


def main():
    start = time.perf_counter()
    for k in range(WARM_UP):
        one_call(k)
    after_warm_up = peak_kib()
    for k in range(WARM_UP, CALLS):
        one_call(k)
    after_all = peak_kib()
    growth = after_all - after_warm_up
    print(f"peak RSS after {WARM_UP} calls {after_warm_up} KiB, after {CALLS} {after_all} KiB: "
          f"+{growth} KiB (margin {MARGIN_KIB} KiB), {time.perf_counter() - start:.1f} s")
    return 0 if growth <= MARGIN_KIB else 1


if __name__ == "__main__":
    sys.exit(main())
