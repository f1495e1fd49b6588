#!/usr/bin/env python3
"""Bond lengths and bond angles of repel's structures against the G2 reference geometries (issues 2 and 3).

Usage (ctest): /usr/bin/python3 check_g2_geometry.py PATH/TO/repel

Reference: ase.collections.g2 in Debian's python3-ase, the MP2(full)/6-31G(d) geometries of Curtiss, Raghavachari,
Trucks and Pople, J. Chem. Phys. 94 (1991) 7221, and Curtiss, Raghavachari, Redfern and Pople, J. Chem. Phys. 106
(1997) 1063. The SMILES of every closed-shell molecule of the set are in tests/data/g2_smiles.tsv (written by hand).

For each molecule: `repel build SMILES -o m.sdf`; the bonds of the built molecule are those of the SD file (the
program's own graph of the SMILES); the bonds of the reference are perceived with 1.25 x the sum of the covalent
radii of Cordero et al., Dalton Trans. (2008) 2832 (common practice). The two graphs must be isomorphic by element
and connectivity (a wrong SMILES or a wrong graph fails here). Among the isomorphisms (atoms that the graph cannot
tell apart, such as the two hydrogens of a CH2 group cis and trans to a substituent), the one that fits the
reference best is taken. Every bond length and every bond angle (i-j-k with i and k bonded to j) is then compared.

Targets asserted (not weakened; the lead decides if they are missed):
- issue 3: over all molecules, bond mean absolute error <= 0.025 A and angle mean absolute error <= 3 deg; no
  molecule with a bond off by more than 0.1 A or an angle off by more than 10 deg (but the known limits below); the
  bond MAE also on the half of the set that the C-H bond lengths were not fitted on;
- issue 2: over the single-centre molecules (one centre bonded to every other atom, at least two ligands: H2O, NH3,
  CH4, SiH4, PH3, H2S, PF3, SiF4, CF4, NF3, ClF3, BF3, BCl3, AlCl3, CO2, CS2, OCS, SO2, ...), bond MAE <= 0.03 A.
Prints tables of the worst cases and closes with `N passed, M failed`.
"""

import os
import sys
import tempfile
from collections import Counter

import numpy as np

sys.dont_write_bytecode = True  # no __pycache__ in the source tree
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from common import (Tally, angle_deg, graph_isomorphisms, neighbours, parse_sdf_bonds,  # noqa: E402
                    perceive_bonds, run_repel)

from ase.collections import g2  # noqa: E402

BOND_MAE_MAX = 0.025        # A, issue 3
ANGLE_MAE_MAX = 3.0         # deg, issue 3
BOND_WORST_MAX = 0.1        # A, issue 3, per molecule
ANGLE_WORST_MAX = 10.0      # deg, issue 3, per molecule
SINGLE_CENTRE_BOND_MAE_MAX = 0.03  # A, issue 2

# Held out: the C-H bond-length additions of lib/core/bond_length.cpp were fitted on the G2 C-H bonds of every other
# molecule of the table sorted by name (the 1st, 3rd, 5th, ... in Python's string order: the fitting half); the
# other half is an independent check of them, and its bond MAE is asserted on its own.
# Known limits: molecules exempt from the per-molecule limits, each with its reason; each carries a warning in the
# built structure (lib/domains/domains.cpp). README.md lists the same.
KNOWN_LIMITS = {
    # G2's own value is the outlier: MP2/6-31G(d) puts Li2 at 2.773 A, 0.10 A longer than the measured 2.673 A
    # (Huber and Herzberg, Constants of Diatomic Molecules, 1979, from memory); repel's 2.66 A (Pyykko's radii) is
    # checked against the measured value below (MEASURED_INSTEAD).
    'Li2': 'alkali-metal dimer: G2\'s MP2/6-31G(d) 2.773 A is 0.10 A longer than the measured 2.673 A',
}
# Molecules of KNOWN_LIMITS judged against a measured value instead: (atom index 1, atom index 2, length in A, source).
MEASURED_INSTEAD = {
    'Li2': (0, 1, 2.673, 'Huber and Herzberg 1979, from memory'),
}

HERE = os.path.dirname(os.path.abspath(__file__))
TABLE = os.path.join(HERE, '..', 'data', 'g2_smiles.tsv')


def read_table(path):
    rows = []
    with open(path) as f:
        for number, line in enumerate(f, 1):
            if not line.strip() or line.startswith('#'):
                continue
            name, smiles = line.rstrip('\n').split('\t')
            rows.append((number, name, smiles))
    return rows


def bonds_and_angles(bonds, n):
    adj = neighbours(n, bonds)
    bond_list = sorted(tuple(sorted(b)) for b in bonds)
    angle_list = [(i, j, k) for j in range(n) for i in sorted(adj[j]) for k in sorted(adj[j]) if i < k]
    return bond_list, angle_list


def compare(mapping, ref_pos, built_pos, ref_bonds, ref_angles):
    """Errors (built - reference) of every reference bond and angle under mapping (reference atom -> built atom)."""
    m = mapping
    db = [np.linalg.norm(built_pos[m[i]] - built_pos[m[j]]) - np.linalg.norm(ref_pos[i] - ref_pos[j])
          for i, j in ref_bonds]
    da = [angle_deg(built_pos[m[i]], built_pos[m[j]], built_pos[m[k]]) - angle_deg(ref_pos[i], ref_pos[j], ref_pos[k])
          for i, j, k in ref_angles]
    return db, da


def main():
    if len(sys.argv) < 2:
        print('usage: check_g2_geometry.py PATH/TO/repel')
        sys.exit(2)
    exe = sys.argv[1]
    t = Tally()
    tmp = tempfile.mkdtemp(prefix='repel_g2_')
    rows = read_table(TABLE)

    # The table covers every closed-shell molecule of the collection with at least one bond, and nothing else.
    names = {name for _, name, _ in rows}
    for name in g2.names:
        atoms = g2[name]
        moments = atoms.get_initial_magnetic_moments()
        closed = not (len(moments) and np.abs(moments).sum() > 0)
        if closed and len(atoms) > 1:
            t.check(name in names, f'g2 closed-shell molecule {name} is in {os.path.basename(TABLE)}')
    for name in names:
        t.check(name in g2.names, f'{name} of {os.path.basename(TABLE)} is in ase.collections.g2')

    all_bonds, all_angles = [], []      # (error, molecule, description)
    single_centre_bonds = []
    diatomic_bonds = []                 # printed only: not in issue 2's list of single-centre molecules
    per_molecule = []                   # (name, smiles, max |bond err|, max |angle err|, worst bond, worst angle)
    for number, name, smiles in rows:
        if name not in g2.names:
            continue
        ref = g2[name]
        ref_sym = ref.get_chemical_symbols()
        ref_pos = ref.get_positions()
        n = len(ref_sym)
        path = os.path.join(tmp, f'{number}.sdf')
        r = run_repel(exe, ['build', smiles, '-o', path])
        if not t.check(r.returncode == 0 and os.path.exists(path),
                       f'{name} ({smiles}): repel build exits 0 (got {r.returncode}: {r.stderr.strip()})'):
            continue
        with open(path) as f:
            sdf_text = f.read()
        b_sym, b_pos, b_bonds = parse_sdf_bonds(sdf_text)
        if name in KNOWN_LIMITS:
            t.check('> <warnings>' in sdf_text, f'{name} ({smiles}), a known limit, carries a warning in its SD file')
        ref_bond_set = perceive_bonds(ref_sym, ref_pos)
        built_bond_set = {frozenset((i, j)) for i, j, _ in b_bonds}
        if not t.check(Counter(b_sym) == Counter(ref_sym) and len(built_bond_set) == len(ref_bond_set),
                       f'{name} ({smiles}): same atoms and bond count as the reference '
                       f'({dict(Counter(b_sym))} / {len(built_bond_set)} bonds vs {dict(Counter(ref_sym))} / '
                       f'{len(ref_bond_set)})'):
            continue
        ref_bonds, ref_angles = bonds_and_angles(ref_bond_set, n)
        adj_ref, adj_built = neighbours(n, ref_bond_set), neighbours(n, built_bond_set)
        best = None
        for mapping in graph_isomorphisms(ref_sym, adj_ref, b_sym, adj_built):
            db, da = compare(mapping, ref_pos, b_pos, ref_bonds, ref_angles)
            score = sum((x / 0.01) ** 2 for x in db) + sum(x ** 2 for x in da)
            if best is None or score < best[0]:
                best = (score, mapping, db, da)
        if not t.check(best is not None, f'{name} ({smiles}): built graph matches the reference graph by element '
                                         'and connectivity'):
            continue
        _, mapping, db, da = best
        for (i, j), e in zip(ref_bonds, db):
            all_bonds.append((e, name, f'{ref_sym[i]}{i + 1}-{ref_sym[j]}{j + 1}'))
        for (i, j, k), e in zip(ref_angles, da):
            all_angles.append((e, name, f'{ref_sym[i]}{i + 1}-{ref_sym[j]}{j + 1}-{ref_sym[k]}{k + 1}'))
        degrees = [len(a) for a in adj_ref]
        if n >= 3 and max(degrees) == n - 1 and len(ref_bonds) == n - 1:
            single_centre_bonds.extend((e, name) for e in db)
        if n == 2:
            diatomic_bonds.extend((e, name) for e in db)
        wb = max(abs(x) for x in db) if db else 0.0
        wa = max(abs(x) for x in da) if da else 0.0
        per_molecule.append((name, smiles, wb, wa))
        if name in MEASURED_INSTEAD:
            i, j, length, source = MEASURED_INSTEAD[name]
            built = np.linalg.norm(b_pos[mapping[i]] - b_pos[mapping[j]])
            t.check(abs(built - length) <= BOND_WORST_MAX,
                    f'{name} ({smiles}): bond {built:.3f} A within {BOND_WORST_MAX} A of the measured {length} A '
                    f'({source})')
        if name in KNOWN_LIMITS and (wb > BOND_WORST_MAX or wa > ANGLE_WORST_MAX):
            print(f'known limit: {name} ({smiles}): worst bond {wb:.3f} A, worst angle {wa:.1f} deg: '
                  f'{KNOWN_LIMITS[name]}')
        else:
            t.check(wb <= BOND_WORST_MAX, f'{name} ({smiles}): worst bond error {wb:.3f} A <= {BOND_WORST_MAX} '
                                          '(issue 3; G2 MP2/6-31G(d), Curtiss et al. 1991/1997)')
            t.check(wa <= ANGLE_WORST_MAX, f'{name} ({smiles}): worst angle error {wa:.1f} deg <= {ANGLE_WORST_MAX} '
                                           '(issue 3; G2 MP2/6-31G(d), Curtiss et al. 1991/1997)')

    def mae(values):
        return sum(abs(v) for v in values) / len(values) if values else float('nan')

    bond_mae = mae([e for e, _, _ in all_bonds])
    angle_mae = mae([e for e, _, _ in all_angles])
    sc_mae = mae([e for e, _ in single_centre_bonds])
    # The species issue 2 names (its list ends with "...": the wider set above is ours).
    named = {'H2O', 'NH3', 'CH4', 'SiH4', 'PH3', 'SH2', 'PF3', 'SiF4', 'CF4', 'NF3', 'ClF3', 'BF3', 'BCl3', 'AlCl3',
             'CO2', 'CS2', 'OCS', 'SO2'}
    named_mae = mae([e for e, m in single_centre_bonds if m in named])
    print(f'the {len(named)} single-centre species issue 2 names: bond MAE {named_mae:.4f} A '
          f'(target <= {SINGLE_CENTRE_BOND_MAE_MAX})')
    sc_names = sorted({m for _, m in single_centre_bonds})

    print()
    print('Worst molecules by bond error (A) and by angle error (deg), reference G2 (ase.collections.g2):')
    print(f'{"molecule":24s} {"SMILES":24s} {"max|dr|":>8s} {"max|da|":>8s}')
    shown = sorted(per_molecule, key=lambda x: -x[2])[:15]
    shown += [m for m in sorted(per_molecule, key=lambda x: -x[3])[:15] if m not in shown]
    for name, smiles, wb, wa in shown:
        print(f'{name:24s} {smiles:24s} {wb:8.3f} {wa:8.1f}')
    print()
    print('Worst single bonds (built - reference, A):')
    for e, name, what in sorted(all_bonds, key=lambda x: -abs(x[0]))[:12]:
        print(f'  {name:24s} {what:14s} {e:+.3f}')
    print('Worst single angles (built - reference, deg):')
    for e, name, what in sorted(all_angles, key=lambda x: -abs(x[0]))[:12]:
        print(f'  {name:24s} {what:18s} {e:+.1f}')
    print()
    print(f'molecules compared: {len(per_molecule)} of {len(rows)}; bonds {len(all_bonds)}, angles {len(all_angles)}')
    print(f'bond MAE {bond_mae:.4f} A (target <= {BOND_MAE_MAX}), angle MAE {angle_mae:.2f} deg '
          f'(target <= {ANGLE_MAE_MAX})')
    print(f'single-centre molecules ({len(sc_names)}): bond MAE {sc_mae:.4f} A (target <= '
          f'{SINGLE_CENTRE_BOND_MAE_MAX}): {" ".join(sc_names)}')
    print(f'diatomics ({len(diatomic_bonds)}, not asserted): bond MAE {mae([e for e, _ in diatomic_bonds]):.4f} A; '
          f'single-centre and diatomics together: '
          f'{mae([e for e, _ in single_centre_bonds + diatomic_bonds]):.4f} A')
    over_b = sum(1 for m in per_molecule if m[2] > BOND_WORST_MAX)
    over_a = sum(1 for m in per_molecule if m[3] > ANGLE_WORST_MAX)
    print(f'molecules with a bond off by more than {BOND_WORST_MAX} A: {over_b}; with an angle off by more than '
          f'{ANGLE_WORST_MAX} deg: {over_a}')

    print(f'issue 3 target bond MAE <= {BOND_MAE_MAX}: {"met" if bond_mae <= BOND_MAE_MAX else "NOT met"} '
          f'({bond_mae:.4f} A)')
    print(f'issue 2 target single-centre bond MAE <= {SINGLE_CENTRE_BOND_MAE_MAX}: '
          f'{"met" if sc_mae <= SINGLE_CENTRE_BOND_MAE_MAX else "NOT met"} ({sc_mae:.4f} A)')
    t.check(bond_mae <= BOND_MAE_MAX, f'bond MAE {bond_mae:.4f} A <= {BOND_MAE_MAX} over the G2 set (issue 3; '
                                      'G2 MP2/6-31G(d), Curtiss et al. 1991/1997)')
    names_sorted = sorted({m for m, _, _, _ in per_molecule})
    fitting = set(names_sorted[::2])
    fit_mae = mae([e for e, m, _ in all_bonds if m in fitting])
    held_mae = mae([e for e, m, _ in all_bonds if m not in fitting])
    ch = [(e, m) for e, m, what in all_bonds if sorted(x.rstrip('0123456789') for x in what.split('-')) == ['C', 'H']]
    print(f'bond MAE on the half the C-H additions were fitted on: {fit_mae:.4f} A; on the held-out half: '
          f'{held_mae:.4f} A; C-H bonds alone: {mae([e for e, m in ch if m in fitting]):.4f} / '
          f'{mae([e for e, m in ch if m not in fitting]):.4f} A')
    t.check(held_mae <= BOND_MAE_MAX, f'bond MAE {held_mae:.4f} A <= {BOND_MAE_MAX} on the held-out half of the G2 set '
                                      '(issue 3; G2 MP2/6-31G(d), Curtiss et al. 1991/1997)')
    t.check(angle_mae <= ANGLE_MAE_MAX, f'angle MAE {angle_mae:.2f} deg <= {ANGLE_MAE_MAX} over the G2 set (issue 3; '
                                        'G2 MP2/6-31G(d), Curtiss et al. 1991/1997)')
    t.check(named_mae <= SINGLE_CENTRE_BOND_MAE_MAX,
            f'bond MAE {named_mae:.4f} A <= {SINGLE_CENTRE_BOND_MAE_MAX} on the single-centre species issue 2 names '
            '(G2 MP2/6-31G(d), Curtiss et al. 1991/1997)')
    t.check(sc_mae <= SINGLE_CENTRE_BOND_MAE_MAX,
            f'single-centre bond MAE {sc_mae:.4f} A <= {SINGLE_CENTRE_BOND_MAE_MAX} (issue 2; '
            'G2 MP2/6-31G(d), Curtiss et al. 1991/1997)')
    t.finish(tmp)


if __name__ == '__main__':
    main()
