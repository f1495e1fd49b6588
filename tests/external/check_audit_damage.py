"""`repel check` on damaged copies of sound structures: is each damage found at the right atoms, and what does --fix
make of it (issue 12, "Done when" 3 and 4).

Sound structures (closed shell):
  - the G2 geometries of Debian's python3-ase (ase.collections.g2; MP2/6-31G(d), Curtiss et al., J. Chem. Phys. 94
    (1991) 7221 and 106 (1997) 1063) with at least three atoms;
  - the GFN2-xTB optima of tests/data/check_optima.xyz (made by make_check_optima.py; xtb, Bannwarth, Ehlert and
    Grimme, J. Chem. Theory Comput. 15 (2019) 1652), those whose connectivity xtb kept.
Damage (each copy one damage; bonds perceived as in common.py, 1.25 x the Cordero radii; "right atoms": a finding
naming one of the atoms listed):
  bond +-0.15, +-0.3 A  one bond between atoms of H, B..F (the 0.12 A threshold's; between two non-H atoms where
                        there is one) set longer or shorter: the side of the moved atom moved whole along the bond
                        when the bond is in no ring, else the moved atom with its hydrogens;      right: its two atoms
  heavier-atom bond +-0.3 A  the same for one bond with an atom beyond F (threshold 0.24 A).
  angle 20 deg          the first atom (file order) with two or more neighbours and a neighbour outside any ring: that
                        neighbour's side turned 20 degrees about the centre, in the plane of the neighbour, the centre
                        and the centre's next neighbour;                                          right: the centre
  overlap               the last hydrogen moved to 0.25 A from the nearest atom it is not bonded to (the last atom if
                        there is no hydrogen);                                                    right: either atom
  missing H             the last hydrogen deleted (no multiplicity given);                        right: its parent
  inverted stereocentre the first stereocentre written in the SMILES with one hydrogen: it and its hydrogen reflected
                        through the plane of its three other neighbours (the bonds keep their lengths), checked with
                        --smiles;                                                                 right: the centre
  flattened centre      the first four-coordinate atom with a hydrogen, or three-coordinate N, P, S, As with a lone
                        pair (angle sum below 350): moved with its hydrogens into the plane of its three heavy (or
                        first three) neighbours;                                                  right: the centre
  puckered ring         the first planar six-membered ring of three-coordinate atoms: alternate atoms moved 0.25 A up
                        and down the ring normal with their terminal neighbours;           right: an atom of the ring
Asserts: every 0.3 A bond copy (H, B..F) found at the right atoms; every kind at least at the rate given in MINIMUM
(what was measured when this check was last changed, rounded down; see MINIMUM for issue 12's 95% at 0.15 A).
--fix: every undamaged structure is changed by at most 0.03 A in any bond; of the damaged copies of the geometric
kinds (bond, angle, flattened, puckered) the fraction restored to within 0.05 A of the undamaged bonds, and the
fraction with the chirality of every four-coordinate centre kept, are printed and asserted at MINIMUM_FIX; xtb
optimises FIX_XTB_SAMPLE of the fixed copies without a connectivity change.
Prints the table of detection rates that README.md's check section carries.
Usage: check_audit_damage.py /path/to/repel
"""
import json
import os
import re
import subprocess
import sys
import tempfile
from concurrent.futures import ThreadPoolExecutor

import numpy as np
from ase.collections import g2

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from common import Tally, parse_xyz, perceive_bonds, neighbours, signed_volume  # noqa: E402

XTB = "/usr/bin/xtb"
DATA = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "data")
KINDS = ["bond +0.15 A", "bond -0.15 A", "bond +0.3 A", "bond -0.3 A", "heavier-atom bond +0.3 A",
         "heavier-atom bond -0.3 A", "angle 20 deg", "overlap", "missing H", "inverted stereocentre",
         "flattened centre", "puckered ring"]
# The elements whose bonds --bond-threshold (0.12 A) applies to; bonds with a heavier atom take twice it (README).
LIGHT = {"H", "B", "C", "N", "O", "F"}
# Lowest detection rate accepted per kind: what was measured when this check was last changed (224 structures, 1,773
# copies), rounded down. Issue 12 asks 95% for the 0.15 A bonds: met on all (95.4% either way), not on the structures
# the length table of lib/check/expected_length.cpp was not fitted on (92.9% either way, printed below the table). The
# copies missed there are bonds whose sound length lies 0.03 A or more from the expected one the other way (the C=N of
# imidazole rings, fused aromatic C-C, the N-aryl bond of anilides, nitriles between G2 and GFN2-xTB, the C-COO- of
# GFN2-xTB's zwitterions); the damage then stays under the 0.12 A threshold. The angles missed are at centres the
# check does not judge (in three- or four-membered rings, O on P or S) or where the model's own angle is 5 degrees or
# more off (SF4, SO2Cl2, CH2).
MINIMUM = {"bond +0.15 A": 0.95, "bond -0.15 A": 0.95, "bond +0.3 A": 1.0, "bond -0.3 A": 1.0,
           "heavier-atom bond +0.3 A": 1.0, "heavier-atom bond -0.3 A": 1.0, "angle 20 deg": 0.96,
           "overlap": 1.0, "missing H": 0.98, "inverted stereocentre": 1.0, "flattened centre": 0.99,
           "puckered ring": 1.0}
FIX_KINDS = ["bond +0.15 A", "bond -0.15 A", "bond +0.3 A", "bond -0.3 A", "heavier-atom bond +0.3 A",
             "heavier-atom bond -0.3 A", "angle 20 deg", "flattened centre", "puckered ring"]
# --fix: measured when this check was last changed (97.2% of bonds, 99.1% chirality), rounded down. A bond named in
# a length finding takes the length of its sound equivalents in the structure when it has any, else the expected
# length (the analysis' corrected by kind of bond, lib/check/clean.cpp), whose own error (up to 0.15 A for bonds with a
# heavier atom, 0.05-0.07 A for GFN2-xTB's purine C=N) then stays in it; a ring atom moved along a ring bond is put
# back along it, a puckered ring on its plane; the bonds of a centre drawn flat take the expected lengths; the centres
# nothing touched keep their angles; a damaged bond not found is not changed.
MINIMUM_FIX = {"bonds within 0.05 A": 0.97, "chirality kept": 0.99}
FIX_XTB_SAMPLE = 10


def sound_structures():
    """(name, symbols, coords, charge, smiles or None) of every sound structure."""
    out = []
    for atoms in g2:
        mult = int(round(abs(atoms.get_initial_magnetic_moments().sum()))) + 1
        if mult == 1 and len(atoms) >= 3:
            out.append(("g2:" + atoms.get_chemical_formula(), atoms.get_chemical_symbols(),
                        atoms.positions.copy(), 0, None))
    with open(os.path.join(DATA, "check_optima.xyz")) as f:
        lines = f.read().splitlines()
    k = 0
    while k < len(lines):
        n = int(lines[k])
        symbols, coords, fields, _ = parse_xyz("\n".join(lines[k:k + n + 2]))
        k += n + 2
        if fields.get("xtb_changed") == "1":
            continue
        out.append(("xtb:" + fields["name"], symbols, coords, int(fields["charge"]), fields.get("smiles")))
    return out


def write_records(path, records):
    with open(path, "w") as f:
        for rid, symbols, coords, charge, mult in records:
            extra = f" multiplicity={mult}" if mult else ""
            f.write(f"{len(symbols)}\nname={rid} charge={charge}{extra}\n")
            for s, p in zip(symbols, coords):
                f.write(f"{s} {p[0]:.6f} {p[1]:.6f} {p[2]:.6f}\n")


def read_records(path):
    """{name: (symbols, coords)} of a multi-record XYZ file."""
    out = {}
    with open(path) as f:
        lines = f.read().splitlines()
    k = 0
    while k < len(lines):
        if not lines[k].strip():
            k += 1
            continue
        n = int(lines[k])
        symbols, coords, fields, _ = parse_xyz("\n".join(lines[k:k + n + 2]))
        out[fields.get("name")] = (symbols, coords)
        k += n + 2
    return out


def check_all(repel, path, extra=()):
    """Findings per structure (list of (kind, atoms)) of one `repel check --json` run over a file."""
    r = subprocess.run([repel, "check", path, "--json", *extra], capture_output=True, text=True, timeout=1200)
    if r.returncode not in (0, 1):
        raise RuntimeError(f"{path}: exit {r.returncode}: {r.stderr.strip()[:2000]}")
    doc = json.loads(r.stdout)
    entries = doc["structures"] if "structures" in doc else [doc]
    return [[(f["kind"], f["atoms"]) for f in e.get("findings", [])] if "error" not in e else None for e in entries]


def rings_of_six(n, adj):
    found = set()
    for start in range(n):
        stack = [(start, [start])]
        while stack:
            atom, path = stack.pop()
            if len(path) == 6:
                if start in adj[atom]:
                    found.add(frozenset(path))
                continue
            for nb in adj[atom]:
                if nb > start and nb not in path:
                    stack.append((nb, path + [nb]))
    return [r for r in found]


def ring_order(ring, adj):
    ring = set(ring)
    order = [min(ring)]
    while len(order) < 6:
        nxt = [x for x in adj[order[-1]] if x in ring and x not in order]
        order.append(min(nxt))
    return order


def in_ring(adj, a, b):
    """Whether the bond a-b lies in a ring (b reachable from a without it)."""
    seen, stack = {a}, [a]
    while stack:
        x = stack.pop()
        for y in adj[x]:
            if (x, y) in ((a, b), (b, a)):
                continue
            if y == b:
                return True
            if y not in seen:
                seen.add(y)
                stack.append(y)
    return False


def side(adj, keep, start):
    """Atoms reached from start without passing keep."""
    seen, stack = {start}, [start]
    while stack:
        x = stack.pop()
        for y in adj[x]:
            if y != keep and y not in seen:
                seen.add(y)
                stack.append(y)
    return seen


def rotate(points, centre, axis, degrees):
    axis = axis / np.linalg.norm(axis)
    t = np.radians(degrees)
    v = points - centre
    return centre + (v * np.cos(t) + np.cross(axis, v) * np.sin(t) + np.outer(v @ axis, axis) * (1 - np.cos(t)))


def smiles_atom_indices(smiles):
    """0-based atom index of every atom token of a SMILES, with whether it carries a chirality mark."""
    tokens = re.findall(r"\[[^\]]*\]|Cl|Br|[BCNOPSFIbcnops]", smiles)
    return [("@" in t) for t in tokens]


def damages(name, symbols, coords, charge, smiles):
    """Yields (kind, symbols, coords, multiplicity or None, right atoms (0-based), smiles for --smiles or None)."""
    n = len(symbols)
    bonds = perceive_bonds(symbols, coords)
    adj = neighbours(n, bonds)
    light = sorted(tuple(sorted(b)) for b in bonds if all(symbols[x] in LIGHT for x in b))
    light_heavy = [b for b in light if all(symbols[x] != "H" for x in b)]
    heavier = sorted(tuple(sorted(b)) for b in bonds if any(symbols[x] not in LIGHT for x in b))
    for pool, sizes, label in ((light_heavy or light, (0.15, -0.15, 0.3, -0.3), "bond {:+.2g} A"),
                               (heavier, (0.3, -0.3), "heavier-atom bond {:+.2g} A")):
        if not pool:
            continue
        i, j = pool[len(pool) // 2]
        ring = in_ring(adj, i, j)
        moved = side(adj, i, j) if not ring else {j} | {h for h in adj[j] if symbols[h] == "H" and h != i}
        u = (coords[j] - coords[i]) / np.linalg.norm(coords[j] - coords[i])
        for by in sizes:
            q = coords.copy()
            for g in moved:
                q[g] += by * u
            yield label.format(by), symbols, q, 1, {i, j}, None
    # Angle: a centre with a neighbour off any ring.
    for c in range(n):
        nbs = sorted(adj[c])
        if len(nbs) < 2:
            continue
        outer = [t for t in nbs if not in_ring(adj, c, t)]
        if not outer:
            continue
        t = outer[0]
        o = [x for x in nbs if x != t][0]
        normal = np.cross(coords[t] - coords[c], coords[o] - coords[c])
        if np.linalg.norm(normal) < 1e-3:  # linear: any normal
            normal = np.cross(coords[t] - coords[c], [1.0, 0.3, 0.1])
        moved = sorted(side(adj, c, t))
        q = coords.copy()
        # The sign that opens the angle t-c-o.
        q[moved] = rotate(coords[moved], coords[c], -normal, 20)
        yield "angle 20 deg", symbols, q, 1, {c}, None
        break
    # Overlap.
    hs = [x for x in range(n) if symbols[x] == "H"]
    a = hs[-1] if hs else n - 1
    others = [x for x in range(n) if x != a and x not in adj[a]]
    if others:
        b = min(others, key=lambda x: np.linalg.norm(coords[x] - coords[a]))
        q = coords.copy()
        v = coords[a] - coords[b]
        q[a] = coords[b] + 0.25 * v / np.linalg.norm(v)
        yield "overlap", symbols, q, 1, {a, b}, None
    # Missing H.
    if hs:
        h = hs[-1]
        parent = sorted(adj[h])[0] if adj[h] else None
        if parent is not None:
            keep = [x for x in range(n) if x != h]
            yield "missing H", [symbols[x] for x in keep], coords[keep], None, \
                {parent if parent < h else parent - 1}, None
    # Inverted stereocentre.
    if smiles and "@" in smiles:
        marks = smiles_atom_indices(smiles)
        for c, marked in enumerate(marks):
            if not marked or len(adj[c]) != 4:
                continue
            h = [x for x in adj[c] if symbols[x] == "H"]
            if len(h) != 1:
                continue
            rest = [x for x in adj[c] if x != h[0]]
            p0, p1, p2 = coords[rest[0]], coords[rest[1]], coords[rest[2]]
            nrm = np.cross(p1 - p0, p2 - p0)
            nrm /= np.linalg.norm(nrm)
            q = coords.copy()
            for x in (c, h[0]):
                q[x] = coords[x] - 2 * np.dot(coords[x] - p0, nrm) * nrm
            yield "inverted stereocentre", symbols, q, 1, {c}, smiles
            break
    # Flattened centre.
    for c in range(n):
        nbs = sorted(adj[c])
        if symbols[c] == "H":
            continue
        if len(nbs) == 4 and any(symbols[x] == "H" for x in nbs):
            h = [x for x in nbs if symbols[x] == "H"][-1]
            base = [x for x in nbs if x != h]
            carry = [c, h]
        elif len(nbs) == 3 and symbols[c] in ("N", "P", "S", "As"):
            vecs = [coords[x] - coords[c] for x in nbs]
            total = sum(np.degrees(np.arccos(np.clip(np.dot(vecs[p], vecs[r]) / np.linalg.norm(vecs[p]) /
                                                     np.linalg.norm(vecs[r]), -1, 1)))
                        for p, r in ((0, 1), (0, 2), (1, 2)))
            if total > 350:
                continue
            base = nbs
            carry = [c]
        else:
            continue
        p0, p1, p2 = coords[base[0]], coords[base[1]], coords[base[2]]
        nrm = np.cross(p1 - p0, p2 - p0)
        nrm /= np.linalg.norm(nrm)
        shift = -np.dot(coords[c] - p0, nrm) * nrm
        q = coords.copy()
        for x in carry:
            q[x] = coords[x] + shift
        yield "flattened centre", symbols, q, 1, {c}, None
        break
    # Puckered ring.
    for ring in sorted(rings_of_six(n, adj), key=sorted):
        if any(len(adj[x]) != 3 for x in ring):
            continue
        order = ring_order(ring, adj)
        pts = coords[order]
        centre = pts.mean(axis=0)
        _, _, vt = np.linalg.svd(pts - centre)
        nrm = vt[2]
        if np.abs((pts - centre) @ nrm).max() > 0.05:
            continue
        q = coords.copy()
        for k, x in enumerate(order):
            dz = 0.25 if k % 2 == 0 else -0.25
            q[x] += dz * nrm
            for t in adj[x]:
                if t not in ring and len(adj[t]) == 1:
                    q[t] += dz * nrm
        yield "puckered ring", symbols, q, 1, set(ring), None
        break


def bond_lengths(coords, bonds):
    return {b: float(np.linalg.norm(coords[min(b)] - coords[max(b)])) for b in bonds}


def chirality(symbols, coords, adj):
    out = {}
    for c in range(len(symbols)):
        nbs = sorted(adj[c])
        if len(nbs) == 4:
            out[c] = np.sign(signed_volume(coords[c], coords[nbs[0]], coords[nbs[1]], coords[nbs[2]]))
    return out


def xtb_keeps_bonds(item):
    rid, symbols, coords, charge, bonds = item
    env = dict(os.environ, OMP_NUM_THREADS="1")
    with tempfile.TemporaryDirectory() as tmp:
        with open(os.path.join(tmp, "fixed.xyz"), "w") as f:
            f.write(f"{len(symbols)}\n{rid}\n")
            for s, p in zip(symbols, coords):
                f.write(f"{s} {p[0]:.6f} {p[1]:.6f} {p[2]:.6f}\n")
        x = subprocess.run([XTB, "fixed.xyz", "--opt", "--gfn", "2", "--chrg", str(charge), "--uhf", "0"], cwd=tmp,
                           capture_output=True, text=True, timeout=600, env=env)
        opt = os.path.join(tmp, "xtbopt.xyz")
        if x.returncode != 0 or not os.path.exists(opt):
            return rid, f"xtb failed (exit {x.returncode})"
        with open(opt) as f:
            s2, c2, _, _ = parse_xyz(f.read())
        return rid, None if perceive_bonds(s2, c2) == bonds else "connectivity changed"


def main():
    repel = sys.argv[1]
    t = Tally()
    work = tempfile.mkdtemp(prefix="repel-damage-")
    sound = sound_structures()
    print(f"{len(sound)} sound structures ({sum(1 for s in sound if s[0].startswith('g2:'))} G2, "
          f"{sum(1 for s in sound if s[0].startswith('xtb:'))} GFN2-xTB optima)")
    # The sound structures themselves: clean.
    undamaged = os.path.join(work, "undamaged.xyz")
    write_records(undamaged, [(f"u{k}", s[1], s[2], s[3], 1) for k, s in enumerate(sound)])
    clean = check_all(repel, undamaged)
    for s, f in zip(sound, clean):
        t.check(f == [], f"{s[0]} undamaged: findings {f}")

    copies, with_smiles = [], []
    for k, (name, symbols, coords, charge, smiles) in enumerate(sound):
        for kind, sy, q, mult, right, ref in damages(name, symbols, coords, charge, smiles):
            rid = f"d{len(copies)}"
            copies.append(dict(id=rid, kind=kind, source=k, right=right, symbols=sy, coords=q, charge=charge,
                               mult=mult, smiles=ref))
    plain = [c for c in copies if c["smiles"] is None]
    damaged = os.path.join(work, "damaged.xyz")
    write_records(damaged, [(c["id"], c["symbols"], c["coords"], c["charge"], c["mult"]) for c in plain])
    for c, f in zip(plain, check_all(repel, damaged)):
        c["findings"] = f
    for c in copies:
        if c["smiles"] is not None:
            path = os.path.join(work, c["id"] + ".xyz")
            write_records(path, [(c["id"], c["symbols"], c["coords"], c["charge"], c["mult"])])
            c["findings"] = check_all(repel, path, ["--smiles", c["smiles"]])[0]

    # The table.
    print("\n| damage | copies | found at the right atoms | rate |\n|---|---|---|---|")
    molecules = set()
    missed = []
    for kind in KINDS:
        of = [c for c in copies if c["kind"] == kind]
        found = [c for c in of if c["findings"] and any(set(a - 1 for a in atoms) & c["right"]
                                                        for _, atoms in c["findings"])]
        for c in of:
            molecules.add(c["source"])
        rate = len(found) / len(of) if of else 0
        print(f"| {kind} | {len(of)} | {len(found)} | {100 * rate:.1f}% |")
        t.check(of and rate >= MINIMUM[kind], f"{kind}: {len(found)} of {len(of)} found, below {MINIMUM[kind]:.0%}")
        for c in of:
            if c not in found:
                missed.append(f"  missed {kind}: {sound[c['source']][0]} at {sorted(x + 1 for x in c['right'])}: "
                              f"{c['findings']}")
    # The expected lengths carry a correction table fitted on the structures at even positions (fit_check_lengths.py):
    # the rates on the odd ones, which the table never saw, are printed apart.
    for kind in KINDS[:4]:
        of = [c for c in copies if c["kind"] == kind and c["source"] % 2 == 1]
        found = [c for c in of if c["findings"] and any(set(a - 1 for a in atoms) & c["right"]
                                                        for _, atoms in c["findings"])]
        print(f"{kind}, structures the length table was not fitted on: {len(found)} of {len(of)} "
              f"({100 * len(found) / max(len(of), 1):.1f}%)")
    print(f"\n{len(copies)} damaged copies of {len(molecules)} structures")
    print("\n".join(missed))
    t.check(len(molecules) >= 50, "at least 50 structures damaged")

    # --fix on the undamaged structures: no bond changed by more than 0.03 A.
    fixed_path = os.path.join(work, "undamaged-fixed.xyz")
    subprocess.run([repel, "check", undamaged, "--fix", "-o", fixed_path], capture_output=True, timeout=1200)
    fixed = read_records(fixed_path) if os.path.exists(fixed_path) else {}
    worst = 0.0
    for k, s in enumerate(sound):
        got = fixed.get(f"u{k}")
        if not t.check(got is not None, f"{s[0]}: --fix wrote no undamaged copy"):
            continue
        bonds = perceive_bonds(s[1], s[2])
        a, b = bond_lengths(s[2], bonds), bond_lengths(got[1], bonds)
        change = max(abs(a[x] - b[x]) for x in bonds) if bonds else 0.0
        worst = max(worst, change)
        t.check(change <= 0.03, f"{s[0]}: --fix of the undamaged structure changed a bond by {change:.3f} A")
    print(f"--fix on {len(sound)} undamaged structures: largest bond change {worst:.4f} A")

    # --fix on the damaged copies of the geometric kinds.
    to_fix = [c for c in copies if c["kind"] in FIX_KINDS]
    dpath = os.path.join(work, "to-fix.xyz")
    write_records(dpath, [(c["id"], c["symbols"], c["coords"], c["charge"], c["mult"]) for c in to_fix])
    fpath = os.path.join(work, "fixed.xyz")
    subprocess.run([repel, "check", dpath, "--fix", "-o", fpath], capture_output=True, timeout=1200)
    fixed = read_records(fpath) if os.path.exists(fpath) else {}
    written = within = kept = 0
    held = [0, 0]  # copies of the structures the length table was not fitted on (odd positions), restored
    sample = []
    per_kind = {k: [0, 0] for k in FIX_KINDS}  # copies, bonds within 0.05 A
    for c in to_fix:
        per_kind[c["kind"]][0] += 1
        got = fixed.get(c["id"])
        if got is None:
            print(f"  --fix refused {c['kind']} of {sound[c['source']][0]}")
            continue
        written += 1
        s = sound[c["source"]]
        bonds = perceive_bonds(s[1], s[2])
        adj = neighbours(len(s[1]), bonds)
        a, b = bond_lengths(s[2], bonds), bond_lengths(got[1], bonds)
        change = max(abs(a[x] - b[x]) for x in bonds)
        within += change <= 0.05
        if c["source"] % 2 == 1:
            held[1] += change <= 0.05
        per_kind[c["kind"]][1] += change <= 0.05
        if change > 0.05:
            print(f"  --fix left a bond {change:.3f} A off: {c['kind']} of {s[0]}")
        same = chirality(s[1], s[2], adj) == chirality(got[0], got[1], adj)
        kept += same
        if not same:
            print(f"  --fix changed a chirality: {c['kind']} of {s[0]}")
        if len(s[1]) <= 24:
            sample.append((c["id"], got[0], got[1], c["charge"], bonds))
    n = len(to_fix)
    print(f"--fix on {n} damaged copies ({', '.join(FIX_KINDS)}): written {written} ({100 * written / n:.1f}%), "
          f"bonds within 0.05 A of the undamaged structure {within} ({100 * within / n:.1f}%), "
          f"chirality of every four-coordinate centre kept {kept} ({100 * kept / n:.1f}%)")
    held[0] = sum(1 for c in to_fix if c["source"] % 2 == 1)
    print(f"--fix, structures the length table was not fitted on: bonds within 0.05 A in {held[1]} of {held[0]} "
          f"({100 * held[1] / max(held[0], 1):.1f}%)")
    print("--fix, bonds within 0.05 A by kind: " +
          ", ".join(f"{k} {v[1]}/{v[0]}" for k, v in per_kind.items()))
    t.check(within / n >= MINIMUM_FIX["bonds within 0.05 A"], "--fix restores bonds too rarely")
    t.check(kept / n >= MINIMUM_FIX["chirality kept"], "--fix keeps chirality too rarely")
    # xtb from a spread sample of the fixed copies (small ones, for time): connectivity kept.
    if os.path.exists(XTB):
        step = max(1, len(sample) // FIX_XTB_SAMPLE)
        chosen = sample[::step][:FIX_XTB_SAMPLE]
        with ThreadPoolExecutor(2) as pool:
            results = list(pool.map(xtb_keeps_bonds, chosen))
        ok = sum(1 for _, p in results if p is None)
        for rid, p in results:
            t.check(p is None, f"{rid}: xtb from the --fix output: {p}")
        print(f"xtb (GFN2) from {len(chosen)} --fix outputs: connectivity kept in {ok}")
    else:
        print(f"xtb not found at {XTB}: the optimisation of --fix outputs is not run")
        t.check(False, "xtb missing (install the Debian package xtb)")
    t.finish(work)


if __name__ == "__main__":
    main()
