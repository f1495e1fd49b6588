#!/usr/bin/env python3
"""Every VSEPR class from AX2 to AX8, judged from the coordinates repel writes (issue 2).

Usage (ctest): /usr/bin/python3 check_vsepr_classes.py PATH/TO/repel

For one real species of each class, `repel build INPUT` is run and the shape is judged from the XYZ it writes: the
angles between the ligands as seen from the centre, planarity, trans pairs, the azimuths of a square antiprism. No
label the program prints is read. Sources beside each check:
- the classes and the shapes they predict: Gillespie and Nyholm, Q. Rev. Chem. Soc. 11 (1957) 339; Gillespie and
  Hargittai, The VSEPR Model of Molecular Geometry (1991) (reference-data.md);
- ideal polyhedron angles: common practice (reference-data.md);
- gas-phase experimental angles: CRC Handbook of Chemistry and Physics, 'Structure of free molecules in the gas
  phase', NIST CCCBDB (reference-data.md; from memory);
- the file reader: ASE (Debian python3-ase), ase.io.read, used only as a reader.
Prints one FAIL line per failed check and closes with `N passed, M failed`; exits 1 on any failure.
"""

import itertools
import math
import os
import sys
import tempfile
import warnings

import numpy as np

sys.dont_write_bytecode = True  # no __pycache__ in the source tree
sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from common import Tally, angle_deg, parse_xyz, run_repel  # noqa: E402

import ase.io  # noqa: E402

TETRAHEDRAL = math.degrees(math.acos(-1.0 / 3.0))  # 109.4712, common practice


def ligand_angles(coords, centre, ligands):
    """{(i, j): angle at the centre} for every pair of ligands."""
    return {(i, j): angle_deg(coords[i], coords[centre], coords[j]) for i, j in itertools.combinations(ligands, 2)}


def max_out_of_plane(points):
    """Largest distance of the points from their least-squares plane (Angstrom)."""
    p = np.asarray(points, dtype=float)
    p = p - p.mean(axis=0)
    normal = np.linalg.svd(p)[2][-1]
    return float(np.abs(p @ normal).max())


def unit(v):
    return v / np.linalg.norm(v)


# ---- shape judges: each returns a list of (condition, description) -----------------------------------------------

def judge_linear(c, centre, ligs):
    a = ligand_angles(c, centre, ligs)
    value = list(a.values())[0]
    return [(abs(value - 180.0) <= 1.0, f'linear: L-A-L {value:.2f} deg, expected 180 +- 1 (common practice)')]


def judge_trigonal_planar(c, centre, ligs):
    a = list(ligand_angles(c, centre, ligs).values())
    return [(all(abs(x - 120.0) <= 1.0 for x in a), f'trigonal planar: angles {fmt(a)}, expected 120 +- 1'),
            (max_out_of_plane([c[centre]] + [c[i] for i in ligs]) <= 0.01,
             'trigonal planar: centre in the plane of its ligands (0.01 A)')]


def judge_tetrahedral(c, centre, ligs):
    a = list(ligand_angles(c, centre, ligs).values())
    return [(all(abs(x - TETRAHEDRAL) <= 1.0 for x in a),
             f'tetrahedral: six angles {fmt(a)}, expected 109.47 +- 1 (common practice)')]


def judge_trigonal_bipyramid(c, centre, ligs):
    a = ligand_angles(c, centre, ligs)
    trans = [p for p, x in a.items() if x > 150.0]
    out = [(len(trans) == 1, f'trigonal bipyramid: one axial pair near 180, found {len(trans)} angles above 150')]
    if len(trans) == 1:
        ax = set(trans[0])
        eq = [i for i in ligs if i not in ax]
        out.append((abs(a[trans[0]] - 180.0) <= 2.0, f'trigonal bipyramid: axial angle {a[trans[0]]:.2f}, 180 +- 2'))
        eq_angles = [a[p] for p in itertools.combinations(eq, 2)]
        out.append((all(abs(x - 120.0) <= 2.0 for x in eq_angles),
                    f'trigonal bipyramid: equatorial angles {fmt(eq_angles)}, 120 +- 2'))
        ax_eq = [angle_deg(c[i], c[centre], c[j]) for i in ax for j in eq]
        out.append((all(abs(x - 90.0) <= 2.0 for x in ax_eq),
                    f'trigonal bipyramid: axial-equatorial angles {fmt(ax_eq)}, 90 +- 2'))
    return out


def judge_octahedral(c, centre, ligs):
    a = list(ligand_angles(c, centre, ligs).values())
    trans = [x for x in a if x > 135.0]
    cis = [x for x in a if x <= 135.0]
    return [(len(trans) == 3 and all(abs(x - 180.0) <= 2.0 for x in trans),
             f'octahedral: three trans pairs at 180 +- 2, found {fmt(trans)}'),
            (len(cis) == 12 and all(abs(x - 90.0) <= 2.0 for x in cis),
             f'octahedral: twelve cis angles at 90 +- 2, found {fmt(cis)}')]


def judge_bent_trigonal(c, centre, ligs):
    # AX2E1: bent, from a trigonal-planar electron geometry: below 120 (the lone pair is larger), above the
    # tetrahedral-based AX2E2 range's lower end. SO2 119.3 deg (CRC, from memory).
    x = list(ligand_angles(c, centre, ligs).values())[0]
    return [(105.0 <= x < 120.0, f'bent (AX2E1): angle {x:.2f}, expected 105 <= angle < 120 (VSEPR; SO2 119.3 '
                                  'CRC, from memory)')]


def judge_bent_tetrahedral(c, centre, ligs):
    x = list(ligand_angles(c, centre, ligs).values())[0]
    return [(95.0 <= x < TETRAHEDRAL, f'bent (AX2E2): angle {x:.2f}, expected 95 <= angle < 109.47 (VSEPR)')]


def judge_pyramidal(c, centre, ligs):
    a = list(ligand_angles(c, centre, ligs).values())
    return [(all(95.0 <= x < TETRAHEDRAL for x in a),
             f'trigonal pyramidal: angles {fmt(a)}, expected 95 <= angle < 109.47 (VSEPR)'),
            (sum(a) < 350.0, f'trigonal pyramidal: sum of angles {sum(a):.1f} below 350 (not planar)')]


def judge_t_shaped(c, centre, ligs):
    a = ligand_angles(c, centre, ligs)
    big = [p for p, x in a.items() if x > 150.0]
    out = [(len(big) == 1, f'T-shaped: one near-linear pair, found {len(big)} angles above 150'),
           (max_out_of_plane([c[centre]] + [c[i] for i in ligs]) <= 0.01,
            'T-shaped: centre and three ligands coplanar (0.01 A)')]
    if len(big) == 1:
        small = [x for p, x in a.items() if p != big[0]]
        out.append((all(80.0 <= x <= 92.0 for x in small), f'T-shaped: stem angles {fmt(small)}, 80..92'))
    return out


def judge_seesaw(c, centre, ligs):
    a = ligand_angles(c, centre, ligs)
    big = [p for p, x in a.items() if x > 150.0]
    out = [(len(big) == 1, f'seesaw: one axial pair (angle above 150), found {len(big)}'),
           (max_out_of_plane([c[i] for i in ligs] + [c[centre]]) > 0.3, 'seesaw: ligands and centre not coplanar')]
    if len(big) == 1:
        eq = [i for i in ligs if i not in big[0]]
        x = a[tuple(sorted(eq))] if tuple(sorted(eq)) in a else angle_deg(c[eq[0]], c[centre], c[eq[1]])
        # equatorial pair: below 120 (lone pair larger), SF4 101.6 deg (CRC, from memory; issue 2)
        out.append((90.0 < x < 120.0, f'seesaw: equatorial angle {x:.2f}, expected 90 < angle < 120 '
                                      '(SF4 101.6, CRC, from memory)'))
    return out


def judge_square_planar(c, centre, ligs):
    a = list(ligand_angles(c, centre, ligs).values())
    trans = [x for x in a if x > 135.0]
    cis = [x for x in a if x <= 135.0]
    return [(len(trans) == 2 and all(abs(x - 180.0) <= 2.0 for x in trans),
             f'square planar: two trans pairs at 180 +- 2, found {fmt(trans)} (tetrahedral would have none)'),
            (len(cis) == 4 and all(abs(x - 90.0) <= 2.0 for x in cis),
             f'square planar: four cis angles at 90 +- 2, found {fmt(cis)}'),
            (max_out_of_plane([c[centre]] + [c[i] for i in ligs]) <= 0.01, 'square planar: coplanar (0.01 A)')]


def judge_square_pyramid(c, centre, ligs):
    a = ligand_angles(c, centre, ligs)
    trans = [p for p, x in a.items() if x > 150.0]
    out = [(len(trans) == 2, f'square pyramid: two basal trans pairs (angle above 150), found {len(trans)}')]
    if len(trans) == 2:
        basal = set(trans[0]) | set(trans[1])
        apex = [i for i in ligs if i not in basal]
        out.append((len(apex) == 1 and len(basal) == 4, 'square pyramid: one apical and four basal ligands'))
        if len(apex) == 1:
            ab = [angle_deg(c[apex[0]], c[centre], c[j]) for j in basal]
            out.append((all(75.0 <= x <= 95.0 for x in ab), f'square pyramid: apical-basal angles {fmt(ab)}, 75..95'))
            # basal ligands bent away from the lone pair, towards the apex: BrF5 F(ap)-Br-F(bas) 84.8 deg (CRC,
            # from memory)
            out.append((max(ab) < 90.0, f'square pyramid: basal ligands bent away from the lone pair, apical-basal '
                                        f'angles {fmt(ab)} below 90 (BrF5 84.8, CRC, from memory)'))
            out.append((max_out_of_plane([c[i] for i in basal]) <= 0.05, 'square pyramid: basal ligands coplanar'))
    return out


def judge_pentagonal_bipyramid(c, centre, ligs):
    a = ligand_angles(c, centre, ligs)
    trans = [p for p, x in a.items() if x > 150.0]
    out = [(len(trans) == 1, f'pentagonal bipyramid: one axial pair (angle above 150), found {len(trans)}')]
    if len(trans) == 1:
        ax = set(trans[0])
        eq = [i for i in ligs if i not in ax]
        out.append((abs(a[trans[0]] - 180.0) <= 2.0, f'pentagonal bipyramid: axial angle {a[trans[0]]:.2f}, 180 +- 2'))
        ax_eq = [angle_deg(c[i], c[centre], c[j]) for i in ax for j in eq]
        out.append((all(abs(x - 90.0) <= 2.0 for x in ax_eq),
                    f'pentagonal bipyramid: axial-equatorial angles {fmt(ax_eq)}, 90 +- 2'))
        nearest = [min(angle_deg(c[i], c[centre], c[j]) for j in eq if j != i) for i in eq]
        out.append((all(abs(x - 72.0) <= 2.0 for x in nearest),
                    f'pentagonal bipyramid: equatorial neighbour angles {fmt(nearest)}, 72 +- 2 (common practice)'))
        out.append((max_out_of_plane([c[centre]] + [c[i] for i in eq]) <= 0.05,
                    'pentagonal bipyramid: five equatorial ligands coplanar with the centre'))
    return out


def judge_square_antiprism(c, centre, ligs):
    """Two squares of four ligands in parallel planes, one turned by 45 degrees against the other (the Thomson N=8
    minimum, reference-data.md). Tries every split of the eight ligands into two sets of four."""
    best = None
    for group in itertools.combinations(ligs[1:], 3):
        top = [ligs[0]] + list(group)
        bottom = [i for i in ligs if i not in top]
        u_top = np.array([unit(c[i] - c[centre]) for i in top])
        u_bot = np.array([unit(c[i] - c[centre]) for i in bottom])
        axis = unit(u_top.mean(axis=0) - u_bot.mean(axis=0)) if np.linalg.norm(
            u_top.mean(axis=0) - u_bot.mean(axis=0)) > 1e-6 else None
        if axis is None:
            continue
        spread = max(np.ptp(u_top @ axis), np.ptp(u_bot @ axis))  # each square: one height along the axis
        ref = unit(np.cross(axis, [1.0, 0.0, 0.0]) if abs(axis[0]) < 0.9 else np.cross(axis, [0.0, 1.0, 0.0]))
        ref2 = np.cross(axis, ref)

        def azimuths(us):
            return sorted(math.degrees(math.atan2(u @ ref2, u @ ref)) % 360.0 for u in us)

        az_t, az_b = azimuths(u_top), azimuths(u_bot)
        gaps = [((az[(k + 1) % 4] - az[k]) % 360.0) for az in (az_t, az_b) for k in range(4)]
        offset = min(abs(((b - t + 180.0) % 360.0) - 180.0) for t in az_t for b in az_b)
        score = spread + max(abs(g - 90.0) for g in gaps) / 90.0
        if best is None or score < best[0]:
            best = (score, spread, gaps, offset)
    _, spread, gaps, offset = best
    return [(spread <= 0.05, f'square antiprism: each square of four ligands at one height along the axis '
                             f'(spread {spread:.3f} in unit vectors, 0.05)'),
            (all(abs(g - 90.0) <= 5.0 for g in gaps), f'square antiprism: azimuths within a square 90 +- 5 apart: '
                                                      f'{fmt(gaps)}'),
            (abs(offset - 45.0) <= 5.0, f'square antiprism: the squares turned {offset:.1f} deg against each other, '
                                        f'45 +- 5 (a cube would be 0)')]


def fmt(values):
    return '[' + ', '.join(f'{x:.2f}' for x in values) + ']'


# Species: (class, input, centre element, ligand count, judge). Each is a real molecule or ion.
SPECIES = [
    ('AX2', 'Cl[Be]Cl', 'Be', 2, judge_linear),                        # BeCl2, linear in the gas phase
    ('AX2', 'O=C=O', 'C', 2, judge_linear),                            # CO2
    ('AX3', 'FB(F)F', 'B', 3, judge_trigonal_planar),                  # BF3
    ('AX4', 'C', 'C', 4, judge_tetrahedral),                           # CH4
    ('AX4', 'FC(F)(F)F', 'C', 4, judge_tetrahedral),                   # CF4
    ('AX5', 'Cl[P](Cl)(Cl)(Cl)Cl', 'P', 5, judge_trigonal_bipyramid),  # PCl5
    ('AX6', 'F[S](F)(F)(F)(F)F', 'S', 6, judge_octahedral),            # SF6
    ('AX2E1', 'O=S=O', 'S', 2, judge_bent_trigonal),                   # SO2
    ('AX2E1', 'Cl[Sn]Cl', 'Sn', 2, None),                              # SnCl2: judged below (bent)
    ('AX2E2', 'O', 'O', 2, judge_bent_tetrahedral),                    # H2O
    ('AX2E3', 'F[Xe]F', 'Xe', 2, judge_linear),                        # XeF2
    ('AX3E1', 'N', 'N', 3, judge_pyramidal),                           # NH3
    ('AX3E2', 'F[Cl](F)F', 'Cl', 3, judge_t_shaped),                   # ClF3
    ('AX4E1', 'F[S](F)(F)F', 'S', 4, judge_seesaw),                    # SF4
    ('AX4E2', 'F[Xe](F)(F)F', 'Xe', 4, judge_square_planar),           # XeF4
    ('AX4E2', 'Cl[I-](Cl)(Cl)Cl', 'I', 4, judge_square_planar),        # ICl4-
    ('AX5E1', 'F[Br](F)(F)(F)F', 'Br', 5, judge_square_pyramid),       # BrF5
    ('AX7', 'F[I](F)(F)(F)(F)(F)F', 'I', 7, judge_pentagonal_bipyramid),  # IF7
    ('AX8', 'F[I-](F)(F)(F)(F)(F)(F)F', 'I', 8, judge_square_antiprism),  # IF8-
]


def main():
    if len(sys.argv) < 2:
        print('usage: check_vsepr_classes.py PATH/TO/repel')
        sys.exit(2)
    exe = sys.argv[1]
    t = Tally()
    built = {}
    tmp = tempfile.mkdtemp(prefix='repel_vsepr_')

    def build(text):
        """Builds text; checks that ASE reads the same structure from `-o file.xyz`; returns parsed XYZ or None."""
        r = run_repel(exe, ['build', text])
        if not t.check(r.returncode == 0, f'{text}: repel build exits 0 (got {r.returncode}: {r.stderr.strip()})'):
            return None
        try:
            symbols, coords, fields, comment = parse_xyz(r.stdout)
        except (ValueError, IndexError) as e:
            t.check(False, f'{text}: XYZ on standard output parses ({e})')
            return None
        # ASE (ase.io.read) reads the file written with -o: same elements and coordinates as standard output.
        path = os.path.join(tmp, f'm{len(built)}.xyz')
        r2 = run_repel(exe, ['build', text, '-o', path])
        if t.check(r2.returncode == 0 and os.path.exists(path), f'{text}: repel build -o {path} writes the file'):
            try:
                with warnings.catch_warnings():
                    warnings.simplefilter('ignore')
                    atoms = ase.io.read(path)
                same = (atoms.get_chemical_symbols() == symbols and
                        np.abs(atoms.get_positions() - coords).max() <= 1.01e-6)
                t.check(same, f'{text}: ase.io.read gives the same elements and coordinates as written')
            except Exception as e:  # noqa: BLE001 -- any reader error is a failed check
                t.check(False, f'{text}: ase.io.read reads the XYZ ({type(e).__name__}: {e})')
        built[text] = (symbols, coords, fields)
        return symbols, coords, fields

    for cls, text, centre_symbol, n_ligands, judge in SPECIES:
        got = build(text)
        if got is None:
            continue
        symbols, coords, _ = got
        centres = [i for i, s in enumerate(symbols) if s == centre_symbol]
        if not t.check(len(centres) == 1 and len(symbols) == n_ligands + 1,
                       f'{cls} {text}: one {centre_symbol} and {n_ligands} ligands written, got {symbols}'):
            continue
        centre = centres[0]
        ligs = [i for i in range(len(symbols)) if i != centre]
        if judge is None:
            continue
        for ok, what in judge(coords, centre, ligs):
            t.check(ok, f'{cls} {text}: {what}')
        print(f'{cls:6s} {text:28s} angles {fmt(sorted(ligand_angles(coords, centre, ligs).values()))}')

    # SnCl2, AX2E1 with a heavy centre: bent, and below 120 deg (the lone pair is larger than the bonding pairs;
    # gas-phase SnCl2 about 95-99 deg, CRC, from memory; a range, not a target). Known limit of the domain model,
    # listed in README.md: its period factor closes period-5 centres too far (88 deg), so the check asks only
    # for a bent shape well below 120.
    if 'Cl[Sn]Cl' in built:
        s, c, _ = built['Cl[Sn]Cl']
        x = angle_deg(c[0], c[1], c[2])  # Cl, Sn, Cl in input order
        t.check(80.0 <= x < 120.0, f'AX2E1 SnCl2: bent, angle {x:.2f} in [80, 120) (VSEPR; gas 95-99 CRC, from memory; '
                                   'model known to be ~9 deg low)')

    # ---- measured gas-phase angles: CRC Handbook 'Structure of free molecules in the gas phase' / NIST CCCBDB,
    # values from reference-data.md (from memory): H2O 104.5, NH3 106.7, CH4 109.47; within 2.5 deg and in order.
    measured = {}
    for text, expt in (('O', 104.5), ('N', 106.7), ('C', 109.47)):
        if text not in built:
            continue
        s, c, _ = built[text]
        ligs = list(range(1, len(s)))
        a = list(ligand_angles(c, 0, ligs).values())
        mean = sum(a) / len(a)
        measured[text] = mean
        t.check(abs(mean - expt) <= 2.5, f'{text}: H-X-H {mean:.2f} deg within 2.5 of {expt} (CRC/CCCBDB, from memory)')
        print(f'gas-phase angle {text:2s}: built {mean:.2f}, experiment {expt} (CRC/CCCBDB, from memory)')
    # Heavier hydrides, near 90 deg in the gas phase (H2S 92.1, PH3 93.3; reference-data.md, from memory): printed
    # for the README, not asserted here (issue 2 lets the model reproduce them or mark them as its known limit).
    for text, expt in (('S', 92.1), ('P', 93.3)):
        r = run_repel(exe, ['build', text])
        if r.returncode == 0:
            s, c, _, _ = parse_xyz(r.stdout)
            a = list(ligand_angles(c, 0, list(range(1, len(s)))).values())
            print(f'heavier hydride {text}: built H-X-H {sum(a) / len(a):.2f}, experiment {expt} (CRC, from memory; '
                  'not asserted)')
    if len(measured) == 3:
        t.check(measured['O'] < measured['N'] < measured['C'],
                f'order H2O < NH3 < CH4 of the H-X-H angles: {measured["O"]:.2f}, {measured["N"]:.2f}, '
                f'{measured["C"]:.2f} (experiment 104.5 < 106.7 < 109.47)')

    # ---- axial ligands of SF4 and ClF3 bent away from the lone pairs: the axial pair's angle below 180 and the
    # bisector of the two axial bonds on the side of the equatorial ligand(s), away from the lone pair(s).
    # SF4 F(ax)-S-F(ax) 173.1 deg, ClF3 F(ax)-Cl-F(ax) 175.0 deg (CRC, from memory).
    for text, centre_symbol, expt in (('F[S](F)(F)F', 'S', 173.1), ('F[Cl](F)F', 'Cl', 175.0)):
        if text not in built:
            continue
        s, c, _ = built[text]
        centre = s.index(centre_symbol)
        ligs = [i for i in range(len(s)) if i != centre]
        a = ligand_angles(c, centre, ligs)
        axial = max(a, key=a.get)
        equatorial = [i for i in ligs if i not in axial]
        bisector = sum(unit(c[i] - c[centre]) for i in axial)
        eq_side = sum(unit(c[i] - c[centre]) for i in equatorial)
        t.check(150.0 < a[axial] < 179.0, f'{text}: axial-axial angle {a[axial]:.2f} between 150 and 179 '
                                          f'(experiment {expt}, CRC, from memory)')
        t.check(float(bisector @ eq_side) > 0.0,
                f'{text}: axial ligands bent towards the equatorial ligand(s), away from the lone pair(s)')
        print(f'axial angle {text}: built {a[axial]:.2f}, experiment {expt} (CRC, from memory)')

    # ---- multiple bonds take the sites VSEPR gives a larger domain (Gillespie and Hargittai 1991): equatorial in a
    # trigonal bipyramid and its derivatives (seesaw, T), trans to the lone pair of a square pyramid, and a square
    # pyramid's apex never for a five-domain centre without a lone pair. Judged from the written coordinates: the
    # pairs of ligands at more than 150 deg (trans pairs) and who is in them. Structures (gas-phase electron
    # diffraction / microwave, CRC 'Structure of free molecules in the gas phase', from memory): SOF4 C2v with O
    # equatorial, Fax-S-Fax 164.6; H2C=SF4 C2v with CH2 equatorial; ClO2F3 and XeO3F2 with every O equatorial;
    # XeO2F2 seesaw with O equatorial, F-Xe-F 174.7; ClOF3 seesaw with O equatorial; XeOF2 T-shaped with O in the
    # stem; XeOF4 C4v with O trans to the lone pair; IOF5 C4v (O trans to one F).
    # (input, centre index, ligand indices of multiple bonds, trans pairs expected, of which multiple-bond members)
    multiple_cases = [
        ('AX5 one double', 'O=[S](F)(F)(F)F', 1, [0], 1, 0),
        ('AX5 one double (C)', 'C=[S](F)(F)(F)F', 1, [0], 1, 0),
        ('AX5 two double', 'O=[Cl](=O)(F)(F)F', 1, [0, 2], 1, 0),
        ('AX5 three double', 'O=[Xe](=O)(=O)(F)F', 1, [0, 2, 3], 1, 0),
        ('AX4E two double', 'O=[Xe](=O)(F)F', 1, [0, 2], 1, 0),
        ('AX4E one double', 'O=[Cl](F)(F)F', 1, [0], 1, 0),
        ('AX3E2 one double', 'O=[Xe](F)F', 1, [0], 1, 0),
        ('AX5E one double', 'O=[Xe](F)(F)(F)F', 1, [0], 2, 0),
        ('AX6 one double', 'O=[I](F)(F)(F)(F)F', 1, [0], 3, 1),
    ]
    for cls, text, centre, multiple, n_trans, n_multiple_trans in multiple_cases:
        got = build(text)
        if not got:
            continue
        s, c, _ = got
        ligs = [i for i in range(len(s)) if i != centre and s[i] != 'H']
        a = ligand_angles(c, centre, ligs)
        trans = [p for p, x in a.items() if x > 150.0]
        in_trans = sum(1 for p in trans for i in p if i in multiple)
        t.check(len(trans) == n_trans and in_trans == n_multiple_trans,
                f'{cls} {text}: {n_trans} trans pair(s) above 150 deg with {n_multiple_trans} multiple-bond member(s), '
                f'found {len(trans)} with {in_trans} ({fmt(sorted(a.values()))})')
        print(f'{cls:18s} {text:24s} angles {fmt(sorted(a.values()))}')

    # ---- formaldehyde: H-C-H below 120 deg (the C=O double bond domain is larger; experiment 116.5 deg, CRC, from
    # memory).
    got = build('C=O')
    if got:
        s, c, _ = got
        hs = [i for i, x in enumerate(s) if x == 'H']
        x = angle_deg(c[hs[0]], c[s.index('C')], c[hs[1]])
        t.check(x < 120.0, f'formaldehyde H-C-H {x:.2f} below 120 (experiment 116.5, CRC, from memory)')
        print(f'formaldehyde H-C-H: built {x:.2f}, experiment 116.5 (CRC, from memory)')

    # ---- charge and multiplicity in the XYZ comment (closed-shell ions; the NO2 radical by formula; O2 triplet
    # ground state, common practice). The eight-coordinate anions test the valence arithmetic of expanded centres:
    # IF8- (I: 7 valence electrons + 1 for the charge - 8 bonds = 0 left, AX8) and XeF8 2- (Xe: 8 + 2 - 8 = 2, one
    # lone pair); both closed-shell, all eight fluorines written.
    for text, charge, mult in (('[O-]S(=O)(=O)[O-]', -2, 1), ('SO4 2-', -2, 1), ('[NH4+]', 1, 1), ('NH4+', 1, 1),
                               ('NO2', 0, 2), ('O=O', 0, 3), ('F[I-](F)(F)(F)(F)(F)(F)F', -1, 1),
                               ('[Xe-2](F)(F)(F)(F)(F)(F)(F)F', -2, 1)):
        got = build(text)
        if not got:
            continue
        symbols, _, fields = got
        if 'F)F' in text:
            t.check(symbols.count('F') == 8 and len(symbols) == 9, f'{text}: eight F and one centre written')
        t.check(fields.get('charge') == str(charge) and fields.get('multiplicity') == str(mult),
                f'{text}: comment has charge={charge} multiplicity={mult}, got charge={fields.get("charge")} '
                f'multiplicity={fields.get("multiplicity")}')

    # ---- radicals and spin: NO2 as databases write it ([O]N=O) is the delocalised radical (O-N-O 134.1 deg, CRC,
    # from memory), the methyl radical planar (common practice); the ground states of free atoms (Hund's rule) and of
    # nitrenes (NH, phenylnitrene: triplets, from memory) are written by default; --multiplicity and --charge.
    got = build('[O]N=O')
    if got:
        _, c, fields = got
        x = angle_deg(c[0], c[1], c[2])
        t.check(abs(x - 134.1) <= 3.0 and fields.get('multiplicity') == '2',
                f'[O]N=O: O-N-O {x:.2f} within 3 of 134.1 (CRC, from memory), multiplicity 2')
    got = build('[CH3]')
    if got:
        _, c, _ = got
        total = sum(angle_deg(c[i], c[0], c[j]) for i, j in ((1, 2), (1, 3), (2, 3)))
        t.check(abs(total - 360.0) <= 0.5, f'[CH3]: planar, H-C-H angles sum to {total:.2f} (360, common practice)')
    for text, mult in (('[C]', 3), ('[N]', 4), ('[NH]', 3), ('c1ccccc1[N]', 3)):
        got = build(text)
        if got:
            t.check(got[2].get('multiplicity') == str(mult) and 'multiplicity raised' in got[2].get('warnings', ''),
                    f'{text}: multiplicity {mult} by default, with a warning (got {got[2].get("multiplicity")})')
    r = run_repel(exe, ['build', '[CH2]', '--multiplicity', '3', '--format', 'sdf'])
    t.check(r.returncode == 0 and '> <multiplicity>\n3\n' in r.stdout, '[CH2] --multiplicity 3: SDF says 3')
    r = run_repel(exe, ['build', 'C', '--multiplicity', '2'])
    t.check(r.returncode == 2 and 'not possible' in r.stderr, f'C --multiplicity 2 refused (10 electrons): {r.stderr.strip()}')
    r = run_repel(exe, ['build', '[NH4+]', '--charge', '0'])
    t.check(r.returncode == 2 and 'formal charges add up to 1' in r.stderr, '[NH4+] --charge 0 refused with the sum')
    r = run_repel(exe, ['build', '[NH4+]', '--charge', '1', '--format', 'json'])
    t.check(r.returncode == 0 and '"charge": 1' in r.stdout, '[NH4+] --charge 1 builds')
    smi = os.path.join(tmp, 'spin.smi')
    with open(smi, 'w') as f:
        f.write('[CH2] methylene\nO=O dioxygen\nC methane\n')
    r = run_repel(exe, ['build', '-i', smi, '--multiplicity', '3', '--format', 'xyz', '-j', '1'])
    t.check(r.returncode == 0 and r.stdout.count('multiplicity=3') == 3, 'batch with --multiplicity 3: three records at 3')

    t.finish(tmp)


if __name__ == '__main__':
    main()
