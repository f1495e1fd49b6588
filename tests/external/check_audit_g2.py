"""`repel check` against the G2 reference geometries and damaged copies of them.

Source of the geometries: the G2 test set in Debian's python3-ase (ase.collections.g2; MP2/6-31G(d) geometries of
Curtiss et al., J. Chem. Phys. 94 (1991) 7221 and 106 (1997) 1063), written as plain XYZ (no bonds).
Checks (shared/docs/interface.md, Audit; issue "repel check"):
  1. every closed-shell molecule passes with zero findings, without --multiplicity;
  2. every open-shell molecule passes with --multiplicity (ASE's initial magnetic moments give 2S), and those with an
     odd electron count give only "radical" findings without it (even-electron triplets such as O2, S2, SiH2 have
     closed-shell Lewis structures and are not checked that way);
  3. damaged copies give the right finding at the right atom, and nothing else:
     a terminal hydrogen pulled 0.3 A out along its bond  -> "bond length" on (parent, H);
     a terminal hydrogen deleted                          -> "radical" at the parent;
     the three hydrogens of a CH3 group flattened onto the plane normal to the C-X bond -> "geometry" at C;
     a terminal hydrogen moved to 0.1 A from another heavy atom -> "overlap" naming the H (plus the parent's
       "radical", since it lost the hydrogen);
  4. `--fix -o` of the stretched and flattened copies writes a structure that checks clean;
  5. `--fix -o` of every closed-shell molecule, undamaged, changes no bond by more than 0.03 A (issue 12: it used to
     turn benzene into alternating 1.34 / 1.46 A bonds);
  6. every bond between two atoms of the first two periods (H to Ne), stretched and compressed by 0.15 A (the atom of
     the higher number moved along the bond, with the hydrogens on it), gives a "bond length" finding on that bond
     (other findings may come with it: moving an atom bends its other bonds too).
Usage: check_audit_g2.py /path/to/repel
"""
import json
import os
import subprocess
import sys
import tempfile

import numpy as np
from ase.collections import g2
from ase.data import covalent_radii  # Cordero et al. 2008, the radii repel perceives bonds with

TOLERANCE = 0.45  # repel's default perception tolerance


def write_xyz(path, symbols, positions, title):
    with open(path, "w") as f:
        f.write(f"{len(symbols)}\n{title}\n")
        for s, p in zip(symbols, positions):
            f.write(f"{s} {p[0]:.6f} {p[1]:.6f} {p[2]:.6f}\n")


def check(repel, path, extra=()):
    r = subprocess.run([repel, "check", path, "--json", *extra], capture_output=True, text=True, timeout=120)
    if r.returncode not in (0, 1):
        raise RuntimeError(f"{path}: exit {r.returncode}: {r.stderr.strip()}")
    doc = json.loads(r.stdout)
    findings = doc["structures"][0]["findings"]
    if (r.returncode == 0) != (len(findings) == 0):
        raise RuntimeError(f"{path}: exit {r.returncode} with {len(findings)} findings")
    return findings


def check_all(repel, path, count):
    """The findings of every record of a multi-record file, in order."""
    r = subprocess.run([repel, "check", path, "--json"], capture_output=True, text=True, timeout=600)
    if r.returncode not in (0, 1):
        raise RuntimeError(f"{path}: exit {r.returncode}: {r.stderr.strip()}")
    structures = json.loads(r.stdout)["structures"]
    if len(structures) != count:
        raise RuntimeError(f"{path}: {len(structures)} structures reported for {count} records")
    return [s["findings"] for s in structures]


def fixed_is_clean(repel, path, tmp):
    """--fix -o writes a cleaned copy, and the copy checks clean."""
    out = os.path.join(tmp, "fixed.xyz")
    r = subprocess.run([repel, "check", path, "--fix", "-o", out], capture_output=True, text=True, timeout=120)
    if r.returncode not in (0, 1) or not os.path.exists(out):
        return f"--fix failed: exit {r.returncode}: {r.stderr.strip()}"
    f = check(repel, out)
    os.remove(out)
    return f"--fix output has findings {summary(f)}" if f else None


def read_positions(path):
    with open(path) as f:
        lines = f.read().splitlines()
    n = int(lines[0])
    return np.array([[float(x) for x in line.split()[1:4]] for line in lines[2:2 + n]])


def fix_changes(repel, path, tmp, bonds):
    """The largest change of a bond length that --fix makes, and the bond."""
    out = os.path.join(tmp, "fixed.xyz")
    r = subprocess.run([repel, "check", path, "--fix", "-o", out], capture_output=True, text=True, timeout=120)
    if r.returncode not in (0, 1) or not os.path.exists(out):
        return None, f"--fix failed: exit {r.returncode}: {r.stderr.strip()}"
    before = read_positions(path)
    after = read_positions(out)
    os.remove(out)
    worst, where = 0.0, None
    for i, j in bonds:
        d = abs(np.linalg.norm(before[i] - before[j]) - np.linalg.norm(after[i] - after[j]))
        if d > worst:
            worst, where = d, (i + 1, j + 1)
    return worst, where


def bonds_of(atoms):
    z = atoms.numbers
    p = atoms.positions
    out = []
    for i in range(len(atoms)):
        for j in range(i + 1, len(atoms)):
            if np.linalg.norm(p[i] - p[j]) <= covalent_radii[z[i]] + covalent_radii[z[j]] + TOLERANCE:
                out.append((i, j))
    return out


def neighbours(bonds, i):
    return [b if a == i else a for a, b in bonds if i in (a, b)]


def summary(findings):
    return [(f["kind"], f["atoms"]) for f in findings]


def main():
    repel = sys.argv[1]
    failures = []
    closed = opened = damaged = fixed = 0
    worst_fix = 0.0
    small = small_found = 0
    small_missed = []
    with tempfile.TemporaryDirectory() as tmp:
        for k, atoms in enumerate(g2):
            name = atoms.get_chemical_formula()
            mult = int(round(abs(atoms.get_initial_magnetic_moments().sum()))) + 1
            symbols = atoms.get_chemical_symbols()
            path = os.path.join(tmp, f"g2_{k}.xyz")
            write_xyz(path, symbols, atoms.positions, name)
            if mult == 1:
                closed += 1
                f = check(repel, path)
                if f:
                    failures.append(f"{name}: closed shell, expected no finding: {summary(f)}")
                worst, where = fix_changes(repel, path, tmp, bonds_of(atoms))
                if worst is None or worst > 0.03:
                    failures.append(f"{name}: --fix of the undamaged structure changed bond {where} by {worst}")
                worst_fix = max(worst_fix, worst or 0.0)
                # All the copies of one molecule go through one process, as records of one file (a process per
                # copy made this check the slowest of the sanitizer tier).
                copies = []
                for i, j in bonds_of(atoms):
                    if any(atoms.numbers[x] > 10 or atoms.numbers[x] in (3, 4) for x in (i, j)):
                        continue  # H and B..F only (Li, Be bonds are ionic: the heavier atoms' threshold)
                    fixed_end, moved = (i, j) if atoms.numbers[i] >= atoms.numbers[j] else (j, i)
                    if atoms.numbers[i] == atoms.numbers[j]:
                        fixed_end, moved = i, j
                    u = atoms.positions[moved] - atoms.positions[fixed_end]
                    u /= np.linalg.norm(u)
                    group = [moved] + [h for h in neighbours(bonds_of(atoms), moved)
                                       if symbols[h] == "H" and h != fixed_end]
                    for by in (0.15, -0.15):
                        q = atoms.positions.copy()
                        for g in group:
                            q[g] += by * u
                        copies.append((i, j, by, q))
                if copies:
                    many = os.path.join(tmp, f"g2_{k}_moved.xyz")
                    with open(many, "w") as out:
                        for i, j, by, q in copies:
                            out.write(f"{len(symbols)}\n{name} bond {i + 1}-{j + 1} {by:+.2f}\n")
                            for s, r in zip(symbols, q):
                                out.write(f"{s} {r[0]:.6f} {r[1]:.6f} {r[2]:.6f}\n")
                    for (i, j, by, q), f in zip(copies, check_all(repel, many, len(copies))):
                        small += 1
                        if ("bond length", sorted([i + 1, j + 1])) in summary(f):
                            small_found += 1
                        else:
                            small_missed.append(f"{name}: bond {symbols[i]}{i + 1}-{symbols[j]}{j + 1} {by:+.2f} A: "
                                                f"{summary(f)}")
            else:
                opened += 1
                f = check(repel, path, ["--multiplicity", str(mult)])
                if f:
                    failures.append(f"{name}: multiplicity {mult} given, expected no finding: {summary(f)}")
                if sum(atoms.numbers) % 2 == 1:
                    # An odd electron count without --multiplicity: radicals, and nothing else.
                    f = check(repel, path)
                    if not f or any(k != "radical" for k, _ in summary(f)):
                        failures.append(f"{name}: odd electron count, expected only radical findings: {summary(f)}")
                continue
            bonds = bonds_of(atoms)
            heavy = [i for i, s in enumerate(symbols) if s != "H"]
            terminal_h = [(i, neighbours(bonds, i)[0]) for i, s in enumerate(symbols)
                          if s == "H" and len(neighbours(bonds, i)) == 1 and symbols[neighbours(bonds, i)[0]] != "H"]
            if not terminal_h:
                continue
            h, parent = terminal_h[0]
            p = atoms.positions.copy()

            # A stretched bond.
            q = p.copy()
            u = (q[h] - q[parent]) / np.linalg.norm(q[h] - q[parent])
            q[h] += 0.3 * u
            write_xyz(path, symbols, q, name + " stretched")
            f = check(repel, path)
            damaged += 1
            if summary(f) != [("bond length", sorted([parent + 1, h + 1]))]:
                failures.append(f"{name}: H{h + 1} pulled 0.3 A from {symbols[parent]}{parent + 1}: {summary(f)}")
            problem = fixed_is_clean(repel, path, tmp)
            fixed += 1
            if problem:
                failures.append(f"{name}: stretched copy: {problem}")

            # A deleted hydrogen.
            keep = [i for i in range(len(symbols)) if i != h]
            write_xyz(path, [symbols[i] for i in keep], p[keep], name + " missing H")
            f = check(repel, path)
            damaged += 1
            new_parent = parent if parent < h else parent - 1
            if summary(f) != [("radical", [new_parent + 1])]:
                failures.append(f"{name}: H{h + 1} deleted: expected a radical at {new_parent + 1}: {summary(f)}")

            # A flattened CH3 group.
            for c in heavy:
                nb = neighbours(bonds, c)
                hs = [i for i in nb if symbols[i] == "H"]
                if symbols[c] != "C" or len(nb) != 4 or len(hs) != 3:
                    continue
                x = [i for i in nb if i not in hs][0]
                axis = (p[x] - p[c]) / np.linalg.norm(p[x] - p[c])
                q = p.copy()
                for i in hs:
                    v = q[i] - q[c]
                    v -= axis * v.dot(axis)
                    q[i] = q[c] + v / np.linalg.norm(v) * np.linalg.norm(p[i] - p[c])
                write_xyz(path, symbols, q, name + " flat CH3")
                f = check(repel, path)
                damaged += 1
                if summary(f) != [("geometry", [c + 1])]:
                    failures.append(f"{name}: CH3 at C{c + 1} flattened: {summary(f)}")
                problem = fixed_is_clean(repel, path, tmp)
                fixed += 1
                if problem:
                    failures.append(f"{name}: flattened copy: {problem}")
                break

            # A hydrogen moved onto another heavy atom.
            others = [i for i in heavy if i != parent]
            if others:
                target = others[0]
                q = p.copy()
                q[h] = q[target] + np.array([0.1, 0.0, 0.0])
                write_xyz(path, symbols, q, name + " H on another atom")
                f = check(repel, path)
                damaged += 1
                kinds = summary(f)
                ok = any(k == "overlap" and h + 1 in a for k, a in kinds) and all(
                    (k == "overlap" and h + 1 in a) or (k == "radical" and a == [parent + 1]) for k, a in kinds)
                if not ok:
                    failures.append(f"{name}: H{h + 1} moved onto {symbols[target]}{target + 1}: {kinds}")

    print(f"closed shell {closed}, open shell {opened}, damaged copies {damaged}, cleaned copies {fixed}, "
          f"failures {len(failures)}")
    print(f"--fix of the undamaged closed-shell molecules: largest bond change {worst_fix:.4f} A")
    print(f"bonds between first- and second-period atoms moved by +-0.15 A: {small_found} of {small} found "
          f"at the bond ({100.0 * small_found / max(small, 1):.1f}%)")
    for line in small_missed:
        print("missed", line)
    # Issue 12: at least 95% found at 0.15 A (a bond is missed where the model's own length is off by 0.03 A or more in
    # the direction of the damage).
    if small_found < 0.95 * small:
        failures.append(f"only {small_found} of {small} bonds moved by 0.15 A found")
    for line in failures:
        print("FAIL", line)
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
