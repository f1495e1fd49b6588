#!/usr/bin/python3
"""Bond lengths of the single-centre molecules of the G2 test set, for tests/test_bond_length.cpp.

Reference geometries: ase.collections.g2 in Debian's python3-ase, the MP2(full)/6-31G(d) geometries of Curtiss,
Raghavachari, Trucks and Pople, J. Chem. Phys. 94 (1991) 7221 (G2) and Curtiss, Raghavachari, Redfern and Pople,
J. Chem. Phys. 106 (1997) 1063 (G2-2 additions such as AlF3, AlCl3).

A molecule is taken when it is closed-shell (no initial magnetic moment in the collection) and its bond graph is a
star: one centre bonded to every other atom and no other bonds (diatomics count, either atom being the centre). Bonds
are perceived with 1.25 x the sum of the Cordero et al. (Dalton Trans. 2008, 2832) radii from ase.data. The bond order
is that of the usual Lewis structure, written out below by hand (O3 is the resonance average, 1.5); the script stops
if a molecule it finds has no entry, so a new ASE release cannot silently change the table.

Prints one line per distinct bond: molecule, centre symbol, ligand symbol, order, length in Angstrom.
Run with /usr/bin/python3 (the Debian interpreter that has ase).
"""
import sys

import numpy as np
from ase.collections import g2
from ase.data import covalent_radii

# Bond order of the usual Lewis structure, per molecule and ligand element (ligands not named are single bonds).
LEWIS_ORDER = {
    'P2': {'P': 3}, 'CS': {'S': 3, 'C': 3}, 'CO': {'C': 3, 'O': 3}, 'N2': {'N': 3}, 'SiO': {'O': 3, 'Si': 3},
    'HCN': {'N': 3},
    'CO2': {'O': 2}, 'CS2': {'S': 2}, 'OCS': {'O': 2, 'S': 2}, 'H2CO': {'O': 2}, 'COF2': {'O': 2},
    'SO2': {'O': 2},    # O=S=O, expanded octet
    'N2O': {'N': 2, 'O': 2},  # N=N=O
    'ClNO': {'O': 2},   # Cl-N=O
    'O3': {'O': 1.5},   # two resonance structures O=O-O <-> O-O=O
}
SINGLE_ONLY = {
    'PH3', 'HCCl3', 'HOCl', 'H2', 'SH2', 'ClF3', 'SiH4', 'LiF', 'SiF4', 'NaCl', 'CH3Cl', 'AlF3', 'ClF', 'PF3',
    'LiH', 'HCF3', 'SiH2_s1A1d', 'H2O', 'HCl', 'CH2_s1A1d', 'BCl3', 'CCl4', 'AlCl3', 'SiCl4', 'BF3', 'F2O',
    'H2CCl2', 'HF', 'NF3', 'NH3', 'CF4', 'H2CF2', 'Li2', 'F2', 'CH4', 'Cl2', 'Na2',
}
PERCEPTION_SCALE = 1.25


def star_centre(atoms):
    """Index of the centre when the bond graph is a star, else None."""
    n = len(atoms)
    if n < 2:
        return None
    z = atoms.numbers
    d = atoms.get_all_distances()
    bonded = (d < PERCEPTION_SCALE * (covalent_radii[z][:, None] + covalent_radii[z][None, :])) & ~np.eye(n, dtype=bool)
    degree = bonded.sum(axis=1)
    if bonded.sum() != 2 * (n - 1):
        return None
    centres = [i for i in range(n) if degree[i] == n - 1]
    return centres[0] if centres else None


def main():
    print('# molecule centre ligand order length_A')
    for name in g2.names:
        atoms = g2[name]
        if np.abs(atoms.get_initial_magnetic_moments()).sum() > 0:
            continue
        c = star_centre(atoms)
        if c is None:
            continue
        if name not in LEWIS_ORDER and name not in SINGLE_ONLY:
            sys.exit(f'no Lewis bond order written for G2 molecule {name}')
        sym = atoms.get_chemical_symbols()
        seen = []
        for j in range(len(atoms)):
            if j == c:
                continue
            r = atoms.get_distance(c, j)
            order = LEWIS_ORDER.get(name, {}).get(sym[j], 1)
            key = (sym[j], round(r, 3))
            if key in seen:
                continue
            seen.append(key)
            print(f'{name} {sym[c]} {sym[j]} {order:g} {r:.4f}')


if __name__ == '__main__':
    main()
