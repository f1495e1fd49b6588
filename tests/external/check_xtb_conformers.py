#!/usr/bin/env python3
"""xtb from the conformers of `repel build --conformers N`: each one a distinct minimum, ranked as GFN2-xTB ranks them.

Usage (ctest): /usr/bin/python3 check_xtb_conformers.py PATH/TO/repel [--jobs N]

Client: xtb, Debian package `xtb` (/usr/bin/xtb), GFN2-xTB, Bannwarth, Ehlert and Grimme, J. Chem. Theory Comput. 15
(2019) 1652. For each molecule below, `repel build SMILES --conformers 10` (multi-frame XYZ), and each conformer
optimised by `xtb --opt normal`. Checks (each could fail):
  - connectivity kept through every optimisation (bonds perceived as common.py does);
  - the two conformers named stay distinct: the heavy-atom RMSD between their optima (superposed, the molecule's
    symmetric atoms allowed to trade places; mirror images allowed, none of these molecules has a stereocentre
    except the tert-butylcyclohexanol, whose marks both conformers keep, and none is chiral) at least 0.3 A: neither start sat on the
    other's slope;
  - repel's lower-ranked conformer is the lower one in GFN2-xTB too: n-butane anti below gauche (experiment 0.6-0.9
    kcal/mol, from memory), methylcyclohexane's equatorial methyl below axial (A-value 1.74, from memory),
    cis-4-tert-butylcyclohexanol with its tert-butyl equatorial below the other chair (tert-butyl A-value about 4.9,
    hydroxyl about 0.9, from memory), N-methylpiperidine's equatorial methyl below the axial one its nitrogen's
    inversion gives (about 3 kcal/mol in the gas phase, from memory), 1,4-dimethylcyclohexane written without marks:
    both conformers of the first one's stereoisomer (trans: diequatorial below diaxial, twice the A-value; cis has
    one chair shape) -- checked by the methyls' faces of the ring in repel's conformers.
Closes with `N passed, M failed`; exits 1 on any failure.
"""

import concurrent.futures
import os
import sys
import time

import numpy as np

sys.dont_write_bytecode = True  # no __pycache__ in the source tree
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import check_xtb_client  # noqa: E402
from check_xtb_client import begin_check, run_xtb  # noqa: E402
from common import graph_isomorphisms, kabsch_rmsd, neighbours, parse_xyz, perceive_bonds, run_repel, xyz_frames  # noqa: E402

check_xtb_client.XTB_TIMEOUT = 300  # a hang guard only: each optimisation takes seconds on one core
HARTREE_KCAL = 627.509  # kcal/mol per hartree (CODATA, from memory)

# name, SMILES, how many conformers repel must give (at least).
MOLECULES = [
    ('n-butane', 'CCCC', 2),
    ('methylcyclohexane', 'CC1CCCCC1', 2),
    ('cis-4-tert-butylcyclohexanol', 'CC(C)(C)[C@H]1CC[C@@H](O)CC1', 2),
    ('N-methylpiperidine', 'CN1CCCCC1', 2),
    ('1,4-dimethylcyclohexane', 'CC1CCC(C)CC1', 2),
]


def optimise(tmp, tag, xyz):
    work = os.path.join(tmp, tag)
    os.makedirs(work)
    with open(os.path.join(work, 'start.xyz'), 'w') as f:
        f.write(xyz)
    x = run_xtb(work, 'start.xyz', 0, 0)
    if x.get('cycles') is None:
        return None, None
    with open(os.path.join(work, 'xtbopt.xyz')) as f:
        opt = f.read()
    energy = float(opt.splitlines()[1].split()[1])  # xtb's comment line: " energy: E gnorm: ..."
    return opt, energy


def least_rmsd(a_xyz, b_xyz):
    sym, a, _, _ = parse_xyz(a_xyz)
    _, b, _, _ = parse_xyz(b_xyz)
    heavy = [i for i, s in enumerate(sym) if s != 'H']
    hs = [sym[i] for i in heavy]
    adj = neighbours(len(hs), perceive_bonds(hs, a[heavy]))
    best = 1e9
    for _, m in zip(range(500), graph_isomorphisms(hs, adj, hs, adj)):
        q = b[heavy][np.array(m)]
        mirrored = q.copy()
        mirrored[:, 0] *= -1
        best = min(best, kabsch_rmsd(a[heavy], q), kabsch_rmsd(a[heavy], mirrored))
    return best


def cis_methyls(xyz):
    """Whether the methyls of 1,4-dimethylcyclohexane as repel writes CC1CCC(C)CC1 (methyl C0 on ring C1, methyl C5 on
    ring C4; ring C1 C2 C3 C4 C6 C7) lie on one face of the ring's least-squares plane."""
    _, x, _, _ = parse_xyz(xyz)
    ring = x[[1, 2, 3, 4, 6, 7]]
    normal = np.linalg.svd(ring - ring.mean(axis=0))[2][2]
    return bool(np.sign(np.dot(x[0] - x[1], normal)) == np.sign(np.dot(x[5] - x[4], normal)))


def same_bonds(x1, x2):
    s1, c1, _, _ = parse_xyz(x1)
    s2, c2, _, _ = parse_xyz(x2)
    norm = lambda bonds: sorted(tuple(sorted(b)) for b in bonds)  # noqa: E731
    return norm(perceive_bonds(s1, c1)) == norm(perceive_bonds(s2, c2))


def main():
    exe, jobs, t, clock, tmp = begin_check('check_xtb_conformers.py', 'repel_conformers_')
    starts = {}
    for name, smiles, least in MOLECULES:
        r = run_repel(exe, ['build', smiles, '--conformers', '10'])
        if not t.check(r.returncode == 0, f'{name}: repel build failed: {r.stderr.strip()}'):
            continue
        starts[name] = xyz_frames(r.stdout)
        t.check(len(starts[name]) >= least, f'{name}: {len(starts[name])} conformers, expected at least {least}')
        if name == '1,4-dimethylcyclohexane':
            faces = [cis_methyls(x) for x in starts[name]]
            t.check(len(set(faces)) == 1, f'{name}: cis and trans conformers mixed: {faces}')
    jobs_list = [(name, k, xyz) for name, fr in starts.items() for k, xyz in enumerate(fr[:2])]
    with concurrent.futures.ThreadPoolExecutor(max_workers=jobs) as pool:
        results = list(pool.map(lambda j: optimise(tmp, f'{j[0].replace(" ", "_")}-{j[1]}', j[2]), jobs_list))
    by = {(name, k): (xyz, res) for (name, k, xyz), res in zip(jobs_list, results)}
    for name, smiles, _ in MOLECULES:
        if (name, 1) not in by:
            continue
        (x0, (o0, e0)), (x1, (o1, e1)) = by[(name, 0)], by[(name, 1)]
        if not t.check(o0 is not None and o1 is not None, f'{name}: xtb did not converge'):
            continue
        t.check(same_bonds(x0, o0) and same_bonds(x1, o1), f'{name}: a bond changed in the optimisation')
        d = least_rmsd(o0, o1)
        t.check(d >= 0.3, f'{name}: the two optima are only {d:.2f} A apart (one start slid into the other)')
        gap = (e1 - e0) * HARTREE_KCAL
        t.check(gap > 0, f'{name}: repel\'s second conformer is {gap:.2f} kcal/mol below its first in GFN2-xTB')
        print(f'{name:30s} optima {d:.2f} A apart; GFN2-xTB second minus first {gap:+.2f} kcal/mol')
    print(f'({time.time() - clock:.1f} s)')
    t.finish(tmp)


if __name__ == '__main__':
    main()
