"""Residuals of `repel check`'s expected bond lengths against sound structures, by bond kind, and the correction
table of lib/check/expected_length.cpp fitted on one half and judged on the other.

Sound structures: those of check_audit_damage.py (the closed-shell G2 geometries of three or more atoms from Debian's
python3-ase, MP2/6-31G(d), Curtiss et al., J. Chem. Phys. 94 (1991) 7221 and 106 (1997) 1063; the GFN2-xTB optima
of tests/data/check_optima.xyz, Bannwarth, Ehlert and Grimme, J. Chem. Theory Comput. 15 (2019) 1652). Halves: the
structures in that script's order, even positions fit, odd ones validate (never judged on the fitting half).
Every bond's measured and expected length come from one `repel check --json --bond-threshold 1e-12` run (every bond
is then a finding). To refit, empty the table in the C++ source and rebuild: the fit then starts from the domain
analysis' own lengths. With the table in place the script takes it off again (read from the source), which is exact
only where no two bonds of one atom end at equal corrected lengths by chance; the "with the table" lines are exact. The kind of a bond is computed as bond_kind() in
lib/check/expected_length.cpp computes it: each end's element and neighbour count, `u` when that end has another
double, triple or aromatic bond, else `c` for an N or O with another neighbour that has one (its lone pair shared
elsewhere: the N of an anilide, of a biguanide); the order (1, 2, 3, ar), or `s` for the bonds of two or more terminal atoms of one
element on one centre, one of those bonds multiple (shared orders: carboxylate, nitro, sulfonyl); ` r3` for a bond of a three-membered ring;
for aromatic bonds ` r5` in a five-membered ring and ` f` between two atoms of three aromatic bonds (ring fusion).
Usage: fit_check_lengths.py /path/to/repel      (prints both halves and the table to paste)
Not a test: a tool to refit the table when the length model changes.
"""
import collections
import importlib.util
import json
import os
import re
import subprocess
import sys

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
SOURCE = os.path.join(HERE, "..", "..", "lib", "check", "expected_length.cpp")
spec = importlib.util.spec_from_file_location("damage", os.path.join(HERE, "check_audit_damage.py"))
damage = importlib.util.module_from_spec(spec)
spec.loader.exec_module(damage)

MIN_BONDS = 2        # a kind is corrected only with this many fitting-half bonds from
MIN_STRUCTURES = 2   # this many fitting-half structures
MIN_SHIFT = 0.01     # and a mean residual at least this large (A); smaller ones are left alone
STEP = 0.005         # corrections are rounded to this (A)


def current_table():
    out = {}
    if os.path.exists(SOURCE):
        with open(SOURCE) as f:
            for key, value in re.findall(r'\{"([^"]+)",\s*([-+0-9.]+)\}', f.read()):
                out[key] = float(value)
    return out


def end(symbol, degree, flag):
    return f"{symbol}{degree}{flag}"


def kinds(symbols, bonds):
    """bonds: {(a, b): order word}; returns {(a, b): kind}."""
    adj = collections.defaultdict(list)
    for (a, b), w in bonds.items():
        adj[a].append((b, w))
        adj[b].append((a, w))
    out = {}
    def unsat(x, other):
        return any(y != other and v != "single" for y, v in adj[x])

    def flag(x, other):
        if unsat(x, other):
            return "u"
        if symbols[x] in ("N", "O") and any(y != other and unsat(y, x) for y, _ in adj[x]):
            return "c"
        return ""

    def ring5(a, b):
        for x, _ in adj[a]:
            if x == b:
                continue
            for y, _ in adj[x]:
                if y in (a, b):
                    continue
                for z, _ in adj[y]:
                    if z not in (a, b, x) and any(t == b for t, _ in adj[z]):
                        return True
        return False

    for (a, b), w in bonds.items():
        ea = (symbols[a], len(adj[a]), flag(a, b))
        eb = (symbols[b], len(adj[b]), flag(b, a))
        order = {"single": "1", "double": "2", "triple": "3", "aromatic": "ar"}[w]
        for centre, term in ((a, b), (b, a)):
            if len(adj[term]) != 1 or len(adj[centre]) < 2:
                continue
            same = [v for y, v in adj[centre] if symbols[y] == symbols[term] and len(adj[y]) == 1]
            if len(same) >= 2 and any(v != "single" for v in same):
                order = "s"
        tags = ""
        if {y for y, _ in adj[a]} & {y for y, _ in adj[b]}:
            tags += " r3"
        if w == "aromatic":
            if ring5(a, b):
                tags += " r5"
            if all(sum(1 for _, v in adj[x] if v == "aromatic") == 3 for x in (a, b)):
                tags += " f"
        lo, hi = sorted([ea, eb])
        out[(a, b)] = f"{end(*lo)}-{end(*hi)} {order}{tags}"
    return out


FIRST_ROWS = {"H", "He", "Li", "Be", "B", "C", "N", "O", "F"}


def coarse(symbols, ab, kind):
    """The fallback kind of coarse_bond_kind() in lib/check/expected_length.cpp: element pair and order, for bonds
    with an atom beyond F; None otherwise."""
    pair = sorted(symbols[x] for x in ab)
    if all(x in FIRST_ROWS for x in pair):
        return None
    return f"{pair[0]}-{pair[1]} {kind.split(' ')[1]}"


def lookup(table, row):
    """The correction the C++ applies to one bond: its own kind's, else its fallback kind's."""
    if row["kind"] in table:
        return table[row["kind"]]
    return table.get(row["coarse"], 0.0) if row["coarse"] else 0.0


def groups(symbols, lengths, words):
    """Group index per bond: bonds of one atom to one element written with different orders but of equal lengths
    (0.0001 A: resonance-shared) share one correction, as corrected_lengths() in lib/check/expected_length.cpp does."""
    bonds = list(lengths)
    parent = {b: b for b in bonds}

    def find(x):
        while parent[x] != x:
            x = parent[x]
        return x
    for p in range(len(bonds)):
        for q in range(p + 1, len(bonds)):
            e, f = bonds[p], bonds[q]
            if not set(e) & set(f) or sorted(symbols[x] for x in e) != sorted(symbols[x] for x in f):
                continue
            if words[e] == words[f]:
                continue
            if abs(lengths[e] - lengths[f]) <= 1e-4:
                parent[find(e)] = find(f)
    return {b: find(b) for b in bonds}


def shared(table, kind_of, group_of, coarse_of):
    """The correction each bond takes: the mean of the table's over its group."""
    members = collections.defaultdict(list)
    for b, g in group_of.items():
        members[g].append(lookup(table, dict(kind=kind_of[b], coarse=coarse_of[b])))
    return {b: float(np.mean(members[g])) for b, g in group_of.items()}


def collect(repel):
    sound = damage.sound_structures()
    path = os.path.join("/tmp", f"fit-check-lengths-{os.getpid()}.xyz")
    damage.write_records(path, [(f"u{k}", s[1], s[2], s[3], 1) for k, s in enumerate(sound)])
    r = subprocess.run([repel, "check", path, "--json", "--bond-threshold", "1e-12"], capture_output=True,
                       text=True, timeout=1200)
    os.remove(path)
    doc = json.loads(r.stdout)
    table = current_table()
    rows = []
    for k, (s, entry) in enumerate(zip(sound, doc["structures"])):
        bonds, data = {}, {}
        for f in entry.get("findings", []):
            if f["kind"] != "bond length" or "metal" in f["message"]:
                continue
            a, b = sorted(x - 1 for x in f["atoms"])
            bonds[(a, b)] = re.search(r"(single|double|triple|aromatic) bond", f["message"]).group(1)
            data[(a, b)] = (f["measured"], f["expected"])
        kind_of = kinds(s[1], bonds)
        group_of = groups(s[1], {b: v[1] for b, v in data.items()}, bonds)
        coarse_of = {ab: coarse(s[1], ab, kind) for ab, kind in kind_of.items()}
        applied = shared(table, kind_of, group_of, coarse_of)
        for ab, kind in kind_of.items():
            measured, expected = data[ab]
            rows.append(dict(name=s[0], structure=k, bond=ab, kind=kind, coarse=coarse_of[ab], group=group_of[ab],
                             half=k % 2,
                             measured=measured, model=expected - applied[ab],
                             light=all(s[1][x] in damage.LIGHT for x in ab)))
    return rows


def summary(rows, table, label):
    kind_of = {(r["structure"], r["bond"]): r["kind"] for r in rows}
    group_of = {(r["structure"], r["bond"]): (r["structure"], r["group"]) for r in rows}
    coarse_of = {(r["structure"], r["bond"]): r["coarse"] for r in rows}
    applied = shared(table, kind_of, group_of, coarse_of)
    res = np.array([r["measured"] - r["model"] - applied[(r["structure"], r["bond"])] for r in rows])
    light = np.array([r["light"] for r in rows])
    within = np.mean(np.abs(res[light]) <= 0.03) if light.any() else 0
    print(f"{label}: {len(res)} bonds, MAE {np.mean(np.abs(res)):.4f} A, worst {res.min():+.3f}/{res.max():+.3f}; "
          f"H, B..F bonds within 0.03 A: {100 * within:.1f}%; bonds with a heavier atom: MAE "
          f"{np.mean(np.abs(res[~light])):.4f} A, within 0.05 A {100 * np.mean(np.abs(res[~light]) <= 0.05):.1f}%")


def fit_table(fit):
    """Own kinds first; then, for bonds with an atom beyond F whose own kind got no entry, the element pair's."""
    table = {}
    for key in ("kind", "coarse"):
        by = collections.defaultdict(list)
        for r in fit:
            if r[key] and (key == "kind" or r["kind"] not in table):
                by[r[key]].append(r)
        for kind, rs in sorted(by.items()):
            mean = float(np.mean([r["measured"] - r["model"] for r in rs]))
            if len(rs) >= MIN_BONDS and len({r["name"] for r in rs}) >= MIN_STRUCTURES and abs(mean) >= MIN_SHIFT:
                table[kind] = round(mean / STEP) * STEP
    return table


def main():
    rows = collect(sys.argv[1])
    fit = [r for r in rows if r["half"] == 0]
    val = [r for r in rows if r["half"] == 1]
    # The reverse split (fit on the odd half, judge on the even one): a check that the gain is not the split's luck.
    reverse = fit_table(val)
    for label, rs in (("reverse split: odd half (fitted)", val), ("reverse split: even half (held out)", fit)):
        summary(rs, reverse, label + ", with its table")
    table = fit_table(fit)
    print("kind | fit n, mean, sd | validation n, mean before, mean after | correction")
    allk = sorted({r["kind"] for r in rows})
    for kind in allk:
        f = [r["measured"] - r["model"] for r in fit if r["kind"] == kind]
        v = [r["measured"] - r["model"] for r in val if r["kind"] == kind]
        c = lookup(table, next(r for r in rows if r["kind"] == kind))
        fs = f"{len(f):4d} {np.mean(f):+.3f} {np.std(f):.3f}" if f else "   0"
        vs = f"{len(v):4d} {np.mean(v):+.3f} {np.mean(v) - c:+.3f}" if v else "   0"
        print(f"{kind:26s} | {fs:18s} | {vs:20s} | {c:+.3f}")
    for label, rs in (("fitting half", fit), ("validation half", val)):
        summary(rs, {}, label + ", model alone")
        summary(rs, table, label + ", with the table")
    print("\nTable (paste into lib/check/expected_length.cpp):")
    for kind, c in sorted(table.items()):
        print(f'    {{"{kind}", {c:+.3f}}},')


if __name__ == "__main__":
    main()
