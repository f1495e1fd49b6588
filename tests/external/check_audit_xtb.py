"""`repel check` passes structures optimised by a quantum-chemistry program clean.

Client: xtb (Debian package `xtb`, GFN2-xTB, Bannwarth, Ehlert and Grimme, J. Chem. Theory Comput. 15 (2019) 1652).
For a dozen and a half varied molecules (alcohol, acid, arenes, a nitro group, a sulfoxide and a sulfone, a nitrile,
SF4, PF5, ClF3, an amide, a furan, a chair, a stereocentre, a trans double bond): `repel build SMILES -o start.xyz`,
`xtb start.xyz --opt normal --gfn 2` (OMP_NUM_THREADS=1), then `repel check xtbopt.xyz --charge 0 --multiplicity 1`
must report no finding (exit status 0): an optimised closed-shell structure is what the audit must not complain of.
Usage: check_audit_xtb.py /path/to/repel
"""
import json
import os
import subprocess
import sys
import tempfile

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from common import parse_xyz, perceive_bonds  # noqa: E402

XTB = "/usr/bin/xtb"
MOLECULES = ["CCO", "CC(=O)O", "c1ccccc1", "c1ccncc1", "C[N+](=O)[O-]", "CS(C)=O", "CS(=O)(=O)C", "CC#N", "SF4",
             "PF5", "ClF3", "Oc1ccccc1", "CC(C)=O", "NC=O", "c1ccoc1", "C1CCCCC1", "C[C@H](N)C(=O)O", "F/C=C/F",
             # issue 12: bridging oxygens between P and Si atoms (P-O-P, Si-O-Si open far beyond the isolated
             # oxygen's domains), delocalised ions (carboxylate, sulfonate), fused aromatics
             "OP(=O)(O)OP(=O)(O)O", "C[Si](C)(C)O[Si](C)(C)C", "CC(=O)[O-]", "CS(=O)(=O)[O-]",
             "c1ccc2ccccc2c1", "Cc1ccc(cc1)[N+](=O)[O-]"]


def charge_of(smiles):
    """The total charge written in the SMILES (bracket atoms' + and - signs)."""
    import re
    total = 0
    for bracket in re.findall(r"\[[^\]]*\]", smiles):
        for sign, count in re.findall(r"([+-])(\d*)", bracket):
            total += (1 if sign == "+" else -1) * (int(count) if count else 1)
    return total


# Damaged copies cleaned by --fix, then optimised by xtb: the connectivity must survive (issue 4). Bonds are perceived
# as in common.py (1.25 x the sum of Cordero covalent radii).
FIX_MOLECULES = ["CCO", "CC(=O)O", "c1ccncc1", "CS(C)=O", "SF4", "C[C@H](N)C(=O)O"]


def read_xyz(path):
    with open(path) as f:
        symbols, coords, _, _ = parse_xyz(f.read())
    return symbols, coords


def bonds_of(symbols, coords):
    return perceive_bonds(symbols, coords)


def fix_round_trip(repel, smiles, tmp, env):
    """Stretch the first bond by 0.3 A, --fix it, check the result clean, optimise it with xtb, compare bonds."""
    symbols, coords = read_xyz(os.path.join(tmp, "xtbopt.xyz"))
    i, j = sorted(tuple(sorted(b)) for b in bonds_of(symbols, coords))[0]
    v = coords[j] - coords[i]
    coords[j] = coords[j] + 0.3 * v / (v @ v) ** 0.5
    with open(os.path.join(tmp, "damaged.xyz"), "w") as out:
        out.write(f"{len(symbols)}\ndamaged\n")
        for el, p in zip(symbols, coords):
            out.write(f"{el} {p[0]:.6f} {p[1]:.6f} {p[2]:.6f}\n")
    f = subprocess.run([repel, "check", "damaged.xyz", "--charge", "0", "--multiplicity", "1", "--fix", "-o",
                        "fixed.xyz"], cwd=tmp, capture_output=True, text=True, timeout=120)
    if not os.path.exists(os.path.join(tmp, "fixed.xyz")):
        return f"{smiles}: --fix wrote nothing (exit {f.returncode}) {f.stderr.strip()}"
    c = subprocess.run([repel, "check", "fixed.xyz", "--charge", "0", "--multiplicity", "1"], cwd=tmp,
                       capture_output=True, text=True, timeout=120)
    if c.returncode != 0:
        return f"{smiles}: the --fix output is not clean: {c.stdout.strip()}"
    fixed = read_xyz(os.path.join(tmp, "fixed.xyz"))
    os.rename(os.path.join(tmp, "xtbopt.xyz"), os.path.join(tmp, "first-opt.xyz"))
    x = subprocess.run([XTB, "fixed.xyz", "--opt", "normal", "--gfn", "2"], cwd=tmp, capture_output=True, text=True,
                       timeout=300, env=env)
    if x.returncode != 0:
        return f"{smiles}: xtb did not optimise the --fix output (exit {x.returncode})"
    if bonds_of(*read_xyz(os.path.join(tmp, "xtbopt.xyz"))) != bonds_of(*fixed):
        return f"{smiles}: xtb changed the connectivity of the --fix output"
    return None


def main():
    repel = sys.argv[1]
    if not os.path.exists(XTB):
        print(f"xtb not found at {XTB}: install the Debian package xtb")
        return 1
    failures = []
    env = dict(os.environ, OMP_NUM_THREADS="1")
    for smiles in MOLECULES:
        with tempfile.TemporaryDirectory() as tmp:
            r = subprocess.run([repel, "build", smiles, "-o", "start.xyz"], cwd=tmp, capture_output=True, text=True,
                               timeout=120)
            if r.returncode != 0:
                failures.append(f"{smiles}: repel build failed: {r.stderr.strip()}")
                continue
            charge = str(charge_of(smiles))
            x = subprocess.run([XTB, "start.xyz", "--opt", "normal", "--gfn", "2", "--chrg", charge], cwd=tmp,
                               capture_output=True, text=True, timeout=300, env=env)
            opt = os.path.join(tmp, "xtbopt.xyz")
            if x.returncode != 0 or not os.path.exists(opt):
                failures.append(f"{smiles}: xtb did not optimise (exit {x.returncode})")
                continue
            c = subprocess.run([repel, "check", opt, "--json", "--charge", charge, "--multiplicity", "1"],
                               capture_output=True, text=True, timeout=120)
            doc = json.loads(c.stdout) if c.stdout.strip() else {}
            findings = [f["message"] for s in doc.get("structures", []) for f in s["findings"]]
            if c.returncode != 0 or findings:
                failures.append(f"{smiles}: exit {c.returncode}, findings {findings} {c.stderr.strip()}")
                continue
            if smiles in FIX_MOLECULES:
                problem = fix_round_trip(repel, smiles, tmp, env)
                if problem:
                    failures.append(problem)
    print(f"{len(MOLECULES)} molecules optimised by xtb, {len(failures)} with findings; "
          f"{len(FIX_MOLECULES)} damaged copies cleaned by --fix and optimised by xtb again")
    for f in failures:
        print("FAIL", f)
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
