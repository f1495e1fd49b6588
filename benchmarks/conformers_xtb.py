#!/usr/bin/env python3
"""How low the conformers of `repel build --conformers N` lie on a real quantum-chemistry surface (GFN2-xTB, Debian's
xtb), against random-torsion starts of the same molecules. A measurement, not a test: it prints a table and the
distribution, and writes nothing into the repository.

For each flexible molecule of the set below (29 drugs of benchmarks/drug_like.smi, chosen for 5-12 rotatable bonds,
and the alanine dipeptide model Ac-Ala-NHMe; `nine` as the last argument: the first nine only, the earlier set):
  - repel's ensemble (N conformers, default 10) is optimised by xtb, each conformer from repel's coordinates;
  - R random-torsion starts (default 20) are optimised too: repel's default build with every rotatable bond (single,
    in no ring, both ends with another heavy neighbour, not an amide or ester C-N/C-O) turned to a uniformly random
    angle (Python's random, seed 1), starts with heavy atoms closer than 1.6 A (not bonded) redrawn;
  - reported: the lowest xtb energy reached from the ensemble minus the lowest from the random starts (kcal/mol;
    negative: the ensemble found a lower minimum), the xtb cycles from the default build, the ensemble's first
    member's xtb energy above the ensemble's lowest (how well repel's ranking picks the xtb minimum), and whether
    every optimum kept the connectivity.
Usage: conformers_xtb.py PATH/TO/repel [N] [R] [NAME,NAME... | nine]
(about 2 hours on 2 cores with N 10 and R 12 for the thirty; REPEL_XTB_CACHE=DIR keeps the optimisations)
"""

import concurrent.futures
import math
import os
import random
import re
import shutil
import statistics
import subprocess
import sys
import tempfile

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.join(HERE, "..", "tests", "external"))
from common import parse_xyz, perceive_bonds, xyz_frames  # noqa: E402

HARTREE_KCAL = 627.509  # kcal/mol per hartree (CODATA, from memory)
XTB = shutil.which("xtb") or "/usr/bin/xtb"
NAMES = ["fluoxetine", "venlafaxine", "bisoprolol", "chloroquine", "enalapril", "fentanyl", "labetalol",
         "methadone"]
EXTRA = [("CC(=O)N[C@@H](C)C(=O)NC", "Ac-Ala-NHMe")]  # the alanine dipeptide model (common practice)
# Twenty-one more drugs of the set with 6-11 rotatable bonds by rotatable() below (of 39-62 atoms, for xtb's time),
# after the first nine so that their random starts stay as they were (one random stream over the molecules in order).
MORE = ["ranitidine", "famotidine", "hydroxychloroquine", "tamsulosin", "oxybutynin", "carvedilol", "tamoxifen",
        "ramipril", "losartan", "cetirizine", "amlodipine", "pioglitazone", "pantoprazole", "oseltamivir", "glipizide",
        "sumatriptan", "lansoprazole", "haloperidol", "duloxetine", "citalopram", "diltiazem"]


def molecules():
    found = {}
    with open(os.path.join(HERE, "drug_like.smi")) as f:
        for line in f:
            if line.strip() and not line.startswith("#"):
                smiles, name = line.split(None, 1)
                found[name.strip()] = smiles
    return [(found[n], n) for n in NAMES] + EXTRA + [(found[n], n) for n in MORE]


def xtb_opt(xyz_text, charge=0, uhf=0):
    # REPEL_XTB_CACHE=DIR keeps each optimisation's result by its start, so that a second run (another ensemble of
    # the same molecules) repeats none of the random starts.
    cache = os.environ.get("REPEL_XTB_CACHE")
    if cache:
        import hashlib
        import json
        key = os.path.join(cache, hashlib.sha256(xyz_text.encode()).hexdigest() + ".json")
        if os.path.exists(key):
            with open(key) as f:
                return json.load(f)
        os.makedirs(cache, exist_ok=True)
        result = xtb_run(xyz_text, charge, uhf)
        with open(key, "w") as f:
            json.dump(result, f)
        return result
    return xtb_run(xyz_text, charge, uhf)


def xtb_run(xyz_text, charge, uhf):
    work = tempfile.mkdtemp(prefix="repel-conf-xtb-")
    try:
        with open(os.path.join(work, "start.xyz"), "w") as f:
            f.write(xyz_text)
        env = dict(os.environ, OMP_NUM_THREADS="1", OMP_STACKSIZE="500M")
        r = subprocess.run([XTB, "start.xyz", "--opt", "normal", "--gfn", "2", "--chrg", str(charge), "--uhf",
                            str(uhf), "--cycles", "600"], cwd=work, capture_output=True, text=True, timeout=1800,
                           env=env)
        m = re.search(r"GEOMETRY OPTIMIZATION CONVERGED AFTER\s+(\d+)\s+ITERATIONS", r.stdout)
        e = re.findall(r"TOTAL ENERGY\s+(-?\d+\.\d+)\s+Eh", r.stdout)
        opt = open(os.path.join(work, "xtbopt.xyz")).read() if os.path.exists(os.path.join(work, "xtbopt.xyz")) else None
        return {"cycles": int(m.group(1)) if m else None, "energy": float(e[-1]) if e else None, "xyz": opt}
    finally:
        shutil.rmtree(work, ignore_errors=True)


def same_bonds(start_xyz, end_xyz):
    s1, c1, _, _ = parse_xyz(start_xyz)
    s2, c2, _, _ = parse_xyz(end_xyz)
    return sorted(map(tuple, map(sorted, perceive_bonds(s1, c1)))) == sorted(map(tuple, map(sorted, perceive_bonds(s2, c2))))


def rotatable(symbols, bonds):
    n = len(symbols)
    adj = [[] for _ in range(n)]
    for a, b in bonds:
        adj[a].append(b)
        adj[b].append(a)

    def in_ring(a, b):
        seen, stack = {a}, [x for x in adj[a] if x != b]
        seen.update(stack)
        while stack:
            x = stack.pop()
            if x == b:
                return True
            for y in adj[x]:
                if y not in seen:
                    seen.add(y)
                    stack.append(y)
        return False

    def heavy_others(a, b):
        return [x for x in adj[a] if x != b and symbols[x] != "H"]

    out = []
    for a, b in bonds:
        if symbols[a] == "H" or symbols[b] == "H" or in_ring(a, b):
            continue
        if not heavy_others(a, b) or not heavy_others(b, a):
            continue
        # an amide or ester C-N / C-O: a carbon with a terminal O next to an N or O (planar; common practice)
        amide = False
        for c, x in ((a, b), (b, a)):
            if symbols[c] == "C" and symbols[x] in ("N", "O") and any(symbols[y] == "O" and len(adj[y]) == 1 for y in adj[c]):
                amide = True
        if amide:
            continue
        # the side of b
        side, stack = {b}, [b]
        while stack:
            x = stack.pop()
            for y in adj[x]:
                if y != a and y not in side:
                    side.add(y)
                    stack.append(y)
        out.append((a, b, sorted(side)))
    return out


def random_start(symbols, coords, rot, bonds, rng):
    bonded = {tuple(sorted(b)) for b in bonds}
    heavy = [i for i, s in enumerate(symbols) if s != "H"]
    for _ in range(200):
        x = coords.copy()
        for a, b, side in rot:
            axis = x[b] - x[a]
            axis /= np.linalg.norm(axis)
            t = rng.uniform(-math.pi, math.pi)
            k = np.array([[0, -axis[2], axis[1]], [axis[2], 0, -axis[0]], [-axis[1], axis[0], 0]])
            r = np.eye(3) + math.sin(t) * k + (1 - math.cos(t)) * k @ k
            for i in side:
                x[i] = x[b] + r @ (x[i] - x[b])
        ok = all(np.linalg.norm(x[i] - x[j]) >= 1.6 for p, i in enumerate(heavy) for j in heavy[p + 1:]
                 if (min(i, j), max(i, j)) not in bonded)
        if ok:
            return x
    return None


def xyz_text(symbols, x, comment="random start"):
    return f"{len(symbols)}\n{comment}\n" + "".join(f"{s} {p[0]:.6f} {p[1]:.6f} {p[2]:.6f}\n" for s, p in zip(symbols, x))


def main():
    repel = sys.argv[1]
    count = int(sys.argv[2]) if len(sys.argv) > 2 else 10
    randoms = int(sys.argv[3]) if len(sys.argv) > 3 else 20
    only = sys.argv[4].split(",") if len(sys.argv) > 4 else None
    if only == ["nine"]:
        only = NAMES + [name for _, name in EXTRA]
    rng = random.Random(1)
    rows = []
    pool = concurrent.futures.ThreadPoolExecutor(max_workers=2)
    for smiles, name in molecules():
        if only and name not in only:
            continue
        single = subprocess.run([repel, "build", smiles], capture_output=True, text=True, check=True).stdout
        ensemble = xyz_frames(subprocess.run([repel, "build", smiles, "--conformers", str(count)], capture_output=True,
                                         text=True, check=True).stdout)
        symbols, coords, _, _ = parse_xyz(single)
        bonds = perceive_bonds(symbols, coords)
        rot = rotatable(symbols, bonds)
        starts = [xyz_text(symbols, x) for x in (random_start(symbols, coords, rot, bonds, rng) for _ in range(randoms))
                  if x is not None]
        jobs = [single] + ensemble + starts
        results = list(pool.map(xtb_opt, jobs))
        ok = all(r["xyz"] and same_bonds(j, r["xyz"]) for j, r in zip(jobs[:1 + len(ensemble)], results))
        e_single = results[0]
        e_ens = [r["energy"] for r in results[1:1 + len(ensemble)] if r["energy"] is not None]
        e_rand = [r["energy"] for r in results[1 + len(ensemble):] if r["energy"] is not None]
        rows.append({
            "name": name, "rotatable": len(rot), "conformers": len(ensemble), "random": len(e_rand),
            "single_cycles": e_single["cycles"],
            "ensemble_minus_random": (min(e_ens) - min(e_rand)) * HARTREE_KCAL,
            "first_above_lowest": (e_ens[0] - min(e_ens)) * HARTREE_KCAL,
            "single_above_lowest": (e_single["energy"] - min(e_ens + e_rand)) * HARTREE_KCAL,
            "lowest_ensemble": min(e_ens), "lowest_random": min(e_rand),
            "connectivity_kept": ok,
        })
        r = rows[-1]
        print(f"{name:14s} rot {r['rotatable']:2d} conf {r['conformers']:2d} random {r['random']:2d} "
              f"single cycles {r['single_cycles']} ensemble-random {r['ensemble_minus_random']:+6.2f} "
              f"first-above-lowest {r['first_above_lowest']:5.2f} single-above-lowest {r['single_above_lowest']:5.2f} "
              f"connectivity {'kept' if ok else 'CHANGED'} (lowest ensemble {min(e_ens):.6f}, random {min(e_rand):.6f} Eh)",
              flush=True)
    d = [r["ensemble_minus_random"] for r in rows]
    print(f"ensemble lowest minus random lowest (kcal/mol): median {statistics.median(d):+.2f}, "
          f"within 1 kcal/mol or below: {sum(x <= 1 for x in d)} of {len(d)}, range {min(d):+.2f}..{max(d):+.2f}")
    print(f"ensemble's first above its lowest (kcal/mol): median "
          f"{statistics.median(r['first_above_lowest'] for r in rows):.2f}")
    cyc = [r["single_cycles"] for r in rows if r["single_cycles"]]
    print(f"xtb cycles from the default build: median {statistics.median(cyc)}, max {max(cyc)}")


if __name__ == "__main__":
    main()
