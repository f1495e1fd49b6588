"""Shared helpers for the checks of repel against the outside world (tests/external/check_*.py).

Only the standard library, numpy and ASE (Debian's python3-ase, used here as a file reader and for its table of
covalent radii) are used. Run with /usr/bin/python3.

Bond perception from coordinates: two atoms are bonded when their distance is below PERCEPTION_SCALE times the sum
of their covalent radii, Cordero et al., Dalton Trans. (2008) 2832 (the table ase.data.covalent_radii holds). The
factor 1.25 is common practice (it keeps every bond of the G2 set and no 1,3 contact of a four-membered ring).
"""

import math
import shlex
import shutil
import subprocess
import sys

import numpy as np
from ase.data import atomic_numbers, covalent_radii

PERCEPTION_SCALE = 1.25  # common practice

# Alkali and alkaline-earth metals: their contacts to counter-ions are ionic, not covalent bonds (common practice).
IONIC_METALS = {'Li', 'Na', 'K', 'Rb', 'Cs', 'Be', 'Mg', 'Ca', 'Sr', 'Ba'}


class Tally:
    """Counts passed and failed checks; prints a FAIL line for every failure and the closing summary line."""

    def __init__(self):
        self.passed = 0
        self.failed = 0

    def check(self, condition, what):
        if condition:
            self.passed += 1
        else:
            self.failed += 1
            print(f'FAIL: {what}', flush=True)
        return bool(condition)

    def finish(self, workdir=None):
        """Prints the closing line and exits; a temporary folder is removed when every check passed, else kept
        for inspection and named."""
        if workdir:
            if self.failed:
                print(f'files kept for inspection in {workdir}')
            else:
                shutil.rmtree(workdir, ignore_errors=True)
        print(f'{self.passed} passed, {self.failed} failed', flush=True)
        sys.exit(1 if self.failed else 0)


def run_repel(exe, args, timeout=60):
    """Runs the repel executable; returns the CompletedProcess (text mode)."""
    return subprocess.run([exe] + list(args), capture_output=True, text=True, timeout=timeout)


def parse_xyz(text):
    """(symbols, coordinates as an (n,3) array, comment key=value dict, raw comment) of one XYZ record."""
    lines = text.splitlines()
    if len(lines) < 2:
        raise ValueError('XYZ text shorter than two lines')
    n = int(lines[0].split()[0])
    comment = lines[1]
    fields = {}
    try:
        tokens = shlex.split(comment)  # values may be quoted: name="SO4 2-"
    except ValueError:
        tokens = comment.split()
    for token in tokens:
        if '=' in token:
            key, value = token.split('=', 1)
            fields[key] = value
    symbols, coords = [], []
    for line in lines[2:2 + n]:
        parts = line.split()
        symbols.append(parts[0])
        coords.append([float(x) for x in parts[1:4]])
    if len(symbols) != n:
        raise ValueError(f'XYZ announces {n} atoms but has {len(symbols)}')
    return symbols, np.array(coords, dtype=float).reshape(n, 3), fields, comment


def parse_sdf_bonds(text):
    """(symbols, coordinates, bonds as a list of (i, j, order), 0-based) of the first V2000 record of an SD file.

    Read by the fixed columns of the CTfile specification (counts line: atoms in columns 1-3, bonds in 4-6)."""
    lines = text.splitlines()
    counts = lines[3]
    if 'V3000' in counts:
        return parse_sdf_v3000(lines)
    n_atoms, n_bonds = int(counts[0:3]), int(counts[3:6])
    symbols, coords, bonds = [], [], []
    for line in lines[4:4 + n_atoms]:
        coords.append([float(line[0:10]), float(line[10:20]), float(line[20:30])])
        symbols.append(line[31:34].strip())
    for line in lines[4 + n_atoms:4 + n_atoms + n_bonds]:
        bonds.append((int(line[0:3]) - 1, int(line[3:6]) - 1, int(line[6:9])))
    return symbols, np.array(coords, dtype=float).reshape(-1, 3), bonds


def parse_sdf_v3000(lines):
    symbols, coords, bonds = [], [], []
    block = None
    for line in lines:
        if not line.startswith('M  V30 '):
            continue
        body = line[7:].split()
        if body[:2] == ['BEGIN', 'ATOM']:
            block = 'atom'
        elif body[:2] == ['BEGIN', 'BOND']:
            block = 'bond'
        elif body[0] == 'END':
            block = None
        elif block == 'atom':
            symbols.append(body[1])
            coords.append([float(x) for x in body[2:5]])
        elif block == 'bond':
            bonds.append((int(body[2]) - 1, int(body[3]) - 1, int(body[1])))
    return symbols, np.array(coords, dtype=float).reshape(-1, 3), bonds


def xyz_frames(text):
    """The frames of a multi-frame XYZ text (atom count, comment, atoms), each as its own XYZ text."""
    lines = text.splitlines()
    out, k = [], 0
    while k < len(lines):
        n = int(lines[k])
        out.append("\n".join(lines[k:k + n + 2]) + "\n")
        k += n + 2
    return out


def radius(symbol):
    return covalent_radii[atomic_numbers[symbol]]


# A pair within the perception scale that shares a neighbour and lies beyond this fraction of its covalent sum is the
# two ends of an angle, not a bond: the P...P of a P-O-P bridge (2.67 A in pyrophosphoric acid, 1.25 x 2.14 = 2.68)
# falls inside 1.25 x, while a three-membered ring's bonds (cyclopropane C-C 1.51 A, 0.99 x) stay bonds (common
# practice).
BRIDGED_PAIR_FRACTION = 1.15


def perceive_bonds(symbols, coords, scale=PERCEPTION_SCALE):
    """Set of frozenset({i, j}) pairs closer than scale x (sum of Cordero covalent radii), without the ends of an
    angle that only the scale brought in (BRIDGED_PAIR_FRACTION)."""
    r = np.array([radius(s) for s in symbols])
    d = np.linalg.norm(coords[:, None, :] - coords[None, :, :], axis=2)
    limit = scale * (r[:, None] + r[None, :])
    n = len(symbols)
    pairs = {frozenset((i, j)) for i in range(n) for j in range(i + 1, n) if d[i, j] < limit[i, j]}
    adj = [set() for _ in range(n)]
    for p in pairs:
        i, j = tuple(p)
        adj[i].add(j)
        adj[j].add(i)
    out = set()
    for p in pairs:
        i, j = tuple(p)
        if adj[i] & adj[j] and d[i, j] > BRIDGED_PAIR_FRACTION * (r[i] + r[j]):
            continue
        out.add(p)
    return out


def neighbours(n, bonds):
    adj = [set() for _ in range(n)]
    for b in bonds:
        i, j = tuple(b)
        adj[i].add(j)
        adj[j].add(i)
    return adj


def angle_deg(a, centre, b):
    u, v = a - centre, b - centre
    c = np.dot(u, v) / (np.linalg.norm(u) * np.linalg.norm(v))
    return math.degrees(math.acos(max(-1.0, min(1.0, c))))


def dihedral_deg(p0, p1, p2, p3):
    b0, b1, b2 = p0 - p1, p2 - p1, p3 - p2
    b1n = b1 / np.linalg.norm(b1)
    v = b0 - np.dot(b0, b1n) * b1n
    w = b2 - np.dot(b2, b1n) * b1n
    x = np.dot(v, w)
    y = np.dot(np.cross(b1n, v), w)
    return math.degrees(math.atan2(y, x))


def signed_volume(centre, a, b, c):
    return float(np.dot(a - centre, np.cross(b - centre, c - centre)))


def kabsch_rmsd(p, q):
    """RMSD of the point sets p and q (same order) after optimal superposition (Kabsch, Acta Cryst. A32 (1976) 922),
    proper rotations only."""
    p = p - p.mean(axis=0)
    q = q - q.mean(axis=0)
    h = p.T @ q
    u, s, vt = np.linalg.svd(h)
    d = np.sign(np.linalg.det(vt.T @ u.T))
    rot = vt.T @ np.diag([1.0, 1.0, d]) @ u.T
    diff = (rot @ p.T).T - q
    return float(math.sqrt((diff * diff).sum() / len(p)))


def graph_isomorphisms(sym_a, adj_a, sym_b, adj_b, limit=200000):
    """Yields mappings m (list, m[i] = atom of b matched to atom i of a) that keep elements and bonds.

    Backtracking over the atoms of a in breadth-first order, candidates refined by element and degree; small
    graphs only (the G2 molecules have at most 14 atoms)."""
    n = len(sym_a)
    if n != len(sym_b):
        return
    label_a = [(sym_a[i], len(adj_a[i])) for i in range(n)]
    label_b = [(sym_b[i], len(adj_b[i])) for i in range(n)]
    if sorted(label_a) != sorted(label_b):
        return
    # Order: breadth-first from the rarest label, so each new atom has a matched neighbour where possible.
    order, seen = [], set()
    counts = {}
    for lab in label_a:
        counts[lab] = counts.get(lab, 0) + 1
    starts = sorted(range(n), key=lambda i: (counts[label_a[i]], -len(adj_a[i]), i))
    for s in starts:
        if s in seen:
            continue
        queue = [s]
        seen.add(s)
        while queue:
            i = queue.pop(0)
            order.append(i)
            for j in sorted(adj_a[i]):
                if j not in seen:
                    seen.add(j)
                    queue.append(j)
    mapping = [-1] * n
    used = [False] * n
    found = [0]

    def extend(k):
        if found[0] >= limit:
            return
        if k == n:
            found[0] += 1
            yield list(mapping)
            return
        i = order[k]
        for j in range(n):
            if used[j] or label_b[j] != label_a[i]:
                continue
            ok = True
            for nb in adj_a[i]:
                if mapping[nb] >= 0 and mapping[nb] not in adj_b[j]:
                    ok = False
                    break
            if ok:
                # Non-bonds must stay non-bonds (degree equality then makes the map an isomorphism).
                for other in range(n):
                    if mapping[other] >= 0 and other not in adj_a[i] and mapping[other] in adj_b[j]:
                        ok = False
                        break
            if not ok:
                continue
            mapping[i] = j
            used[j] = True
            yield from extend(k + 1)
            mapping[i] = -1
            used[j] = False

    yield from extend(0)


# ---- a small SMILES tokenizer: which atoms carry stereo marks (OpenSMILES syntax) ------------------------------

ORGANIC = ['Cl', 'Br', 'B', 'C', 'N', 'O', 'P', 'S', 'F', 'I', 'b', 'c', 'n', 'o', 'p', 's']


class SmilesStereo:
    """The stereo marks of a SMILES string, with atoms numbered in input order (0-based) as repel writes them.

    chiral: {atom: (mark '@' or '@@', neighbour order as a list where 'H' stands for the bracket hydrogen)}
    double_bonds: list of (x, a, b, y, expected 'cis' or 'trans') for double bonds a=b with a marked neighbour on
    each side; the neighbour order follows OpenSMILES (preceding atom, bracket H, ring closures in the order written,
    then branches and the chain)."""

    def __init__(self, smiles):
        self.smiles = smiles
        self.chiral = {}
        self.double_bonds = []
        self._parse()

    def _parse(self):
        s = self.smiles
        i = 0
        atom = -1
        prev_stack = []
        prev = None
        pending_bond = None
        rings = {}
        nbr_order = {}
        chiral_mark = {}
        bracket_h = {}
        edges = []  # (p, q, bond char, position in the string): p written before q
        while i < len(s):
            ch = s[i]
            if ch == '(':
                prev_stack.append(prev)
                i += 1
                continue
            if ch == ')':
                prev = prev_stack.pop()
                i += 1
                continue
            if ch == '.':
                prev = None
                i += 1
                continue
            if ch in '-=#$:/\\':
                pending_bond = ch
                i += 1
                continue
            if ch.isdigit() or ch == '%':
                if ch == '%':
                    label = s[i + 1:i + 3]
                    i += 3
                else:
                    label = ch
                    i += 1
                if label in rings:
                    other, bond_other = rings.pop(label)
                    bond = pending_bond or bond_other
                    nbr_order[prev].append(other)
                    # the opening atom holds a placeholder at its digit position; fill it in
                    slot = nbr_order[other].index(('ring', label))
                    nbr_order[other][slot] = prev
                    edges.append((other, prev, bond, i))
                else:
                    rings[label] = (prev, pending_bond)
                    nbr_order[prev].append(('ring', label))
                pending_bond = None
                continue
            # an atom
            if ch == '[':
                end = s.index(']', i)
                body = s[i + 1:end]
                i = end + 1
                mark = None
                if '@@' in body:
                    mark = '@@'
                elif '@' in body:
                    mark = '@'
                # hydrogen count after the element and chirality
                stripped = body.lstrip('0123456789')
                hcount = 0
                j = 0
                # element symbol: one capital + optional lowercase, or aromatic lowercase
                if stripped[:1].isupper():
                    j = 2 if len(stripped) > 1 and stripped[1].islower() else 1
                else:
                    j = 2 if stripped[:2] in ('se', 'as') else 1
                rest = stripped[j:].lstrip('@')
                if rest.startswith('H'):
                    digits = ''
                    k = 1
                    while k < len(rest) and rest[k].isdigit():
                        digits += rest[k]
                        k += 1
                    hcount = int(digits) if digits else 1
            else:
                for sym in ORGANIC:
                    if s.startswith(sym, i):
                        i += len(sym)
                        break
                else:
                    raise ValueError(f'cannot tokenize SMILES {s!r} at column {i + 1}')
                mark = None
                hcount = 0
            atom += 1
            nbr_order[atom] = []
            if prev is not None:
                nbr_order[atom].append(prev)
                nbr_order[prev].append(atom)
                edges.append((prev, atom, pending_bond, i))
            if hcount:
                nbr_order[atom].append('H')
            bracket_h[atom] = hcount
            if mark:
                chiral_mark[atom] = mark
            pending_bond = None
            prev = atom
        for a, mark in chiral_mark.items():
            self.chiral[a] = (mark, nbr_order[a])
        # double bonds with a direction mark on each side
        directional = {}
        for p, q, bond, _ in edges:
            if bond in ('/', '\\'):
                directional.setdefault(p, []).append((q, bond, 'after'))
                directional.setdefault(q, []).append((p, bond, 'before'))
        for p, q, bond, _ in edges:
            if bond != '=':
                continue
            side = []
            for d, other in ((p, q), (q, p)):
                marks = [(n, b, w) for n, b, w in directional.get(d, []) if n != other]
                if not marks:
                    break
                n, b, where = marks[0]
                sign = 1 if (where == 'before') == (b == '/') else -1
                side.append((n, sign))
            if len(side) == 2:
                (x, sx), (y, sy) = side
                self.double_bonds.append((x, p, q, y, 'cis' if sx == sy else 'trans'))
        self.n_heavy_written = atom + 1
        self.bracket_h = bracket_h


def expected_chiral_sign(mark):
    """Sign of det[n1-c, n2-c, n3-c] for OpenSMILES '@' (looking from the first neighbour, the other three run
    anticlockwise): negative; '@@': positive. Derived from the OpenSMILES specification's definition."""
    return -1 if mark == '@' else 1


def resolve_neighbour_order(order, atom, hydrogens_of):
    """Replaces 'H' in an OpenSMILES neighbour order with the index of the bracket hydrogen repel wrote for atom."""
    out = []
    for n in order:
        if n == 'H':
            hs = hydrogens_of.get(atom, [])
            if len(hs) != 1:
                return None
            out.append(hs[0])
        else:
            out.append(n)
    return out
