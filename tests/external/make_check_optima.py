"""Makes tests/data/check_optima.xyz: the GFN2-xTB optima of the molecules of tests/data/check_optima.smi.

Not a test (ctest runs only check_*.py): run once when the molecule list changes, and commit the result, so that the
test suite audits 100+ optima without re-running 100+ optimisations (check_audit_optima.py re-optimises a few).
Client: xtb (Debian package `xtb`, GFN2-xTB, Bannwarth, Ehlert and Grimme, J. Chem. Theory Comput. 15 (2019) 1652):
`repel build SMILES -o start.xyz`, displaced 0.03 A (below), then `xtb start.xyz --opt --gfn 2 --chrg C --uhf 0` (OMP_NUM_THREADS=1;
`--alpb water` for the zwitterions marked `water` in the list).
An optimum whose connectivity differs from the molecule built (below) is kept, marked `xtb_changed=1`, so the check
can name and exclude it with the reason.
Usage: make_check_optima.py /path/to/repel [jobs]
"""
import json
import os
import re
import subprocess
import sys
import tempfile
import zlib
from concurrent.futures import ThreadPoolExecutor

import numpy as np

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from common import parse_xyz, perceive_bonds  # noqa: E402

XTB = "/usr/bin/xtb"
HERE = os.path.dirname(os.path.abspath(__file__))
DATA = os.path.join(HERE, "..", "data")


def charge_of(smiles):
    """The total charge written in the SMILES (bracket atoms' + and - signs)."""
    total = 0
    for bracket in re.findall(r"\[[^\]]*\]", smiles):
        for sign, count in re.findall(r"([+-])(\d*)", bracket):
            total += (1 if sign == "+" else -1) * (int(count) if count else 1)
    return total


def read_list(path):
    out = []
    with open(path) as f:
        for line in f:
            if line.strip() and not line.startswith("#"):
                fields = line.split()
                out.append((fields[0], fields[1], len(fields) > 2 and fields[2] == "water"))
    return out


def optimise(repel, smiles, name, water):
    env = dict(os.environ, OMP_NUM_THREADS="1")
    with tempfile.TemporaryDirectory() as tmp:
        r = subprocess.run([repel, "build", smiles, "-o", "start.xyz"], cwd=tmp, capture_output=True, text=True,
                           timeout=300)
        j = subprocess.run([repel, "build", smiles, "--format", "json"], capture_output=True, text=True, timeout=300)
        if r.returncode != 0:
            return name, None, f"repel build failed: {r.stderr.strip()}"
        # Every start displaced a little (normal, 0.03 A per coordinate, seeded by the name) so that xtb does not
        # stay on a symmetric saddle: from repel's exactly planar benzamidinium it kept the plane and bent one NH2
        # pyramidal, 0.034 Eh above the twisted minimum it finds from a start turned 35 degrees (measured here).
        with open(os.path.join(tmp, "start.xyz")) as f:
            text = f.read()
        s_sym, s_xyz, _, comment = parse_xyz(text)
        rng = np.random.default_rng(zlib.crc32(name.encode()))
        s_xyz = s_xyz + rng.normal(0.0, 0.03, s_xyz.shape)
        with open(os.path.join(tmp, "start.xyz"), "w") as f:
            f.write(f"{len(s_sym)}\n{comment}\n")
            f.writelines(f"{e} {p[0]:.6f} {p[1]:.6f} {p[2]:.6f}\n" for e, p in zip(s_sym, s_xyz))
        charge = charge_of(smiles)
        solvent = ["--alpb", "water"] if water else []
        x = subprocess.run([XTB, "start.xyz", "--opt", "--gfn", "2", "--chrg", str(charge), "--uhf", "0", *solvent],
                           cwd=tmp,
                           capture_output=True, text=True, timeout=1800, env=env)
        opt = os.path.join(tmp, "xtbopt.xyz")
        if x.returncode != 0 or not os.path.exists(opt):
            return name, None, f"xtb did not optimise (exit {x.returncode})"
        with open(opt) as f:
            symbols, coords, _, _ = parse_xyz(f.read())
        # The molecule's bonds as repel built them (1-based in the JSON) against the optimum: a written bond broken
        # when beyond common.py's 1.25 x the radii, a new one only within 1.1 x (a real bond; the P...P of
        # pyrophosphoric acid's P-O-P, 2.67 A, falls under 1.25 x the P radii).
        written = {frozenset(a - 1 for a in b["atoms"]) for b in json.loads(j.stdout)["bonds"]}
        changed = bool(written - perceive_bonds(symbols, coords)) or bool(perceive_bonds(symbols, coords, 1.1) - written)
        lines = [str(len(symbols)), f'name={name} charge={charge} multiplicity=1 xtb_changed={int(changed)} '
                                    f'solvent={"water" if water else "none"} smiles="{smiles}"']
        lines += [f"{el} {p[0]:.5f} {p[1]:.5f} {p[2]:.5f}" for el, p in zip(symbols, coords)]
        return name, "\n".join(lines) + "\n", None


def main():
    repel = sys.argv[1]
    jobs = int(sys.argv[2]) if len(sys.argv) > 2 else 1
    molecules = read_list(os.path.join(DATA, "check_optima.smi"))
    with ThreadPoolExecutor(jobs) as pool:
        results = list(pool.map(lambda m: optimise(repel, *m), molecules))
    with open(os.path.join(DATA, "check_optima.xyz"), "w") as out:
        for name, record, problem in results:
            if problem:
                print(f"{name}: {problem}")
            else:
                out.write(record)
    print(f"{sum(1 for r in results if r[1])} of {len(molecules)} optimised")


if __name__ == "__main__":
    main()
