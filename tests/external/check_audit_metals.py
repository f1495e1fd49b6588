"""`repel check` passes metal complexes optimised by a quantum-chemistry program clean, and finds a damaged one.

Client: xtb (Debian package `xtb`, GFN2-xTB, Bannwarth, Ehlert and Grimme, J. Chem. Theory Comput. 15 (2019) 1652).
For ten complexes (cisplatin, hexaamminecobalt(III), tris(ethylenediamine)cobalt(III), ferrocene,
tetracarbonylnickel, tetrachloroplatinate(II), tetracyanonickelate(II), molybdate, cyclopentadienylmanganese
tricarbonyl, and hexaaquacopper(II), the one open shell): `repel build SMILES -o start.xyz`, `xtb start.xyz --opt
--chrg Q --uhf U` (OMP_NUM_THREADS=1), then `repel check xtbopt.xyz --charge Q --multiplicity U+1 --json` must report
no finding and name the expected polyhedron (IUPAC symbol) and oxidation state for the metal. The optimised cisplatin
with its four ligands turned onto a tetrahedron must give one geometry finding, at platinum.
Usage: check_audit_metals.py /path/to/repel
"""
import json
import math
import os
import subprocess
import sys
import tempfile

XTB = "/usr/bin/xtb"
# (SMILES, charge, unpaired electrons, metal atom 1-based, polyhedron symbol, oxidation state): the ionic model's counts (common practice).
COMPLEXES = [
    ("Cl[Pt@SP1](Cl)([NH3])[NH3]", 0, 0, 2, "SP-4", 2),
    ("[NH3][Co+3]([NH3])([NH3])([NH3])([NH3])[NH3]", 3, 0, 2, "OC-6", 3),
    ("C1C[NH2][Co+3]23([NH2]1)([NH2]CC[NH2]2)[NH2]CC[NH2]3", 3, 0, 4, "OC-6", 3),
    ("C1=CC=C[CH-]1.C1=CC=C[CH-]1.[Fe+2]", 0, 0, 11, "L-2", 2),
    ("[O+]#[C-][Ni]([C-]#[O+])([C-]#[O+])[C-]#[O+]", 0, 0, 3, "T-4", 0),
    ("Cl[Pt-2](Cl)(Cl)Cl", -2, 0, 2, "SP-4", 2),
    ("N#C[Ni-2](C#N)(C#N)C#N", -2, 0, 3, "SP-4", 2),
    ("[O-][Mo](=O)(=O)[O-]", -2, 0, 2, "T-4", 6),
    ("[cH-]1cccc1.[Mn+]([C-]#[O+])([C-]#[O+])[C-]#[O+]", 0, 0, 6, None, 1),  # piano stool: no reference polyhedron
    ("[OH2][Cu+2]([OH2])([OH2])([OH2])([OH2])[OH2]", 2, 1, 2, "OC-6", 2),
]


def read_xyz(path):
    with open(path) as f:
        lines = f.read().splitlines()
    n = int(lines[0])
    atoms = [l.split() for l in lines[2:2 + n]]
    return [a[0] for a in atoms], [[float(v) for v in a[1:4]] for a in atoms]


def write_xyz(path, symbols, coords):
    with open(path, "w") as out:
        out.write(f"{len(symbols)}\ndamaged\n")
        for s, p in zip(symbols, coords):
            out.write(f"{s} {p[0]:.6f} {p[1]:.6f} {p[2]:.6f}\n")


def rotate(v, axis, angle):
    """Rodrigues' rotation of v about the unit vector axis."""
    c, s = math.cos(angle), math.sin(angle)
    cross = [axis[1] * v[2] - axis[2] * v[1], axis[2] * v[0] - axis[0] * v[2], axis[0] * v[1] - axis[1] * v[0]]
    dot = sum(a * b for a, b in zip(axis, v))
    return [v[k] * c + cross[k] * s + axis[k] * dot * (1 - c) for k in range(3)]


def tetrahedral_cisplatin(symbols, coords):
    """Every ligand of cisplatin (Cl1 Pt2 Cl3 N4 N5, 1-based) turned rigidly, with its hydrogens, onto a tetrahedron."""
    metal = coords[1]
    targets = [(1, 1, 1), (1, -1, -1), (-1, 1, -1), (-1, -1, 1)]
    out = [list(p) for p in coords]
    for donor, t in zip((0, 2, 3, 4), targets):
        group = [donor] + [i for i, s in enumerate(symbols) if s == "H" and math.dist(coords[i], coords[donor]) < 1.2]
        u = [a - b for a, b in zip(coords[donor], metal)]
        nu = math.sqrt(sum(a * a for a in u))
        w = [a / math.sqrt(3) for a in t]
        u = [a / nu for a in u]
        axis = [u[1] * w[2] - u[2] * w[1], u[2] * w[0] - u[0] * w[2], u[0] * w[1] - u[1] * w[0]]
        na = math.sqrt(sum(a * a for a in axis))
        angle = math.acos(max(-1.0, min(1.0, sum(a * b for a, b in zip(u, w)))))
        axis = [a / na for a in axis] if na > 1e-9 else [0.0, 0.0, 1.0]
        for i in group:
            v = rotate([a - b for a, b in zip(coords[i], metal)], axis, angle)
            out[i] = [a + b for a, b in zip(v, metal)]
    return out


def check(repel, path, charge, unpaired=0):
    c = subprocess.run([repel, "check", path, "--json", "--charge", str(charge), "--multiplicity", str(unpaired + 1)],
                       capture_output=True, text=True, timeout=120)
    doc = json.loads(c.stdout) if c.stdout.strip() else {}
    return c.returncode, doc.get("structures", [{}])[0]


def main():
    repel = sys.argv[1]
    if not os.path.exists(XTB):
        print(f"xtb not found at {XTB}: install the Debian package xtb (skipped)")
        return 77
    env = dict(os.environ, OMP_NUM_THREADS="1")
    failures = []
    for smiles, charge, unpaired, metal, symbol, ox in COMPLEXES:
        with tempfile.TemporaryDirectory() as tmp:
            r = subprocess.run([repel, "build", smiles, "-o", "start.xyz"], cwd=tmp, capture_output=True, text=True,
                               timeout=120)
            if r.returncode != 0:
                failures.append(f"{smiles}: repel build failed: {r.stderr.strip()}")
                continue
            x = subprocess.run([XTB, "start.xyz", "--opt", "--chrg", str(charge), "--uhf", str(unpaired)], cwd=tmp,
                               capture_output=True, text=True, timeout=300, env=env)
            opt = os.path.join(tmp, "xtbopt.xyz")
            if x.returncode != 0 or not os.path.exists(opt):
                failures.append(f"{smiles}: xtb did not optimise (exit {x.returncode})")
                continue
            code, s = check(repel, opt, charge, unpaired)
            findings = [f["message"] for f in s.get("findings", [])]
            centre = (s.get("metal_centres") or [{}])[0]
            if code != 0 or findings:
                failures.append(f"{smiles}: exit {code}, findings {findings}")
            if centre.get("atom") != metal or centre.get("oxidation_state") != ox or \
                    (symbol and centre.get("polyhedron_symbol") != symbol):
                failures.append(f"{smiles}: metal centre {centre}")
            print(f"{smiles}: {centre.get('polyhedron_symbol')} CShM {centre.get('shape_measure', -1):.2f}, "
                  f"model {centre.get('model_polyhedron')} CShM {centre.get('model_shape_measure', -1):.2f}")
            if smiles.startswith("Cl[Pt@SP1]"):
                symbols, coords = read_xyz(opt)
                write_xyz(os.path.join(tmp, "tetrahedral.xyz"), symbols, tetrahedral_cisplatin(symbols, coords))
                code, s = check(repel, os.path.join(tmp, "tetrahedral.xyz"), charge)
                found = [(f["kind"], f["atoms"][0]) for f in s.get("findings", [])]
                if found != [("geometry", 2)]:
                    failures.append(f"tetrahedral cisplatin: findings {found}, expected one geometry finding at Pt2")
    print(f"{len(COMPLEXES)} complexes optimised by xtb, {len(failures)} failures")
    for f in failures:
        print("FAIL", f)
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
