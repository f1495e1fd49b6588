#!/usr/bin/env python3
"""xtb from repel's builds of molecules whose symmetric arrangement is a saddle (issue "Conformer ensembles").

Usage (ctest): /usr/bin/python3 check_xtb_saddles.py PATH/TO/repel [--jobs N]

Client: xtb, Debian package `xtb` (/usr/bin/xtb), GFN2-xTB, Bannwarth, Ehlert and Grimme, J. Chem. Theory Comput. 15
(2019) 1652. A flat allene is a saddle that xtb keeps (by symmetry its gradient across the twist is zero), so a
build must start in the right basin. For each molecule: `repel build SMILES -o start.xyz`; the dihedral between the
two end groups of the cumulene from the written coordinates; `xtb start.xyz --opt normal`; the same dihedral at the
optimum. Expected (common practice, the p orbitals alternate along a cumulene; allene D2d, butatriene D2h, from
memory): 90 degrees across an even number of cumulated double bonds, 0 or 180 across an odd number, within 10
degrees both in the start and at the optimum. For allenes written with a mark ('@'/'@@', OpenSMILES "Tetrahedral
Allene-like Systems"), the sign too: for FC=[C@]=CF the mark's list is F, H | H, F about the middle atom, and '@'
(det[n1-c, n2-c, n3-c] < 0, as common.py's expected_chiral_sign) is the F-C...C-F dihedral of -90 degrees (derived
from the definition by hand; the test of the same sign in tests/test_assemble.cpp computes the determinant). Crowded
biaryls (an ortho substituent or a peri ring): the ring-ring dihedral, folded into 0..90, within 45..90 in the start
and at the optimum (a coplanar start is a saddle xtb keeps); propeller blades (benzophenone, triphenylborane) within
15..50; helicenes ([4], [5], [6]) an inner-rim torsion within 10..40 (a flat start is a saddle xtb keeps); benzylic chains
and a sulfonyl's substituent perpendicular to their ring, a methine's hydrogen in it, amide links planar, within 10. Closes with `N passed, M failed`; exits 1 on any failure.
"""

import concurrent.futures
import os
import sys
import time

sys.dont_write_bytecode = True  # no __pycache__ in the source tree
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import check_xtb_client  # noqa: E402
from check_xtb_client import begin_check, run_xtb  # noqa: E402
from common import dihedral_deg, parse_xyz, run_repel  # noqa: E402

check_xtb_client.XTB_TIMEOUT = 300  # a hang guard only: each molecule takes seconds on one core

# name, SMILES, (a, end1, end2, d): 0-based atoms of the dihedral (repel writes the SMILES atoms, then hydrogens), the
# expected |dihedral| (90, or 0 for coplanar: 0 or 180).
MOLECULES = [
    ('allene', 'C=C=C', (3, 0, 2, 5), 90),
    ('1,3-dimethylallene', 'CC=C=CC', (0, 1, 3, 4), 90),
    ('1,3-dichloro-1,3-difluoroallene', 'ClC(F)=C=C(F)Cl', (0, 1, 4, 5), 90),
    ('tetramethylhexapentaene', 'CC(C)=C=C=C=C(C)C', (0, 1, 6, 7), 90),
    ('butatriene', 'C=C=C=C', (4, 0, 3, 6), 0),
    # Allene marks: the handedness the mark asks for (here in the dihedral's sign, F-C...C-F), kept by xtb.
    ('(@)-1,3-difluoroallene', 'FC=[C@]=CF', (0, 1, 3, 4), -90),
    ('(@@)-1,3-difluoroallene', 'FC=[C@@]=CF', (0, 1, 3, 4), 90),
    # Crowded biaryls ('twisted': the ring-ring dihedral folded into 0..90 lies within 45..90, in the start and at the
    # optimum). Gas phase, from memory: 2,2'-dimethylbiphenyl about 70-90 degrees, 2-methylbiphenyl about 58; a
    # coplanar start is a saddle xtb keeps by symmetry. Atoms: ortho C of ring A, the axis, ortho C of ring B.
    ("2,2'-dimethylbiphenyl", 'Cc1ccccc1-c1ccccc1C', (1, 6, 7, 8), 'twisted'),
    ('2-methylbiphenyl', 'Cc1ccccc1-c1ccccc1', (1, 6, 7, 8), 'twisted'),
    ('1-phenylnaphthalene', 'c1ccc2ccccc2c1-c1ccccc1', (8, 9, 10, 11), 'twisted'),
    # Propellers ('propeller': folded into 0..90, within 15..50). From memory: benzophenone's rings about 30 degrees
    # out of the carbonyl plane, triphenylborane's about 30. Atoms: a neighbour of the hub, the hub, ipso, ortho.
    ('benzophenone', 'O=C(c1ccccc1)c1ccccc1', (0, 1, 2, 3), 'propeller'),
    ('triphenylborane', 'B(c1ccccc1)(c1ccccc1)c1ccccc1', (7, 0, 1, 2), 'propeller'),
    # A crowded alkene: tetraphenylethylene's rings turned out of the C=C plane (about 47 degrees at the GFN2-xTB
    # optimum, measured; a coplanar start would be a saddle). Atoms: the other alkene C, the alkene C, ipso, ortho.
    ('tetraphenylethylene', 'C(c1ccccc1)(c1ccccc1)=C(c1ccccc1)c1ccccc1', (13, 0, 1, 2), 'propeller'),
    # Benzylic alkyl chains: the chain's carbon perpendicular to the ring plane (ethylbenzene's ethyl, from memory);
    # an in-plane start is a saddle xtb keeps by symmetry (ethylbenzene 1.34 kcal/mol above the perpendicular minimum,
    # GFN2-xTB, measured). Atoms: the chain carbon, the CH2, ipso, ortho.
    ('ethylbenzene', 'CCc1ccccc1', (0, 1, 2, 3), 90),
    ('propylbenzene', 'CCCc1ccccc1', (1, 2, 3, 4), 90),
    # A sulfonyl on an aromatic ring: its other substituent perpendicular to the ring (benzenesulfonamide's N 88-98
    # degrees out of the plane at the GFN2-xTB optimum, measured); methyl phenyl sulfone built in the plane is a saddle
    # xtb keeps, 2.25 kcal/mol above the perpendicular minimum (measured). Atoms: ortho, ipso, S, the methyl C.
    ('methyl phenyl sulfone', 'CS(=O)(=O)c1ccccc1', (5, 4, 1, 0), 90),
    # A methine on an aromatic ring: its hydrogen in the ring plane (cumene, from memory; GFN2-xTB's optimum too,
    # measured: from a start with a methyl in the plane xtb needed 94 cycles, from this one 8). Atoms: ortho, ipso,
    # the methine C, its H.
    ('cumene', 'CC(C)c1ccccc1', (4, 3, 1, 12), 0),
    # An amide link on an aromatic ring, planar ('0': 0 or 180): built perpendicular it took xtb 46 cycles and went to
    # the cis amide (measured). Atoms: the carbonyl O, C, N, ipso.
    ('paracetamol (acetanilide link)', 'CC(=O)Nc1ccc(O)cc1', (2, 1, 3, 4), 0),
    # Helicenes ('helix': folded into 0..90, within 10..40): built flat, [6]helicene is a saddle xtb keeps, 97 kcal/mol
    # above the helix (measured with GFN2-xTB); in the helix the inner-rim torsions are 15-30 degrees (GFN2-xTB,
    # measured; crystal [6]helicene about 30, from memory). Atoms: a torsion of the inner rim.
    ('[4]helicene (benzo[c]phenanthrene)', 'c1ccc2c(c1)ccc1ccc3ccccc3c12', (4, 3, 17, 16), 'helix'),
    ('[5]helicene', 'c1ccc2c(c1)ccc1ccc3ccc4ccccc4c3c12', (3, 21, 20, 19), 'helix'),
    ('[6]helicene', 'c1ccc2c(c1)ccc1ccc3ccc4ccc5ccccc5c4c3c12', (3, 25, 24, 11), 'helix'),
]


def off_target(phi, expected):
    if expected in ('twisted', 'propeller', 'helix'):  # folded into 0..90, within 45..90, 15..50 or 10..40
        folded = min(abs(phi), 180 - abs(phi))
        low, high = {'twisted': (45, 90), 'propeller': (15, 50), 'helix': (10, 40)}[expected]
        return max(0.0, low - folded, folded - high)
    if expected == -90:  # a signed target: the handedness of an allene mark
        return abs(phi + 90)
    phi = abs(phi)
    return abs(phi - 90) if expected == 90 else min(phi, 180 - phi)


def one(exe, tmp, k, name, smiles, atoms):
    work = os.path.join(tmp, f'{k:02d}')
    os.makedirs(work)
    r = run_repel(exe, ['build', smiles, '-o', os.path.join(work, 'start.xyz')])
    if r.returncode != 0:
        return name, None, None, f'repel build failed: {r.stderr.strip()}'
    with open(os.path.join(work, 'start.xyz')) as f:
        symbols, coords, _, _ = parse_xyz(f.read())
    start = dihedral_deg(*(coords[i] for i in atoms))
    x = run_xtb(work, 'start.xyz', 0, 0)
    if x.get('cycles') is None:
        return name, start, None, f'xtb did not converge ({x.get("error", x.get("returncode"))})'
    with open(os.path.join(work, 'xtbopt.xyz')) as f:
        _, opt, _, _ = parse_xyz(f.read())
    return name, start, dihedral_deg(*(opt[i] for i in atoms)), x['cycles']


def main():
    exe, jobs, t, clock, tmp = begin_check('check_xtb_saddles.py', 'repel_saddles_')
    with concurrent.futures.ThreadPoolExecutor(max_workers=jobs) as pool:
        futures = [pool.submit(one, exe, tmp, k, name, smiles, atoms)
                   for k, (name, smiles, atoms, _) in enumerate(MOLECULES)]
        results = [f.result() for f in futures]
    for (name, smiles, atoms, expected), (_, start, opt, extra) in zip(MOLECULES, results):
        if opt is None:
            t.check(False, f'{name}: {extra}')
            continue
        slack = 0 if expected in ('twisted', 'propeller', 'helix') else 10
        t.check(off_target(start, expected) <= slack,
                f'{name}: built dihedral {start:.1f} deg, expected {expected} (0 or 180; twisted 45..90, propeller 15..50, helix 10..40, folded)')
        t.check(off_target(opt, expected) <= slack,
                f'{name}: xtb optimum dihedral {opt:.1f} deg, expected {expected} (0 or 180; twisted 45..90, propeller 15..50, helix 10..40, folded)')
        print(f'{name:34s} built {start:7.1f}  xtb {opt:7.1f}  expected {expected!s:>7}  cycles {extra}')
    print(f'({time.time() - clock:.1f} s)')
    t.finish(tmp)


if __name__ == '__main__':
    main()
